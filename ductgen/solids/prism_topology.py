"""The faces, edges and vertices of a prism carried onto the skin
(:mod:`ductgen.solids.prism_map`), put together by hand so that each edge keeps the curves
it was made from: on a cap, the region's own boundary curve in the cap's parameters (which
are the design coordinates u, v); on a wall, an iso-line of the ruled surface (v = 0 at the
bottom, 1 at the top, u = the curve's end parameter along a vertical edge). CAD kernel;
runs in a kernel worker; mm.
"""

from __future__ import annotations

from typing import Any

import cadquery as cq

__all__ = ["NotLifted", "PrismBuilder", "ruled"]

#: Tolerance (mm) of the new faces, edges and vertices: every edge lies on its faces within
#: the lift's tolerance (:data:`~ductgen.solids.prism_map.LIFT_TOL_MM`, 2e-8), below it.
TOL_MM = 1e-7


class NotLifted(Exception):
    """A boundary curve or edge of the prism could not be made as asked."""


class PrismBuilder:
    """Build the prism loop by loop (:meth:`loop`), then :meth:`solid`.

    ``caps``: the bottom and top caps' surfaces (parameters u, v of the design)."""

    def __init__(self, caps: list[Any]) -> None:
        from OCP.BRep import BRep_Builder
        from OCP.TopoDS import TopoDS_Face

        self.b = BRep_Builder()
        self.caps = [TopoDS_Face(), TopoDS_Face()]
        for face, surface in zip(self.caps, caps, strict=True):
            self.b.MakeFace(face, surface, TOL_MM)
        self.cap_wires: list[list[Any]] = [[], []]
        self.walls: list[Any] = []

    def loop(self, runs: list[tuple[Any, Any, Any]]) -> None:
        """One boundary loop: per boundary curve (planar B-spline in design coordinates,
        its bottom and top lifts on one knot vector and its parameter), in loop order."""
        from OCP.TopAbs import TopAbs_FORWARD as fwd
        from OCP.TopAbs import TopAbs_REVERSED as rev

        n = len(runs)
        low = [_vertex(bottom.StartPoint()) for _, bottom, _ in runs]
        high = [_vertex(top.StartPoint()) for _, _, top in runs]
        rises = [_line_edge(low[j], high[j]) for j in range(n)]
        wires = [self._wire(), self._wire()]
        for k, (flat, bottom, top) in enumerate(runs):
            j = (k + 1) % n
            t0, t1 = flat.FirstParameter(), flat.LastParameter()
            wall = self._face(ruled(bottom, top))
            pc = _plane_curve(flat)
            edges = []
            for cap, lifted, ends, v in ((0, bottom, low, 0.0), (1, top, high, 1.0)):
                e = _edge(lifted, ends[k], ends[j], t0, t1)
                self._pcurve(e, pc, self.caps[cap])
                self._pcurve(e, _line2d((0.0, v), (1.0, 0.0)), wall)
                self.b.Add(wires[cap], e)
                edges.append(e)
            self._pcurve(rises[k], _line2d((t0, 0.0), (0.0, 1.0)), wall)
            self._pcurve(rises[j], _line2d((t1, 0.0), (0.0, 1.0)), wall)
            side = self._wire()
            for e, way in ((edges[0], fwd), (rises[j], fwd), (edges[1], rev), (rises[k], rev)):
                self.b.Add(side, e.Oriented(way))
            side.Closed(True)
            self.b.Add(wall, side)
            self.walls.append(wall)
        for cap, wire in enumerate(wires):
            wire.Closed(True)
            self.cap_wires[cap].append(wire)

    def solid(self) -> cq.Solid:
        """The closed solid (bottom cap reversed: its surface's normal points up, into it).
        Its edges keep :data:`TOL_MM`: they lie on their faces within the lift's tolerance
        (the STEP writer's healing measures each edge against its faces anyway)."""
        from OCP.TopAbs import TopAbs_FORWARD, TopAbs_REVERSED
        from OCP.TopoDS import TopoDS_Shell, TopoDS_Solid

        for face, wires in zip(self.caps, self.cap_wires, strict=True):
            for w in wires:
                self.b.Add(face, w)
        shell = TopoDS_Shell()
        self.b.MakeShell(shell)
        self.b.Add(shell, self.caps[0].Oriented(TopAbs_REVERSED))
        self.b.Add(shell, self.caps[1].Oriented(TopAbs_FORWARD))
        for wall in self.walls:
            self.b.Add(shell, wall)
        solid = TopoDS_Solid()
        self.b.MakeSolid(solid)
        self.b.Add(solid, shell)
        return cq.Solid(solid)

    def _wire(self) -> Any:
        from OCP.TopoDS import TopoDS_Wire

        wire = TopoDS_Wire()
        self.b.MakeWire(wire)
        return wire

    def _face(self, surface: Any) -> Any:
        from OCP.TopoDS import TopoDS_Face

        face = TopoDS_Face()
        self.b.MakeFace(face, surface, TOL_MM)
        return face

    def _pcurve(self, edge: Any, curve2d: Any, face: Any) -> None:
        self.b.UpdateEdge(edge, curve2d, face, TOL_MM)


def _vertex(p: Any) -> Any:
    from OCP.BRepBuilderAPI import BRepBuilderAPI_MakeVertex

    return BRepBuilderAPI_MakeVertex(p).Vertex()


def _edge(curve: Any, v0: Any, v1: Any, t0: float, t1: float) -> Any:
    from OCP.BRepBuilderAPI import BRepBuilderAPI_MakeEdge

    made = BRepBuilderAPI_MakeEdge(curve, v0, v1, t0, t1)
    if not made.IsDone():
        raise NotLifted
    return made.Edge()


def _line_edge(v0: Any, v1: Any) -> Any:
    """The straight edge from ``v0`` to ``v1`` on the parameter 0..1."""
    from OCP.BRep import BRep_Tool
    from OCP.Geom import Geom_BSplineCurve
    from OCP.TColgp import TColgp_Array1OfPnt
    from OCP.TColStd import TColStd_Array1OfInteger, TColStd_Array1OfReal

    poles = TColgp_Array1OfPnt(1, 2)
    poles.SetValue(1, BRep_Tool.Pnt_s(v0))
    poles.SetValue(2, BRep_Tool.Pnt_s(v1))
    knots, mults = TColStd_Array1OfReal(1, 2), TColStd_Array1OfInteger(1, 2)
    knots.SetValue(1, 0.0)
    knots.SetValue(2, 1.0)
    mults.SetValue(1, 2)
    mults.SetValue(2, 2)
    return _edge(Geom_BSplineCurve(poles, knots, mults, 1), v0, v1, 0.0, 1.0)


def _line2d(origin: tuple[float, float], direction: tuple[float, float]) -> Any:
    from OCP.Geom2d import Geom2d_Line
    from OCP.gp import gp_Dir2d, gp_Pnt2d

    return Geom2d_Line(gp_Pnt2d(*origin), gp_Dir2d(*direction))


def _plane_curve(flat: Any) -> Any:
    """A planar B-spline curve (Geom, design coordinates) as the same curve in the (u, v)
    plane (Geom2d), poles, weights and knots unchanged."""
    from OCP.Geom2d import Geom2d_BSplineCurve
    from OCP.gp import gp_Pnt2d
    from OCP.TColgp import TColgp_Array1OfPnt2d
    from OCP.TColStd import TColStd_Array1OfReal

    n = flat.NbPoles()
    poles = TColgp_Array1OfPnt2d(1, n)
    for i in range(1, n + 1):
        p = flat.Pole(i)
        poles.SetValue(i, gp_Pnt2d(p.X(), p.Y()))
    knots, mults, deg = flat.Knots(), flat.Multiplicities(), flat.Degree()
    if not flat.IsRational():
        return Geom2d_BSplineCurve(poles, knots, mults, deg)
    weights = TColStd_Array1OfReal(1, n)
    for i in range(1, n + 1):
        weights.SetValue(i, flat.Weight(i))
    return Geom2d_BSplineCurve(poles, weights, knots, mults, deg)


def ruled(a: Any, b: Any) -> Any:
    """The ruled surface from curve ``a`` (v = 0) to ``b`` (v = 1), both on one knot vector;
    u is their parameter."""
    from OCP.Geom import Geom_BSplineSurface
    from OCP.TColgp import TColgp_Array2OfPnt
    from OCP.TColStd import TColStd_Array1OfInteger, TColStd_Array1OfReal

    n = a.NbPoles()
    poles = TColgp_Array2OfPnt(1, n, 1, 2)
    for i in range(1, n + 1):
        poles.SetValue(i, 1, a.Pole(i))
        poles.SetValue(i, 2, b.Pole(i))
    kv, mv = TColStd_Array1OfReal(1, 2), TColStd_Array1OfInteger(1, 2)
    kv.SetValue(1, 0.0)
    kv.SetValue(2, 1.0)
    mv.SetValue(1, 2)
    mv.SetValue(2, 2)
    return Geom_BSplineSurface(poles, a.Knots(), kv, a.Multiplicities(), mv, a.Degree(), 1)
