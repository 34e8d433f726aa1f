"""Template DXF of every sample: every text box clear of cut lines, hole circles and marks
read back with ezdxf (an independent reader).

Text boxes are ezdxf's own text extents (``ezdxf.bbox``, from the font's measured glyphs),
widened by 0.3 mm; geometry is every CUT polyline (arcs flattened to 0.01 mm), HOLES circle
and MARK/SCALE line sampled every 0.1 mm. Labels clear of geometry is drawing practice
(common practice, no source).
"""

from __future__ import annotations

import io
from itertools import pairwise

import ezdxf
import numpy as np
import pytest
from ezdxf import bbox
from ezdxf import path as dxf_path

from ductgen.design import build_design
from ductgen.export.template import template_files
from ductgen.spec import load_spec, parse_spec
from tests.conftest import SAMPLES, sample_ids


def _doc(spec) -> ezdxf.document.Drawing:  # type: ignore[no-untyped-def]
    data = template_files(build_design(spec), spec)["template.dxf"]
    return ezdxf.read(io.StringIO(data.decode("utf-8")))


def _geometry(doc) -> np.ndarray:  # type: ignore[no-untyped-def]
    pts = []
    for e in doc.modelspace():
        kind = e.dxftype()
        if kind == "LWPOLYLINE":
            p = np.array([(v.x, v.y) for v in dxf_path.make_path(e).flattening(0.01)])
        elif kind == "CIRCLE":
            c, r = e.dxf.center, e.dxf.radius
            t = np.linspace(0, 2 * np.pi, max(64, int(2 * np.pi * r / 0.1)))
            p = np.column_stack([c.x + r * np.cos(t), c.y + r * np.sin(t)])
        elif kind == "LINE":
            a, b = np.array(e.dxf.start)[:2], np.array(e.dxf.end)[:2]
            n = max(2, int(np.hypot(*(b - a)) / 0.1) + 2)
            p = a + np.linspace(0, 1, n)[:, None] * (b - a)
        else:
            continue
        if kind == "LWPOLYLINE":  # densify the flattened straight runs too
            seg = [
                a + np.linspace(0, 1, max(2, int(np.hypot(*(b - a)) / 0.1) + 2))[:, None] * (b - a)
                for a, b in pairwise(p)
            ]
            p = np.vstack(seg)
        pts.append(p)
    return np.vstack(pts)


def _text_hits(doc) -> list[tuple[str, int]]:  # type: ignore[no-untyped-def]
    g = _geometry(doc)
    hits = []
    for e in doc.modelspace().query("TEXT"):
        ext = bbox.extents([e])
        x0, y0, x1, y1 = (
            ext.extmin.x - 0.3,
            ext.extmin.y - 0.3,
            ext.extmax.x + 0.3,
            ext.extmax.y + 0.3,
        )
        n = int(np.sum((g[:, 0] > x0) & (g[:, 0] < x1) & (g[:, 1] > y0) & (g[:, 1] < y1)))
        if n:
            hits.append((e.dxf.text, n))
    return hits


@pytest.mark.parametrize("path", SAMPLES, ids=sample_ids())
def test_sample_dxf_text_clear_of_geometry(path) -> None:  # type: ignore[no-untyped-def]
    doc = _doc(load_spec(path))
    labels = {e.dxf.text.split()[0] for e in doc.modelspace().query("TEXT[layer=='MARK']")}
    assert {"FLOW", "RAMP", "LIP"} <= labels
    assert _text_hits(doc) == []


@pytest.mark.parametrize("size", [(40, 8), (100, 25), (260, 60)])
def test_other_sizes_text_clear_of_geometry(size: tuple[int, int]) -> None:
    spec = parse_spec({"name": "p", "throat": {"width": size[0], "depth": size[1]}})
    assert _text_hits(_doc(spec)) == []


def test_check_finds_a_label_on_a_circle() -> None:
    """The check can fail: a label written over a hole circle is reported."""
    doc = ezdxf.new("R2010")
    msp = doc.modelspace()
    msp.add_circle((10.0, 1.0), 2.0)
    msp.add_line((0.0, -20.0), (0.0, -19.0))
    msp.add_text("LIP x=100.00 mm", height=2.5, dxfattribs={"insert": (5.0, 0.0)})
    assert _text_hits(doc) == [("LIP x=100.00 mm", pytest.approx(126, abs=60))]
