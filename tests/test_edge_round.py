"""The cavity's edge round against its definition, and edges laid exactly on their faces.

The round of radius r where a wall meets the skin is the envelope of a ball of radius r
rolling along the corner: every point of it lies exactly r from the path of the ball's
centre, C(x) + r·n(x) − r·ẑ (C the wall curve at the skin, n its outward normal in plan;
closed form, no source needed), it meets the wall tangentially (its normal horizontal
there) and the skin tangentially (its normal vertical). The wall curve here is sampled from
the planform's half-width alone and differentiated numerically, independent of the solid.

The edge check uses the kernel's own curve-on-surface measure (``GeomLib``), the one its
argument analyser applies.
"""

from __future__ import annotations

import numpy as np
import pytest

cq = pytest.importorskip("cadquery")


@pytest.fixture(scope="module")
def club_racer():  # type: ignore[no-untyped-def]
    from ductgen.design import build_design
    from ductgen.spec import load_spec
    from tests.conftest import ROOT

    return build_design(load_spec(ROOT / "samples" / "club-racer-brake.toml"))


def _ball_centres(g, x: np.ndarray, sign: float) -> np.ndarray:  # type: ignore[no-untyped-def]
    """Centre path (N, 3) of the rolling ball for the wall y = sign·h(x), from the
    planform's half-width by central differences (step 1e-4 mm)."""
    r = g.edge_radius_mm
    xe = np.clip(x, 1e-4, g.length_mm - 1e-4)
    h = g.planform.half_width(x)
    slope = (g.planform.half_width(xe + 1e-4) - g.planform.half_width(xe - 1e-4)) / 2e-4
    den = np.sqrt(1.0 + slope**2)
    return np.column_stack([x - r * slope / den, sign * (h + r / den), np.full(len(x), -r)])


def _round_faces(shape, g) -> list:  # type: ignore[no-untyped-def,type-arg]
    """The spline faces of ``shape`` lying in the round's height band and spanning most of
    the planform: the two rounds along the walls."""
    r = g.edge_radius_mm
    out = []
    for f in shape.Faces():
        bb = f.BoundingBox()
        in_band = bb.zmin > -r - 1e-6 and bb.zmax < 1e-6
        if f.geomType() == "BSPLINE" and in_band and bb.xlen > 0.5 * g.length_mm:
            out.append(f)
    return out


def _face_points(face, n_u: int = 80, n_v: int = 25) -> np.ndarray:  # type: ignore[no-untyped-def]
    from OCP.BRepAdaptor import BRepAdaptor_Surface
    from OCP.BRepTools import BRepTools

    a = BRepAdaptor_Surface(face.wrapped)
    u0, u1, v0, v1 = BRepTools.UVBounds_s(face.wrapped)
    pts = [
        a.Value(float(u), float(v)).Coord()
        for u in np.linspace(u0, u1, n_u)
        for v in np.linspace(v0, v1, n_v)
    ]
    return np.array(pts)


def test_the_cutters_round_is_the_rolling_ball_surface(club_racer) -> None:  # type: ignore[no-untyped-def]
    from scipy.spatial import cKDTree

    from ductgen.solids.cutter import make_cutter

    g = club_racer.geometry
    r = g.edge_radius_mm
    assert r > 0
    faces = _round_faces(make_cutter(club_racer), g)
    assert len(faces) == 2
    x = np.linspace(-2.0 * r, g.length_mm, 400001)  # 9e-4 mm apart along the wall
    for face in faces:
        pts = _face_points(face)
        sign = 1.0 if pts[:, 1].mean() > 0 else -1.0
        dist, _ = cKDTree(_ball_centres(g, x, sign)).query(pts)
        # the centre path's sampling adds at most (9e-4)²/(8·r) ≈ 5e-8 mm
        assert np.max(np.abs(dist - r)) < 1e-6


def test_the_round_meets_wall_and_skin_tangentially(club_racer) -> None:  # type: ignore[no-untyped-def]
    from ductgen.solids.edge_round import round_surface

    g = club_racer.geometry
    for sign in (1.0, -1.0):
        s = round_surface(g, sign)
        for u in np.linspace(1.0, g.length_mm - 1.0, 25):
            for v, axis in ((0.0, "wall"), (1.0, "skin")):
                du, dv = s.DN(float(u), v, 1, 0), s.DN(float(u), v, 0, 1)
                n = np.cross(np.array(du.Coord()), np.array(dv.Coord()))
                n /= np.linalg.norm(n)
                if axis == "wall":
                    assert abs(n[2]) < 1e-9  # horizontal normal: tangent to the vertical wall
                    assert s.Value(float(u), v).Z() == pytest.approx(-g.edge_radius_mm, abs=1e-12)
                else:
                    assert abs(abs(n[2]) - 1.0) < 1e-9  # vertical normal: tangent to the skin
                    assert s.Value(float(u), v).Z() == pytest.approx(0.0, abs=1e-12)


def _worst_edge(shape) -> float:  # type: ignore[no-untyped-def]
    """Largest distance (mm) between an edge's 3D curve and its surface curve on either of
    its faces, over every edge, by the kernel's own measure."""
    from OCP.Adaptor3d import Adaptor3d_CurveOnSurface
    from OCP.BRepAdaptor import BRepAdaptor_Curve, BRepAdaptor_Curve2d, BRepAdaptor_Surface
    from OCP.GeomLib import GeomLib_CheckCurveOnSurface
    from OCP.TopAbs import TopAbs_EDGE, TopAbs_FACE
    from OCP.TopExp import TopExp
    from OCP.TopoDS import TopoDS
    from OCP.TopTools import TopTools_IndexedDataMapOfShapeListOfShape

    m = TopTools_IndexedDataMapOfShapeListOfShape()
    TopExp.MapShapesAndAncestors_s(shape, TopAbs_EDGE, TopAbs_FACE, m)
    worst = 0.0
    for i in range(1, m.Extent() + 1):
        e = TopoDS.Edge_s(m.FindKey(i))
        for f in m.FindFromIndex(i):
            f = TopoDS.Face_s(f)
            check = GeomLib_CheckCurveOnSurface(BRepAdaptor_Curve(e), 1e-9)
            check.Perform(
                Adaptor3d_CurveOnSurface(BRepAdaptor_Curve2d(e, f), BRepAdaptor_Surface(f))
            )
            worst = max(worst, check.MaxDistance())
    return worst


def test_tightening_lays_a_drafted_walls_edges_on_their_faces(club_racer) -> None:  # type: ignore[no-untyped-def]
    """The plug's drafted wall (a ruled spline surface) meets the ramp plane along a boolean
    edge the kernel approximates to ~1e-4 mm; rebuilt from the true intersection, every
    edge lies on both its faces within 2e-8 mm and the solid keeps its volume and
    validity."""
    from OCP.BRepBuilderAPI import BRepBuilderAPI_Copy
    from OCP.BRepCheck import BRepCheck_Analyzer

    from ductgen.solids.plug import build_plug
    from ductgen.solids.tighten import tighten_edges

    plug = build_plug(club_racer)
    shape = BRepBuilderAPI_Copy(plug.wrapped, True, False).Shape()
    before = _worst_edge(shape)
    assert before > 1e-5
    assert tighten_edges(shape) >= 2
    assert _worst_edge(shape) < 2e-8
    assert BRepCheck_Analyzer(shape).IsValid()
    assert _exact_volume(shape) == pytest.approx(_exact_volume(plug.wrapped), rel=1e-9)


def _exact_volume(shape) -> float:  # type: ignore[no-untyped-def]
    from OCP.BRepGProp import BRepGProp
    from OCP.GProp import GProp_GProps

    props = GProp_GProps()
    BRepGProp.VolumeProperties_s(shape, props, 1e-9, True)
    return float(props.Mass())
