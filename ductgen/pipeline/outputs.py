"""The build's file outputs other than the solids: one static table, no registration.

Each entry maps an output kind (a name ``--only`` accepts) to its encoder, a function
``(ctx) -> {suffix: bytes}`` that may add warnings to ``ctx.warnings``, and the file
suffixes it writes after ``NAME-``. To add an output, add a line here.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

from ductgen.cache import Cache
from ductgen.design import Design
from ductgen.errors import DesignWarning
from ductgen.report import BuildRecord
from ductgen.solids.results import SolidResult
from ductgen.spec.model import Spec
from ductgen.worker import KernelWorker

__all__ = ["OUTPUTS", "BuildContext", "Output"]


@dataclass
class BuildContext:
    """What an encoder may read (the spec, the design, the measured solids, the build's
    record so far, the solid cache or None, the caller's kernel worker) and
    the warnings it may add (the record's list)."""

    spec: Spec
    design: Design
    solids: dict[str, SolidResult]
    record: BuildRecord
    worker: KernelWorker
    cache: Cache | None = None

    @property
    def warnings(self) -> list[DesignWarning]:
        """The build's warnings; an encoder appends its own."""
        return self.record.warnings


def _template(ctx: BuildContext) -> dict[str, bytes]:
    """``template.dxf`` (1:1, lines + arcs) and ``template.pdf`` (tiled 1:1); from the solid
    cache when the same spec (every key, its hash), design, date and code drew it before."""
    from ductgen.export.template import template_files

    key = None
    if ctx.cache is not None:
        from ductgen.cache import fingerprint, kernel_versions, source_fingerprint
        from ductgen.pipeline.solid_cache import design_key
        from ductgen.stamp import build_datetime

        dkey = design_key(ctx.design)
        if dkey is not None:
            key = fingerprint(
                "template",
                dkey,
                ctx.spec,
                ctx.record.spec_sha256,
                build_datetime().isoformat(),
                kernel_versions(("ezdxf", "matplotlib", "numpy")),
                source_fingerprint(("export", "stamp.py", "units.py")),
            )
            entry = ctx.cache.get(key)
            if entry is not None:
                return {name: bytes(data) for name, data in entry.blobs.items()}
    files = template_files(ctx.design, ctx.spec, ctx.record.spec_sha256)
    if key is not None and ctx.cache is not None:
        ctx.cache.put(key, {}, files)
    return files


def _sheet(ctx: BuildContext) -> dict[str, bytes]:
    """``sheet.pdf`` (dimensioned drawing sheet) and ``preview.png`` (3D view)."""
    from ductgen.sheets import sheet_files

    return sheet_files(ctx)


@dataclass(frozen=True)
class Output:
    """One output kind: its encoder and the suffixes of the files it writes."""

    encode: Callable[[BuildContext], dict[str, bytes]]
    suffixes: tuple[str, ...]


#: Output kind → encoder and suffixes, in build order.
OUTPUTS: dict[str, Output] = {
    "template": Output(_template, ("template.dxf", "template.pdf")),
    "sheet": Output(_sheet, ("sheet.pdf", "preview.png")),
}
