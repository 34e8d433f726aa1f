"""Edges laid exactly on both their faces (CAD kernel: runs in the kernel worker; mm).

A boolean leaves the edge where two faces cross as an *approximated* intersection: its 3D
curve and its two surface curves agree only to the tolerance the kernel gives the edge
(1e-7 to 1e-4 mm on this project's solids). That tolerance is not part of a STEP file: a
reader re-derives it by sampling the edge at a couple of dozen points, finds a little less
than the true largest deviation, and its own geometry check then reports the edge as off
its face ("invalid curve on surface").

:func:`tighten_edges` rebuilds every such edge from the true intersection of its two
surfaces (:class:`~ductgen.solids.intersection.EdgeIntersection`: exact points, and a 3D
curve and both surface curves fitted to them on one parameter), with more spans until the
edge lies on both faces within :data:`GOAL_MM` (or the limit); the edge keeps whichever
curves, old or new, lie closer. Surfaces that touch
instead of crossing (an edge round's boundary on its wall) have no isolated intersection
for Newton to find; their edges are left as they were (build such faces so the boundary is
exact instead, as :mod:`ductgen.solids.edge_round` does).
"""

from __future__ import annotations

from collections.abc import Callable
from typing import TYPE_CHECKING, Any, NamedTuple

import numpy as np

from ductgen.solids.deviation import Deviation, curve_on_face_deviation

if TYPE_CHECKING:  # the kernel's bindings carry no type information
    from OCP.TopoDS import TopoDS_Edge, TopoDS_Face, TopoDS_Shape

__all__ = ["GOAL_MM", "faces_where", "tighten_edges", "two_faces"]

#: Deviation (mm) an edge is rebuilt to reach on both faces: below the 1e-7 mm a reader
#: gives an exact edge, so its check finds nothing.
GOAL_MM = 2e-8

#: Uniform spans of the refitted curves, tried in turn until the goal is met.
SPANS = (8, 32, 128)
#: Rounds of halving the spans of the largest fit that still miss the goal (an edge whose
#: faces become tangent at its end bends there within a few millimetres), for an edge still
#: farther than REFINE_ABOVE_MM from its faces (half the 1e-7 mm a reader gives an exact
#: edge: one nearer reads back clean already) ...
REFINE_ROUNDS = 4
REFINE_ABOVE_MM = 5e-8
#: ... each kept only while it takes the deviation below this fraction of the last.
REFINE_GAIN = 0.7


def tighten_edges(
    shape: TopoDS_Shape,
    above_mm: float = 1e-7,
    only: list[Any] | None = None,
    among: list[Any] | None = None,
) -> int:
    """Rebuild, in place, every edge of ``shape`` whose tolerance exceeds ``above_mm`` (or
    every edge in ``only``, whatever its tolerance) that lies farther than :data:`GOAL_MM`
    from either of its two faces (see the module docstring); returns how many edges were
    improved. ``among``: look only at these edges (the others are known to lie on their
    faces already), with the same rules."""
    from OCP.BRep import BRep_Tool
    from OCP.TopAbs import TopAbs_EDGE, TopAbs_FACE
    from OCP.TopExp import TopExp
    from OCP.TopoDS import TopoDS
    from OCP.TopTools import TopTools_IndexedDataMapOfShapeListOfShape

    m = TopTools_IndexedDataMapOfShapeListOfShape()
    TopExp.MapShapesAndAncestors_s(shape, TopAbs_EDGE, TopAbs_FACE, m)
    rebuilt: list[_Rebuilt] = []
    for i in range(1, m.Extent() + 1):
        e = TopoDS.Edge_s(m.FindKey(i))
        if only is not None and not any(e.IsSame(o) for o in only):
            continue
        if among is not None and not any(e.IsSame(o) for o in among):
            continue
        faces = two_faces(m.FindFromIndex(i))
        if (
            faces is None
            or faces[0].IsSame(faces[1])
            or (only is None and BRep_Tool.Tolerance_s(e) <= above_mm)
            or BRep_Tool.Degenerated_s(e)
            or not e.Location().IsIdentity()
            or any(BRep_Tool.IsClosed_s(e, f) for f in faces)
        ):
            continue
        old = Deviation(e, faces)
        if not old.above(GOAL_MM):
            continue
        put_back = _edge_state(e, faces, lower_vertices=False)
        try:
            if _tighten(e, faces, old) or _extrusion_iso(e, faces, old):
                rebuilt.append(
                    _Rebuilt(faces, put_back, _edge_state(e, faces, lower_vertices=False))
                )
        except Exception:  # kernel exceptions share no base class: a failure here leaves
            put_back()  # the edge as it was, and the analyser then sizes its tolerance
    return _kept_where_valid(rebuilt)


def two_faces(ancestors: Any) -> list[TopoDS_Face] | None:
    """An edge's two faces from its list of ancestor faces (``TopTools_ListOfShape``), in
    the list's order; None when it holds another number. (Iterating the list from Python
    costs ~0.2 ms, 60x its ends.)"""
    from OCP.TopoDS import TopoDS

    if ancestors.Extent() != 2:
        return None
    return [TopoDS.Face_s(ancestors.First()), TopoDS.Face_s(ancestors.Last())]


def faces_where(
    s: TopoDS_Shape, fresh: Callable[[TopoDS_Face], bool]
) -> tuple[TopoDS_Shape, list[TopoDS_Shape]]:
    """The faces of ``s`` that pass ``fresh``, as one compound (sharing ``s``'s edges, so a
    tolerance set through it is set on ``s``), and their edges (for ``among``)."""
    from OCP.BRep import BRep_Builder
    from OCP.TopAbs import TopAbs_EDGE, TopAbs_FACE
    from OCP.TopExp import TopExp_Explorer
    from OCP.TopoDS import TopoDS, TopoDS_Compound

    B = BRep_Builder()
    faces = TopoDS_Compound()
    B.MakeCompound(faces)
    edges: list[TopoDS_Shape] = []
    found = TopExp_Explorer(s, TopAbs_FACE)
    while found.More():
        f = TopoDS.Face_s(found.Current())
        if fresh(f):
            B.Add(faces, f)
            on = TopExp_Explorer(f, TopAbs_EDGE)
            while on.More():
                edges.append(on.Current())
                on.Next()
        found.Next()
    return faces, edges


class _Rebuilt(NamedTuple):
    """A rebuilt edge: its two faces, and functions that put its old and new curves
    (:func:`_edge_state`) on it."""

    faces: list[TopoDS_Face]
    old: Callable[[], None]
    new: Callable[[], None]


def _kept_where_valid(rebuilt: list[_Rebuilt], valid: Callable[[Any], bool] | None = None) -> int:
    """Keep the rebuilt edges whose faces pass the kernel's check; returns how many were
    kept. A new surface curve can cross a neighbour's near their shared vertex, which
    leaves a self-intersecting wire (seen on a 6.6 mm edge of a mapped spline cutter whose
    neighbours lay 4e-4 mm off). Each face is checked once (a check costs ~3 ms); on a face
    that fails, its rebuilt edges are put back and tried again one at a time, each kept
    only if both its faces pass. The whole solid, which the caller's healing rejects when
    invalid, stays valid. ``valid``: the check of a face (default the kernel's)."""
    if valid is None:
        from OCP.BRepCheck import BRepCheck_Analyzer

        def valid(f: TopoDS_Face) -> bool:
            return bool(BRepCheck_Analyzer(f).IsValid())

    faces: list[TopoDS_Face] = []
    for r in rebuilt:
        faces.extend(f for f in r.faces if not any(f.IsSame(g) for g in faces))
    bad = [f for f in faces if not valid(f)]
    suspect = [r for r in rebuilt if any(f.IsSame(b) for f in r.faces for b in bad)]
    for r in reversed(suspect):
        r.old()
    kept = len(rebuilt) - len(suspect)
    for r in suspect:
        r.new()
        if all(valid(f) for f in r.faces):
            kept += 1
        else:
            r.old()
    return kept


def _edge_state(
    e: TopoDS_Edge, faces: list[TopoDS_Face], lower_vertices: bool = True
) -> Callable[[], None]:
    """A function that puts the edge's 3D and surface curves, its range and the tolerances of
    the edge and its vertices back as they are now. ``lower_vertices=False``: a vertex's
    tolerance is only raised back (its other edges, rebuilt since, may need it)."""
    from OCP.BRep import BRep_Builder, BRep_Tool
    from OCP.BRepAdaptor import BRepAdaptor_Curve
    from OCP.ShapeFix import ShapeFix_ShapeTolerance
    from OCP.TopAbs import TopAbs_EDGE, TopAbs_VERTEX
    from OCP.TopExp import TopExp
    from OCP.TopoDS import TopoDS_Vertex

    c = BRepAdaptor_Curve(e)
    t0, t1 = c.FirstParameter(), c.LastParameter()
    v1, v2 = TopoDS_Vertex(), TopoDS_Vertex()
    TopExp.Vertices_s(e, v1, v2)
    tol = BRep_Tool.Tolerance_s(e)
    tol_v = [(v, BRep_Tool.Tolerance_s(v)) for v in (v1, v2)]
    c3 = BRep_Tool.Curve_s(e, 0.0, 0.0)
    on = [(f, BRep_Tool.CurveOnSurface_s(e, f, 0.0, 0.0)) for f in faces]

    def put_back() -> None:
        B = BRep_Builder()
        B.UpdateEdge(e, c3, tol)
        for f, k in on:
            B.UpdateEdge(e, k, f, tol)
        B.Range(e, t0, t1)
        fix = ShapeFix_ShapeTolerance()
        fix.SetTolerance(e, tol, TopAbs_EDGE)
        for v, tv in tol_v:
            if lower_vertices or tv > BRep_Tool.Tolerance_s(v):
                fix.SetTolerance(v, tv, TopAbs_VERTEX)

    return put_back


def _tighten(e: TopoDS_Edge, faces: list[TopoDS_Face], old: Deviation) -> int:
    """Rebuild ``e`` on ``faces`` when that beats its present deviation ``old``: 1 if it
    did."""
    from ductgen.solids.intersection import EdgeIntersection

    x = EdgeIntersection(e, faces)
    dense = np.linspace(x.t0, x.t1, 65)
    got = x.solve(dense)
    if got is None:
        return 0
    crossings = x.knot_crossings(dense, got[1])
    fresh = crossings[0][~np.isin(crossings[0], dense)]  # one met at a sample is there
    samples = _Samples(x, dense, got[0])
    if not samples.add(fresh):
        return 0
    best: float | None = None
    fitted = None
    for spans in SPANS:
        fitted = x.fit(spans, crossings, samples.t, samples.along)
        if fitted is None:
            break
        bar = old if best is None else Deviation.known(best)
        new = _try_curves(e, faces, fitted.curves, bar, measured=fitted.deviation)
        if new is not None:
            best = new
        if best is not None and best <= GOAL_MM:
            return 1
    # the largest fit still misses the goal: more knots only in the spans that miss it,
    # while each round gains (a fit near faces that become tangent levels off)
    for _ in range(REFINE_ROUNDS):
        if fitted is None or (best is not None and best <= REFINE_ABOVE_MM):
            break
        over = fitted.spans[fitted.spans[:, 2] > GOAL_MM]
        mids = 0.5 * (over[:, 0] + over[:, 1])
        if not samples.add(mids):
            break
        crossings = _with_breaks(crossings, mids)
        fitted = x.fit(SPANS[-1], crossings, samples.t, samples.along)
        if fitted is None:
            break
        bar = old if best is None else Deviation.known(best)
        new = _try_curves(e, faces, fitted.curves, bar, measured=fitted.deviation)
        if new is None or (best is not None and new > REFINE_GAIN * best):
            best = best if new is None else new
            break
        best = new
        if best <= GOAL_MM:
            break
    return int(best is not None)


class _Samples:
    """The intersection's points at old-curve parameters ``t`` (sorted) and their chord
    parameter ``along`` (:func:`~ductgen.solids.intersection.chord_parameter`), which
    :meth:`~ductgen.solids.intersection.EdgeIntersection.fit` places knots by."""

    def __init__(self, x: Any, t: np.ndarray, points: np.ndarray) -> None:
        self.x, self.t, self.points = x, t, points
        self.along: np.ndarray = np.zeros(0)

    def add(self, ts: np.ndarray) -> bool:
        """Solve at the parameters ``ts`` not sampled yet and merge them in; False when
        Newton's method or the chord parameter fails (then nothing changes)."""
        from ductgen.solids.intersection import chord_parameter

        new = np.setdiff1d(ts, self.t)
        got = self.x.solve(new) if len(new) else (np.zeros((0, 3)), np.zeros((0, 4)))
        if got is None:
            return False
        order = np.argsort(np.concatenate([self.t, new]), kind="stable")
        points = np.concatenate([self.points, got[0]])[order]
        along = chord_parameter(points, self.x.t0, self.x.t1)
        if along is None:
            return False
        self.t, self.points, self.along = np.concatenate([self.t, new])[order], points, along
        return True


def _with_breaks(
    crossings: tuple[np.ndarray, np.ndarray], at: np.ndarray
) -> tuple[np.ndarray, np.ndarray]:
    """``crossings`` (sorted parameters, multiplicities) with simple knots at ``at`` too
    (those not among them already: the fit finds each break once among its samples)."""
    at = np.setdiff1d(at, crossings[0])
    t = np.concatenate([crossings[0], at])
    m = np.concatenate([crossings[1], np.ones(len(at), dtype=int)])
    order = np.argsort(t, kind="stable")
    return t[order], m[order]


def _try_curves(
    e: TopoDS_Edge,
    faces: list[TopoDS_Face],
    curves: Any,
    old: Deviation,
    rng: tuple[float, float] | None = None,
    measured: float | None = None,
) -> float | None:
    """Give ``e`` the new curves (over ``rng``, default its present range); keep them when
    they lie closer than ``old`` on both faces and the vertices stay within 1e-3 mm: the
    new deviation (mm; ``measured`` when given, else the kernel's optimiser's). Otherwise
    restore the edge's previous curves and return None."""
    from OCP.BRep import BRep_Builder, BRep_Tool
    from OCP.BRepAdaptor import BRepAdaptor_Curve
    from OCP.ShapeFix import ShapeFix_ShapeTolerance
    from OCP.TopAbs import TopAbs_EDGE
    from OCP.TopExp import TopExp
    from OCP.TopoDS import TopoDS_Vertex

    B = BRep_Builder()
    c = BRepAdaptor_Curve(e)
    t0, t1 = c.FirstParameter(), c.LastParameter()
    put_back = _edge_state(e, faces)
    c3, k1, k2 = curves
    B.UpdateEdge(e, c3, 1e-7)
    B.UpdateEdge(e, k1, faces[0], 1e-7)
    B.UpdateEdge(e, k2, faces[1], 1e-7)
    n0, n1 = rng if rng is not None else (t0, t1)
    B.Range(e, n0, n1)
    B.SameRange(e, True)
    B.SameParameter(e, True)
    new = measured if measured is not None else max(curve_on_face_deviation(e, f) for f in faces)
    v1, v2 = TopoDS_Vertex(), TopoDS_Vertex()
    TopExp.Vertices_s(e, v1, v2)
    gaps = [BRep_Tool.Pnt_s(v).Distance(c3.Value(t)) for v, t in ((v1, n0), (v2, n1))]
    if not old.above(new) or max(gaps) > 1e-3:
        put_back()
        return None
    for v, gap in ((v1, gaps[0]), (v2, gaps[1])):
        if gap > BRep_Tool.Tolerance_s(v):
            B.UpdateVertex(v, 1.5 * gap)
    ShapeFix_ShapeTolerance().SetTolerance(e, max(1e-7, 1.5 * new), TopAbs_EDGE)
    return new


def _extrusion_iso(e: TopoDS_Edge, faces: list[TopoDS_Face], old: Deviation) -> int:
    """An edge between two faces extruded along one direction D (the same surface split in
    two, which Newton's method cannot intersect), lying in a plane normal to D, is the
    extrusion's iso-line there: the basis curve moved along D, a straight line in each
    face's parameters. Rebuild it so when both faces' iso-lines coincide: 1 if done."""
    from OCP.BRep import BRep_Tool
    from OCP.BRepAdaptor import BRepAdaptor_Curve, BRepAdaptor_Curve2d, BRepAdaptor_Surface
    from OCP.Geom2d import Geom2d_Line
    from OCP.GeomAbs import GeomAbs_SurfaceOfExtrusion
    from OCP.GeomAPI import GeomAPI_ProjectPointOnCurve
    from OCP.gp import gp_Dir2d, gp_Pnt2d
    from OCP.TopExp import TopExp
    from OCP.TopoDS import TopoDS_Vertex

    a = [BRepAdaptor_Surface(f) for f in faces]
    if any(x.GetType() != GeomAbs_SurfaceOfExtrusion for x in a):
        return 0
    d = [np.array([x.Direction().X(), x.Direction().Y(), x.Direction().Z()]) for x in a]
    c = BRepAdaptor_Curve(e)
    ts = np.linspace(c.FirstParameter(), c.LastParameter(), 17)
    heights = [d[0] @ np.array(c.Value(float(t)).Coord()) for t in ts]
    if abs(abs(float(d[0] @ d[1])) - 1.0) > 1e-12 or np.ptp(heights) > 1e-6:
        return 0
    mid = float(ts[8])
    vs = [BRepAdaptor_Curve2d(e, f).Value(mid).Y() for f in faces]
    iso = BRep_Tool.Surface_s(faces[0]).VIso(vs[0])
    v1, v2 = TopoDS_Vertex(), TopoDS_Vertex()
    TopExp.Vertices_s(e, v1, v2)
    us = [
        GeomAPI_ProjectPointOnCurve(BRep_Tool.Pnt_s(v), iso).LowerDistanceParameter()
        for v in (v1, v2)
    ]
    probe = np.linspace(us[0], us[1], 9)
    if any(
        a[1].Value(float(u), vs[1]).Distance(iso.Value(float(u))) > 1e-9 for u in probe
    ):  # the second face's parameterisation differs: leave the edge
        return 0
    if us[0] <= us[1]:
        lines = [Geom2d_Line(gp_Pnt2d(0.0, v), gp_Dir2d(1.0, 0.0)) for v in vs]
    else:  # the edge runs against the basis curve: u' = K − u on the reversed curve
        k = iso.ReversedParameter(0.0)
        iso = iso.Reversed()
        us = [iso.ReversedParameter(u) for u in us]
        lines = [Geom2d_Line(gp_Pnt2d(k, v), gp_Dir2d(-1.0, 0.0)) for v in vs]
    return int(_try_curves(e, faces, (iso, *lines), old, (us[0], us[1])) is not None)
