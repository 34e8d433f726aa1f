"""The cavity's edge round built face by face, each edge exact on both its faces (CAD kernel;
mm, x downstream, y across, z up, skin plane z = 0).

The round of radius r where a wall meets the skin is the surface a ball of radius r sweeps
rolling along the wall curve C(x) (the planform's Hermite cubic at z = 0, outward normal
n(x) in plan): its cross-section at x is the quarter circle from the wall line
W(x) = C(x) − r·ẑ to the skin line P(x) = C(x) + r·n(x), centred on C(x) + r·n(x) − r·ẑ, and
C(x) is where its end tangents meet. As a rational quadratic in the cross direction with
poles W, C, P and weights 1, √2/2, 1 (the standard quarter circle), the surface is the
tensor-product NURBS whose rows of poles are the three curves on one knot vector:

* W and C are the wall's own B-spline (knots inserted, exact), so the round's boundary on
  the wall *is* the wall's section at z = −r and both its surface curves are straight lines
  in parameter space: nothing left for a reader to re-approximate;
* P is the offset curve, which no polynomial spline holds exactly: a least-squares cubic on
  the wall's knots refined (C¹ like the wall; within :data:`P_FIT_MM` of the true
  offset), lying in the skin plane, so its surface curve on the skin is exact too.

Whatever P's small fitting error, the surface is exactly tangent to the wall (C − W is
vertical) and to the skin (P − C is horizontal). The kernel's fillet, used before, bulged
up to 2.5e-3 mm off the rolling-ball surface and left its boundary's surface curve on the wall
~1e-5 mm off its 3D curve, which a second program's geometry check reports in the STEP file.

Past the planform's end the walls run straight (slope 0 there) and the round is a quarter
cylinder. :func:`rounded_prism` sews these faces with the walls below z = −r, the floor,
the end faces and the flared opening in the skin plane into one closed solid.
"""

from __future__ import annotations

import math
from typing import Any

import cadquery as cq
import numpy as np

from ductgen.errors import GeometryError
from ductgen.geometry.inlet import InletGeometry
from ductgen.solids.footprint import footprint_wire
from ductgen.solids.primitives import polyline_edges, wall_spline

__all__ = ["P_FIT_MM", "round_surface", "rounded_prism"]

V = cq.Vector

#: Largest distance (mm) allowed between the fitted skin line P and the true offset curve.
P_FIT_MM = 1e-4

#: Sub-spans per span of the wall spline for P's fit, and the extra knots (fractions of a
#: sub-span) graded towards each station: the wall is C¹ there and P's speed jumps, which a
#: C¹ fit follows only with short spans (uniform spans alone: 7e-3 mm off on the club
#: racer sample; graded: 2.5e-5 mm).
REFINE = 8
GRADED = (0.003, 0.01, 0.04, 0.15)


def _bspline_data(edge: cq.Edge) -> Any:
    from OCP.BRepAdaptor import BRepAdaptor_Curve

    return BRepAdaptor_Curve(edge.wrapped).BSpline()


def _refined_knots(c: Any) -> tuple[list[float], list[int]]:
    """The knots of ``c`` (a cubic B-spline) with REFINE − 1 simple knots inserted in every
    span and, on either side of every interior knot (where the wall's curvature jumps and
    so does the offset's speed), a few more graded towards it: (knots, multiplicities)."""
    ks = [c.Knot(i) for i in range(1, c.NbKnots() + 1)]
    ms = [c.Multiplicity(i) for i in range(1, c.NbKnots() + 1)]
    knots, mults = [ks[0]], [ms[0]]
    last = len(ks) - 2
    for i, (a, b, m) in enumerate(zip(ks[:-1], ks[1:], ms[1:], strict=True)):
        h = (b - a) / REFINE
        inner = [a + h * j for j in range(1, REFINE)]
        inner += [a + h * q for q in GRADED if i > 0] + [b - h * q for q in GRADED if i < last]
        for k in sorted(inner):
            knots.append(k)
            mults.append(1)
        knots.append(b)
        mults.append(m)
    return knots, mults


def _refined_poles(c: Any, knots: list[float], mults: list[int]) -> np.ndarray:
    """Poles (N, 3) of ``c`` with ``knots``/``mults`` inserted (the same curve, exactly)."""
    from OCP.TColStd import TColStd_Array1OfInteger, TColStd_Array1OfReal

    cc = c.Copy()
    ka = TColStd_Array1OfReal(1, len(knots))
    ma = TColStd_Array1OfInteger(1, len(knots))
    for i, (k, m) in enumerate(zip(knots, mults, strict=True), start=1):
        ka.SetValue(i, k)
        ma.SetValue(i, m)
    cc.InsertKnots(ka, ma, 0.0, False)
    return np.array(
        [[cc.Pole(i).X(), cc.Pole(i).Y(), cc.Pole(i).Z()] for i in range(1, cc.NbPoles() + 1)]
    )


def _offset_poles(
    g: InletGeometry, sign: float, knots: list[float], mults: list[int]
) -> np.ndarray:
    """Poles (N, 3) of the cubic least-squares fit, on ``knots``, of the wall's offset by the
    round's radius in the skin plane: P(x) = C(x) + r·n(x), parametrised by x like C. Its
    ends are the exact offset points and its tangent at the planform's end lies along x
    (the straight walls' round continues it); raises when the fit is off by over P_FIT_MM."""
    from scipy.interpolate import BSpline, make_lsq_spline

    r, L = g.edge_radius_mm, g.length_mm
    t = np.repeat(np.asarray(knots), np.asarray(mults))
    mids = 0.5 * (np.asarray(knots[:-1]) + np.asarray(knots[1:]))
    x = np.union1d(np.union1d(np.linspace(0.0, L, 20001), knots), mids)
    target = g.planform.wall_offset(x, r) * np.array([1.0, sign])
    fit = make_lsq_spline(x, target, t, k=3)
    poles = np.array(fit.c, dtype=float)
    poles[0], poles[-1] = target[0], target[-1]
    poles[-2, 1] = poles[-1, 1]  # slope 0 at x = L, exactly
    dense = np.linspace(0.0, L, 20 * len(x))
    err = np.max(
        np.hypot(*(BSpline(t, poles, 3)(dense) - g.planform.wall_offset(dense, r) * [1.0, sign]).T)
    )
    if err > P_FIT_MM:
        raise GeometryError(
            "edge round", f"the round's skin line fits its offset only to {err:.2g} mm"
        )
    return np.column_stack([poles, np.zeros(len(poles))])


def round_surface(g: InletGeometry, sign: float) -> Any:
    """The round along the wall on the side ``sign`` (+1: y > 0) as a ``Geom_BSplineSurface``:
    u is the wall's x (0 … L), v runs 0 (on the wall, z = −r) … 1 (on the skin)."""
    from OCP.Geom import Geom_BSplineSurface
    from OCP.gp import gp_Pnt
    from OCP.TColgp import TColgp_Array2OfPnt
    from OCP.TColStd import TColStd_Array1OfInteger, TColStd_Array1OfReal, TColStd_Array2OfReal

    r = g.edge_radius_mm
    c = _bspline_data(wall_spline(g.planform, sign, 0.0))
    knots, mults = _refined_knots(c)
    corner = _refined_poles(c, knots, mults)
    rows = [corner - [0.0, 0.0, r], corner, _offset_poles(g, sign, knots, mults)]
    n = len(corner)
    poles = TColgp_Array2OfPnt(1, n, 1, 3)
    weights = TColStd_Array2OfReal(1, n, 1, 3)
    for i in range(n):
        for j, (row, w) in enumerate(zip(rows, (1.0, math.sqrt(0.5), 1.0), strict=True), start=1):
            poles.SetValue(i + 1, j, gp_Pnt(*(float(v) for v in row[i])))
            weights.SetValue(i + 1, j, w)
    uk = TColStd_Array1OfReal(1, len(knots))
    um = TColStd_Array1OfInteger(1, len(knots))
    for i, (k, m) in enumerate(zip(knots, mults, strict=True), start=1):
        uk.SetValue(i, k)
        um.SetValue(i, m)
    vk = TColStd_Array1OfReal(1, 2)
    vm = TColStd_Array1OfInteger(1, 2)
    for i in (1, 2):
        vk.SetValue(i, float(i - 1))
        vm.SetValue(i, 3)
    return Geom_BSplineSurface(poles, weights, uk, vk, um, vm, 3, 2)


def _face(surface: Any, u0: float, u1: float, v0: float, v1: float) -> cq.Face:
    from OCP.BRepBuilderAPI import BRepBuilderAPI_MakeFace

    mk = BRepBuilderAPI_MakeFace(surface, u0, u1, v0, v1, 1e-7)
    if not mk.IsDone():
        raise GeometryError("edge round", "a face of the round could not be made")
    return cq.Face(mk.Face())


def _prism_face(edge: cq.Edge, vec: cq.Vector) -> cq.Face:
    from OCP.BRepPrimAPI import BRepPrimAPI_MakePrism

    return cq.Face(BRepPrimAPI_MakePrism(edge.wrapped, vec.wrapped).Shape())


def _plane_face(edges: list[cq.Edge]) -> cq.Face:
    return cq.Face.makeFromWires(cq.Wire.assembleEdges(edges))


def _iso_edges(face: cq.Face) -> dict[str, cq.Edge]:
    """A natural-bounds face's four edges by where they lie: "u0", "u1" (ends across the
    round), "v0" (on the wall), "v1" (on the skin)."""
    from OCP.BRepTools import BRepTools

    u0, u1, v0, _ = BRepTools.UVBounds_s(face.wrapped)
    out: dict[str, cq.Edge] = {}
    for e in face.Edges():
        a, b = _edge_uv(face, e)
        if abs(a[0] - u0) < 1e-9 and abs(b[0] - u0) < 1e-9:
            out["u0"] = e
        elif abs(a[0] - u1) < 1e-9 and abs(b[0] - u1) < 1e-9:
            out["u1"] = e
        elif abs(a[1] - v0) < 1e-9 and abs(b[1] - v0) < 1e-9:
            out["v0"] = e
        else:
            out["v1"] = e
    return out


def _edge_uv(face: cq.Face, e: cq.Edge) -> tuple[tuple[float, float], tuple[float, float]]:
    from OCP.BRepAdaptor import BRepAdaptor_Curve2d

    c = BRepAdaptor_Curve2d(e.wrapped, face.wrapped)
    p, q = c.Value(c.FirstParameter()), c.Value(c.LastParameter())
    return (p.X(), p.Y()), (q.X(), q.Y())


def _side_faces(
    g: InletGeometry, sign: float, rnd: cq.Face, x_prism: float, z_bot: float
) -> list[cq.Face]:
    """One side's faces: the wall below the round, the round ``rnd`` along the spline and its
    continuation along the straight run, the straight wall, and the cap closing the round at
    x = 0 (plane)."""
    r, L = g.edge_radius_mm, g.length_mm
    hw1 = g.width_mm / 2.0
    rise = V(0.0, 0.0, -r - z_bot)
    wall = _prism_face(wall_spline(g.planform, sign, z_bot), rise)
    iso = _iso_edges(rnd)
    straight_round = _prism_face(iso["u1"], V(x_prism - L, 0.0, 0.0))
    run = cq.Edge.makeLine(V(L, sign * hw1, z_bot), V(x_prism, sign * hw1, z_bot))
    straight_wall = _prism_face(run, rise)
    c0, p0 = _start_points(g, sign)
    cap = _plane_face(
        [iso["u0"], cq.Edge.makeLine(c0 - V(0.0, 0.0, r), c0), cq.Edge.makeLine(c0, p0)]
    )
    return [wall, rnd, straight_round, straight_wall, cap]


def _start_points(g: InletGeometry, sign: float) -> tuple[cq.Vector, cq.Vector]:
    """The wall's start C(0) and the round's skin line's start P(0) on side ``sign`` (mm)."""
    hw0 = float(g.planform.half_width(0.0))
    px, py = g.planform.wall_offset(0.0, g.edge_radius_mm)[0]
    return V(0.0, sign * hw0, 0.0), V(float(px), sign * float(py), 0.0)


def _closing_faces(
    g: InletGeometry, rounds: dict[float, cq.Face], x_prism: float, z_bot: float, rise: float
) -> list[cq.Face]:
    """The faces across both sides: floor (z = z_bot), entry (x = 0), end (x = x_prism) and
    the opening in the skin plane, bounded by the skin lines of the ``rounds`` (by side);
    with ``rise`` > 0 (mm) the opening is raised that far above the skin instead: its outline
    drawn up as vertical faces and closed by the opening at z = ``rise``."""
    r, L = g.edge_radius_mm, g.length_mm
    hw0, hw1 = float(g.planform.half_width(0.0)), g.width_mm / 2.0
    floor = cq.Face.makeFromWires(footprint_wire(g, x_prism, z_bot))
    entry = _plane_face(
        polyline_edges(
            [
                (0.0, y, z)
                for y, z in [
                    (-hw0, z_bot),
                    (hw0, z_bot),
                    (hw0, -r),
                    (hw0, 0.0),
                    (-hw0, 0.0),
                    (-hw0, -r),
                    (-hw0, z_bot),
                ]
            ]
        )
    )
    ends: list[cq.Edge] = []
    top: list[cq.Edge] = [cq.Edge.makeLine(V(0.0, -hw0, 0.0), V(0.0, hw0, 0.0))]
    for sign in (1.0, -1.0):
        iso = _iso_edges(rounds[sign])
        c0, p0 = _start_points(g, sign)
        top += [cq.Edge.makeLine(c0, p0), iso["v1"]]
        top.append(cq.Edge.makeLine(V(L, sign * (hw1 + r), 0.0), V(x_prism, sign * (hw1 + r), 0.0)))
        ends.append(iso["u1"].translate(V(x_prism - L, 0.0, 0.0)))
        ends += polyline_edges([(x_prism, sign * hw1, z_bot), (x_prism, sign * hw1, -r)])
    top.append(cq.Edge.makeLine(V(x_prism, hw1 + r, 0.0), V(x_prism, -hw1 - r, 0.0)))
    ends.append(top[-1])
    ends.append(cq.Edge.makeLine(V(x_prism, -hw1, z_bot), V(x_prism, hw1, z_bot)))
    closing = [floor, entry, _plane_face(ends)]
    if rise <= 0.0:
        return [*closing, _plane_face(top)]
    up = V(0.0, 0.0, rise)
    return [
        *closing,
        *(_prism_face(e, up) for e in top),
        _plane_face([e.translate(up) for e in top]),
    ]


def rounded_prism(g: InletGeometry, x_prism: float, z_bot: float, rise: float = 0.0) -> cq.Solid:
    """The planform (walls straight past the planform's end to ``x_prism``) as a prism from
    z_bot up to the skin plane, its top edges along both walls rounded by the edge radius
    (mm): the cavity's body before the floor and lip are cut. ``rise`` > 0: the flared
    opening is carried straight up that far above the skin (mm; the overcut), in the same
    sewn solid, its coplanar faces merged (what fusing a slab onto the opening gave, without
    the Boolean). Raises :class:`GeometryError` when the faces do not close into one valid
    solid."""
    from OCP.BRepBuilderAPI import BRepBuilderAPI_MakeSolid, BRepBuilderAPI_Sewing
    from OCP.TopAbs import TopAbs_SHELL
    from OCP.TopExp import TopExp_Explorer
    from OCP.TopoDS import TopoDS

    rounds = {s: _face(round_surface(g, s), 0.0, g.length_mm, 0.0, 1.0) for s in (1.0, -1.0)}
    faces = [f for s, rnd in rounds.items() for f in _side_faces(g, s, rnd, x_prism, z_bot)]
    faces += _closing_faces(g, rounds, x_prism, z_bot, rise)
    sew = BRepBuilderAPI_Sewing(1e-6)
    for f in faces:
        sew.Add(f.wrapped)
    sew.Perform()
    ex = TopExp_Explorer(sew.SewedShape(), TopAbs_SHELL)
    if not ex.More():
        raise GeometryError("edge round", "the round's faces did not sew into a shell")
    solid = cq.Solid(BRepBuilderAPI_MakeSolid(TopoDS.Shell_s(ex.Current())).Solid())
    if solid.Volume() < 0:
        solid = cq.Solid(solid.wrapped.Reversed())
    if rise > 0.0:  # the raised opening's sides continue the entry, the caps and the end
        solid = solid.clean()
    if not solid.isValid() or sew.NbFreeEdges() or sew.NbMultipleEdges():
        raise GeometryError("edge round", "the round's faces do not close into a valid solid")
    return solid
