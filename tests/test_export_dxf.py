"""The 1:1 DXF marking template, read back with ezdxf (an independent reader).

Sources: the wall ordinates are the NACA ACR 5I20 table (recalled); the DXF
header code ``$INSUNITS`` 4 = mm, 1 = inch is from the DXF reference [published]; one closed
polyline of lines and arcs per contour, no splines, and kerf/2 inward for a hole are shop
practice (common practice, no source).
"""

from __future__ import annotations

import io

import ezdxf
import numpy as np
import pytest
from ezdxf import path as dxf_path
from ezdxf.math import bulge_to_arc

from ductgen.design import build_design
from ductgen.design.identity import drawn_from
from ductgen.export.dxf import dxf_bytes
from ductgen.export.template import flange_contours
from ductgen.export.template_layout import template_drawing
from ductgen.spec import parse_spec
from tests.conftest import naca_ordinates

# NACA ACR 5I20 divergent-wall ordinates (tests/data/naca_ordinates.json, recalled)
NACA = naca_ordinates()
TOL = 0.02  # default template.tolerance (mm)


def _spec(**template):  # type: ignore[no-untyped-def]
    return parse_spec({"name": "t", "throat": {"width": 100, "depth": 25}, "template": template})


def _read(spec):  # type: ignore[no-untyped-def]
    d = build_design(spec)
    g = d.geometry
    data = dxf_bytes(template_drawing(g, spec, drawn_from(d, spec), *flange_contours(d, spec)))
    return g, ezdxf.read(io.StringIO(data.decode("utf-8")))


@pytest.fixture(scope="module")
def mm_doc():  # type: ignore[no-untyped-def]
    return _read(_spec())


def _cut(doc):  # type: ignore[no-untyped-def]
    return [e for e in doc.modelspace() if e.dxf.layer == "CUT"]


def _opening(doc):  # type: ignore[no-untyped-def]
    """The CUT polyline nearest the centreline at x = 0: the skin opening."""
    return min(
        _cut(doc),
        key=lambda e: (
            min(abs(p[1]) for p in e.get_points("xy") if abs(p[0]) < 1e-6)
            if any(abs(p[0]) < 1e-6 for p in e.get_points("xy"))
            else 1e9
        ),
    )


def _sample(e, step: float = 0.05) -> np.ndarray:  # type: ignore[no-untyped-def]
    """Vertices and points along every arc of an LWPOLYLINE, via ezdxf's own bulge maths."""
    pts = list(e.get_points("xyb"))
    out = []
    for i, (x, y, b) in enumerate(pts):
        x2, y2, _ = pts[(i + 1) % len(pts)]
        out.append((x, y))
        if b:
            c, a0, a1, r = bulge_to_arc((x, y), (x2, y2), b)
            sweep = (a1 - a0) % (2 * np.pi)
            t = np.linspace(0, sweep, max(3, int(r * sweep / step)))
            out += list(zip(c.x + r * np.cos(a0 + t), c.y + r * np.sin(a0 + t), strict=True))
    return np.array(out)


def _distance_to_true_outline(g, p: np.ndarray) -> np.ndarray:  # type: ignore[no-untyped-def]
    """Distance (mm) of points to the exact opening: walls y = ±h(x), apex line, lip line."""
    pf = g.planform
    xs = np.linspace(0.0, pf.length_mm, 200001)
    wall = np.column_stack([xs, pf.half_width(xs)])
    from scipy.spatial import cKDTree

    d_wall, _ = cKDTree(wall).query(np.column_stack([p[:, 0], np.abs(p[:, 1])]))
    h0, half = 0.5 * pf.apex_width_mm, 0.5 * g.width_mm
    d_apex = np.hypot(p[:, 0], np.clip(np.abs(p[:, 1]) - h0, 0, None))
    d_lip = np.hypot(p[:, 0] - pf.length_mm, np.clip(np.abs(p[:, 1]) - half, 0, None))
    return np.minimum(d_wall, np.minimum(d_apex, d_lip))


def test_reads_back_with_mm_units_and_layers(mm_doc) -> None:  # type: ignore[no-untyped-def]
    _, doc = mm_doc
    assert doc.dxfversion == "AC1024"  # R2010
    assert doc.header["$INSUNITS"] == 4  # DXF reference: 4 = millimetres [published]
    assert {"CUT", "HOLES", "MARK", "TEXT", "SCALE"} <= {layer.dxf.name for layer in doc.layers}
    assert not list(doc.modelspace().query("SPLINE"))
    assert len(doc.audit().errors) == 0


def test_inch_template_units_header() -> None:
    g, doc = _read(_spec(units="in"))
    assert doc.header["$INSUNITS"] == 1  # DXF reference: 1 = inches [published]
    pts = _sample(_opening(doc)) * 25.4
    assert np.max(_distance_to_true_outline(g, pts)) <= TOL


def test_cut_holds_opening_and_flange_as_closed_polylines(mm_doc) -> None:  # type: ignore[no-untyped-def]
    _, doc = mm_doc
    cut = _cut(doc)
    # the air opening, the skin cut-out the insert's walls pass through and the insert's
    # flange outline (default mount "behind"), nothing else
    assert len(cut) == 3
    for e in cut:
        assert e.dxftype() == "LWPOLYLINE" and e.closed
        p = np.array(list(e.get_points("xy")))
        seg = np.linalg.norm(np.roll(p, -1, axis=0) - p, axis=1)
        assert seg.min() > 1e-6  # no zero-length segments, first point not repeated
        assert len({(round(x, 9), round(y, 9)) for x, y in p}) == len(p)  # no duplicate vertices
    holes = [e for e in doc.modelspace() if e.dxf.layer == "HOLES"]
    assert holes and all(e.dxftype() == "CIRCLE" for e in holes)


def test_opening_within_tolerance_of_true_outline(mm_doc) -> None:  # type: ignore[no-untyped-def]
    g, doc = mm_doc
    e = _opening(doc)
    assert any(b != 0 for *_, b in e.get_points("xyb"))  # arcs, not a dense polyline
    dev = _distance_to_true_outline(g, _sample(e))
    assert dev.max() <= TOL


def test_opening_passes_through_naca_ordinates(mm_doc) -> None:  # type: ignore[no-untyped-def]
    """The scaled NACA ACR 5I20 table points (recalled) lie on the cut line."""
    g, doc = mm_doc
    p = _sample(_opening(doc), step=0.01)
    for xl, f in NACA:
        for sgn in (1.0, -1.0):
            q = np.array([xl * g.length_mm, sgn * f * g.width_mm / 2])
            assert np.min(np.linalg.norm(p - q, axis=1)) <= TOL


def test_scale_bars_are_exact(mm_doc) -> None:  # type: ignore[no-untyped-def]
    _, doc = mm_doc
    bars = sorted(
        e.dxf.end.x - e.dxf.start.x
        for e in doc.modelspace().query("LINE[layer=='SCALE']")
        if abs(e.dxf.end.y - e.dxf.start.y) < 1e-12 and abs(e.dxf.end.x - e.dxf.start.x) > 50
    )
    assert bars == [
        pytest.approx(100.0, abs=5e-4),
        pytest.approx(101.6, abs=5e-4),
    ]  # 4 in = 101.6 mm


def test_scale_bars_in_inch_file() -> None:
    _, doc = _read(_spec(units="in"))
    bars = sorted(
        e.dxf.end.x - e.dxf.start.x
        for e in doc.modelspace().query("LINE[layer=='SCALE']")
        if abs(e.dxf.end.x - e.dxf.start.x) > 2
    )
    assert [b * 25.4 for b in bars] == [
        pytest.approx(100.0, abs=5e-4),
        pytest.approx(101.6, abs=5e-4),
    ]


def test_text_layer_has_cautions_and_verify_scale(mm_doc) -> None:  # type: ignore[no-untyped-def]
    _, doc = mm_doc
    text = " ".join(e.dxf.text for e in doc.modelspace().query("TEXT[layer=='TEXT']"))
    for word in (
        "VERIFY SCALE",
        "sha256",
        "UNITS: mm",
        "KERF",
        "reinforce",
        "aviation authority",
        "validate by test",
        "PPE",
        "not a certification",
    ):
        assert word in text


def _area(e) -> float:  # type: ignore[no-untyped-def]
    """Area of an LWPOLYLINE with bulges, flattened by ezdxf to 1e-4 mm."""
    p = np.array([(v.x, v.y) for v in dxf_path.make_path(e).flattening(1e-4)])
    return 0.5 * abs(
        float(np.dot(p[:, 0], np.roll(p[:, 1], -1)) - np.dot(p[:, 1], np.roll(p[:, 0], -1)))
    )


def _perimeter(e) -> float:  # type: ignore[no-untyped-def]
    p = np.array([(v.x, v.y) for v in dxf_path.make_path(e).flattening(1e-4)])
    return float(np.sum(np.linalg.norm(np.diff(p, axis=0), axis=1)))


def test_kerf_shrinks_opening_by_half_kerf_times_perimeter(mm_doc) -> None:  # type: ignore[no-untyped-def]
    """Offsetting a hole inward by k removes ≈ P·k of area (common practice, no source:
    kerf/2 inward for a hole; the k² corner terms are < 1 % here)."""
    _, doc0 = mm_doc
    _, doc1 = _read(_spec(kerf=1.0))
    e0, e1 = _opening(doc0), _opening(doc1)
    loss = _area(e0) - _area(e1)
    assert loss == pytest.approx(_perimeter(e0) * 0.5, rel=0.01)
    text = " ".join(e.dxf.text for e in doc1.modelspace().query("TEXT"))
    assert "INWARD 0.500 mm" in text and "OUTWARD 0.500 mm" in text
    # the outer trim grows: flange outline area rises
    f0 = max(_cut(doc0), key=_area)
    f1 = max(_cut(doc1), key=_area)
    assert _area(f1) - _area(f0) == pytest.approx(_perimeter(f0) * 0.5, rel=0.01)


def test_flange_outline_matches_fabrication_layout(mm_doc) -> None:  # type: ignore[no-untyped-def]
    """The arc-fitted flange outline agrees with the fabrication module's sampled outline."""
    from ductgen.design import fabrication_from_spec
    from ductgen.geometry.fabrication import flange_layout

    g, doc = mm_doc
    spec = _spec()
    fl = flange_layout(g, fabrication_from_spec(spec).insert, n=4000)
    flange = max(_cut(doc), key=_area)
    p = _sample(flange, step=0.5)
    ref = fl.outline_xy
    a, b = ref, np.roll(ref, -1, axis=0)
    ab = b - a
    t = np.clip(
        np.einsum("kij,ij->ki", p[:, None, :] - a[None], ab) / np.einsum("ij,ij->i", ab, ab), 0, 1
    )
    dist = np.linalg.norm(p[:, None, :] - (a[None] + t[..., None] * ab[None]), axis=2).min(axis=1)
    assert dist.max() < 0.03  # the reference polyline's own sampling error is ~0.01-0.03 mm
    circles = list(doc.modelspace().query("CIRCLE[layer=='HOLES']"))
    assert len(circles) == spec.insert.holes.count
    assert all(c.dxf.radius == pytest.approx(spec.insert.holes.diameter / 2) for c in circles)
