"""Where the optional build outputs and report sections plug into the pipeline.

Each feature registers here, in its own block, so the pipeline itself stays unchanged:

* ``PRODUCERS[kind] = (producer, suffixes)`` — an output kind for ``--only``; the producer
  ``(ctx, out) -> {file kind: file name}`` stages files with ``out.add(name, bytes)``.
* ``REPORT_HOOKS.append(hook)`` — ``hook(ctx)`` adds a section to ``ctx.report`` and may
  append :class:`~ductgen.errors.DesignWarning` records to ``ctx.warnings``.

Imported once by :mod:`ductgen.pipeline.builder`; keep the imports inside each block light.
"""

from __future__ import annotations

from ductgen.pipeline.builder import PRODUCERS, REPORT_HOOKS

# --- airflow (flow/) -------------------------------------------------------------------


def _airflow_report(ctx) -> None:  # type: ignore[no-untyped-def]
    """Design warnings on the shape (always) and the ``flow`` section when [flow] is set."""
    from ductgen.flow.warnings import geometry_warnings
    from ductgen.report import duct_shape

    shape = duct_shape(ctx.geometry)
    ctx.warnings.extend(geometry_warnings(shape))
    if ctx.spec.flow is None:
        return
    from ductgen.flow.report import flow_section

    section, warnings = flow_section(ctx.spec.flow, shape)
    ctx.report["flow"] = section
    ctx.warnings.extend(warnings)


REPORT_HOOKS.append(_airflow_report)

# --- printability of the insert (insert/plug) ----------------------------------------


def _printability(ctx):  # type: ignore[no-untyped-def]
    """``print`` section from the insert mesh; hole, wall, heat and layup warnings."""
    from ductgen.printability import printability_hook

    printability_hook(ctx)


REPORT_HOOKS.append(_printability)

# --- marking template and drawing sheet (export/, sheets/) ---------------------------


def _stage(ctx, out, files: dict[str, bytes]) -> dict[str, str]:  # type: ignore[no-untyped-def]
    """Stage ``NAME-SUFFIX`` files; returns file kind (suffix with '_') → file name."""
    names = {}
    for suffix, data in files.items():
        name = f"{ctx.spec.name}-{suffix}"
        out.add(name, data)
        names[suffix.replace(".", "_")] = name
    return names


def _template_producer(ctx, out):  # type: ignore[no-untyped-def]
    """``NAME-template.dxf`` (1:1, lines + arcs) and ``NAME-template.pdf`` (tiled 1:1)."""
    from ductgen.export.template_layout import template_files

    return _stage(ctx, out, template_files(ctx.geometry, ctx.spec, ctx.report["spec_sha256"]))


def _sheet_producer(ctx, out):  # type: ignore[no-untyped-def]
    """``NAME-sheet.pdf`` (dimensioned drawing sheet) and ``NAME-preview.png`` (3D view)."""
    from ductgen.sheets import sheet_files

    return _stage(ctx, out, sheet_files(ctx))


PRODUCERS["template"] = (_template_producer, ("template.dxf", "template.pdf"))
PRODUCERS["sheet"] = (_sheet_producer, ("sheet.pdf", "preview.png"))
