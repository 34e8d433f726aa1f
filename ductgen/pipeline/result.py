"""What :func:`ductgen.pipeline.build` returns."""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from ductgen.design import Design
from ductgen.report import BuildRecord
from ductgen.solids.results import SolidResult

__all__ = ["BuildResult"]


@dataclass
class BuildResult:
    """What a build made: the report (as written), its record, the files by path, the
    seconds per stage, the solids, the design, and which kernel results came from the solid
    cache (``cache["hits"]``) or were built (``cache["misses"]``): solid kinds and
    ``"insert split"``."""

    report: dict[str, Any]
    files: dict[str, Path]
    seconds: dict[str, float]
    solids: dict[str, SolidResult]
    record: BuildRecord
    design: Design | None = None
    cache: dict[str, list[str]] = field(default_factory=dict)
