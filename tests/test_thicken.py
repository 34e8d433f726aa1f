"""An open panel surface thickened into a solid (``solids/thicken.py``), judged by closed
forms: the far face of a surface S thickened by t is its offset S − t·n (n the unit normal
at the same parameters), and the solid's volume is t·(A_outer + A_inner)/2 to O(t³κ²)
(the mean of the two faces' areas times the thickness; here κ ≤ 1/1460 mm, so ~1e-9).

The kernel's offset face is written in B-spline form; these checks hold it to the exact
offset (1e-6 mm), to smooth knots (the argument analyser's continuity mode, which reported
the kernel's own B-spline form of an offset as C0), and to the volume.
"""

from __future__ import annotations

import numpy as np
import pytest

cq = pytest.importorskip("cadquery")

from tests.panels import s_panel_face  # noqa: E402

T = 2.5  # mm


def _area(face) -> float:  # type: ignore[no-untyped-def]
    from OCP.BRepGProp import BRepGProp
    from OCP.GProp import GProp_GProps

    props = GProp_GProps()
    BRepGProp.SurfaceProperties_s(face.wrapped, props, 1e-9, False)
    return float(props.Mass())


@pytest.mark.parametrize("reverse", [False, True], ids=["faces-up", "faces-down"])
def test_a_thickened_s_panel_is_its_offset_in_smooth_spline_form(reverse: bool) -> None:
    from OCP.BOPAlgo import BOPAlgo_ArgumentAnalyzer
    from OCP.BRep import BRep_Tool
    from OCP.BRepGProp import BRepGProp
    from OCP.Geom import Geom_BSplineSurface
    from OCP.gp import gp_Pnt, gp_Vec
    from OCP.GProp import GProp_GProps

    from ductgen.solids.thicken import OFFSET_SPLINE_MM, thicken

    face = s_panel_face(reverse)
    solid = thicken(face, np.array([0.0, 0.0, 1.0]), T)  # into the body: downward
    assert solid.isValid() and len(solid.Solids()) == 1
    outer = BRep_Tool.Surface_s(face.wrapped)
    # the far face: the one whose area is close to the outer face's (the rest are the rims)
    a_outer = _area(face)
    far = [f for f in solid.Faces() if abs(_area(f) / a_outer - 1.0) < 0.01 and not f.isSame(face)]
    inner = [f for f in far if f.Center().z < face.Center().z]
    assert len(inner) == 1
    s_in = BRep_Tool.Surface_s(inner[0].wrapped)
    assert isinstance(s_in, Geom_BSplineSurface)  # not an offset surface
    u0, u1, v0, v1 = outer.Bounds()
    worst = 0.0
    for u in np.linspace(u0, u1, 41):
        for v in np.linspace(v0, v1, 41):
            p, du, dv = gp_Pnt(), gp_Vec(), gp_Vec()
            outer.D1(u, v, p, du, dv)
            n = np.cross(du.Coord(), dv.Coord())
            n = n / np.linalg.norm(n)
            if n[2] < 0:
                n = -n  # up: the body lies below the surface
            want = np.array(p.Coord()) - T * n
            worst = max(worst, float(np.linalg.norm(np.array(s_in.Value(u, v).Coord()) - want)))
    assert worst <= OFFSET_SPLINE_MM
    analyser = BOPAlgo_ArgumentAnalyzer()
    analyser.SetShape1(solid.wrapped)
    analyser.ArgumentTypeMode = False
    analyser.ContinuityMode = True
    analyser.Perform()
    assert [str(r.GetCheckStatus()) for r in analyser.GetCheckResult()] == []
    props = GProp_GProps()
    BRepGProp.VolumeProperties_s(solid.wrapped, props, 1e-7, False)
    assert props.Mass() == pytest.approx(T * (a_outer + _area(inner[0])) / 2.0, rel=1e-6)
