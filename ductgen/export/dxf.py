"""DXF R2010 encoder of the 1:1 marking template (ezdxf).

Each CUT contour is one closed ``LWPOLYLINE`` of lines and bulge arcs; there are no SPLINE
entities. ``$INSUNITS`` states the drawing unit (4 = mm, 1 = inch, DXF reference) and
``$MEASUREMENT`` the matching metric/imperial flag; coordinates are written in that unit
(plan coordinates, 1:1).
"""

from __future__ import annotations

import io

import ezdxf

from ductgen.export.template_layout import LAYERS, TemplateDrawing
from ductgen.units import FILE_UNITS

__all__ = ["INSUNITS", "dxf_bytes"]

#: Template unit → (``$INSUNITS`` code, mm per drawing unit).
INSUNITS: dict[str, tuple[int, float]] = {
    k: (u.insunits, u.mm_per_unit) for k, u in FILE_UNITS.items()
}


def dxf_bytes(d: TemplateDrawing) -> bytes:
    """Encode the template drawing as a DXF R2010 file (UTF-8 bytes)."""
    code, mm_per_unit = INSUNITS[d.units]
    f = 1.0 / mm_per_unit

    def p(xy) -> tuple[float, float]:  # type: ignore[no-untyped-def]
        return (float(xy[0]) * f, float(xy[1]) * f)

    doc = ezdxf.new("R2010", setup=False)
    doc.units = code
    doc.header["$MEASUREMENT"] = 1 if d.units == "mm" else 0
    doc.header["$LUNITS"] = 2  # decimal
    for name, colour in LAYERS.items():
        doc.layers.add(name, color=colour)
    msp = doc.modelspace()

    for _role, c in d.cuts:
        pts = [(*p(xy), 0.0, 0.0, float(b)) for xy, b in zip(c.points, c.bulges, strict=True)]
        msp.add_lwpolyline(pts, format="xyseb", close=True, dxfattribs={"layer": "CUT"})
    for circ in d.circles:
        msp.add_circle(p(circ.centre), circ.radius * f, dxfattribs={"layer": circ.layer})
    for ln in d.lines:
        msp.add_line(p(ln.a), p(ln.b), dxfattribs={"layer": ln.layer})
    for bar in d.bars:
        x0, y0 = bar.at
        x1 = x0 + bar.length_mm
        msp.add_line(p((x0, y0)), p((x1, y0)), dxfattribs={"layer": "SCALE"})
        for x in (x0, x1):
            msp.add_line(p((x, y0 - 3.0)), p((x, y0 + 3.0)), dxfattribs={"layer": "SCALE"})
        msp.add_text(
            bar.label,
            height=2.5 * f,
            dxfattribs={"layer": "SCALE", "insert": p((x1 + 4.0, y0 - 1.2))},
        )
    for t in d.texts:
        msp.add_text(t.text, height=t.height * f, dxfattribs={"layer": t.layer, "insert": p(t.at)})

    doc.header["$EXTMIN"] = (*p(_extent(d)[:2]), 0.0)
    doc.header["$EXTMAX"] = (*p(_extent(d)[2:]), 0.0)
    buf = io.StringIO()
    doc.write(buf)
    return buf.getvalue().encode(doc.output_encoding)


def _extent(d: TemplateDrawing) -> tuple[float, float, float, float]:
    x0, y0, x1, y1 = d.cut_extent()
    for t in d.texts:
        x0, y0 = min(x0, t.at[0]), min(y0, t.at[1])
        x1 = max(x1, t.at[0] + 0.6 * t.height * len(t.text))
    for b in d.bars:
        y0 = min(y0, b.at[1] - 3.0)
    return x0, y0, x1, y1
