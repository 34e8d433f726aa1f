"""The build pipeline: spec → design → solids (in the kernel worker) → files → report.

The CLI's ``build`` and every sweep variant call :func:`build`. Outputs are produced into a
staging folder and published together, so a failed build leaves nothing behind and no
existing file is replaced without ``force``.
"""

from __future__ import annotations

import contextlib
import importlib
import time
from collections.abc import Callable
from concurrent.futures import wait
from dataclasses import dataclass, field
from functools import partial
from pathlib import Path
from typing import Any

from ductgen.atomic import OutputSet, check_free
from ductgen.cache import Cache, open_cache
from ductgen.design import Design, build_design
from ductgen.pipeline.ahead import Ahead, PictureScene, picture
from ductgen.pipeline.options import (
    BuildOptions,
    cuts_panel,
    output_kinds,
    planned_files,
    planned_stages,
    select_kinds,
)
from ductgen.pipeline.outputs import (
    OUTPUTS,
    BuildContext,
    jig_bytes,
    sheet_ahead,
    template_bytes,
)
from ductgen.pipeline.result import BuildResult
from ductgen.pipeline.solid_cache import SolidStage
from ductgen.report import BuildRecord, InsertSplit, report_bytes, split_plan, start_record
from ductgen.solids.kinds import SOLID_KINDS
from ductgen.solids.panel_cut import cut_panel_job
from ductgen.solids.results import InsertPiece, SolidResult
from ductgen.spec.load import spec_sha256
from ductgen.spec.model import PanelSkinSpec, Spec
from ductgen.worker import KernelWorker, WorkerLimits, default_worker

__all__ = [
    "BuildOptions",
    "BuildResult",
    "Stage",
    "build",
    "output_kinds",
    "package_version",
    "planned_files",
    "planned_stages",
    "select_kinds",
    "stages",
]

#: Output kinds whose making checks the insert and plug rules.
_NEEDS_FABRICATION = ("insert", "plug", "template")


def package_version() -> str:
    """The installed ductgen version (``ductgen.__version__``)."""
    from ductgen import __version__

    return __version__


@dataclass
class _Build:
    """One build in progress: its inputs, and what each stage leaves for the next."""

    spec: Spec
    out_dir: Path
    options: BuildOptions
    worker: KernelWorker
    design: Design | None
    exits: contextlib.ExitStack
    store: Cache | None = None
    seconds: dict[str, float] = field(default_factory=dict)
    out: OutputSet | None = None
    kernel: SolidStage | None = None
    solids: dict[str, SolidResult] = field(default_factory=dict)
    record: BuildRecord | None = None
    files: dict[str, str] = field(default_factory=dict)
    paths: dict[str, Path] = field(default_factory=dict)
    report: dict[str, Any] = field(default_factory=dict)
    ahead: Ahead = field(init=False)
    split_started: InsertSplit | None = None
    split_asked: bool = False

    @property
    def staging(self) -> Path:
        assert self.out is not None
        return self.out.staging

    @property
    def rec(self) -> BuildRecord:
        assert self.record is not None
        return self.record


def _geometry(b: _Build) -> None:
    """The design, built and checked before the kernel starts (the fabrication rules when an
    output needs them)."""
    needs_fab = any(k in b.options.kinds for k in _NEEDS_FABRICATION)
    if b.design is None or (needs_fab and not b.design.fabrication_checked):
        b.design = build_design(b.spec, check_fabrication=needs_fab, worker=b.worker)


def _open(b: _Build) -> None:
    """Check no file would be replaced; open the staging folder; warm a side worker to use."""
    check_free([b.out_dir / n for n in planned_files(b.spec, b.options.kinds)], b.options.force)
    b.store = open_cache(b.options.cache)
    assert b.design is not None
    b.kernel = SolidStage(b.store, b.design, b.options.quality, b.worker)
    b.out = b.exits.enter_context(OutputSet(b.out_dir, force=b.options.force))
    if b.ahead.beside and b.kernel.builds_beside(list(b.options.solid_kinds)):
        b.ahead.warm_side()
    b.ahead.picture_wanted = _beside("sheet", b) and bool(b.options.solid_kinds)
    if "insert" in b.options.solid_kinds:  # the print checks' mesh tools, while solids build
        b.ahead.start("parent imports", importlib.import_module, "trimesh")


def _template_ahead(b: _Build) -> None:
    b.ahead.start("template", template_bytes, b.design, b.spec, b.store)


def _beside(kind: str, b: _Build) -> bool:
    return b.ahead.beside and _wants(kind, b)


def _jig_ahead(b: _Build) -> None:
    side = b.ahead.side()
    b.ahead.start("jig", jig_bytes, b.design, b.spec, b.options.quality, side, stops=side)


def _preview_wanted(b: _Build) -> bool:
    return _beside("sheet", b) and any(k in b.solids for k in SOLID_KINDS)


def _preview_ahead(b: _Build, solids: dict[str, SolidResult] | None = None) -> None:
    """The preview's picture in the side worker, once: when the insert is checked, or now."""
    assert b.design is not None
    side, scene = b.ahead.side(), PictureScene(b.design, solids or b.solids, b.store)
    b.ahead.start_once("preview", picture, scene, b.worker, side, stops=side)


def _sheet_ahead(b: _Build) -> None:
    """The sheet drawn on a thread (:func:`~ductgen.pipeline.outputs.sheet_ahead`)."""
    b.ahead.start("sheet", sheet_ahead, _context(b), b.ahead.futures.get("template"))


def _solids(b: _Build) -> None:
    """The solids: from the cache or built in the kernel worker; their files staged."""
    assert b.kernel is not None and b.out is not None
    kinds = list(b.options.solid_kinds)
    beside = b.ahead.side_job if b.ahead.beside else None
    early = (lambda r: _preview_ahead(b, {"insert": r})) if _beside("sheet", b) else None
    split = partial(_split_ahead, b) if beside is not None else None
    b.solids = b.kernel.solids(kinds, b.spec.name, b.staging, beside, early, split)
    for k in kinds:
        for fmt, name in b.solids[k].files.items():
            b.out.staged_path(name)
            b.files[f"{k}_{fmt}"] = name
        for stage_name, s in b.solids[k].seconds.items():
            b.seconds[f"{k}_{stage_name}"] = s


def _record(b: _Build) -> None:
    """The record's computed sections (geometry, flow, print checks, bed fit)."""
    assert b.design is not None and b.kernel is not None
    checks = b.kernel.mesh_checks(b.spec, b.solids)
    b.record = start_record(
        b.spec, b.design, b.solids, spec_sha256(b.spec), package_version(), checks
    )


def _panel(b: _Build) -> None:
    """``NAME-panel.step``: the user's panel with the inlet cut out, in the kernel worker or,
    while it splits the insert, in the side worker (whose jobs end first: side-pod sample
    23.1 -> 22.0 s in one process)."""
    skin = b.spec.skin
    assert isinstance(skin, PanelSkinSpec) and b.out is not None and b.design is not None
    worker = b.ahead.side() if b.split_started is not None else b.worker
    tools, has_insert = [b.solids["cutter"].step_file], "insert" in b.solids
    args = (b.design, skin.file, skin.units, tools, str(b.staging), has_insert)
    cut = b.ahead.run_in("panel", worker, cut_panel_job, *args).result()
    b.out.staged_path(cut.pop("file"))
    b.rec.panel_cut = cut
    b.files["panel_step"] = f"{b.spec.name}-panel.step"


def _frame(b: _Build) -> tuple[list[float], list[list[float]]] | None:
    frame = None if b.design is None else b.design.panel_frame
    return None if frame is None else (frame.origin.tolist(), frame.axes.tolist())


def _pieces(b: _Build, split: InsertSplit, insert: SolidResult | None = None) -> list[InsertPiece]:
    """The insert's keyed pieces split at ``split`` (kernel worker or solid cache)."""
    assert b.kernel is not None
    step, plan = (insert or b.solids["insert"]).step_file, (list(split.stations_x_mm), split.up)
    return b.kernel.split_insert(b.staging, step, b.spec.name, plan, b.spec.print.bed, _frame(b))


def _split_ahead(b: _Build, insert: SolidResult | None = None) -> None:
    """When the insert will be split: start its split in the kernel worker on a thread,
    once, so the rest is made meanwhile: as soon as the worker has written the ``insert``
    (while the side worker may still make the plug), or after the solids (a cached one)."""
    assert b.design is not None
    if b.split_asked:
        return
    b.split_asked, insert = True, insert or b.solids["insert"]
    plan = split_plan(b.spec, b.design, {"insert": insert})
    if plan is not None:
        b.split_started = plan
        b.ahead.start("split", _pieces, b, plan, insert, stops=b.worker)


def _split(b: _Build) -> None:
    """The insert is larger than the bed: keyed pieces that fit (split here, or taken from
    :func:`_split_ahead`)."""
    split = b.rec.split
    assert split is not None and b.out is not None
    ahead = b.ahead.futures.pop("split", None)
    if ahead is not None and b.split_started != split:  # never: one mesh, one function
        wait([ahead])
        ahead = None
    pieces = ahead.result() if ahead is not None else _pieces(b, split)
    for k, piece in enumerate(pieces, start=1):
        for fmt in ("step", "stl"):
            name = getattr(piece, fmt)
            b.out.staged_path(name)
            b.files[f"insert_part{k}_{fmt}"] = name
    b.rec.pieces = pieces


def _plate(b: _Build) -> None:
    """``NAME-insert.3mf``: the insert (or its pieces) on one plate, standing as the bed fit
    says (in the datum's frame on a panel); split pieces' STLs already stand as they print."""
    from ductgen.export.threemf import plate_3mf, stl_part
    from ductgen.pipeline.outputs import cached_plate

    assert b.out is not None and b.design is not None
    pieces = b.rec.pieces
    stls = [p.stl for p in pieces] if pieces else [b.files["insert_stl"]]
    frame = b.design.panel_frame
    where = None if frame is None else (frame.origin, frame.axes)
    up = b.rec.insert_up or "+z"
    if pieces:  # the pieces' STLs already stand as they print
        up, where = "+z", None
    meshes = [(n.removesuffix(".stl"), (b.staging / n).read_bytes()) for n in stls]

    def plate() -> bytes:
        return plate_3mf([stl_part(n, data, where) for n, data in meshes], up, b.spec.name)

    name = f"{b.spec.name}-insert.3mf"
    b.out.add(name, cached_plate(b.store, (meshes, where, up, b.spec.name), plate))
    b.files["insert_3mf"] = name


def _context(b: _Build) -> BuildContext:
    assert b.design is not None
    return BuildContext(
        b.spec, b.design, b.solids, b.rec, b.worker, b.store, b.options.quality, b.ahead.futures
    )


def _encode(kind: str, b: _Build) -> None:
    """One file output of :data:`~ductgen.pipeline.outputs.OUTPUTS`."""
    assert b.out is not None
    for suffix, data in OUTPUTS[kind].encode(_context(b)).items():
        name = f"{b.spec.name}-{suffix}"
        b.out.add(name, data)
        b.files[suffix.replace(".", "_")] = name


def _publish(b: _Build) -> None:
    """``report.json`` (the record, serialised once), then every file renamed into place."""
    assert b.out is not None
    b.rec.files = b.files
    b.report = b.rec.to_report()
    b.out.add("report.json", report_bytes(b.report))
    b.paths = b.out.publish()


@dataclass(frozen=True)
class Stage:
    """One step of :func:`build`: its progress name (None: not reported), when it runs, what
    it does, and the key of its seconds in ``BuildResult.seconds`` (None: not timed)."""

    name: str | None
    when: Callable[[_Build], bool]
    run: Callable[[_Build], None]
    seconds: str | None = None


def _always(_b: _Build) -> bool:
    return True


def _wants(kind: str, b: _Build) -> bool:
    return kind in b.options.kinds and OUTPUTS[kind].made_for(b.spec)


def _not_wanted(b: _Build) -> list[str]:
    """Asked-for output kinds this spec does not get (e.g. the jig on a flat skin)."""
    return [k for k in b.options.kinds if k in OUTPUTS and not OUTPUTS[k].made_for(b.spec)]


def _not_made(b: _Build) -> None:
    """Say in the record why each asked-for output was not made."""
    b.rec.not_made = {k: OUTPUTS[k].why_not for k in _not_wanted(b)}


def stages() -> tuple[Stage, ...]:
    """The build, in order (one stage per file output of
    :data:`~ductgen.pipeline.outputs.OUTPUTS`); progress names match
    :func:`planned_stages`."""
    return (
        Stage("geometry", _always, _geometry, "geometry_s"),
        Stage(None, _always, _open),
        Stage(None, partial(_wants, "template"), _template_ahead),
        Stage(None, partial(_beside, "jig"), _jig_ahead),
        Stage("solids", lambda b: bool(b.options.solid_kinds), _solids, "solids_s"),
        Stage(None, lambda b: b.ahead.beside and "insert" in b.solids, _split_ahead),
        Stage(None, _preview_wanted, _preview_ahead),
        Stage(None, _always, _record),
        Stage(None, partial(_beside, "sheet"), _sheet_ahead),
        Stage("panel", lambda b: cuts_panel(b.spec, b.options.kinds), _panel, "panel_s"),
        Stage("insert split", lambda b: b.rec.split is not None, _split, "insert_split_s"),
        Stage(None, lambda b: "insert" in b.solids, _plate),
        Stage(None, lambda b: bool(_not_wanted(b)), _not_made),
        *(Stage(k, partial(_wants, k), partial(_encode, k), f"{k}_s") for k in OUTPUTS),
        Stage("publish", _always, _publish),
    )


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
    options: BuildOptions | None = None,
    beside: bool = True,
) -> BuildResult:
    """Build every requested output of ``spec`` into ``out_dir``, stage by stage (:func:`stages`).

    ``options``: the checked options (:meth:`BuildOptions.check`); without them ``only``,
    ``quality``, ``force`` and ``cache`` are checked here. ``design``: the design of
    ``spec`` when the caller already built it (a sweep does, to validate its variants);
    otherwise it is built here. ``cache``: take solids, the insert's pieces and the preview
    from the user's solid cache and store new ones there (:mod:`ductgen.cache`;
    ``DUCTGEN_CACHE_DIR``, ``DUCTGEN_CACHE_MB``); False bypasses it. ``worker``: the kernel
    worker the build's kernel jobs run in (default: the process-wide one).
    ``beside``: the jig, the cutter and plug and the preview's picture run in a second
    worker beside it (:mod:`ductgen.pipeline.ahead`); False (a sweep): all in it.

    Raises:
        SpecError: bad input (before anything is written), e.g. a bad ``DUCTGEN_CACHE_MB``.
        GeometryError: the kernel failed; the message names the stage.
        ExportError: a file exists and ``force`` is not set, or a write failed.
    """
    note = progress or (lambda _s: None)
    if worker is None:
        WorkerLimits.from_env()  # a bad DUCTGEN_MEMORY_MB / DUCTGEN_TIMEOUT_S: exit 2 first
    if options is None:
        options = BuildOptions.check(only, quality, force, cache)
    with contextlib.ExitStack() as exits:
        b = _Build(spec, Path(out_dir), options, worker or default_worker(), design, exits)
        b.ahead = Ahead(exits, b.worker.limits, beside)
        for st in stages():
            if not st.when(b):
                continue
            if st.name is not None:
                note(st.name)
            t0 = time.perf_counter()
            st.run(b)
            if st.seconds is not None:
                b.seconds[st.seconds] = time.perf_counter() - t0
    assert b.kernel is not None
    return BuildResult(
        report=b.report,
        files=b.paths,
        seconds=b.seconds,
        solids=b.solids,
        record=b.rec,
        design=b.design,
        cache={"hits": b.kernel.hits, "misses": b.kernel.misses},
    )
