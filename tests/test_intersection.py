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

    from ductgen.solids.intersection import TOUCH_MM, _newton

    lift = 3e-9
    plane = BRepBuilderAPI_MakeFace(gp_Pln(gp_Pnt(0, 0, 0), gp_Dir(0, 0, 1)), -10, 10, -10, 10)
    saddle = BRepBuilderAPI_MakeFace(_saddle(lift), 1e-7)
    s = [BRepAdaptor_Surface(cq.Face(f.Face()).wrapped) for f in (plane, saddle)]
    xs = np.linspace(0.0, 5.0, 9)
    off = 1e-7  # the old edge, a little off the curve
    x0 = np.stack([xs, np.full(9, off), np.zeros(9)], axis=1)
    tan = np.tile([1.0, 0.0, 0.0], (9, 1))
    w = np.stack([xs, np.full(9, off), xs, np.full(9, off)], axis=1)
    got = _newton(s, x0, tan, w)
    assert got is not None
    pts = got[0]
    x, y, z = pts.T
    assert np.all(np.abs(z) <= TOUCH_MM)
    assert np.all(np.abs(z - x * y - lift) <= TOUCH_MM)
    assert np.allclose(y[1:], -lift / x[1:], rtol=1e-6, atol=1e-12)
    assert np.linalg.norm(pts[0] - x0[0]) <= 1e-6
    assert np.allclose(x, xs, atol=1e-9)
