"""The build's file outputs other than the solids: one static table, no registration.

Each entry maps an output kind (a name ``--only`` accepts) to its encoder, a function
``(ctx) -> {suffix: bytes}`` that may add warnings to ``ctx.warnings``, and the file
suffixes it writes after ``NAME-``. To add an output, add a line here.
"""

from __future__ import annotations

from collections.abc import Callable
from concurrent.futures import Future, wait
from dataclasses import dataclass, field
from typing import Any, TypeVar

from ductgen.cache import Cache
from ductgen.design import Design
from ductgen.errors import DesignWarning
from ductgen.report import BuildRecord
from ductgen.solids.results import SolidResult
from ductgen.spec.model import Spec
from ductgen.worker import KernelWorker

__all__ = [
    "OUTPUTS",
    "BuildContext",
    "Output",
    "cached_plate",
    "jig_bytes",
    "sheet_ahead",
    "template_bytes",
]

T = TypeVar("T")


@dataclass
class BuildContext:
    """What an encoder may read (the spec, the design, the measured solids, the build's
    record so far, the solid cache or None, the caller's kernel worker, the work the build
    started ahead on other threads by name: ``"template"``, ``"jig"``, ``"preview"``) and the
    warnings it may add (the record's list)."""

    spec: Spec
    design: Design
    solids: dict[str, SolidResult]
    record: BuildRecord
    worker: KernelWorker
    cache: Cache | None = None
    quality: str = "normal"
    ahead: dict[str, Future[Any]] = field(default_factory=dict)

    def take(self, name: str, make: Callable[[], T]) -> T:
        """The result of the work the build started ahead under ``name`` (its error raised
        here), or ``make()`` when none was started."""
        ahead = self.ahead.pop(name, None)
        return make() if ahead is None else ahead.result()

    @property
    def warnings(self) -> list[DesignWarning]:
        """The build's warnings; an encoder appends its own."""
        return self.record.warnings


def template_bytes(design: Design, spec: Spec, cache: Cache | None) -> dict[str, bytes]:
    """``template.dxf`` (1:1, lines + arcs) and ``template.pdf`` (tiled 1:1); from the solid
    cache when the same design, name, ``[template]`` keys, date and code drew it before (it
    reads nothing else of the spec: a change of ``[flow]`` draws no new template). Reads
    nothing a build's later stages write, so a build starts it on a thread of its own while
    the kernel works."""
    from ductgen.design.identity import drawn_from

    stamp = drawn_from(design, spec)
    key = None
    if cache is not None:
        from ductgen.cache import fingerprint, kernel_versions, source_fingerprint
        from ductgen.pipeline.solid_cache import design_key
        from ductgen.stamp import build_datetime

        dkey = design_key(design)
        if dkey is not None:
            key = fingerprint(
                "template",
                dkey,
                spec.name,
                spec.template,
                stamp,
                build_datetime().isoformat(),
                kernel_versions(("ezdxf", "matplotlib", "numpy")),
                source_fingerprint(("export", "stamp.py", "units.py")),
            )
            entry = cache.get(key)
            if entry is not None:
                return {name: bytes(data) for name, data in entry.blobs.items()}
    from ductgen.export.template import template_files  # the encoders: only on a miss

    files = template_files(design, spec, stamp)
    if key is not None and cache is not None:
        cache.put(key, {}, files)
    return files


def cached_plate(cache: Cache | None, inputs: tuple[Any, ...], make: Callable[[], bytes]) -> bytes:
    """``make()`` (the insert's 3MF plate), or the plate made before from the same
    ``inputs`` (the parts' names and STL bytes, the frame, the up axis, the title) with the
    same code, from the solid cache."""
    from ductgen.cache import cached_bytes, kernel_versions, source_fingerprint

    if cache is None:
        return make()
    code = source_fingerprint(("export/threemf.py", "solids/bed.py"))
    return cached_bytes(cache, ("plate", inputs, kernel_versions(("trimesh", "numpy")), code), make)


def _template(ctx: BuildContext) -> dict[str, bytes]:
    """:func:`template_bytes`, or what the build started ahead (its error raised here)."""
    return ctx.take("template", lambda: template_bytes(ctx.design, ctx.spec, ctx.cache))


def sheet_ahead(
    ctx: BuildContext, template: Future[Any] | None
) -> tuple[dict[str, bytes], list[DesignWarning]]:
    """:func:`ductgen.sheets.sheet_parts`, after ``template`` (the template drawn ahead, on
    another thread) has finished: both draw with matplotlib, which is not made to draw on two
    threads at once. A build starts it once its record is made
    (:mod:`ductgen.pipeline.ahead`)."""
    from ductgen.sheets import sheet_parts

    if template is not None:
        wait([template])
    return sheet_parts(ctx)


def _sheet(ctx: BuildContext) -> dict[str, bytes]:
    """``sheet.pdf`` (dimensioned drawing sheet) and ``preview.png`` (3D view): drawn here,
    or what the build started ahead (:func:`sheet_ahead`; its error raised here); its
    warnings join the record's in stage order either way."""
    from ductgen.sheets import sheet_parts

    files, warnings = ctx.take("sheet", lambda: sheet_parts(ctx))
    ctx.warnings.extend(warnings)
    return files


def jig_bytes(
    design: Design, spec: Spec, quality: str, worker: KernelWorker
) -> tuple[dict[str, bytes], dict[str, Any]]:
    """``jig.step``/``.stl``/``.3mf`` (and ``jig-partK``) by suffix, and the jig's facts:
    the conformal marking jig, built by ``worker`` (:func:`ductgen.solids.jig.jig_job`).
    Reads only the spec and the design, so a build starts it ahead, in its second worker."""
    import shutil
    import tempfile
    from pathlib import Path

    from ductgen.solids.jig_job import jig_job

    tmp = Path(tempfile.mkdtemp(prefix="ductgen-jig-"))
    try:
        facts = worker.run(
            jig_job, design, spec.template.kerf, spec.print.bed, quality, spec.name, str(tmp)
        )
        files = {p.name.removeprefix(f"{spec.name}-"): p.read_bytes() for p in tmp.iterdir()}
    finally:
        shutil.rmtree(tmp, ignore_errors=True)
    files["jig.3mf"] = _jig_plate(facts, files, spec.name)  # takes the print frames out
    return dict(sorted(files.items())), facts


def _jig(ctx: BuildContext) -> dict[str, bytes]:
    """:func:`jig_bytes` in the caller's kernel worker, or what the build started ahead (its
    error raised here); the facts go to the record's ``jig`` (``report["jig"]``)."""
    files, facts = ctx.take("jig", lambda: jig_bytes(ctx.design, ctx.spec, ctx.quality, ctx.worker))
    ctx.record.jig = facts
    return files


def _jig_plate(facts: dict[str, Any], files: dict[str, bytes], name: str) -> bytes:
    """``jig.3mf``: the jig (or its pieces) on one plate, each lying as on the skin (its
    print frame: the skin's outward normal at its middle up)."""
    from ductgen.export.threemf import plate_3mf, stl_part

    parts = facts.get("pieces") or [facts]
    plate = []
    for p in parts:
        stl = p["stl"].removeprefix(f"{name}-")
        origin, axes = p.pop("print_frame")
        plate.append(stl_part(p["stl"].removesuffix(".stl"), files[stl], (origin, axes)))
    facts.pop("print_frame", None)
    return plate_3mf(plate, "+z", f"{name} jig")


def _curved(spec: Spec) -> bool:
    """The skin is not flat (a flat skin's 1:1 template is exact: no jig needed)."""
    return spec.skin.shape != "flat"


@dataclass(frozen=True)
class Output:
    """One output kind: its encoder, the suffixes of the files it writes and, when it is
    made only for some specs, which (``wanted(spec)``)."""

    encode: Callable[[BuildContext], dict[str, bytes]]
    suffixes: tuple[str, ...]
    wanted: Callable[[Spec], bool] | None = None
    why_not: str = ""

    def made_for(self, spec: Spec) -> bool:
        """Whether a build of ``spec`` makes this output."""
        return self.wanted is None or self.wanted(spec)


#: Output kind → encoder and suffixes, in build order.
OUTPUTS: dict[str, Output] = {
    "template": Output(_template, ("template.dxf", "template.pdf")),
    "sheet": Output(_sheet, ("sheet.pdf", "preview.png")),
    "jig": Output(
        _jig,
        ("jig.step", "jig.stl", "jig.3mf"),
        _curved,
        "a flat skin needs no jig: the 1:1 template (DXF/PDF) is exact on it",
    ),
}
