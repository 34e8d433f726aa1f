"""The build pipeline: spec → design → solids (in the kernel worker) → files → report.

The CLI's ``build`` and every sweep variant call :func:`build`. Outputs are produced into a
staging folder and published together, so a failed build leaves nothing behind and no
existing file is replaced without ``force``.
"""

from __future__ import annotations

import time
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from ductgen.atomic import OutputSet, check_free
from ductgen.cache import open_cache
from ductgen.design import Design, build_design
from ductgen.errors import SpecError
from ductgen.pipeline.outputs import OUTPUTS, BuildContext
from ductgen.pipeline.solid_cache import SolidStage
from ductgen.report import (
    add_insert_pieces,
    add_panel_cut,
    finish_report,
    insert_split_plan,
    report_bytes,
    start_report,
)
from ductgen.solids.kinds import SOLID_KINDS
from ductgen.spec.load import spec_sha256
from ductgen.spec.model import PanelSkinSpec, Spec
from ductgen.tolerances import STL_QUALITY
from ductgen.worker import KernelWorker, WorkerLimits, default_worker

__all__ = [
    "BuildResult",
    "build",
    "output_kinds",
    "package_version",
    "planned_files",
    "planned_stages",
    "select_kinds",
]

#: Output kinds whose making checks the insert and plug rules.
_NEEDS_FABRICATION = ("insert", "plug", "template")


def package_version() -> str:
    """The installed ductgen version (``ductgen.__version__``)."""
    from ductgen import __version__

    return __version__


def output_kinds() -> list[str]:
    """Every kind ``--only`` accepts, in build order."""
    return [*SOLID_KINDS, *OUTPUTS]


def _cuts_panel(spec: Spec, kinds: list[str]) -> bool:
    """Whether the build writes ``NAME-panel.step``: the user's panel is a CAD file and the
    cutter is built."""
    skin = spec.skin
    return (
        isinstance(skin, PanelSkinSpec)
        and "cutter" in kinds
        and Path(skin.file).suffix.lower() in (".step", ".stp")
    )


def planned_files(spec: Spec, kinds: list[str]) -> list[str]:
    """File names a build of ``kinds`` will write (``report.json`` always)."""
    names = [f"{spec.name}-panel.step"] if _cuts_panel(spec, kinds) else []
    for k in kinds:
        if k in SOLID_KINDS:
            names += [f"{spec.name}-{k}.step", f"{spec.name}-{k}.stl"]
            if k == "insert":
                names.append(f"{spec.name}-insert.3mf")
        elif OUTPUTS[k].made_for(spec):
            names += [f"{spec.name}-{suffix}" for suffix in OUTPUTS[k].suffixes]
    return [*names, "report.json"]


@dataclass
class BuildResult:
    """What a build made: the report (as written), the files by path, the design, and which
    kernel results came from the solid cache (``cache["hits"]``) or were built
    (``cache["misses"]``): solid kinds and ``"insert split"``."""

    report: dict[str, Any]
    files: dict[str, Path]
    seconds: dict[str, float]
    solids: dict[str, dict[str, Any]]
    design: Design | None = None
    cache: dict[str, list[str]] = field(default_factory=dict)


def planned_stages(spec: Spec, kinds: list[str]) -> list[str]:
    """The stages :func:`build` reports through ``progress``, in order (an ``"insert
    split"`` stage is added when the insert turns out larger than the bed)."""
    stages = ["geometry"]
    if any(k in SOLID_KINDS for k in kinds):
        stages.append("solids")
    if _cuts_panel(spec, kinds):
        stages.append("panel")
    made = [k for k in kinds if k in OUTPUTS and OUTPUTS[k].made_for(spec)]
    return [*stages, *made, "publish"]


def select_kinds(only: list[str] | None) -> list[str]:
    """The output kinds to build, in build order; every kind when ``only`` is empty."""
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
    design: Design | None = None,
    cache: bool = True,
) -> BuildResult:
    """Build every requested output of ``spec`` into ``out_dir``.

    ``design``: the design of ``spec`` when the caller already built it (a sweep does, to
    validate its variants); otherwise it is built here. ``cache``: take solids, the insert's
    pieces and the preview from the user's solid cache and store new ones there
    (:mod:`ductgen.cache`; ``DUCTGEN_CACHE_DIR``, ``DUCTGEN_CACHE_MB``); False bypasses it.

    Raises:
        SpecError: bad input (before anything is written), e.g. a bad ``DUCTGEN_CACHE_MB``.
        GeometryError: the kernel failed; the message names the stage.
        ExportError: a file exists and ``force`` is not set, or a write failed.
    """
    note = progress or (lambda _s: None)
    if worker is None:
        WorkerLimits.from_env()  # a bad DUCTGEN_MEMORY_MB / DUCTGEN_TIMEOUT_S: exit 2 first
    if quality not in STL_QUALITY:
        raise SpecError("--quality", quality, " | ".join(STL_QUALITY), "STL tessellation setting")
    kinds = select_kinds(only)
    out_dir = Path(out_dir)
    seconds: dict[str, float] = {}

    t0 = time.perf_counter()
    note("geometry")
    needs_fab = any(k in kinds for k in _NEEDS_FABRICATION)
    if design is None or (needs_fab and not design.fabrication_checked):
        design = build_design(spec, check_fabrication=needs_fab)  # before the kernel starts
    seconds["geometry_s"] = time.perf_counter() - t0
    check_free([out_dir / n for n in planned_files(spec, kinds)], force)

    solid_kinds = [k for k in kinds if k in SOLID_KINDS]
    store = open_cache(cache)

    def run(job: str, *args: Any, **kwargs: Any) -> Any:  # the kernel worker, started on use
        return (worker or default_worker()).run(job, *args, **kwargs)

    stage = SolidStage(store, design, quality, run)
    with OutputSet(out_dir, force=force) as out:
        solids: dict[str, dict[str, Any]] = {}
        if solid_kinds:
            note("solids")
            t0 = time.perf_counter()
            solids = stage.solids(solid_kinds, spec.name, out.staging)
            seconds["solids_s"] = time.perf_counter() - t0
            for k in solid_kinds:
                for name in solids[k]["files"].values():
                    out.staged_path(name)
                for stage_name, s in solids[k]["seconds"].items():
                    seconds[f"{k}_{stage_name}"] = s
        report, warnings = start_report(spec, design, solids, spec_sha256(spec), package_version())
        frame = design.panel_frame
        skin = spec.skin
        if _cuts_panel(spec, kinds) and isinstance(skin, PanelSkinSpec):
            note("panel")
            t0 = time.perf_counter()
            cut = (worker or default_worker()).run(
                "ductgen.solids.panel_cut:cut_panel_job",
                design,
                skin.file,
                skin.units,
                [solids["cutter"]["files"]["step"]],
                str(out.staging),
                "insert" in solids,
            )
            out.staged_path(cut.pop("file"))
            add_panel_cut(report, cut)
            seconds["panel_s"] = time.perf_counter() - t0
        ctx = BuildContext(
            spec=spec,
            design=design,
            solids=solids,
            report=report,
            warnings=warnings,
            cache=store,
            quality=quality,
            kernel=run,
        )
        files: dict[str, str] = {}
        for k in solid_kinds:
            for fmt, name in solids[k]["files"].items():
                files[f"{k}_{fmt}"] = name
        if "panel" in report["geometry"]["skin"]:
            files["panel_step"] = f"{spec.name}-panel.step"
        plan = insert_split_plan(report) if "insert" in solids else None
        pieces: list[dict[str, Any]] = []
        if plan is not None:  # the insert is larger than the bed: keyed pieces that fit
            note("insert split")
            t0 = time.perf_counter()
            pieces = stage.split_insert(
                out.staging,
                solids["insert"]["files"]["step"],
                spec.name,
                plan,
                tuple(spec.print.bed),
                None if frame is None else (frame.origin.tolist(), frame.axes.tolist()),
            )
            for k, piece in enumerate(pieces, start=1):
                for fmt in ("step", "stl"):
                    out.staged_path(piece[fmt])
                    files[f"insert_part{k}_{fmt}"] = piece[fmt]
            add_insert_pieces(report, pieces)
            seconds["insert_split_s"] = time.perf_counter() - t0
        if "insert" in solids:
            stls = [p["stl"] for p in pieces] if plan is not None else [files["insert_stl"]]
            name = f"{spec.name}-insert.3mf"
            out.add(name, _plate(out.staging, stls, report, frame, spec.name, plan is not None))
            files["insert_3mf"] = name
        for k in kinds:
            if k in OUTPUTS and not OUTPUTS[k].made_for(spec):
                report.setdefault("not_made", {})[k] = OUTPUTS[k].why_not
            elif k in OUTPUTS:
                note(k)
                t0 = time.perf_counter()
                for suffix, data in OUTPUTS[k].encode(ctx).items():
                    name = f"{spec.name}-{suffix}"
                    out.add(name, data)
                    files[suffix.replace(".", "_")] = name
                seconds[f"{k}_s"] = time.perf_counter() - t0
        finish_report(report, ctx.warnings, files)
        out.add("report.json", report_bytes(report))
        note("publish")
        paths = out.publish()
    return BuildResult(
        report=report,
        files=paths,
        seconds=seconds,
        solids=solids,
        design=design,
        cache={"hits": stage.hits, "misses": stage.misses},
    )


def _plate(
    staging: Path,
    stls: list[str],
    report: dict[str, Any],
    frame: Any,
    title: str,
    standing: bool = False,
) -> bytes:
    """``NAME-insert.3mf``: the insert (or its pieces) on one plate, standing as the report's
    bed fit says (in the datum's frame on a panel)."""
    from ductgen.export.threemf import plate_3mf, stl_part

    up = str(report.get("print", {}).get("bed", {}).get("insert", {}).get("orientation_up", "+z"))
    where = None if frame is None else (frame.origin, frame.axes)
    if standing:  # the pieces' STLs already stand as they print
        up, where = "+z", None
    parts = [stl_part(n.removesuffix(".stl"), (staging / n).read_bytes(), where) for n in stls]
    return plate_3mf(parts, up, title)
