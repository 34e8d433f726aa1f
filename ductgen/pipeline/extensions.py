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

    ctx.warnings.extend(geometry_warnings(ctx.geometry))
    if ctx.spec.flow is None:
        return
    from ductgen.flow.report import flow_section

    section, warnings = flow_section(ctx.spec.flow, ctx.geometry)
    ctx.report["flow"] = section
    ctx.warnings.extend(warnings)


REPORT_HOOKS.append(_airflow_report)

# --- printability of the insert (insert/plug) ----------------------------------------


def _printability(ctx):  # type: ignore[no-untyped-def]
    """``print`` section from the insert mesh; hole, wall, heat and layup warnings."""
    from ductgen.printability import printability_hook

    printability_hook(ctx)


REPORT_HOOKS.append(_printability)

# --- printer bed fit (spec [print], solids/split.py) -----------------------------------


def _bed_fit(ctx) -> None:  # type: ignore[no-untyped-def]
    """``print.bed``: does each printed part fit ``[print] bed`` in its suggested
    orientation; where the insert does not, the stations of a keyed split across the flow
    (estimate from the mesh; the pieces themselves: :func:`ductgen.solids.split.split_for_bed`)."""
    from ductgen.errors import DesignWarning
    from ductgen.printability import overhang_by_orientation
    from ductgen.solids.split import bed_fit, estimate_stations

    bed = tuple(ctx.spec.print.bed)
    section: dict = {"bed_mm": list(bed)}
    for kind in ("insert", "plug"):
        if "mesh" not in ctx.solids.get(kind, {}):
            continue
        verts, faces = ctx.solids[kind]["mesh"]
        over = overhang_by_orientation(verts, faces)
        up = min(over, key=over.__getitem__)
        fit = bed_fit(verts, bed, up)
        entry = fit.as_dict()
        if kind == "insert" and not fit.fits:
            xs = estimate_stations(verts, bed, up)
            entry["split_stations_x_mm"] = xs
            more = (
                f"split it across the flow at x = {', '.join(f'{x:.1f}' for x in xs)} mm "
                f"into {len(xs) + 1} keyed pieces"
                if xs
                else "it does not fit even in 8 pieces across the flow"
            )
            ctx.warnings.append(
                DesignWarning(
                    "print_exceeds_bed",
                    f"the insert ({' x '.join(f'{s:.0f}' for s in fit.size_mm)} mm standing "
                    f"{up}) does not fit the {' x '.join(f'{b:.0f}' for b in bed)} mm bed: " + more,
                )
            )
        if kind == "plug" and not fit.fits:
            ctx.warnings.append(
                DesignWarning(
                    "plug_exceeds_bed",
                    "the plug does not fit the printer bed: make it in one piece (CNC-cut "
                    "foam or tooling board), since a printed plug's joints print through "
                    "the laminate (common practice)",
                )
            )
        section[kind] = entry
    if len(section) > 1:
        ctx.report.setdefault("print", {})["bed"] = section


REPORT_HOOKS.append(_bed_fit)

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
