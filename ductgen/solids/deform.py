"""Placing a solid built in design coordinates onto a curved skin.

Every solid is built flat, in design coordinates (u along the flow, v across, w along the
normal), where its booleans are exact and fast; :func:`map_solid` then carries the finished
B-rep through the skin map. The shape is converted to B-splines; each surface and edge curve
is replaced by a least-squares fit of its image under the map on its own parametrization
(:mod:`ductgen.solids.spline_fit`: within ``MAP_TOL_MM`` of the exactly mapped surface at
points between the fitted ones); vertices are mapped exactly; every face keeps its boundary
curves in parameter space (p-curves), so the topology is unchanged and the p-curves stay
exact on the fitted surfaces (the kernel need not project new ones).
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

import cadquery as cq
import numpy as np
from OCP.BRep import BRep_Builder, BRep_Tool
from OCP.BRepBuilderAPI import BRepBuilderAPI_Copy, BRepBuilderAPI_NurbsConvert
from OCP.GeomConvert import GeomConvert
from OCP.gp import gp_Pnt
from OCP.ShapeFix import ShapeFix_Shape
from OCP.TopAbs import TopAbs_EDGE, TopAbs_FACE, TopAbs_FORWARD, TopAbs_REVERSED, TopAbs_VERTEX
from OCP.TopExp import TopExp
from OCP.TopLoc import TopLoc_Location
from OCP.TopoDS import TopoDS, TopoDS_Face, TopoDS_Shape
from OCP.TopTools import TopTools_IndexedMapOfShape

from ductgen.design import Design
from ductgen.errors import GeometryError
from ductgen.solids.spline_fit import FIT_TOL_MM, fit_curve, fit_surface

__all__ = ["MAP_TOL_MM", "map_solid", "place"]

#: Largest departure (mm) of a mapped surface or edge curve from the exactly mapped one, at
#: the fit's test points (:data:`~ductgen.solids.spline_fit.FIT_TOL_MM`).
MAP_TOL_MM = FIT_TOL_MM
#: Precision (mm) given to the kernel's shape fixing after the map (what it may treat as one
#: point); as before the fits, when the mapped poles departed up to 2e-3 mm.
FIX_PRECISION_MM = 2e-3

PointMap = Callable[[np.ndarray], np.ndarray]


def _items(shape: TopoDS_Shape, kind: Any) -> list[Any]:
    """The distinct sub-shapes of ``kind`` in ``shape``."""
    seen = TopTools_IndexedMapOfShape()
    TopExp.MapShapes_s(shape, kind, seen)
    return [seen.FindKey(i) for i in range(1, seen.Extent() + 1)]


def _pcurves(face: TopoDS_Face) -> list[tuple[Any, Any, Any]]:
    """Each edge of ``face`` with its p-curve(s) on it: (edge, curve, None), or for a seam
    edge (edge, forward curve, reversed curve)."""
    out = []
    for e in _items(face, TopAbs_EDGE):
        edge = TopoDS.Edge_s(e)
        if BRep_Tool.IsClosed_s(edge, face):
            fwd = TopoDS.Edge_s(edge.Oriented(TopAbs_FORWARD))
            rev = TopoDS.Edge_s(edge.Oriented(TopAbs_REVERSED))
            out.append(
                (
                    edge,
                    BRep_Tool.CurveOnSurface_s(fwd, face, 0.0, 0.0),
                    BRep_Tool.CurveOnSurface_s(rev, face, 0.0, 0.0),
                )
            )
        else:
            out.append((edge, BRep_Tool.CurveOnSurface_s(edge, face, 0.0, 0.0), None))
    return out


def _map_faces(shape: TopoDS_Shape, fn: PointMap, tol_mm: float, b: BRep_Builder) -> None:
    """Every face's surface replaced by its fitted image; its edges' p-curves, kept from
    before, attached to the new surface (replacing a face's surface detaches them)."""
    faces = [TopoDS.Face_s(f) for f in _items(shape, TopAbs_FACE)]
    kept = [_pcurves(face) for face in faces]  # all first: faces may share a surface
    for face, edges in zip(faces, kept, strict=True):
        bs = GeomConvert.SurfaceToBSplineSurface_s(BRep_Tool.Surface_s(face))
        surface, err = fit_surface(bs, fn, tol_mm)
        err = max(err, tol_mm)  # what the tolerances claim (more where the fit fell short)
        b.UpdateFace(face, surface, TopLoc_Location(), BRep_Tool.Tolerance_s(face) + err)
        for edge, c1, c2 in edges:
            tol = BRep_Tool.Tolerance_s(edge) + 2.0 * err
            if c2 is None:
                b.UpdateEdge(edge, c1, face, tol)
            else:
                b.UpdateEdge(edge, c1, c2, face, tol)


def _map_edges_and_vertices(
    shape: TopoDS_Shape, fn: PointMap, tol_mm: float, b: BRep_Builder
) -> None:
    """Every edge's 3D curve replaced by its fitted image (ends mapped exactly), every vertex
    mapped; tolerances raised by twice the fit's."""
    for e in _items(shape, TopAbs_EDGE):
        edge = TopoDS.Edge_s(e)
        crv = None if BRep_Tool.Degenerated_s(edge) else BRep_Tool.Curve_s(edge, 0.0, 0.0)
        if crv is None:
            continue
        curve, err = fit_curve(GeomConvert.CurveToBSplineCurve_s(crv), fn, tol_mm)
        tol = BRep_Tool.Tolerance_s(edge) + 2.0 * max(err, tol_mm)
        b.UpdateEdge(edge, curve, TopLoc_Location(), tol)
    for v in _items(shape, TopAbs_VERTEX):
        vertex = TopoDS.Vertex_s(v)
        p = BRep_Tool.Pnt_s(vertex)
        q = fn(np.array([[p.X(), p.Y(), p.Z()]]))[0]
        b.UpdateVertex(vertex, gp_Pnt(*q), BRep_Tool.Tolerance_s(vertex) + 2.0 * tol_mm)


def map_solid(shape: cq.Shape, fn: PointMap, stage: str, tol_mm: float = MAP_TOL_MM) -> cq.Solid:
    """``shape`` (design coordinates) carried through ``fn`` to model coordinates.

    Args:
        shape: a closed solid built in design coordinates (mm).
        fn: the point map, (N, 3) → (N, 3), mm.
        stage: named in a :class:`GeometryError` when the mapped solid is not sound.
        tol_mm: allowed departure from the exactly mapped surfaces and curves (mm).
    """
    try:
        # a deep copy first: the conversion shares untouched sub-shapes with its input,
        # and the caller's shape (often reused, e.g. the cutter for the insert) must not move
        own = BRepBuilderAPI_Copy(shape.wrapped, True, False).Shape()
        nc = BRepBuilderAPI_NurbsConvert(own, False).Shape()
        builder = BRep_Builder()
        _map_faces(nc, fn, tol_mm, builder)
        _map_edges_and_vertices(nc, fn, tol_mm, builder)
        fix = ShapeFix_Shape(nc)
        fix.SetPrecision(FIX_PRECISION_MM)
        fix.SetMaxTolerance(10.0 * FIX_PRECISION_MM)
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
    return map_solid(shape, fn, kind)
