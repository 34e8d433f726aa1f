"""What a sweep passes around: the task for one variant, its result, the whole sweep's
result (plain dataclasses, picklable; imported by the runner, the comparison and the page).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from ductgen.design import Design
from ductgen.spec import Spec
from ductgen.sweep.report_record import VariantReport
from ductgen.sweep.variants import Variant

__all__ = ["SweepResult", "VariantResult", "VariantTask"]


@dataclass(frozen=True)
class VariantTask:
    """What a worker needs to build one variant (picklable)."""

    id: str
    spec: Spec
    folder: str
    kinds: tuple[str, ...]
    quality: str
    hash: str
    raw: dict[str, Any]
    design: Design | None = None
    cfd: str | None = None  # mesh of the CFD check per variant (ductgen sweep --cfd)
    cache: bool = True  # use the solid cache (ductgen sweep --no-cache: False)


@dataclass
class VariantResult:
    """Outcome of one variant.

    Attributes:
        status: ``"built"``, ``"cached"`` (unchanged, skipped) or ``"failed"``.
        report: what the comparison reads from the variant's report.json (None when
            failed).
        build_s: wall-clock seconds of its build (s; the original build's for cached ones).
        error: one-line reason when failed.
    """

    id: str
    status: str
    folder: str
    report: VariantReport | None = None
    build_s: float | None = None
    error: str | None = None


@dataclass
class SweepResult:
    """A finished sweep: variants, their results (same order), comparison rows, files."""

    variants: list[Variant]
    results: list[VariantResult]
    rows: list[dict[str, Any]]
    baseline: str
    files: dict[str, Path] = field(default_factory=dict)
    seconds: float = 0.0

    @property
    def failed(self) -> list[VariantResult]:
        return [r for r in self.results if r.status == "failed"]
