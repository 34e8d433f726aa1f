"""The build pipeline: spec → geometry → solids (in the kernel worker) → files → report.

The CLI's ``build`` and every sweep variant call :func:`build`. Outputs are produced into a
staging folder and published together, so a failed build leaves nothing behind and no
existing file is replaced without ``force``.

Outputs other than the solids are made by *producers*: functions
``(ctx: BuildContext, out: OutputSet) -> dict[file kind, file name]`` registered in
:data:`PRODUCERS` under an output kind (the names ``--only`` accepts).
"""

from __future__ import annotations

import time
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from ductgen.errors import DesignWarning, SpecError
from ductgen.export.atomic import OutputSet, check_free
from ductgen.geometry.inlet import InletGeometry, build_geometry
from ductgen.pipeline.jobs import SOLID_KINDS
from ductgen.report import geometry_report, report_bytes
from ductgen.spec.load import spec_sha256
from ductgen.spec.model import Spec
from ductgen.tolerances import STL_QUALITY
from ductgen.worker import KernelWorker, default_worker

__all__ = [
    "PRODUCERS",
    "BuildContext",
    "BuildResult",
    "build",
    "output_kinds",
    "package_version",
    "planned_files",
]


def package_version() -> str:
    """The installed ductgen version (``ductgen.__version__``)."""
    from ductgen import __version__

    return __version__


@dataclass
class BuildContext:
    """Everything a producer may read, and the report it may add to."""

    spec: Spec
    geometry: InletGeometry
    solids: dict[str, dict[str, Any]]
    report: dict[str, Any]
    warnings: list[DesignWarning] = field(default_factory=list)


Producer = Callable[[BuildContext, OutputSet], dict[str, str]]

#: Output kind → (producer, file suffixes it writes after ``NAME-``).
PRODUCERS: dict[str, tuple[Producer, tuple[str, ...]]] = {}

#: Hooks that add sections to the report before producers run: ``(ctx) -> None``.
REPORT_HOOKS: list[Callable[[BuildContext], None]] = []


def output_kinds() -> list[str]:
    """Every kind ``--only`` accepts, in build order."""
    return [*SOLID_KINDS, *PRODUCERS]


def planned_files(spec: Spec, kinds: list[str]) -> list[str]:
    """File names a build of ``kinds`` will write (``report.json`` always)."""
    names = []
    for k in kinds:
        if k in SOLID_KINDS:
            names += [f"{spec.name}-{k}.step", f"{spec.name}-{k}.stl"]
        else:
            names += [f"{spec.name}-{suffix}" for suffix in PRODUCERS[k][1]]
    return [*names, "report.json"]


@dataclass
class BuildResult:
    """What a build made: the report (as written) and the files by path."""

    report: dict[str, Any]
    files: dict[str, Path]
    seconds: dict[str, float]
    solids: dict[str, dict[str, Any]]


def _select(only: list[str] | None) -> list[str]:
    kinds = output_kinds()
    if not only:
        return kinds
    bad = [k for k in only if k not in kinds]
    if bad:
        raise SpecError(
            "--only", ",".join(bad), "a comma list of " + ", ".join(kinds), "unknown output kind"
        )
    return [k for k in kinds if k in only]


def build(
    spec: Spec,
    out_dir: str | Path,
    *,
    only: list[str] | None = None,
    force: bool = False,
    quality: str = "normal",
    worker: KernelWorker | None = None,
    progress: Callable[[str], None] | None = None,
) -> BuildResult:
    """Build every requested output of ``spec`` into ``out_dir``.

    Raises:
        SpecError: bad input (before anything is written).
        GeometryError: the kernel failed; the message names the stage.
        ExportError: a file exists and ``force`` is not set, or a write failed.
    """
    note = progress or (lambda _s: None)
    if quality not in STL_QUALITY:
        raise SpecError("--quality", quality, " | ".join(STL_QUALITY), "STL tessellation setting")
    kinds = _select(only)
    out_dir = Path(out_dir)
    seconds: dict[str, float] = {}

    t0 = time.perf_counter()
    note("geometry")
    geometry = build_geometry(spec)
    if any(k in kinds for k in ("insert", "plug", "template")):
        from ductgen.geometry.fabrication import validate_fabrication

        validate_fabrication(geometry, geometry.fabrication)  # before the kernel starts
    seconds["geometry_s"] = time.perf_counter() - t0
    check_free([out_dir / n for n in planned_files(spec, kinds)], force)

    solid_kinds = [k for k in kinds if k in SOLID_KINDS]
    with OutputSet(out_dir, force=force) as out:
        solids: dict[str, dict[str, Any]] = {}
        if solid_kinds:
            note("solids")
            t0 = time.perf_counter()
            solids = (worker or default_worker()).run(
                "ductgen.pipeline.jobs:build_solids",
                geometry,
                solid_kinds,
                quality,
                spec.name,
                str(out.staging),
            )
            seconds["solids_s"] = time.perf_counter() - t0
            for k in solid_kinds:
                for name in solids[k]["files"].values():
                    out.staged_path(name)
                for stage_name, s in solids[k]["seconds"].items():
                    seconds[f"{k}_{stage_name}"] = s
        report: dict[str, Any] = {
            "name": spec.name,
            "spec_sha256": spec_sha256(spec),
            "ductgen_version": package_version(),
            "geometry": geometry_report(geometry, solids),
        }
        ctx = BuildContext(spec=spec, geometry=geometry, solids=solids, report=report)
        for hook in REPORT_HOOKS:
            hook(ctx)
        files: dict[str, str] = {}
        for k in solid_kinds:
            for fmt, name in solids[k]["files"].items():
                files[f"{k}_{fmt}"] = name
        for k in kinds:
            if k in PRODUCERS:
                note(k)
                t0 = time.perf_counter()
                files.update(PRODUCERS[k][0](ctx, out))
                seconds[f"{k}_s"] = time.perf_counter() - t0
        report["warnings"] = [w.to_dict() for w in ctx.warnings]
        report["files"] = files
        out.add("report.json", report_bytes(report))
        note("publish")
        paths = out.publish()
    return BuildResult(report=report, files=paths, seconds=seconds, solids=solids)


from ductgen.pipeline import extensions as _extensions  # noqa: E402,F401  (registers outputs)
