"""Sampling the user's panel surface in the kernel worker, for :mod:`ductgen.panel_file`:
the surface point nearest ``skin.at`` on a CAD file and the normal its faces give there,
heights along the datum's normal by rays through a CAD file, and a least-squares bicubic
spline fitted to a mesh scan's vertices (with its residual). Loads the kernel inside its
functions only. mm.
"""

from __future__ import annotations

import warnings
from typing import Any

import numpy as np

from ductgen.errors import SpecError

__all__ = ["brep_foot", "brep_heights", "mesh_heights"]


def _face_normal(face: Any, p: Any) -> np.ndarray:
    """Oriented unit normal of ``face`` at its point nearest ``p`` (gp_Pnt)."""
    from OCP.BRep import BRep_Tool
    from OCP.BRepGProp import BRepGProp_Face
    from OCP.gp import gp_Pnt, gp_Vec
    from OCP.ShapeAnalysis import ShapeAnalysis_Surface

    uv = ShapeAnalysis_Surface(BRep_Tool.Surface_s(face)).ValueOfUV(p, 1e-7)
    pnt, vec = gp_Pnt(), gp_Vec()
    BRepGProp_Face(face).Normal(uv.X(), uv.Y(), pnt, vec)
    n = np.array([vec.X(), vec.Y(), vec.Z()])
    return n / max(float(np.linalg.norm(n)), 1e-300)


def brep_foot(shape: Any, at: np.ndarray) -> tuple[np.ndarray, np.ndarray, float]:
    """The surface point nearest ``at``, the outward normal the file gives there (zero when
    the faces meeting there disagree) and the distance (mm)."""
    from OCP.BRepBuilderAPI import BRepBuilderAPI_MakeVertex
    from OCP.BRepExtrema import BRepExtrema_DistShapeShape, BRepExtrema_SupportType
    from OCP.gp import gp_Pnt
    from OCP.TopAbs import TopAbs_FACE
    from OCP.TopExp import TopExp
    from OCP.TopoDS import TopoDS
    from OCP.TopTools import TopTools_IndexedDataMapOfShapeListOfShape

    target = gp_Pnt(*at)
    ext = BRepExtrema_DistShapeShape(BRepBuilderAPI_MakeVertex(target).Vertex(), shape.wrapped)
    if not ext.IsDone() or ext.NbSolution() == 0:
        raise SpecError("skin.at", list(at), "a point near the panel", "no nearest point found")
    best = min(range(1, ext.NbSolution() + 1), key=lambda i: ext.PointOnShape2(i).Distance(target))
    p = ext.PointOnShape2(best)
    sup = ext.SupportOnShape2(best)
    if ext.SupportTypeShape2(best) == BRepExtrema_SupportType.BRepExtrema_IsInFace:
        faces = [TopoDS.Face_s(sup)]
    else:  # on an edge or a vertex (a seam, say): the faces that meet there
        ancestors = TopTools_IndexedDataMapOfShapeListOfShape()
        TopExp.MapShapesAndAncestors_s(shape.wrapped, sup.ShapeType(), TopAbs_FACE, ancestors)
        faces = [TopoDS.Face_s(f) for f in ancestors.FindFromKey(sup)]
    normals = [_face_normal(f, p) for f in faces]
    normal = normals[0]
    if any(float(n @ normal) < 0.999 for n in normals[1:]):
        normal = np.zeros(3)  # faces meet at an angle here: a crease
    return np.array([p.X(), p.Y(), p.Z()]), normal, float(ext.Value())


def brep_heights(
    shape: Any, axes: np.ndarray, origin: np.ndarray, xs: np.ndarray, ys: np.ndarray, flip: bool
) -> tuple[np.ndarray, np.ndarray]:
    """Heights (nx, ny) of the outward-facing surface nearest the tangent plane along the
    frame normal at grid points, NaN where a ray misses; and the hit normals (nx, ny, 3)."""
    from OCP.BRepGProp import BRepGProp_Face
    from OCP.gp import gp_Dir, gp_Lin, gp_Pnt, gp_Vec
    from OCP.IntCurvesFace import IntCurvesFace_ShapeIntersector

    isec = IntCurvesFace_ShapeIntersector()
    isec.Load(shape.wrapped, 1e-7)
    reach = 2.0 * float(max(np.ptp(xs), np.ptp(ys), 50.0))
    ex, ey, n = axes
    down = gp_Dir(*(-n))
    h = np.full((len(xs), len(ys)), np.nan)
    normals = np.zeros((len(xs), len(ys), 3))
    pnt, vec = gp_Pnt(), gp_Vec()
    props: dict[int, Any] = {}
    for i, x in enumerate(xs):
        for j, y in enumerate(ys):
            top = origin + x * ex + y * ey + reach * n
            isec.Perform(gp_Lin(gp_Pnt(*top), down), 0.0, 2.0 * reach)
            best = None
            for k in range(1, isec.NbPnt() + 1):
                face = isec.Face(k)
                key = face.__hash__()
                gp = props.get(key)
                if gp is None:
                    gp = props[key] = BRepGProp_Face(face)
                gp.Normal(isec.UParameter(k), isec.VParameter(k), pnt, vec)
                nv = np.array([vec.X(), vec.Y(), vec.Z()])
                nv /= max(np.linalg.norm(nv), 1e-300)
                if flip:
                    nv = -nv
                if float(nv @ n) <= 0.0:
                    continue  # an inward-facing (inner) surface
                height = reach - isec.WParameter(k)
                if best is None or abs(height) < abs(best[0]):
                    best = (height, nv)
            if best is not None:
                h[i, j] = best[0]
                normals[i, j] = best[1] @ axes.T
    return h, normals


def mesh_heights(
    mesh: Any, axes: np.ndarray, origin: np.ndarray, xs: np.ndarray, ys: np.ndarray, flip: bool
) -> tuple[np.ndarray, dict[str, float]]:
    """A least-squares bicubic spline through the mesh vertices of the outward-facing surface
    over the grid, evaluated on it (NaN where the mesh does not cover the grid); the fit's
    residual (mm) and how many vertices it used."""
    from scipy.interpolate import LSQBivariateSpline
    from scipy.spatial import cKDTree

    local = (np.asarray(mesh.vertices) - origin) @ axes.T
    vn = np.asarray(mesh.vertex_normals) @ axes.T
    if flip:
        vn = -vn
    span = float(max(np.ptp(xs), np.ptp(ys)))
    m = 10.0  # mm: vertices a little beyond the grid steady the fit and cover its border
    lo, hi = (xs[0] - m, ys[0] - m), (xs[-1] + m, ys[-1] + m)
    inside = (
        (local[:, 0] >= lo[0])
        & (local[:, 0] <= hi[0])
        & (local[:, 1] >= lo[1])
        & (local[:, 1] <= hi[1])
        & (vn[:, 2] > 0.2)
        & (np.abs(local[:, 2]) < span)
    )
    pts = local[inside]
    if len(pts) < 64:
        raise ValueError("too few vertices under the inlet")
    tree = cKDTree(pts[:, :2])
    dist: np.ndarray = np.asarray(tree.query(pts[:, :2], k=2)[0])
    spacing = float(np.median(dist[:, 1]))
    # knots about every 12 mm (and at least 3 vertex spacings): smooth enough to average a
    # scan's noise, fine enough for radii down to the wrap limits
    knot = max(12.0, 3.0 * spacing)
    tx = np.linspace(lo[0], hi[0], max(2, int((hi[0] - lo[0]) / knot)) + 1)[1:-1]
    ty = np.linspace(lo[1], hi[1], max(2, int((hi[1] - lo[1]) / knot)) + 1)[1:-1]
    with warnings.catch_warnings():  # knot cells without vertices: found below as off-edge
        warnings.simplefilter("ignore")
        fit = LSQBivariateSpline(
            pts[:, 0], pts[:, 1], pts[:, 2], tx, ty, bbox=[lo[0], hi[0], lo[1], hi[1]]
        )
    res = pts[:, 2] - fit.ev(pts[:, 0], pts[:, 1])
    gx, gy = np.meshgrid(xs, ys, indexing="ij")
    h = fit.ev(gx.ravel(), gy.ravel()).reshape(gx.shape)
    faces = np.asarray(mesh.faces)
    keep = inside[faces].all(axis=1)
    covered = _covered(local[:, :2], faces[keep], np.column_stack([gx.ravel(), gy.ravel()]))
    h[~covered.reshape(h.shape)] = np.nan
    stats = {
        "fit_rms_mm": float(np.sqrt(np.mean(res * res))),
        "fit_max_mm": float(np.max(np.abs(res))),
        "fit_vertices": len(pts),
        "fit_knot_spacing_mm": float(knot),
    }
    return h, stats


def _covered(xy: np.ndarray, faces: np.ndarray, q: np.ndarray, k: int = 12) -> np.ndarray:
    """Whether each point ``q`` (N, 2) lies in one of the triangles ``faces`` of the 2D
    points ``xy`` (tested against the ``k`` triangles with the nearest centroids)."""
    from scipy.spatial import cKDTree

    if len(faces) == 0:
        return np.zeros(len(q), dtype=bool)
    tri = xy[faces]
    _, idx = cKDTree(tri.mean(axis=1)).query(q, k=min(k, len(faces)))
    idx = idx.reshape(len(q), -1)
    a, b, c = tri[idx, 0], tri[idx, 1], tri[idx, 2]
    v0, v1, v2 = c - a, b - a, q[:, None, :] - a
    d00, d01, d11 = (v0 * v0).sum(-1), (v0 * v1).sum(-1), (v1 * v1).sum(-1)
    d20, d21 = (v2 * v0).sum(-1), (v2 * v1).sum(-1)
    den = d00 * d11 - d01 * d01
    den = np.where(np.abs(den) < 1e-300, 1e-300, den)
    s = (d11 * d20 - d01 * d21) / den
    t = (d00 * d21 - d01 * d20) / den
    eps = 1e-9
    return np.any((s >= -eps) & (t >= -eps) & (s + t <= 1 + eps), axis=1)
