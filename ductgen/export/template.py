"""The marking template files: ``NAME-template.dxf`` (1:1) and ``NAME-template.pdf``
(tiled 1:1), from the design's opening, flange and holes."""

from __future__ import annotations

from ductgen.design import Design
from ductgen.export.dxf import dxf_bytes
from ductgen.export.outline import Contour, outward_contour
from ductgen.export.pdf_template import pdf_bytes
from ductgen.export.template_layout import CAUTIONS, _kerf_note, build_date, template_drawing
from ductgen.geometry.fabrication import footprint_end_mm
from ductgen.spec.model import Spec

__all__ = ["template_files"]


def template_files(d: Design, spec: Spec, spec_hash: str) -> dict[str, bytes]:
    """Encode ``template.dxf`` and ``template.pdf`` (suffix → bytes) for one inlet."""
    g = d.geometry
    t = spec.template
    drawing = template_drawing(g, spec, spec_hash, *_fabrication(d, spec))
    info = [
        f"Skin opening of {spec.name}: W {g.width_mm:.2f} mm, L {g.length_mm:.2f} mm, "
        f"apex {g.planform.apex_width_mm:.2f} mm.",
        f"spec sha256 {spec_hash[:16]}, {build_date()}, paper {t.paper}.",
        _kerf_note(t.kerf, len(drawing.cuts) > 1) + ".",
        "Red lines, inside out: " + ", ".join(role for role, _ in drawing.cuts) + ".",
    ]
    return {
        "template.dxf": dxf_bytes(drawing),
        "template.pdf": pdf_bytes(
            drawing, t.paper, t.overlap, (t.scale_x, t.scale_y), spec.name, info, CAUTIONS
        ),
    }


def _fabrication(
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
