"""The true intersection of two faces where they are tangent (``solids/intersection.py``),
checked against closed forms on kernel-made surfaces."""

from __future__ import annotations

import numpy as np
import pytest

pytest.importorskip("cadquery")


def _saddle(lift: float):  # type: ignore[no-untyped-def]
    """The surface z = x·y + lift over −10 ≤ x, y ≤ 10 mm, exactly (a bilinear B-spline
    patch, parameters u = x, v = y)."""
    from OCP.Geom import Geom_BSplineSurface
    from OCP.gp import gp_Pnt
    from OCP.TColgp import TColgp_Array2OfPnt
    from OCP.TColStd import TColStd_Array1OfInteger, TColStd_Array1OfReal

    poles = TColgp_Array2OfPnt(1, 2, 1, 2)
    for i, x in enumerate((-10.0, 10.0), start=1):
        for j, y in enumerate((-10.0, 10.0), start=1):
            poles.SetValue(i, j, gp_Pnt(x, y, x * y + lift))
    knots, mults = TColStd_Array1OfReal(1, 2), TColStd_Array1OfInteger(1, 2)
    for i, k in enumerate((-10.0, 10.0), start=1):
        knots.SetValue(i, k)
        mults.SetValue(i, 2)
    return Geom_BSplineSurface(poles, knots, knots, mults, mults, 1, 1)


def test_newton_reaches_an_intersection_where_its_surfaces_become_tangent() -> None:
    """The plane z = 0 and the saddle z = x·y + 3e-9 mm meet along the hyperbola
    y = −3e-9/x and pass within 3e-9 mm of each other at x = 0, tangent there (both normals
    along z), as two fitted faces do at the end of an edge where they become tangent: its
    Jacobian is singular there and no point lies on both. Every row, the end's included,
    ends on both surfaces within 5e-9 mm (|z| and |z − x·y − 3e-9|, closed forms), the others
    on the hyperbola, the end within 1e-6 mm of where it started. A plain Newton step threw
    the end's row away, so the edge kept its old curves (seen at the ends of four 180-230 mm
    edges of the curved cutters)."""
    import cadquery as cq
    from OCP.BRepAdaptor import BRepAdaptor_Surface
    from OCP.BRepBuilderAPI import BRepBuilderAPI_MakeFace
    from OCP.gp import gp_Dir, gp_Pln, gp_Pnt

    from ductgen.solids.batch_eval import Surface
    from ductgen.solids.meet import TOUCH_MM, meet

    lift = 3e-9
    plane = BRepBuilderAPI_MakeFace(gp_Pln(gp_Pnt(0, 0, 0), gp_Dir(0, 0, 1)), -10, 10, -10, 10)
    saddle = BRepBuilderAPI_MakeFace(_saddle(lift), 1e-7)
    s = [Surface(BRepAdaptor_Surface(cq.Face(f.Face()).wrapped)) for f in (plane, saddle)]
    xs = np.linspace(0.0, 5.0, 9)
    off = 1e-7  # the old edge, a little off the curve
    x0 = np.stack([xs, np.full(9, off), np.zeros(9)], axis=1)
    tan = np.tile([1.0, 0.0, 0.0], (9, 1))
    w = np.stack([xs, np.full(9, off), xs, np.full(9, off)], axis=1)
    got = meet(s, x0, tan, w)
    assert got is not None
    pts = got[0]
    x, y, z = pts.T
    assert np.all(np.abs(z) <= TOUCH_MM)
    assert np.all(np.abs(z - x * y - lift) <= TOUCH_MM)
    assert np.allclose(y[1:], -lift / x[1:], rtol=1e-6, atol=1e-12)
    assert np.linalg.norm(pts[0] - x0[0]) <= 1e-6
    assert np.allclose(x, xs, atol=1e-9)


def _plane_and_saddle(lift: float):  # type: ignore[no-untyped-def]
    """The plane z = 0 and the saddle z = x·y + ``lift`` (batch-evaluated surfaces), and an
    old edge along x from 0 to 5 mm 1e-7 mm off their intersection: (surfaces, x0, tan, w)
    for :func:`~ductgen.solids.meet.meet`, nine rows, the first at x = 0."""
    import cadquery as cq
    from OCP.BRepAdaptor import BRepAdaptor_Surface
    from OCP.BRepBuilderAPI import BRepBuilderAPI_MakeFace
    from OCP.gp import gp_Dir, gp_Pln, gp_Pnt

    from ductgen.solids.batch_eval import Surface

    plane = BRepBuilderAPI_MakeFace(gp_Pln(gp_Pnt(0, 0, 0), gp_Dir(0, 0, 1)), -10, 10, -10, 10)
    saddle = BRepBuilderAPI_MakeFace(_saddle(lift), 1e-7)
    s = [Surface(BRepAdaptor_Surface(cq.Face(f.Face()).wrapped)) for f in (plane, saddle)]
    xs = np.linspace(0.0, 5.0, 9)
    off = 1e-7
    x0 = np.stack([xs, np.full(9, off), np.zeros(9)], axis=1)
    tan = np.tile([1.0, 0.0, 0.0], (9, 1))
    w = np.stack([xs, np.full(9, off), xs, np.full(9, off)], axis=1)
    return s, x0, tan, w


def test_an_edge_whose_faces_become_tangent_apart_ends_between_them() -> None:
    """The plane z = 0 and the saddle z = x·y + 3e-7 mm: tangent at x = 0, where they pass
    3e-7 mm apart (closed form: both normals along z there; as two fitted faces at the end
    of the side-pod insert's transition edges). No point lies on both there, so Newton's
    method fails on that row, and the edge would keep its old curves, 2.8e-5 mm off. Given
    as an edge's end, the row ends at the midpoint, z = 1.5e-7 (closed form), the others on
    the hyperbola y = −3e-7/x on both surfaces; not so with a gap over ``END_GAP_MM``, nor
    for a row that is not an end."""
    from ductgen.solids.meet import END_GAP_MM, TOUCH_MM, meet

    lift = 3e-7
    s, x0, tan, w = _plane_and_saddle(lift)
    first = np.arange(9) == 0
    assert meet(s, x0, tan, w) is None
    assert meet(s, x0, tan, w, ~first) is None  # every row an end but the one that is apart
    got = meet(s, x0, tan, w, first)
    assert got is not None
    x, y, z = got[0].T
    assert x[0] == pytest.approx(0.0, abs=1e-12)
    assert z[0] == pytest.approx(lift / 2, abs=1e-12)
    assert np.linalg.norm(got[0][0] - x0[0]) <= 1e-6
    assert np.all(np.abs(z[1:]) <= TOUCH_MM)
    assert np.all(np.abs(z[1:] - x[1:] * y[1:] - lift) <= TOUCH_MM)
    assert np.allclose(y[1:], -lift / x[1:], rtol=1e-6, atol=1e-12)
    wide = _plane_and_saddle(2 * END_GAP_MM)
    assert meet(*wide, first) is None


def _kernel_d1(a, uv: np.ndarray) -> np.ndarray:  # type: ignore[no-untyped-def]
    """The kernel's points and first derivatives of the surface adaptor ``a`` at (N, 2)
    parameters, point by point: (N, 3, 3) rows X, ∂X/∂u, ∂X/∂v."""
    from OCP.gp import gp_Pnt, gp_Vec

    p, du, dv = gp_Pnt(), gp_Vec(), gp_Vec()
    out = np.empty((len(uv), 3, 3))
    for i, (u, v) in enumerate(uv):
        a.D1(float(u), float(v), p, du, dv)
        out[i] = p.Coord(), du.Coord(), dv.Coord()
    return out


def test_a_bspline_surface_evaluated_at_once_agrees_with_the_kernel() -> None:
    """Points and first derivatives of a B-spline surface evaluated by SciPy's
    tensor-product B-spline (many parameters at once) equal the CAD kernel's own evaluation
    (``D1``, point by point) to 1e-9 mm, inside the surface and just beyond its ends (the
    kernel extends its end spans there); so does a rational one (a quarter cylinder's
    B-spline form: its weighted poles, the quotient rule for the derivatives); a periodic
    one (a whole cylinder's) and a small batch are left to the kernel."""
    import cadquery as cq
    from OCP.BRepAdaptor import BRepAdaptor_Surface
    from OCP.BRepBuilderAPI import BRepBuilderAPI_NurbsConvert

    from ductgen.solids.batch_eval import Surface

    grid = [(x, y) for x in np.linspace(0.0, 60.0, 7) for y in np.linspace(-20.0, 20.0, 7)]
    pts = [cq.Vector(x, y, 3.0 * np.sin(0.3 * x) * np.cos(0.2 * y)) for x, y in grid]
    face = cq.Face.makeSplineApprox([pts[i : i + 7] for i in range(0, 49, 7)], tol=1e-3)
    a = BRepAdaptor_Surface(face.wrapped)
    s = Surface(a)
    assert s._batch is not None  # evaluated by SciPy, not the kernel
    u0, u1 = a.FirstUParameter(), a.LastUParameter()
    v0, v1 = a.FirstVParameter(), a.LastVParameter()
    rng = np.random.default_rng(7)
    uv = np.column_stack(
        [
            rng.uniform(u0 - 0.02 * (u1 - u0), u1 + 0.02 * (u1 - u0), 200),
            rng.uniform(v0 - 0.02 * (v1 - v0), v1 + 0.02 * (v1 - v0), 200),
        ]
    )
    got = s.at(uv)
    want = _kernel_d1(a, uv)
    assert np.max(np.abs(got - want)) < 1e-9
    assert np.max(np.abs(s.at(uv[:3]) - want[:3])) < 1e-9  # the kernel's own, for 3 points
    quarter = BRepBuilderAPI_NurbsConvert(
        cq.Solid.makeCylinder(5, 10, angleDegrees=90).wrapped, True
    ).Shape()
    side = max(cq.Shape.cast(quarter).Faces(), key=lambda f: f.Area())
    a = BRepAdaptor_Surface(side.wrapped)
    assert a.BSpline().IsURational() or a.BSpline().IsVRational()
    s = Surface(a)
    assert s._batch is not None
    uv = np.column_stack(
        [
            rng.uniform(a.FirstUParameter(), a.LastUParameter(), 50),
            rng.uniform(a.FirstVParameter(), a.LastVParameter(), 50),
        ]
    )
    assert np.max(np.abs(s.at(uv) - _kernel_d1(a, uv))) < 1e-9
    cylinder = BRepBuilderAPI_NurbsConvert(cq.Solid.makeCylinder(5, 10).wrapped, True).Shape()
    side = max(cq.Shape.cast(cylinder).Faces(), key=lambda f: f.Area())
    assert Surface(BRepAdaptor_Surface(side.wrapped))._batch is None  # periodic


def test_knots_met_from_both_sides_of_a_sample_are_one() -> None:
    """A surface knot met exactly at one of the samples along an edge is found from the
    intervals on both sides of it: kept once, and put on the sample itself, so no two fitted
    points coincide (two did, and the edge was left unbuilt: a 230 mm edge of the round
    cowling's cutter)."""
    from ductgen.solids.intersection import _apart, _snapped

    dense = np.linspace(0.0, 230.0, 65)
    found = np.array([200.0, dense[32] + 2e-12, 10.0, dense[32] - 1e-12])
    once, mults = _apart(found, np.array([4, 3, 4, 4]), 1e-9 * 230.0)
    assert len(once) == 3
    assert list(mults) == [4, 4, 4]  # the larger multiplicity of the two found
    snapped = _snapped(once, dense, 1e-9 * 230.0)
    assert snapped[1] == dense[32]
    assert snapped[0] == 10.0 and snapped[2] == 200.0


def test_cylinders_and_moved_extrusions_evaluated_at_once_agree_with_the_kernel() -> None:
    """A cylinder's closed form (O + r·(cos u·X + sin u·Y) + v·Z on its placed axes) and an
    extruded spline wall moved by its face's location (rotated and shifted, as a placed
    solid's faces are) give the kernel's points and first derivatives to 1e-9 mm."""
    import cadquery as cq
    from OCP.BRepAdaptor import BRepAdaptor_Surface
    from OCP.GeomAbs import GeomAbs_Cylinder, GeomAbs_SurfaceOfExtrusion

    from ductgen.solids.batch_eval import Surface

    wall = (
        cq.Workplane("XY")
        .spline([(0, 0), (20, 6), (40, 3), (60, 9)], includeCurrent=False)
        .close()
        .extrude(15.0)
        .val()
        .moved(cq.Location(cq.Vector(5.0, -7.0, 11.0), cq.Vector(1, 2, 3), 37.0))
    )
    assert not wall.Faces()[0].wrapped.Location().IsIdentity()  # moved, not rebuilt
    tilted = cq.Solid.makeCylinder(4.0, 12.0, cq.Vector(1, 2, 3), cq.Vector(0.3, -0.5, 0.8))
    faces = [
        f
        for f in [*wall.Faces(), *tilted.Faces()]
        if BRepAdaptor_Surface(f.wrapped).GetType()
        in (GeomAbs_Cylinder, GeomAbs_SurfaceOfExtrusion)
    ]
    kinds = {BRepAdaptor_Surface(f.wrapped).GetType() for f in faces}
    assert kinds == {GeomAbs_Cylinder, GeomAbs_SurfaceOfExtrusion}
    rng = np.random.default_rng(3)
    for f in faces:
        a = BRepAdaptor_Surface(f.wrapped)
        s = Surface(a)
        assert s._batch is not None  # evaluated at once, not point by point
        uv = np.column_stack(
            [
                rng.uniform(a.FirstUParameter(), a.LastUParameter(), 50),
                rng.uniform(a.FirstVParameter(), a.LastVParameter(), 50),
            ]
        )
        assert np.max(np.abs(s.at(uv) - _kernel_d1(a, uv))) < 1e-9


def test_edge_curves_evaluated_at_once_agree_with_the_kernel() -> None:
    """Every edge's 3D curve and its surface curve on each of its faces, evaluated a batch
    at a time, gives the kernel's points and first derivatives (``D1``, point by point) to
    1e-9 mm: lines, circles and ellipses in closed form, a circle's periodic rational
    B-spline form by its weighted poles taken modulo its period, on a moved elliptic
    prism, a tilted cylinder and a moved box, and on their B-spline forms."""
    import cadquery as cq
    from OCP.BRepAdaptor import BRepAdaptor_Curve, BRepAdaptor_Curve2d
    from OCP.BRepBuilderAPI import BRepBuilderAPI_NurbsConvert
    from OCP.GeomAbs import GeomAbs_BSplineCurve, GeomAbs_Circle, GeomAbs_Ellipse, GeomAbs_Line
    from OCP.gp import gp_Pnt, gp_Pnt2d, gp_Vec, gp_Vec2d

    from ductgen.solids.batch_eval import batch_curve

    prism = (
        cq.Workplane("XY")
        .ellipse(7.0, 3.0)
        .extrude(5.0)
        .val()
        .moved(cq.Location(cq.Vector(1.0, 2.0, 3.0), cq.Vector(1, 1, 0), 30.0))
    )
    tilted = cq.Solid.makeCylinder(4.0, 12.0, cq.Vector(1, 2, 3), cq.Vector(0.3, -0.5, 0.8))
    box = cq.Solid.makeBox(3, 4, 5).moved(cq.Location(cq.Vector(1, 1, 1), cq.Vector(0, 0, 1), 10))
    solids = [prism, tilted, box]
    solids += [cq.Shape.cast(BRepBuilderAPI_NurbsConvert(s.wrapped, True).Shape()) for s in solids]
    kinds, worst = set(), 0.0
    for solid in solids:
        for f in solid.Faces():
            for e in f.Edges():
                for a in (BRepAdaptor_Curve(e.wrapped), BRepAdaptor_Curve2d(e.wrapped, f.wrapped)):
                    c = batch_curve(a)
                    assert c is not None, a.GetType()
                    kinds.add(a.GetType())
                    ts = np.linspace(a.FirstParameter(), a.LastParameter(), 11)
                    flat = isinstance(a, BRepAdaptor_Curve2d)
                    p, v = (gp_Pnt2d(), gp_Vec2d()) if flat else (gp_Pnt(), gp_Vec())
                    want = np.empty((2, len(ts), 2 if flat else 3))
                    for i, t in enumerate(ts):
                        a.D1(float(t), p, v)
                        want[0, i], want[1, i] = p.Coord(), v.Coord()
                    worst = max(worst, np.max(np.abs(c(ts) - want[0])))
                    worst = max(worst, np.max(np.abs(c(ts, nu=1) - want[1])))
    assert {GeomAbs_Line, GeomAbs_Circle, GeomAbs_Ellipse, GeomAbs_BSplineCurve} <= kinds
    assert worst < 1e-9
