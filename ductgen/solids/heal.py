"""Healing a B-rep before STEP export, so a second kernel's checks and exact volume agree
(CAD kernel: runs in the kernel worker). Lengths in mm.

What the booleans leave (measured on the samples' solids re-read from STEP): edges where a
wall face (a surface of linear extrusion of the PCHIP wall spline) meets a plane carry an
*approximated* intersection curve, off the wall surface by up to ~1e-4 mm while the edge
claims 1e-7 mm, which the argument analyser's curve-on-surface test reports as
``InvalidCurveOnSurface``; and OCCT's adaptive exact volume (``GProp``) of such extrusion
faces scatters by ±2 % with the tolerance asked. :func:`heal`:

1. rebuilds every extrusion/plane edge exactly: the section of ``S(u, v) = C(u) + v·D`` by
   the plane ``n·(X − O) = 0`` is ``C(u) + s(u)·D`` with ``s = n·(O − C(u)) / n·D``, an
   affine image of the B-spline ``C``, so its poles are ``P_i + s_i·D`` on the same knots;
   its surface curves are ``(u, s(u))`` on the wall (Greville abscissae as u-poles) and the
   same poles in the plane's own axes;
2. writes extrusion faces as B-spline surfaces of the same parameterisation, on which the
   exact volume converges, each edge keeping the surface curve it had (the same curve in
   the same parameters: exact stays exact; without it, shape fixing projected new ones,
   4.6e-4 mm off on an edge round's boundary);
3. fixes the shape (``ShapeFix_Shape``: same-parameter, wires, orientation);
4. rebuilds every other boolean edge from its faces' true intersection
   (:func:`~ductgen.solids.tighten.tighten_edges`, to 2e-8 mm), then those the analyser
   still finds (an edge may claim a tolerance below its deviation);
5. gives any edge the analyser still finds off its surface a tolerance of 1.5× its
   measured deviation, rounded up to two significant digits for reproducible files
   (``ShapeFix_ShapeTolerance``, never above :data:`MAX_TOLERANCE_MM`).

A piece cut from a solid healed before (the insert's bed-size pieces) goes through steps 4
and 5 only on the faces the cut made (``fresh``): its other edges already lie on their faces
(the pieces' files came out byte for byte the same at 0.7x the split's CPU).

A STEP file carries no per-edge tolerance: a reader gives each edge the deviation it finds
at a couple of dozen samples, so only an edge that lies on its faces everywhere reads back
clean; steps 1, 2 and 4 make every edge of a flat-skin solid so.

The healed shape replaces the original only if it is valid and of the same type.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:  # the kernel's bindings carry no type information: these are Any to mypy
    from OCP.BRep import BRep_Builder
    from OCP.BRepAdaptor import BRepAdaptor_Surface
    from OCP.Geom import Geom_BSplineCurve
    from OCP.Geom2d import Geom2d_BSplineCurve
    from OCP.TopoDS import TopoDS_Edge, TopoDS_Face, TopoDS_Shape

__all__ = [
    "MAX_TOLERANCE_MM",
    "exact_sections",
    "extrusions_to_bspline",
    "heal",
    "off_surface_edges",
]

#: Largest edge tolerance healing may set (mm); a deviation above it is left reported.
MAX_TOLERANCE_MM = 0.01


def exact_sections(w: TopoDS_Shape) -> int:
    """Rebuild every edge between a linear-extrusion face of a B-spline and a plane exactly
    (3D curve and both surface curves, tolerance 1e-7 mm), in place; returns how many."""
    from OCP.BRep import BRep_Builder
    from OCP.TopAbs import TopAbs_EDGE, TopAbs_FACE
    from OCP.TopExp import TopExp
    from OCP.TopoDS import TopoDS
    from OCP.TopTools import TopTools_IndexedDataMapOfShapeListOfShape

    from ductgen.solids.tighten import two_faces

    m = TopTools_IndexedDataMapOfShapeListOfShape()
    TopExp.MapShapesAndAncestors_s(w, TopAbs_EDGE, TopAbs_FACE, m)
    B = BRep_Builder()
    n_done = 0
    for i in range(1, m.Extent() + 1):
        e = TopoDS.Edge_s(m.FindKey(i))
        faces = two_faces(m.FindFromIndex(i))
        if faces is None or not e.Location().IsIdentity():
            continue
        pair = _extrusion_and_plane(e, faces)
        if pair is None:
            continue
        curves = _section_curves(*pair)
        if curves is not None and _rebuild_edge(B, e, pair[0], pair[2], curves):
            n_done += 1
    return n_done


def _extrusion_and_plane(
    e: TopoDS_Edge, faces: list[TopoDS_Face]
) -> tuple[TopoDS_Face, BRepAdaptor_Surface, TopoDS_Face, BRepAdaptor_Surface] | None:
    """The edge's two faces as (extrusion face, its adaptor, plane face, its adaptor) when
    one is a linear extrusion of a non-rational, non-periodic B-spline and the other a
    plane, both unmoved and neither closed along the edge; else None."""
    from OCP.BRep import BRep_Tool
    from OCP.BRepAdaptor import BRepAdaptor_Surface
    from OCP.GeomAbs import GeomAbs_BSplineCurve, GeomAbs_Plane, GeomAbs_SurfaceOfExtrusion

    ad = [BRepAdaptor_Surface(f, False) for f in faces]
    kinds = [a.GetType() for a in ad]
    if sorted([GeomAbs_SurfaceOfExtrusion, GeomAbs_Plane], key=int) != sorted(kinds, key=int):
        return None
    ie = kinds.index(GeomAbs_SurfaceOfExtrusion)
    fE, fP = faces[ie], faces[1 - ie]
    aE, aP = ad[ie], ad[1 - ie]
    if not (fE.Location().IsIdentity() and fP.Location().IsIdentity()):
        return None
    if BRep_Tool.IsClosed_s(e, fE) or BRep_Tool.IsClosed_s(e, fP):
        return None
    basis = aE.BasisCurve()
    if basis.GetType() != GeomAbs_BSplineCurve:
        return None
    C = basis.BSpline()
    if C.IsRational() or C.IsPeriodic():
        return None
    return fE, aE, fP, aP


def _section_curves(
    fE: TopoDS_Face, aE: BRepAdaptor_Surface, fP: TopoDS_Face, aP: BRepAdaptor_Surface
) -> tuple[Geom_BSplineCurve, Geom2d_BSplineCurve, Geom2d_BSplineCurve] | None:
    """The exact section of the extrusion ``C(u) + v·D`` by the plane (the module
    docstring, 1.): its 3D curve and its surface curves on the extrusion and on the plane;
    None when the plane is (nearly) parallel to ``D``."""
    from OCP.Geom import Geom_BSplineCurve
    from OCP.Geom2d import Geom2d_BSplineCurve
    from OCP.gp import gp_Pnt, gp_Pnt2d
    from OCP.TColgp import TColgp_Array1OfPnt, TColgp_Array1OfPnt2d
    from OCP.TColStd import TColStd_Array1OfInteger, TColStd_Array1OfReal

    C = aE.BasisCurve().BSpline()
    D = aE.Direction()
    pln = aP.Plane()
    n = pln.Axis().Direction()
    org = pln.Location()
    nd = n.X() * D.X() + n.Y() * D.Y() + n.Z() * D.Z()
    if abs(nd) < 1e-6:
        return None
    npol = C.NbPoles()
    deg = C.Degree()
    poles = TColgp_Array1OfPnt(1, npol)
    pe = TColgp_Array1OfPnt2d(1, npol)
    pp = TColgp_Array1OfPnt2d(1, npol)
    flat = [C.KnotSequence().Value(j) for j in range(1, C.KnotSequence().Length() + 1)]
    xd, yd = pln.XAxis().Direction(), pln.YAxis().Direction()
    for j in range(1, npol + 1):
        P = C.Pole(j)
        s = (n.X() * (org.X() - P.X()) + n.Y() * (org.Y() - P.Y()) + n.Z() * (org.Z() - P.Z())) / nd
        Q = gp_Pnt(P.X() + s * D.X(), P.Y() + s * D.Y(), P.Z() + s * D.Z())
        poles.SetValue(j, Q)
        g = sum(flat[j : j + deg]) / deg
        pe.SetValue(j, gp_Pnt2d(g, s))
        dq = (Q.X() - org.X(), Q.Y() - org.Y(), Q.Z() - org.Z())
        pp.SetValue(
            j,
            gp_Pnt2d(
                dq[0] * xd.X() + dq[1] * xd.Y() + dq[2] * xd.Z(),
                dq[0] * yd.X() + dq[1] * yd.Y() + dq[2] * yd.Z(),
            ),
        )
    knots = TColStd_Array1OfReal(1, C.NbKnots())
    mults = TColStd_Array1OfInteger(1, C.NbKnots())
    for j in range(1, C.NbKnots() + 1):
        knots.SetValue(j, C.Knot(j))
        mults.SetValue(j, C.Multiplicity(j))
    c3 = Geom_BSplineCurve(poles, knots, mults, deg)
    cE = Geom2d_BSplineCurve(pe, knots, mults, deg)
    cP = Geom2d_BSplineCurve(pp, knots, mults, deg)
    return c3, cE, cP


def _rebuild_edge(
    B: BRep_Builder,
    e: TopoDS_Edge,
    fE: TopoDS_Face,
    fP: TopoDS_Face,
    curves: tuple[Geom_BSplineCurve, Geom2d_BSplineCurve, Geom2d_BSplineCurve],
) -> bool:
    """Give ``e`` the section's curves (tolerance 1e-7 mm) over the range between its
    vertices, each vertex's tolerance raised to reach the new curve; False (the edge left
    as it was) when a vertex lies more than 1e-3 mm off it."""
    from OCP.BRep import BRep_Tool
    from OCP.GeomAPI import GeomAPI_ProjectPointOnCurve
    from OCP.TopExp import TopExp
    from OCP.TopoDS import TopoDS_Vertex

    c3, cE, cP = curves
    v1, v2 = TopoDS_Vertex(), TopoDS_Vertex()
    TopExp.Vertices_s(e, v1, v2)
    us: list[float] = []
    for v in (v1, v2):
        pr = GeomAPI_ProjectPointOnCurve(BRep_Tool.Pnt_s(v), c3)
        if pr.NbPoints() == 0 or pr.LowerDistance() > 1e-3:
            break
        us.append(pr.LowerDistanceParameter())
        if pr.LowerDistance() > BRep_Tool.Tolerance_s(v):  # keep the vertex on the edge
            B.UpdateVertex(v, 1.5 * pr.LowerDistance())
    if len(us) != 2:  # a vertex off the new curve: leave the edge as it was
        return False
    if us[0] > us[1]:
        c3.Reverse()
        cE.Reverse()
        cP.Reverse()
        us = [c3.ReversedParameter(u) for u in us]
    tol = 1e-7
    B.UpdateEdge(e, c3, tol)
    B.UpdateEdge(e, cE, fE, tol)
    B.UpdateEdge(e, cP, fP, tol)
    B.Range(e, us[0], us[1])
    B.SameRange(e, True)
    B.SameParameter(e, True)
    return True


def extrusions_to_bspline(w: TopoDS_Shape) -> int:
    """Replace every linear-extrusion face of a non-rational B-spline by the same surface
    written as a B-spline surface, in place; returns how many.

    ``S(u, v) = C(u) + v·D`` over ``v0 ≤ v ≤ v1`` is the B-spline surface with the poles of
    ``C`` shifted by ``v0·D`` and ``v1·D`` (degree 1 in v, knots v0, v1): the same
    parameterisation, so the faces' surface curves stay exact.
    """
    from OCP.BRep import BRep_Builder, BRep_Tool
    from OCP.BRepAdaptor import BRepAdaptor_Surface
    from OCP.BRepTools import BRepTools
    from OCP.GeomAbs import GeomAbs_BSplineCurve, GeomAbs_SurfaceOfExtrusion
    from OCP.TopAbs import TopAbs_FACE
    from OCP.TopExp import TopExp_Explorer
    from OCP.TopoDS import TopoDS

    builder = BRep_Builder()
    done = 0
    ex = TopExp_Explorer(w, TopAbs_FACE)
    while ex.More():
        f = TopoDS.Face_s(ex.Current())
        ex.Next()
        a = BRepAdaptor_Surface(f, False)
        if a.GetType() != GeomAbs_SurfaceOfExtrusion or not f.Location().IsIdentity():
            continue
        basis = a.BasisCurve()
        if basis.GetType() != GeomAbs_BSplineCurve:
            continue
        c = basis.BSpline()
        if c.IsRational() or c.IsPeriodic():
            continue
        pcurves = _surface_curves(f)
        if pcurves is None:
            continue
        _, _, v0, v1 = BRepTools.UVBounds_s(f)
        pad = 0.01 * (v1 - v0) + 1.0
        surf = _extruded_bspline(c, a.Direction(), v0 - pad, v1 + pad)
        builder.UpdateFace(f, surf, f.Location(), BRep_Tool.Tolerance_s(f))
        # an edge keeps its surface curves per surface: give each the one it had on the
        # extrusion (the same parameterisation), or shape fixing projects an approximate one
        # (seen 4.6e-4 mm off on the edge round's boundary)
        for e, c2d in pcurves:
            builder.UpdateEdge(e, c2d, f, BRep_Tool.Tolerance_s(e))
        done += 1
    return done


def _surface_curves(f: TopoDS_Face) -> list[tuple[TopoDS_Edge, Any]] | None:
    """(edge, surface curve) for every edge of ``f``; None when an edge has none stored or
    two (a seam), which :func:`extrusions_to_bspline` leaves alone."""
    from OCP.BRep import BRep_Tool
    from OCP.TopAbs import TopAbs_EDGE
    from OCP.TopExp import TopExp_Explorer
    from OCP.TopoDS import TopoDS

    out = []
    ex = TopExp_Explorer(f, TopAbs_EDGE)
    while ex.More():
        e = TopoDS.Edge_s(ex.Current())
        ex.Next()
        if BRep_Tool.IsClosed_s(e, f):
            return None
        c2d = BRep_Tool.CurveOnSurface_s(e, f, 0.0, 0.0)
        if c2d is None:
            return None
        out.append((e, c2d))
    return out


def _extruded_bspline(c: Any, d: Any, v0: float, v1: float) -> Any:
    """The B-spline surface C(u) + v·D, v0 ≤ v ≤ v1 (``c`` a non-rational B-spline curve,
    ``d`` a ``gp_Dir``; mm): C's poles shifted by v0·D and v1·D, its knots in u, degree 1
    in v."""
    from OCP.Geom import Geom_BSplineSurface
    from OCP.gp import gp_Pnt
    from OCP.TColgp import TColgp_Array2OfPnt
    from OCP.TColStd import TColStd_Array1OfInteger, TColStd_Array1OfReal

    n = c.NbPoles()
    poles = TColgp_Array2OfPnt(1, n, 1, 2)
    for i in range(1, n + 1):
        p = c.Pole(i)
        for j, v in ((1, v0), (2, v1)):
            poles.SetValue(i, j, gp_Pnt(p.X() + v * d.X(), p.Y() + v * d.Y(), p.Z() + v * d.Z()))
    uk = TColStd_Array1OfReal(1, c.NbKnots())
    um = TColStd_Array1OfInteger(1, c.NbKnots())
    for i in range(1, c.NbKnots() + 1):
        uk.SetValue(i, c.Knot(i))
        um.SetValue(i, c.Multiplicity(i))
    vk = TColStd_Array1OfReal(1, 2)
    vm = TColStd_Array1OfInteger(1, 2)
    vk.SetValue(1, v0)
    vk.SetValue(2, v1)
    vm.SetValue(1, 2)
    vm.SetValue(2, 2)
    return Geom_BSplineSurface(poles, uk, vk, um, vm, c.Degree(), 1)


def off_surface_edges(shape: TopoDS_Shape) -> list[tuple[TopoDS_Shape, float]]:
    """(edge, deviation mm) for every edge whose 3D curve leaves its face's surface by more
    than its tolerance (the argument analyser's curve-on-surface test)."""
    from OCP.BOPAlgo import BOPAlgo_ArgumentAnalyzer, BOPAlgo_CheckStatus

    a = BOPAlgo_ArgumentAnalyzer()
    a.SetShape1(shape)
    a.ArgumentTypeMode = False
    a.CurveOnSurfaceMode = True
    a.Perform()
    out: list[tuple[TopoDS_Shape, float]] = []
    for r in a.GetCheckResult():
        if r.GetCheckStatus() == BOPAlgo_CheckStatus.BOPAlgo_InvalidCurveOnSurface:
            out.append((r.GetFaultyShapes1().First(), max(r.GetMaxDistance1(), 0.0)))
    return out


def _round_up(tol: float) -> float:
    """``tol`` rounded up to two significant digits: the analyser's measured deviation
    varies in its last digits from run to run (its optimiser), the file must not."""
    if tol <= 0.0:
        return tol
    step = 10.0 ** (math.floor(math.log10(tol)) - 1)
    return math.ceil(tol / step * (1 - 1e-9)) * step


def heal(
    shape: TopoDS_Shape,
    exact_edges: bool = True,
    fresh: Callable[[TopoDS_Face], bool] | None = None,
) -> TopoDS_Shape:
    """Heal an OCCT shape for export (see the module docstring); returns the healed
    ``TopoDS_Shape``, or the shape unchanged when healing would make it invalid.
    ``exact_edges``: rebuild boolean edges from their faces' true intersection
    (:func:`~ductgen.solids.tighten.tighten_edges`); on a mapped solid (curved skins, the
    user's panel) the same clears the edges where two independently fitted spline faces
    cross (read back, the kitcar sample's plug went from 14 findings to none, its cutter
    from 14 to 4, for ~1.3-1.8 CPU s each; the kit-car insert, whose faces are fitted
    splines with up to ~160 knots and so are its rebuilt edges, from 178 findings with its
    pieces to 8, for ~3 CPU s, and a file twice the size). Off for the marking jig (built
    with exact edges instead, :mod:`ductgen.solids.prism_map`).

    ``fresh``: for a piece cut from a solid healed before, the test of the faces the cut
    made (the glue faces): steps 4 and 5 then look only at their edges. Every other edge is
    a whole or a part of an edge that already lay on its faces within its tolerance, and on
    part of its range it still does."""
    from OCP.BRepBuilderAPI import BRepBuilderAPI_Copy
    from OCP.BRepCheck import BRepCheck_Analyzer
    from OCP.ShapeFix import ShapeFix_Shape, ShapeFix_ShapeTolerance
    from OCP.TopAbs import TopAbs_SHAPE

    from ductgen.solids.tighten import faces_where, tighten_edges

    s = BRepBuilderAPI_Copy(shape, True, False).Shape()  # the caller's solid stays as it was
    exact_sections(s)
    extrusions_to_bspline(s)
    fix = ShapeFix_Shape(s)
    fix.Perform()
    s = fix.Shape()
    faces, among = (s, None) if fresh is None else faces_where(s, fresh)
    if exact_edges:
        tighten_edges(s, among=among)
    limit = ShapeFix_ShapeTolerance()
    # one pass: the analyser measures each flagged edge's deviation, and a tolerance of 1.5x
    # that clears it (raising tolerances flags nothing new); a deviation above
    # MAX_TOLERANCE_MM stays flagged whatever is done here
    flagged = off_surface_edges(faces)
    # an edge may claim a tolerance below its deviation (seen: 1.9e-7 mm off, claiming
    # 1e-7): what the analyser finds is rebuilt too, then measured again
    if exact_edges and flagged and tighten_edges(s, only=[e for e, _ in flagged]):
        flagged = off_surface_edges(faces)
    for edge, dev in flagged:
        tol = min(_round_up(1.5 * dev), MAX_TOLERANCE_MM)
        limit.LimitTolerance(edge, tol, MAX_TOLERANCE_MM, TopAbs_SHAPE)
    if not BRepCheck_Analyzer(s).IsValid() or s.ShapeType() != shape.ShapeType():
        return shape
    return s
