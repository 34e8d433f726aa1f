"""Cutting a part across the flow at the glue surfaces of :mod:`ductgen.solids.split` (CAD
kernel; lengths in mm).

A glue surface at station s is stepped: the plane x = s beside the tongue, the tongue's sides
y = yc ± half and its end x = s + length. :func:`split_by_planes` cuts the part by the planar
faces of every glue surface in one splitting operation of the kernel and assigns each body to
its piece; :func:`split_by_booleans` makes the same pieces by Booleans of the part with the
regions upstream of each glue surface (the fallback, with fuzzy retries).
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

import numpy as np

__all__ = ["glue_face_test", "split_by_booleans", "split_by_planes"]


def _plane_face(
    origin: tuple[float, float, float],
    normal: tuple[float, float, float],
    xdir: tuple[float, float, float],
    u: tuple[float, float],
    v: tuple[float, float],
) -> Any:
    """A planar rectangle (mm): ``origin`` + a·xdir + b·(normal × xdir), a in ``u``, b in
    ``v``."""
    from OCP.BRepBuilderAPI import BRepBuilderAPI_MakeFace
    from OCP.gp import gp_Ax3, gp_Dir, gp_Pln, gp_Pnt

    pln = gp_Pln(gp_Ax3(gp_Pnt(*origin), gp_Dir(*normal), gp_Dir(*xdir)))
    return BRepBuilderAPI_MakeFace(pln, u[0], u[1], v[0], v[1]).Face()


def _cut_faces(s: float, bb: Any, key: tuple[float, float]) -> list[Any]:
    """The stepped glue surface at x = ``s`` as planar faces reaching past the part's box:
    x = s beside the tongue, the tongue's two sides y = yc ± half and its end x = s + length
    (mm)."""
    length, half = key
    pad = 10.0
    yc = 0.5 * (bb.ymin + bb.ymax)
    z = (bb.zmin - pad, bb.zmax + pad)
    y0, y1 = bb.ymin - pad, bb.ymax + pad
    # planes x = const: axes y (a) and z (b); planes y = const: axes z (a) and x (b)
    return [
        _plane_face((s, 0, 0), (1, 0, 0), (0, 1, 0), (y0, yc - half), z),
        _plane_face((s, 0, 0), (1, 0, 0), (0, 1, 0), (yc + half, y1), z),
        _plane_face((s + length, 0, 0), (1, 0, 0), (0, 1, 0), (yc - half, yc + half), z),
        _plane_face((0, yc - half, 0), (0, 1, 0), (0, 0, 1), z, (s, s + length)),
        _plane_face((0, yc + half, 0), (0, 1, 0), (0, 0, 1), z, (s, s + length)),
    ]


def glue_face_test(xs: list[float], bb: Any, key: tuple[float, float]) -> Callable[[Any], bool]:
    """Whether a face (``TopoDS_Face``) lies on a glue surface of the stations ``xs`` (mm):
    a plane x = s or x = s + length, or a tongue's side y = yc ± half (``key`` = (length,
    half), ``bb`` the part's box as for :func:`split_by_planes`), within 1e-6 mm."""
    from OCP.BRepAdaptor import BRepAdaptor_Surface
    from OCP.GeomAbs import GeomAbs_Plane

    length, half = key
    yc = 0.5 * (bb.ymin + bb.ymax)
    along = {0: [c for s in xs for c in (s, s + length)], 1: [yc - half, yc + half]}

    def test(face: Any) -> bool:
        a = BRepAdaptor_Surface(face)
        if a.GetType() != GeomAbs_Plane:
            return False
        pln = a.Plane()
        n = np.array(pln.Axis().Direction().Coord())
        o = np.array(pln.Location().Coord())
        for axis, values in along.items():
            if abs(abs(n[axis]) - 1.0) < 1e-9 and any(abs(o[axis] - v) < 1e-6 for v in values):
                return True
        return False

    return test


def _upstream(p: np.ndarray, s: float, yc: float, key: tuple[float, float]) -> np.ndarray:
    """How far points (N, 3) lie inside the region upstream of the glue surface at ``s``
    (with the tongue): positive inside, negative outside, 0 on it (mm, a lower bound of the
    distance to the surface)."""
    length, half = key
    dy = half - np.abs(p[:, 1] - yc)
    inside_tongue = np.minimum(np.minimum(p[:, 0] - s, s + length - p[:, 0]), dy)
    return np.maximum(s - p[:, 0], inside_tongue)


def _boundary_points(solid: Any) -> np.ndarray:
    """Points on ``solid``'s boundary (N, 3) mm: its vertices and its edges' midpoints
    (enough of them lie off every glue surface to tell which side the body is on)."""
    pts = [v.toTuple() for v in solid.Vertices()]
    pts += [e.positionAt(0.5).toTuple() for e in solid.Edges()]
    return np.asarray(pts, dtype=float)


def _region(stations_x: float, bb: Any, key: tuple[float, float]) -> Any:
    """Everything upstream of x = s, plus the tongue: a solid (mm)."""
    from ductgen.solids.primitives import boolean, box

    length, half = key
    pad = 10.0
    up = box(bb.xmin - pad, stations_x, bb.ymin - pad, bb.ymax + pad, bb.zmin - pad, bb.zmax + pad)
    yc = 0.5 * (bb.ymin + bb.ymax)
    tongue = box(
        stations_x, stations_x + length, yc - half, yc + half, bb.zmin - pad, bb.zmax + pad
    )
    return boolean("fuse", up, tongue, "split region", glue=True)


def split_by_booleans(solid: Any, xs: list[float], key: tuple[float, float], bb: Any) -> list[Any]:
    """The pieces by Booleans (each piece: what is left ∩ the region upstream of its glue
    surface, the rest: what is left minus it), retried with fuzzy tolerances
    (:func:`~ductgen.solids.primitives.boolean`). ``bb``: ``solid``'s bounding box
    (:func:`~ductgen.solids.split.close_box`)."""
    from ductgen.errors import GeometryError
    from ductgen.solids.primitives import boolean

    pieces = []
    rest = solid
    for i, reg in enumerate([_region(s, bb, key) for s in xs]):
        both = _common_and_cut(rest, reg)
        if both is not None and (n := max(len(b.Solids()) for b in both)) > 1:
            # valid, but the station cuts a separate bit off (a flange corner): no fuzzy
            # tolerance joins that (measured: 3 retries, ~2 s, for nothing), a shift may
            raise GeometryError(f"split piece {i + 1}", f"the cut leaves {n} separate solids")
        if both is None:
            both = (
                boolean("intersect", rest, reg, f"split piece {i + 1}"),
                boolean("cut", rest, reg, f"split rest {i + 1}"),
            )
        pieces.append(both[0])
        rest = both[1]
    pieces.append(rest)
    return pieces


def _common_and_cut(a: Any, b: Any) -> tuple[Any, Any] | None:
    """``a`` ∩ ``b`` and ``a`` − ``b`` from one intersection of the two (the kernel's pave
    filler, serial, oriented boxes, as :func:`~ductgen.solids.primitives.boolean`'s first
    try), each valid (one solid or several), or None when either is not valid (the caller
    then runs the Booleans with their fuzzy retries). The common part is copied before the
    cut is built, so the two share no edges (a shared section edge's tolerance was raised by
    the later cuts); the pieces' STEP files came out byte for byte those of two separate
    Booleans, at 0.6x their CPU on the curved samples' inserts."""
    import cadquery as cq
    from OCP.BOPAlgo import BOPAlgo_PaveFiller
    from OCP.BRepAlgoAPI import BRepAlgoAPI_Common, BRepAlgoAPI_Cut
    from OCP.BRepBuilderAPI import BRepBuilderAPI_Copy
    from OCP.TopTools import TopTools_ListOfShape

    args = TopTools_ListOfShape()
    args.Append(a.wrapped)
    args.Append(b.wrapped)
    filler = BOPAlgo_PaveFiller()
    filler.SetArguments(args)
    filler.SetRunParallel(False)
    filler.SetUseOBB(True)
    try:
        filler.Perform()
        if filler.HasErrors():
            return None
        common = BRepAlgoAPI_Common(a.wrapped, b.wrapped, filler)
        if not common.IsDone():
            return None
        inside = cq.Shape.cast(BRepBuilderAPI_Copy(common.Shape(), True, False).Shape()).clean()
        cut = BRepAlgoAPI_Cut(a.wrapped, b.wrapped, filler)
        if not cut.IsDone():
            return None
        outside = cq.Shape.cast(cut.Shape()).clean()
    except Exception:  # kernel exceptions share no base class; the Booleans retry
        return None
    if all(s.isValid() and len(s.Solids()) >= 1 for s in (inside, outside)):
        return inside, outside
    return None


def split_by_planes(
    solid: Any, xs: list[float], key: tuple[float, float], bb: Any
) -> list[Any] | None:
    """The pieces by one splitter operation; None when one comes out invalid. Raises
    :class:`GeometryError` when a piece is not one solid (a station through a place where
    the part falls apart; Booleans would give the same). ``bb``: ``solid``'s bounding box
    (:func:`~ductgen.solids.split.close_box`)."""
    import cadquery as cq
    from OCP.BRepAlgoAPI import BRepAlgoAPI_Splitter
    from OCP.TopTools import TopTools_ListOfShape

    from ductgen.errors import GeometryError

    yc = 0.5 * (bb.ymin + bb.ymax)
    args, tools = TopTools_ListOfShape(), TopTools_ListOfShape()
    args.Append(solid.wrapped)
    for s in xs:
        for f in _cut_faces(s, bb, key):
            tools.Append(f)
    sp = BRepAlgoAPI_Splitter()
    sp.SetArguments(args)
    sp.SetTools(tools)
    sp.SetRunParallel(False)  # a reproducible order of sub-shapes
    # oriented bounding boxes sort out the face pairs that cannot meet sooner: the same
    # pieces, byte for byte on every sample (flat, curved, panel), at ~0.9x the split's time
    sp.SetUseOBB(True)
    sp.SetNonDestructive(True)
    sp.Build()
    if not sp.IsDone():
        return None
    groups: list[list[Any]] = [[] for _ in range(len(xs) + 1)]
    for body in cq.Shape.cast(sp.Shape()).Solids():
        p = _boundary_points(body)
        # the piece index: how many glue surfaces the body lies downstream of
        # a body lies on one side of each glue surface; the points on its cut faces lie
        # on the surface within the section curves' tolerance (on a mapped, curved insert
        # more than 1e-6 mm), so the side is that of its point farthest from the surface
        decided = []
        for s in xs:
            d = _upstream(p, s, yc, key)
            far = d[int(np.argmax(np.abs(d)))]
            if abs(far) < 1e-6:
                return None
            decided.append(far < 0)
        groups[int(sum(decided))].append(body)
    pieces = []
    for i, g in enumerate(groups, start=1):
        if len(g) != 1:
            raise GeometryError(f"split piece {i}", f"the piece is {len(g)} solids, not one")
        piece = g[0].clean()
        if not piece.isValid():
            return None
        pieces.append(piece)
    return pieces
