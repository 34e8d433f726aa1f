"""Drawing sheet (``NAME-sheet.pdf``) and 3D preview picture (``NAME-preview.png``)."""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

from ductgen.design.record import SkinRecord, TemplateRecord
from ductgen.errors import DesignWarning

__all__ = ["SKIN_LINES", "sheet_parts", "skin_lines"]


def skin_lines(skin: SkinRecord, template: TemplateRecord) -> tuple[tuple[str, str], ...]:
    """Key-dimension lines for a curved skin: the panel's radii and how the template was
    developed (the build record's skin and template); the datum and the outlet are the
    PLACEMENT block's (``sheets/placement.py``).

    One entry of :data:`SKIN_LINES` per ``skin.shape``; a shape without one is a test
    failure (``tests/test_spec_skin.py``), never a user's build."""
    return SKIN_LINES[skin.shape](skin, template)


def _flat_lines(skin: SkinRecord, template: TemplateRecord) -> tuple[tuple[str, str], ...]:
    return ()


def _cylinder(skin: SkinRecord) -> str:
    return f"cylinder R {skin.radius_mm:.0f} mm, {skin.side}, axis {skin.axis}"


def _doubly(skin: SkinRecord) -> str:
    return (
        f"doubly R {skin.radius_streamwise_mm:.0f} (along) / "
        f"{skin.radius_spanwise_mm:.0f} (across) mm, {skin.side}"
    )


def _curved_lines(panel: str, template: TemplateRecord) -> tuple[tuple[str, str], ...]:
    pct = template.max_length_distortion_pct
    return (
        ("skin", panel),
        ("template", "developed exactly" if pct == 0 else f"flattened, {pct:.2f} % max"),
    )


def _short(name: str) -> str:
    """A file name cut to 25 characters in the middle."""
    return name if len(name) <= 26 else name[:12] + "…" + name[-12:]


def _panel_lines(skin: SkinRecord, template: TemplateRecord) -> tuple[tuple[str, str], ...]:
    """The user's panel: file, the smallest radius under the parts, the scan fit, the
    template's distortion."""
    r = skin.smallest_radius_mm
    radius = "flat" if r is None else f"{r:.0f} mm, {skin.smallest_radius_side}"
    lines = [
        ("skin", f"panel {_short(skin.file or '')}"),
        ("smallest radius", radius),
    ]
    if skin.fit_rms_mm is not None:
        lines.append(("scan fit", f"{skin.fit_rms_mm:.3f} mm rms, {skin.fit_max_mm:.3f} max"))
    pct = template.max_length_distortion_pct
    lines.append(("template", f"flattened from the panel, {pct:.2f} % max"))
    return tuple(lines)


Lines = Callable[[SkinRecord, TemplateRecord], tuple[tuple[str, str], ...]]

#: ``skin.shape`` → the sheet's key-dimension lines for it (total over the spec's shapes).
SKIN_LINES: dict[str, Lines] = {
    "flat": _flat_lines,
    "cylinder": lambda skin, tpl: _curved_lines(_cylinder(skin), tpl),
    "doubly": lambda skin, tpl: _curved_lines(_doubly(skin), tpl),
    "panel": _panel_lines,
}


def sheet_parts(ctx: Any) -> tuple[dict[str, bytes], list[DesignWarning]]:
    """Encode ``sheet.pdf`` and ``preview.png`` (suffix → bytes) for a build context, and
    the warnings to add to the build's.

    Without an offscreen OpenGL context the sheet is still made, without its picture, and a
    ``preview_unavailable`` warning says how to get one. The context's own warnings are not
    touched (a build may draw the sheet on a thread while other stages add theirs: it adds
    these in stage order); of the record it reads only what the record's first stage makes
    (flow, split stations, skin, template).
    """
    from ductgen.errors import ExportError
    from ductgen.sheets.preview import preview_png
    from ductgen.sheets.sheet import sheet_pdf

    warnings: list[DesignWarning] = []
    try:  # drawn here, or taken from the build's second worker, which drew it ahead
        png: bytes | None = ctx.take("preview", lambda: preview_png(ctx, ctx.worker))
    except ExportError as err:
        warnings.append(DesignWarning("preview_unavailable", str(err)))
        png = None
    record = ctx.record
    args = (
        ctx.design.geometry,
        ctx.spec,
        record.spec_sha256,
        record.ductgen_version,
        png,
        record.flow,
        () if record.split is None else record.split.stations_x_mm,
        skin_lines(record.skin, record.template),
    )
    pdf = _cached(
        getattr(ctx, "cache", None), args, ctx.design, lambda: sheet_pdf(*args, design=ctx.design)
    )
    files = {"sheet.pdf": pdf}
    if png is not None:
        files["preview.png"] = png
    return files, warnings


def _cached(store: Any, args: tuple[Any, ...], design: Any, draw: Callable[[], bytes]) -> bytes:
    """``draw()``, or the sheet drawn before from the same ``args`` (what
    :func:`~ductgen.sheets.sheet.sheet_pdf` draws from: the geometry, the spec and its hash,
    the version, the picture, the flow record, the split stations, the skin lines) and
    ``design``, on the same date with the same code, from the solid cache ``store``."""
    from ductgen.cache import cached_bytes, kernel_versions, source_fingerprint
    from ductgen.design.identity import design_fields
    from ductgen.stamp import build_datetime

    if store is None:
        return draw()
    code = ("sheets", "flow", "export", "design", "geometry")
    parts = (
        "sheet",
        args,
        design_fields(design),
        build_datetime().isoformat(),
        kernel_versions(("ductgen", "matplotlib", "numpy")),
        source_fingerprint((*code, "display.py", "stamp.py", "units.py")),
    )
    return cached_bytes(store, parts, draw)
