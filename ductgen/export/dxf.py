"""DXF R2010 encoder of the 1:1 marking template (ezdxf).

Each CUT contour is one closed ``LWPOLYLINE`` of lines and bulge arcs; there are no SPLINE
entities. ``$INSUNITS`` states the drawing unit (4 = mm, 1 = inch, DXF reference) and
``$MEASUREMENT`` the matching metric/imperial flag; coordinates are written in that unit
(plan coordinates, 1:1).

Reproducible: the same drawing gives the same bytes. ezdxf's time stamps, GUIDs and its own
"created/written by" markers are fixed (its ``write_fixed_meta_data_for_testing`` option,
set only while encoding), the header dates ``$TDCREATE``/``$TDUPDATE`` are then set to the
build date (:func:`ductgen.stamp.build_datetime`: ``SOURCE_DATE_EPOCH`` or today),
``$FINGERPRINTGUID``/``$VERSIONGUID`` to a name-based UUID of the drawing's name and date,
and the CLASS section is registered in sorted order (ezdxf adds it from a set, whose order
changes with Python's string hashing).
"""

from __future__ import annotations

import io
import re
import uuid
from collections.abc import Iterator, Sequence
from contextlib import contextmanager

import ezdxf
from ezdxf.tools.juliandate import juliandate

from ductgen.export.template_layout import LAYERS, TemplateDrawing
from ductgen.stamp import build_datetime
from ductgen.units import FILE_UNITS

__all__ = ["INSUNITS", "dxf_bytes"]

#: Template unit → (``$INSUNITS`` code, mm per drawing unit).
INSUNITS: dict[str, tuple[int, float]] = {
    k: (u.insunits, u.mm_per_unit) for k, u in FILE_UNITS.items()
}


@contextmanager
def _fixed_metadata() -> Iterator[None]:
    """ezdxf's fixed time stamps, GUIDs and markers, for this encoding only."""
    old = ezdxf.options.write_fixed_meta_data_for_testing
    ezdxf.options.write_fixed_meta_data_for_testing = True
    try:
        yield
    finally:
        ezdxf.options.write_fixed_meta_data_for_testing = old


_HEADER_DATE = re.compile(r"(\$TDU?(?:CREATE|UPDATE)\r?\n\s*40\r?\n)[^\r\n]+")
_HEADER_GUID = re.compile(r"(\$(?:FINGERPRINT|VERSION)GUID\r?\n\s*2\r?\n)[^\r\n]+")


def dxf_bytes(d: TemplateDrawing) -> bytes:
    """Encode the template drawing as a DXF R2010 file (UTF-8 bytes), reproducibly."""
    with _fixed_metadata():
        text = _encode(d)
    when = build_datetime()
    jd = repr(juliandate(when.replace(tzinfo=None)))
    guid = (
        "{"
        + str(uuid.uuid5(uuid.NAMESPACE_URL, f"ductgen:{d.name}:{when.isoformat()}")).upper()
        + "}"
    )
    text = _HEADER_DATE.sub(lambda m: m.group(1) + jd, text)
    text = _HEADER_GUID.sub(lambda m: m.group(1) + guid, text)
    return text.encode("utf-8")


def _encode(d: TemplateDrawing) -> str:
    code, mm_per_unit = INSUNITS[d.units]
    f = 1.0 / mm_per_unit

    def p(xy: Sequence[float]) -> tuple[float, float]:
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
    for name in sorted(doc.entitydb.dxf_types_in_use()):  # fixed CLASS order (see above)
        doc.classes.add_class(name)
    buf = io.StringIO()
    doc.write(buf)
    assert doc.output_encoding.lower().replace("-", "") == "utf8"
    return buf.getvalue()


def _extent(d: TemplateDrawing) -> tuple[float, float, float, float]:
    x0, y0, x1, y1 = d.cut_extent()
    for t in d.texts:
        x0, y0 = min(x0, t.at[0]), min(y0, t.at[1])
        x1 = max(x1, t.at[0] + 0.6 * t.height * len(t.text))
    for b in d.bars:
        y0 = min(y0, b.at[1] - 3.0)
    return x0, y0, x1, y1
