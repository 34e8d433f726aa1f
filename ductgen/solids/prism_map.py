"""A vertical prism carried onto the skin with every edge exactly on its faces (CAD kernel:
runs in a kernel worker; mm).

:func:`~ductgen.solids.deform.map_solid` fits each face and each edge curve to its mapped
image on its own, so two faces meet along an edge only to the fit's tolerance (1e-4 mm):
read back from STEP, a second program's geometry check reports those edges as off their
faces. A solid that is a region of the plane swept between two heights w0 < w1 (the
marking jig and its pieces) can instead be built on the skin so that nothing is left to
disagree: the skin map is linear along the normal (a point at height w is the skin point
plus w times the unit normal), so each side wall is exactly a ruled surface between its
bottom and top boundary curves.

:func:`map_prism` fits the two caps' surfaces (the planes w = w0 and w = w1 carried onto the
skin, :func:`~ductgen.solids.spline_fit.fit_surface`), lifts each boundary curve of the
region onto each cap's *fitted* surface (:data:`LIFT_TOL_MM`, its ends exact at the
vertices), makes each wall the ruled surface between its two lifted curves (one knot
vector), and each vertical edge the straight line between them. Every edge then lies on
its faces to the lift's tolerance (on the walls exactly): the edges' surface curves are the
region's own boundary curves on the caps and iso-lines on the walls.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

import cadquery as cq
import numpy as np

from ductgen.solids.prism_topology import NotLifted, PrismBuilder
from ductgen.solids.spline_fit import FIT_TOL_MM, fit_curve, fit_surface

__all__ = ["LIFT_TOL_MM", "map_prism"]

#: Largest departure (mm) of a lifted boundary curve from its cap's fitted surface, at the
#: fit's test points: under the 1e-7 mm a reader gives an exact edge.
LIFT_TOL_MM = 2e-8
#: Largest distance (mm) of a vertex from one of the two heights, for a solid to count as a
#: vertical prism.
PRISM_MM = 1e-7

PointMap = Callable[[np.ndarray], np.ndarray]


def map_prism(shape: cq.Solid, fn: PointMap, tol_mm: float = FIT_TOL_MM) -> cq.Solid | None:
    """``shape`` (design coordinates, a plane region swept along w) carried through the skin
    map ``fn`` (linear in w), or None when ``shape`` is not such a prism or the result is
    not one valid solid (the caller then maps it face by face)."""
    found = _top_cap(shape)
    if found is None:
        return None
    top, w0, w1 = found
    loops = _loops(top)
    if loops is None:
        return None
    bb = top.BoundingBox()
    box = (bb.xmin - 1.0, bb.xmax + 1.0, bb.ymin - 1.0, bb.ymax + 1.0)
    try:
        caps = [fit_surface(_plane_patch(box, w), fn, tol_mm)[0] for w in (w0, w1)]
        solid = _assemble(loops, caps)
    except NotLifted:
        return None
    except Exception:  # kernel exceptions share no base class: the caller maps the
        return None  # solid face by face instead, as before this path existed
    return solid if solid.isValid() and solid.Volume() > 0.0 else None


def _top_cap(shape: cq.Solid) -> tuple[cq.Face, float, float] | None:
    """The top face of a vertical prism (outward normal +w) and the prism's heights, or
    None when ``shape`` is not one: one plane face at each height, every other face
    vertical (a plane, cylinder or extrusion along w) and every vertex at one of the two
    heights."""
    from OCP.BRepAdaptor import BRepAdaptor_Surface
    from OCP.GeomAbs import GeomAbs_Cylinder, GeomAbs_Plane, GeomAbs_SurfaceOfExtrusion

    caps = []
    for f in shape.Faces():
        a = BRepAdaptor_Surface(f.wrapped)
        kind = a.GetType()
        if kind == GeomAbs_Plane and abs(abs(a.Plane().Axis().Direction().Z()) - 1.0) < 1e-12:
            caps.append((float(a.Plane().Location().Z()), f.normalAt().z > 0, f))
            continue
        if kind == GeomAbs_Plane:  # its normal across w
            across = abs(a.Plane().Axis().Direction().Z())
        elif kind == GeomAbs_Cylinder:  # its axis along w
            across = 1.0 - abs(a.Cylinder().Axis().Direction().Z())
        elif kind == GeomAbs_SurfaceOfExtrusion:  # extruded along w
            across = 1.0 - abs(a.Direction().Z())
        else:
            return None
        if across > 1e-12:
            return None
    if len(caps) != 2 or caps[0][1] == caps[1][1]:
        return None
    w0, w1 = sorted(w for w, _, _ in caps)
    if any(min(abs(v.Z - w0), abs(v.Z - w1)) > PRISM_MM for v in shape.Vertices()):
        return None
    return next(f for _, up, f in caps if up), w0, w1


def _loops(top: cq.Face) -> list[list[Any]] | None:
    """The top face's boundary loops, each a list of planar B-spline curves (Geom, at the
    face's height) in order along the loop, each running on from where the one before it
    ends (its end poles put exactly on the loop's vertices): the outer loop counter-clockwise
    seen from +w, the holes clockwise. None when the loops are not so."""
    from OCP.BRep import BRep_Tool
    from OCP.BRepTools import BRepTools_WireExplorer
    from OCP.Geom import Geom_TrimmedCurve
    from OCP.GeomConvert import GeomConvert
    from OCP.TopAbs import TopAbs_REVERSED

    loops, areas = [], []
    for wire in top.Wires():
        curves, starts = [], []
        walk = BRepTools_WireExplorer(wire.wrapped, top.wrapped)
        while walk.More():
            e = walk.Current()
            t0, t1 = BRep_Tool.Range_s(e)
            c = Geom_TrimmedCurve(BRep_Tool.Curve_s(e, 0.0, 0.0), t0, t1)
            bs = GeomConvert.CurveToBSplineCurve_s(c)
            if walk.Orientation() == TopAbs_REVERSED:
                bs.Reverse()
            curves.append(bs)
            starts.append(BRep_Tool.Pnt_s(walk.CurrentVertex()))
            walk.Next()
        if len(curves) < 2:
            return None
        for k, bs in enumerate(curves):
            bs.SetPole(1, starts[k])
            bs.SetPole(bs.NbPoles(), starts[(k + 1) % len(curves)])
        x, y = np.vstack([_points(bs, 24)[:-1] for bs in curves])[:, :2].T
        areas.append(0.5 * float(np.sum(x * np.roll(y, -1) - np.roll(x, -1) * y)))  # shoelace
        loops.append(curves)
    outer = int(np.argmax(np.abs(areas)))
    if areas[outer] < 0:
        return None
    if any(a > 0 for i, a in enumerate(areas) if i != outer):
        return None
    return loops


def _points(bs: Any, n: int) -> np.ndarray:
    """``n`` points (n, 3) along a kernel curve, evenly in its parameter."""
    ts = np.linspace(bs.FirstParameter(), bs.LastParameter(), n)
    return np.array([bs.Value(float(t)).Coord() for t in ts])


def _plane_patch(box: tuple[float, float, float, float], w: float) -> Any:
    """The plane at height ``w`` over ``box`` (u0, u1, v0, v1) as a bilinear B-spline
    surface whose parameters are (u, v) themselves."""
    from OCP.Geom import Geom_BSplineSurface
    from OCP.gp import gp_Pnt
    from OCP.TColgp import TColgp_Array2OfPnt
    from OCP.TColStd import TColStd_Array1OfInteger, TColStd_Array1OfReal

    u0, u1, v0, v1 = box
    poles = TColgp_Array2OfPnt(1, 2, 1, 2)
    for i, u in enumerate((u0, u1), start=1):
        for j, v in enumerate((v0, v1), start=1):
            poles.SetValue(i, j, gp_Pnt(u, v, w))
    ku, kv = TColStd_Array1OfReal(1, 2), TColStd_Array1OfReal(1, 2)
    mults = TColStd_Array1OfInteger(1, 2)
    for arr, (a, b) in ((ku, (u0, u1)), (kv, (v0, v1))):
        arr.SetValue(1, a)
        arr.SetValue(2, b)
    mults.SetValue(1, 2)
    mults.SetValue(2, 2)
    return Geom_BSplineSurface(poles, ku, kv, mults, mults, 1, 1)


def _on(surface: Any) -> PointMap:
    """Points (N, 3) → the surface at their (x, y) as its parameters (N, 3)."""

    def at(p: np.ndarray) -> np.ndarray:
        return np.array([surface.Value(float(x), float(y)).Coord() for x, y in p[:, :2]])

    return at


def _lift(flat: Any, caps: list[Any]) -> tuple[Any, Any]:
    """The planar curve ``flat`` lifted onto each cap's surface (bottom, top), fitted on
    ``flat``'s parameter within :data:`LIFT_TOL_MM`, on one knot vector."""
    lifted = []
    for cap in caps:
        curve, err = fit_curve(flat, _on(cap), LIFT_TOL_MM)
        if err > LIFT_TOL_MM:
            raise NotLifted
        lifted.append(curve)
    a, b = lifted
    for x, y in ((a, b), (b, a)):
        for i in range(1, y.NbKnots() + 1):
            x.InsertKnot(y.Knot(i), y.Multiplicity(i), 1e-12, False)
    knots = [[(x.Knot(i), x.Multiplicity(i)) for i in range(1, x.NbKnots() + 1)] for x in (a, b)]
    if a.NbPoles() != b.NbPoles() or not np.allclose(knots[0], knots[1], rtol=0.0, atol=1e-12):
        raise NotLifted
    return a, b


def _assemble(loops: list[list[Any]], caps: list[Any]) -> cq.Solid:
    """The solid: the two caps (``caps``: bottom, top fitted surfaces) bounded by the lifted
    ``loops``, and one ruled wall per boundary curve."""
    build = PrismBuilder(caps)
    for curves in loops:
        build.loop([(flat, *_lift(flat, caps)) for flat in curves])
    return build.solid()
