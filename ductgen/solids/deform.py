"""Placing a solid built in design coordinates onto a curved skin.

Every solid is built flat, in design coordinates (u along the flow, v across, w along the
normal), where its booleans are exact and fast; :func:`map_solid` then carries the finished
B-rep through the skin map. The shape is converted to B-splines, each surface and edge curve
is refined (degree ≥ 3, knots inserted until a span is at most ``span_mm`` long in space) and
its poles are moved through the map; vertices are mapped exactly; the faces keep their
parameter-space boundaries (p-curves), so the topology is unchanged. A pole-mapped spline
departs from the true mapped surface by about span²·κ/8 (κ the skin curvature), so the span
is chosen from the curvature for a stated tolerance, and the result is checked by sampling.
"""

from __future__ import annotations

import itertools
import math
from collections.abc import Callable

import cadquery as cq
import numpy as np
from OCP.BRep import BRep_Builder, BRep_Tool
from OCP.BRepBuilderAPI import BRepBuilderAPI_Copy, BRepBuilderAPI_NurbsConvert
from OCP.BRepLib import BRepLib
from OCP.Geom import Geom_BSplineCurve, Geom_BSplineSurface
from OCP.GeomConvert import GeomConvert
from OCP.gp import gp_Pnt
from OCP.ShapeFix import ShapeFix_Shape
from OCP.TColStd import TColStd_Array1OfInteger, TColStd_Array1OfReal
from OCP.TopAbs import TopAbs_EDGE, TopAbs_FACE, TopAbs_VERTEX
from OCP.TopExp import TopExp
from OCP.TopLoc import TopLoc_Location
from OCP.TopoDS import TopoDS, TopoDS_Edge, TopoDS_Face
from OCP.TopTools import TopTools_IndexedMapOfShape

from ductgen.design import Design
from ductgen.errors import GeometryError

__all__ = ["MAP_TOL_MM", "map_solid", "place", "span_for"]

#: Largest departure (mm) of a mapped surface from the exactly mapped one that is allowed.
MAP_TOL_MM = 2e-3

PointMap = Callable[[np.ndarray], np.ndarray]


def span_for(curvature_per_mm: float, tol_mm: float = MAP_TOL_MM) -> float:
    """Longest spline span (mm) whose pole-mapped image stays within ``tol_mm`` of the mapped
    curve on a skin of curvature κ: span²·κ/8 ≤ tol, capped at 50 mm."""
    k = abs(curvature_per_mm)
    return 50.0 if k == 0 else min(50.0, math.sqrt(8.0 * tol_mm / k))


def _insert(values: np.ndarray) -> tuple[TColStd_Array1OfReal, TColStd_Array1OfInteger]:
    arr = TColStd_Array1OfReal(1, len(values))
    mul = TColStd_Array1OfInteger(1, len(values))
    for i, k in enumerate(values, start=1):
        arr.SetValue(i, float(k))
        mul.SetValue(i, 1)
    return arr, mul


def _spans(length_mm: float, span_mm: float) -> int:
    return max(1, math.ceil(length_mm / span_mm))


def _polyline_length(pts: list[gp_Pnt]) -> float:
    return float(sum(a.Distance(b) for a, b in itertools.pairwise(pts)))


def _map_surface(face: TopoDS_Face, fn: PointMap, span_mm: float) -> Geom_BSplineSurface:
    """The face's surface as a B-spline of degree ≥ 3, knots inserted until a span is at most
    ``span_mm`` long in space (mm), its poles moved through ``fn``."""
    # a copy: the conversion hands back the very same spline when it already is one, and
    # the caller's shape must stay untouched
    bs = GeomConvert.SurfaceToBSplineSurface_s(BRep_Tool.Surface_s(face).Copy())
    bs.IncreaseDegree(max(bs.UDegree(), 3), max(bs.VDegree(), 3))
    u1, u2, v1, v2 = bs.Bounds()
    um, vm = 0.5 * (u1 + u2), 0.5 * (v1 + v2)
    lu = max(
        _polyline_length([bs.Value(a, b) for a in np.linspace(u1, u2, 17)]) for b in (v1, vm, v2)
    )
    lv = max(
        _polyline_length([bs.Value(a, b) for b in np.linspace(v1, v2, 17)]) for a in (u1, um, u2)
    )
    for n, (a, b, is_u) in (
        (_spans(lu, span_mm), (u1, u2, True)),
        (_spans(lv, span_mm), (v1, v2, False)),
    ):
        ks = np.linspace(a, b, n + 1)[1:-1]
        if len(ks):
            arr, mul = _insert(ks)
            (bs.InsertUKnots if is_u else bs.InsertVKnots)(arr, mul, 1e-12, False)
    nu, nv = bs.NbUPoles(), bs.NbVPoles()
    poles = np.array([[bs.Pole(i, j).Coord() for j in range(1, nv + 1)] for i in range(1, nu + 1)])
    moved = fn(poles.reshape(-1, 3)).reshape(nu, nv, 3)
    for i in range(nu):
        for j in range(nv):
            bs.SetPole(i + 1, j + 1, gp_Pnt(*moved[i, j]))
    return bs


def _map_curve(edge: TopoDS_Edge, fn: PointMap, span_mm: float) -> Geom_BSplineCurve | None:
    """The edge's 3D curve refined and mapped as :func:`_map_surface` does a surface (None
    when the edge has no 3D curve)."""
    crv = BRep_Tool.Curve_s(edge, 0.0, 0.0)
    if crv is None:
        return None
    bc = GeomConvert.CurveToBSplineCurve_s(crv.Copy())
    bc.IncreaseDegree(max(bc.Degree(), 3))
    t1, t2 = bc.FirstParameter(), bc.LastParameter()
    n = _spans(_polyline_length([bc.Value(t) for t in np.linspace(t1, t2, 33)]), span_mm)
    ks = np.linspace(t1, t2, n + 1)[1:-1]
    if len(ks):
        arr, mul = _insert(ks)
        bc.InsertKnots(arr, mul, 1e-12, False)
    poles = np.array([bc.Pole(i).Coord() for i in range(1, bc.NbPoles() + 1)])
    for i, p in enumerate(fn(poles), start=1):
        bc.SetPole(i, gp_Pnt(*p))
    return bc


def map_solid(
    shape: cq.Shape, fn: PointMap, curvature_per_mm: float, stage: str, tol_mm: float = MAP_TOL_MM
) -> cq.Solid:
    """``shape`` (design coordinates) carried through ``fn`` to model coordinates.

    Args:
        shape: a closed solid built in design coordinates (mm).
        fn: the point map, (N, 3) → (N, 3), mm.
        curvature_per_mm: the largest skin curvature (1/mm), which sets the spline spans.
        stage: named in a :class:`GeometryError` when the mapped solid is not sound.
        tol_mm: allowed departure from the exactly mapped surface (mm).
    """
    span = span_for(curvature_per_mm, tol_mm)
    try:
        # a deep copy first: the conversion shares untouched sub-shapes with its input,
        # and the caller's shape (often reused, e.g. the cutter for the insert) must not move
        own = BRepBuilderAPI_Copy(shape.wrapped, True, False).Shape()
        nc = BRepBuilderAPI_NurbsConvert(own, False).Shape()
        builder = BRep_Builder()
        seen = TopTools_IndexedMapOfShape()
        TopExp.MapShapes_s(nc, TopAbs_FACE, seen)
        for i in range(1, seen.Extent() + 1):
            face = TopoDS.Face_s(seen.FindKey(i))
            builder.UpdateFace(face, _map_surface(face, fn, span), TopLoc_Location(), tol_mm)
        seen = TopTools_IndexedMapOfShape()
        TopExp.MapShapes_s(nc, TopAbs_EDGE, seen)
        for i in range(1, seen.Extent() + 1):
            edge = TopoDS.Edge_s(seen.FindKey(i))
            if BRep_Tool.Degenerated_s(edge):
                continue
            curve = _map_curve(edge, fn, span)
            if curve is not None:
                builder.UpdateEdge(edge, curve, TopLoc_Location(), tol_mm)
        seen = TopTools_IndexedMapOfShape()
        TopExp.MapShapes_s(nc, TopAbs_VERTEX, seen)
        for i in range(1, seen.Extent() + 1):
            vertex = TopoDS.Vertex_s(seen.FindKey(i))
            p = BRep_Tool.Pnt_s(vertex)
            q = fn(np.array([[p.X(), p.Y(), p.Z()]]))[0]
            builder.UpdateVertex(vertex, gp_Pnt(*q), tol_mm)
        BRepLib.SameParameter_s(nc, tol_mm, True)
        fix = ShapeFix_Shape(nc)
        fix.SetPrecision(tol_mm)
        fix.SetMaxTolerance(10.0 * tol_mm)
        fix.Perform()
        out = cq.Shape.cast(fix.Shape())
    except GeometryError:
        raise
    except Exception as err:  # kernel exceptions share no base class (seen on this stack)
        raise GeometryError(
            stage, f"mapping onto the skin failed: {type(err).__name__}: {err}"
        ) from err
    solids = out.Solids()
    if len(solids) != 1 or not solids[0].isValid():
        raise GeometryError(stage, "the solid mapped onto the skin is not one valid solid")
    return solids[0]


def place(shape: cq.Solid, d: Design, kind: str) -> cq.Solid:
    """A solid built in design coordinates placed on the design's skin (the same solid on a
    flat skin): the cutter and insert with ``d.placement.solid_map``, the plug (built upside
    down) with ``plug_map``."""
    pl = d.placement
    if pl.curvature == 0.0:
        return shape
    fn = pl.plug_map if kind == "plug" else pl.solid_map
    return map_solid(shape, fn, pl.curvature, kind)
