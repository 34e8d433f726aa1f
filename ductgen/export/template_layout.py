"""What goes on the 1:1 marking template, as plain entities in plan coordinates (mm).

One :class:`TemplateDrawing` feeds both encoders (:mod:`ductgen.export.dxf` and
:mod:`ductgen.export.pdf_template`), so the DXF and the tiled PDF show the same lines.
Layers, as a cutter or CAM program sees them:

* ``CUT`` — closed contours to cut: the skin opening (and the flange outline or trim line
  when the fabrication geometry provides one);
* ``HOLES`` — fastener circles;
* ``MARK`` — centreline, ramp-start and lip station ticks, table-station ticks, flow arrow,
  hole centre crosses (marking only, never cut);
* ``TEXT`` — name, spec hash, date, units, kerf note, "verify scale", cautions;
* ``SCALE`` — a 100 mm bar and a 4 in bar.

Coordinates (DEVELOPERS.md): x downstream from the ramp start, y spanwise, centreline y = 0.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from ductgen.export.outline import Contour, opening_contour
from ductgen.export.placement import Box, Occupancy, text_box
from ductgen.geometry.inlet import InletGeometry
from ductgen.spec.model import Spec
from ductgen.stamp import build_date
from ductgen.units import MM_PER_INCH

__all__ = [
    "CAUTIONS",
    "CAUTIONS_SHORT",
    "LAYERS",
    "Circle",
    "Line",
    "ScaleBar",
    "TemplateDrawing",
    "Text",
    "build_date",
    "template_drawing",
]

#: Layer name → AutoCAD colour index.
LAYERS: dict[str, int] = {"CUT": 1, "HOLES": 5, "MARK": 3, "TEXT": 7, "SCALE": 6}

#: The README's cautions in full: on every drawing sheet and the template's assembly page.
CAUTIONS = (
    "Cutting an opening weakens a panel or airframe: reinforce, and for aircraft get the "
    "modification approved under your aviation authority's rules. Brake and engine cooling are "
    "safety-critical: validate by test. Printed plastics soften near brakes, exhausts and engines: "
    "choose material by its heat-deflection temperature. Composites: resin and dust need PPE and "
    "ventilation. Verify the printed template's scale bar before cutting. Follow local codes, "
    "competition regulations and licensed practice; ductgen's estimates are not a certification."
)

#: The cautions, short form for the template's TEXT layer.
CAUTIONS_SHORT: tuple[str, ...] = (
    "CAUTION: cutting an opening weakens the panel - reinforce it;",
    "aircraft: get the modification approved by your aviation authority.",
    "Brake/engine cooling is safety-critical: validate by test.",
    "Printed plastics soften near brakes, exhausts, engines: choose by HDT.",
    "Composites: use PPE and ventilation. Verify the scale bars before cutting.",
    "Follow local codes and rules; ductgen estimates are not a certification.",
)

_INCH_MM = MM_PER_INCH


@dataclass(frozen=True)
class Line:
    """A straight marking line from ``a`` to ``b`` (mm)."""

    a: tuple[float, float]
    b: tuple[float, float]
    layer: str = "MARK"


@dataclass(frozen=True)
class Circle:
    """A circle (mm)."""

    centre: tuple[float, float]
    radius: float
    layer: str = "HOLES"


@dataclass(frozen=True)
class Text:
    """One line of text; ``height`` is the cap height (mm), anchored at its left baseline."""

    at: tuple[float, float]
    text: str
    height: float = 3.0
    layer: str = "TEXT"

    def box(self) -> Box:
        """Box (mm) the text covers, conservatively: Helvetica/Arial advance widths + 10 % at
        em = cap height / 0.718 (the font's cap height), descender to ascender."""
        x0, y0, x1, y1 = text_box(self.at[0], self.at[1], self.text, self.height / 0.718)
        return (x0, y0, x0 + 1.1 * (x1 - x0), y1)


@dataclass(frozen=True)
class ScaleBar:
    """A verify-scale bar of true length ``length_mm`` starting at ``at``, with a label."""

    at: tuple[float, float]
    length_mm: float
    label: str


@dataclass
class TemplateDrawing:
    """Every entity of the template, in mm plan coordinates.

    Attributes:
        name: spec name; units: the DXF drawing unit (``"mm"`` or ``"in"``).
        cuts: (role, contour) pairs on ``CUT``; role ``"air opening"`` first.
        circles, lines, texts, bars: the other entities.
    """

    name: str
    units: str
    cuts: list[tuple[str, Contour]] = field(default_factory=list)
    circles: list[Circle] = field(default_factory=list)
    lines: list[Line] = field(default_factory=list)
    texts: list[Text] = field(default_factory=list)
    bars: list[ScaleBar] = field(default_factory=list)

    def cut_extent(self) -> tuple[float, float, float, float]:
        """(xmin, ymin, xmax, ymax) of CUT, HOLES and MARK geometry and MARK labels (mm): what
        the PDF tiles."""
        pts = [c.sample(2.0) for _, c in self.cuts]
        pts += [np.array([ln.a, ln.b]) for ln in self.lines]
        pts += [np.array(c.centre) + c.radius * np.array([[-1, -1], [1, 1]]) for c in self.circles]
        pts += [np.array(t.box()).reshape(2, 2) for t in self.texts if t.layer == "MARK"]
        p = np.vstack(pts)
        return (
            float(p[:, 0].min()),
            float(p[:, 1].min()),
            float(p[:, 0].max()),
            float(p[:, 1].max()),
        )


def _kerf_note(kerf: float, has_outer: bool) -> str:
    if kerf <= 0:
        return "KERF 0: cut ON the line"
    outer = f"; outer trims offset OUTWARD {kerf / 2:.3f} mm" if has_outer else ""
    return f"KERF {kerf:.3f} mm: opening offset INWARD {kerf / 2:.3f} mm{outer}"


def template_drawing(
    g: InletGeometry,
    spec: Spec,
    stamp: str,
    outer: list[tuple[str, Contour]] | None = None,
    holes: list[tuple[float, float]] | None = None,
    hole_diameter_mm: float = 0.0,
) -> TemplateDrawing:
    """Lay out the template of one inlet.

    Args:
        g: the inlet geometry.
        spec: the spec (``template`` options: units, tolerance, kerf).
        stamp: what it was drawn from, for the text block
            (:func:`~ductgen.design.identity.drawn_from`).
        outer: further closed CUT contours (flange outline / trim line), already
            offset for kerf, each with a role name.
        holes: fastener hole centres (mm) and their diameter ``hole_diameter_mm``.

    Returns:
        The drawing, mm.
    """
    t = spec.template
    d = TemplateDrawing(name=spec.name, units=t.units)
    d.cuts.append(("air opening", opening_contour(g.planform, t.tolerance, 0.5 * t.kerf)))
    for role, contour in outer or []:
        d.cuts.append((role, contour))
    for cx, cy in holes or []:
        r = 0.5 * hole_diameter_mm
        d.circles.append(Circle((cx, cy), r))
        arm = 0.75 * hole_diameter_mm + 1.5
        d.lines.append(Line((cx - arm, cy), (cx + arm, cy)))
        d.lines.append(Line((cx, cy - arm), (cx, cy + arm)))
    _add_marks(d, g)
    _add_text_block(d, g, spec, stamp)
    return d


def _add_marks(d: TemplateDrawing, g: InletGeometry) -> None:
    """The centreline, station ticks outside the walls, the flow arrow upstream of every
    cut, and their labels (mm)."""
    pf = g.planform
    length, half = pf.length_mm, 0.5 * g.width_mm
    h0 = 0.5 * pf.apex_width_mm
    xa = min(float(c.points[:, 0].min()) for _, c in d.cuts) - 4.0
    xb = max(float(c.points[:, 0].max()) for _, c in d.cuts) + 15.0
    d.lines.append(Line((xa - 36.0, 0.0), (xb, 0.0)))
    for x, hw, tick in [(0.0, h0, 12.0), (length, half, 12.0)] + [
        (float(x), float(pf.half_width(x)), 5.0) for x in pf.node_x_mm[1:-1]
    ]:
        for s in (1.0, -1.0):
            d.lines.append(Line((x, s * (hw + 2.0)), (x, s * (hw + 2.0 + tick))))
    tip = (xa, 0.0)
    d.lines += [Line(tip, (xa - 6.0, 3.0)), Line(tip, (xa - 6.0, -3.0))]
    _place_labels(
        d,
        [
            (Text((xa - 34.0, 4.5), "FLOW", 3.0, "MARK"), (xa - 20.0, 4.5)),
            (Text((2.0, h0 + 16.0), "RAMP START x=0", 2.5, "MARK"), (0.0, h0 + 14.0)),
            (Text((0.0, 0.0), f"LIP x={length:.2f} mm", 2.5, "MARK"), (length, half + 14.0)),
        ],
    )


def _add_text_block(d: TemplateDrawing, g: InletGeometry, spec: Spec, stamp: str) -> None:
    """The scale bars (100 mm, 4 in) and the text block below the cuts: the inlet, the
    ``stamp`` (the design's hash), the build date, the units, the kerf, the cut order, the
    cautions."""
    t = spec.template
    ymin = min(float(c.points[:, 1].min()) for _, c in d.cuts) - 25.0
    d.bars.append(ScaleBar((0.0, ymin), 100.0, "100 mm - VERIFY SCALE"))
    d.bars.append(ScaleBar((0.0, ymin - 14.0), 4.0 * _INCH_MM, "4 in - VERIFY SCALE"))
    unit_note = "UNITS: mm (1:1)" if t.units == "mm" else "UNITS: inch (1:1)"
    lines = [
        f"{spec.name}  -  NACA-type flush inlet, skin opening template",
        f"W {g.width_mm:.2f} x D {g.depth_mm:.2f} mm, L {g.planform.length_mm:.2f} mm, "
        f"ramp {g.floor.angle_deg:.2f} deg",
        f"{stamp}  date {build_date()}  {unit_note}",
        _kerf_note(t.kerf, len(d.cuts) > 1),
        "CUT, inside out: " + ", ".join(role for role, _ in d.cuts),
        "VERIFY SCALE: the 100 mm bar must measure 100 mm before cutting",
        *CAUTIONS_SHORT,
    ]
    y = ymin - 30.0
    for i, line in enumerate(lines):
        d.texts.append(Text((0.0, y - 5.0 * i), line, 3.0 if i else 3.5))


def _place_labels(d: TemplateDrawing, labels: list[tuple[Text, tuple[float, float]]]) -> None:
    """Add MARK labels where the drawing is empty, each nearest its anchor point (mm).

    Every CUT contour, hole circle and MARK line is rasterised (0.25 mm cells) and each label's
    box (:meth:`Text.box`) is put at the free place nearest its anchor with 1.5 mm clearance,
    labels placed earlier counting as occupied.
    """
    x0, y0, x1, y1 = d.cut_extent()
    occ = Occupancy((x0 - 60.0, y0 - 30.0, x1 + 60.0, y1 + 30.0), 0.25)
    for _, c in d.cuts:
        occ.add_polyline(c.sample(0.1), closed=True)
    for circ in d.circles:
        occ.add_circle(circ.centre, circ.radius)
    for ln in d.lines:
        occ.add_polyline(np.array([ln.a, ln.b]))
    for t, anchor in labels:
        bx = t.box()
        w, h = bx[2] - bx[0], bx[3] - bx[1]
        at = occ.place((w, h), anchor, clearance=1.5)
        if at is None:  # cannot happen with the margin above; keep the given place
            at = (bx[0], bx[1])
        placed = Text((at[0] + t.at[0] - bx[0], at[1] + t.at[1] - bx[1]), t.text, t.height, t.layer)
        occ.add_box(placed.box())
        d.texts.append(placed)
