"""Drawing sheet (``NAME-sheet.pdf``) and 3D preview picture (``NAME-preview.png``)."""

from __future__ import annotations

from typing import Any

__all__ = ["sheet_files"]


def sheet_files(ctx: Any) -> dict[str, bytes]:
    """Encode ``sheet.pdf`` and ``preview.png`` (suffix → bytes) for a build context.

    Without an offscreen OpenGL context the sheet is still made, without its picture, and a
    ``preview_unavailable`` warning says how to get one.
    """
    from ductgen.errors import DesignWarning, ExportError
    from ductgen.sheets.preview import preview_png
    from ductgen.sheets.sheet import sheet_pdf

    try:
        png: bytes | None = preview_png(ctx)
    except ExportError as err:
        ctx.warnings.append(DesignWarning("preview_unavailable", str(err)))
        png = None
    split = ctx.report.get("print", {}).get("bed", {}).get("insert", {})
    pdf = sheet_pdf(
        ctx.design.geometry,
        ctx.spec,
        ctx.report["spec_sha256"],
        ctx.report["ductgen_version"],
        png,
        ctx.report.get("flow"),
        tuple(split.get("split_stations_x_mm") or ()),
    )
    files = {"sheet.pdf": pdf}
    if png is not None:
        files["preview.png"] = png
    return files
