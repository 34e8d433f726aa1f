"""The marking template files: ``NAME-template.dxf`` (1:1) and ``NAME-template.pdf``
(tiled 1:1), from the design's opening, flange and holes."""

from __future__ import annotations

import dataclasses

import numpy as np

from ductgen.design import Design
from ductgen.design.identity import drawn_from
from ductgen.export.dxf import dxf_bytes
from ductgen.export.outline import Contour, outward_contour
from ductgen.export.pdf_template import pdf_bytes
from ductgen.export.template_layout import (
    CAUTIONS,
    TemplateDrawing,
    Text,
    _kerf_note,
    template_drawing,
)
from ductgen.geometry.fabrication import footprint_end_mm
from ductgen.spec.model import Spec
from ductgen.stamp import build_date

__all__ = ["flange_contours", "template_files"]


def template_files(d: Design, spec: Spec, stamp: str | None = None) -> dict[str, bytes]:
    """Encode ``template.dxf`` and ``template.pdf`` (suffix → bytes) for one inlet;
    ``stamp``: :func:`~ductgen.design.identity.drawn_from` when not given. Reads the design
    and the spec's name and ``[template]`` keys only."""
    g = d.geometry
    t = spec.template
    stamp = drawn_from(d, spec) if stamp is None else stamp
    drawing = develop_drawing(template_drawing(g, spec, stamp, *flange_contours(d, spec)), d)
    info = [
        f"Skin opening of {spec.name}: W {g.width_mm:.2f} mm, L {g.length_mm:.2f} mm, "
        f"apex {g.planform.apex_width_mm:.2f} mm.",
        f"{stamp}, {build_date()}, paper {t.paper}.",
        _kerf_note(t.kerf, len(drawing.cuts) > 1) + ".",
        "Red lines, inside out: " + ", ".join(role for role, _ in drawing.cuts) + ".",
    ]
    return {
        "template.dxf": dxf_bytes(drawing),
        "template.pdf": pdf_bytes(
            drawing, t.paper, t.overlap, (t.scale_x, t.scale_y), spec.name, info, CAUTIONS
        ),
    }


def develop_drawing(drawing: TemplateDrawing, d: Design) -> TemplateDrawing:
    """The drawing carried from design coordinates (u, v) onto the flat template: unchanged
    where the skin develops exactly; on a doubly curved skin every cut line, hole, mark and
    label through the least-distortion flattening (cut lines as dense polylines, 0.5 mm).
    Scale bars keep their true length. The distortion is stated in the drawing's text."""
    dev = d.development
    if dev.exact:
        return drawing
    out = TemplateDrawing(name=drawing.name, units=drawing.units)
    for role, c in drawing.cuts:
        pts = dev.xy(c.sample(0.5))
        out.cuts.append((role, Contour(pts, np.zeros(len(pts)))))

    def at(p: tuple[float, float]) -> tuple[float, float]:
        q = dev.xy(np.array([p]))[0]
        return float(q[0]), float(q[1])

    out.circles += [dataclasses.replace(c, centre=at(c.centre)) for c in drawing.circles]
    out.lines += [dataclasses.replace(ln, a=at(ln.a), b=at(ln.b)) for ln in drawing.lines]
    out.texts += [dataclasses.replace(tx, at=at(tx.at)) for tx in drawing.texts]
    out.bars += drawing.bars
    x0, y0, _, _ = out.cut_extent()
    out.texts.append(
        Text(
            (x0, y0 - 8.0),
            f"FLATTENED from a doubly curved skin: lengths within "
            f"{dev.max_length_distortion_pct:.2f} % of the panel's",
            2.5,
        )
    )
    return out


def flange_contours(
    d: Design, spec: Spec
) -> tuple[list[tuple[str, Contour]], list[tuple[float, float]], float]:
    """The insert's flange (or surface bezel) outline as an outer CUT contour, offset outward
    by kerf/2, and its fastener holes, from the design's flange layout.

    The outline is fitted with arcs to the true wall curve offset with the same construction
    as the layout (the footprint to ``footprint_end_mm`` offset by wall + edge round +
    flange width, round corners), instead of copying the sampled polyline.
    """
    g, fl, t = d.geometry, d.layout, spec.template
    dist = fl.cutout_offset_mm + fl.flange_width_mm + 0.5 * t.kerf
    role = "flange outline" if fl.mount == "behind" else "bezel outline"
    x_end = footprint_end_mm(g)
    outer = []
    if fl.mount == "behind" and fl.cutout_offset_mm > 0:
        # the insert's walls pass up through the skin: this is the hole to cut in the skin;
        # a hole, so the kerf moves its tool path inward
        cut = fl.cutout_offset_mm - 0.5 * t.kerf
        outer.append(("skin cut-out", outward_contour(g.planform, x_end, cut, t.tolerance)))
    outer.append((role, outward_contour(g.planform, x_end, dist, t.tolerance)))
    holes = [(float(x), float(y)) for x, y in fl.hole_centres_xy]
    return outer, holes, float(fl.hole_diameter_mm)
