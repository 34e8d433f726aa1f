"""Drawing sheet (``NAME-sheet.pdf``) and 3D preview picture (``NAME-preview.png``)."""

from __future__ import annotations

from typing import Any

__all__ = ["sheet_files"]


def sheet_files(ctx: Any) -> dict[str, bytes]:
    """Encode ``sheet.pdf`` and ``preview.png`` (suffix → bytes) for a build context."""
    from ductgen.pipeline.builder import package_version as _version
    from ductgen.sheets.preview import preview_png
    from ductgen.sheets.sheet import sheet_pdf

    png = preview_png(ctx)
    pdf = sheet_pdf(
        ctx.geometry,
        ctx.spec,
        ctx.report["spec_sha256"],
        ctx.report.get("ductgen_version", _version()),
        png,
    )
    return {"sheet.pdf": pdf, "preview.png": png}
