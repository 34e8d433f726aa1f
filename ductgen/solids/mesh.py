"""Triangulating B-rep shapes into numpy arrays, and refining such meshes (kernel side); the
cutter's wetted area from its triangulation."""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

import cadquery as cq
import numpy as np
from OCP.BRep import BRep_Tool
from OCP.BRepMesh import BRepMesh_IncrementalMesh
from OCP.BRepTools import BRepTools
from OCP.TopAbs import TopAbs_REVERSED
from OCP.TopLoc import TopLoc_Location

if TYPE_CHECKING:
    from ductgen.geometry.inlet import InletGeometry

__all__ = ["closed_mesh", "subdivide_to_size", "triangulate", "wetted_area_mm2"]


def triangulate(
    shape: cq.Shape, linear_mm: float, angular_rad: float
) -> tuple[np.ndarray, np.ndarray]:
    """Triangulate ``shape``: returns vertices (N, 3) in mm and faces (M, 3) int, outward.

    Vertices on shared edges come out identical from the kernel's mesher, so merging
    duplicates (done by the caller) gives a watertight mesh for a closed solid.
    """
    BRepTools.Clean_s(shape.wrapped)
    BRepMesh_IncrementalMesh(shape.wrapped, linear_mm, False, angular_rad, True)
    verts: list[np.ndarray] = []
    faces: list[np.ndarray] = []
    offset = 0
    for face in shape.Faces():
        loc = TopLoc_Location()
        tri = BRep_Tool.Triangulation_s(face.wrapped, loc)
        if tri is None:
            continue
        n, m = tri.NbNodes(), tri.NbTriangles()
        # one call per node and triangle into a list (not a numpy row each), and no
        # transformation where the location is the identity (it would change nothing)
        if loc.IsIdentity():
            pts = [tri.Node(i).Coord() for i in range(1, n + 1)]
        else:
            trsf = loc.Transformation()
            pts = [tri.Node(i).Transformed(trsf).Coord() for i in range(1, n + 1)]
        idx = np.array([tri.Triangle(i).Get() for i in range(1, m + 1)], dtype=np.int64)
        idx = idx.reshape(-1, 3) - 1
        if face.wrapped.Orientation() == TopAbs_REVERSED:
            idx = idx[:, ::-1]
        verts.append(np.array(pts, dtype=np.float64).reshape(-1, 3))
        faces.append(idx + offset)
        offset += n
    if not verts:
        return np.zeros((0, 3)), np.zeros((0, 3), dtype=np.int64)
    return np.vstack(verts), np.vstack(faces)


def closed_mesh(
    shape: cq.Shape, linear_mm: float, angular_rad: float, finer: int = 3
) -> tuple[np.ndarray, np.ndarray]:
    """:func:`triangulate` at the asked deflections (mm, rad), or, when that mesh is not
    closed and consistently wound, at half of them, ``finer`` tries in all (the last one
    returned either way: the caller's check then names the part); faces two of whose
    vertices merge are left out (:func:`~ductgen.meshstats.without_collapsed`). Seen at the
    draft STL quality (0.2 mm, 0.5 rad): an insert piece's split face whose boundary runs
    from the edge round into the wall tangentially was meshed folded over itself there
    (edges of four triangles)."""
    from ductgen.meshstats import mesh_stats, without_collapsed

    for _ in range(finer):
        v, f = triangulate(shape, linear_mm, angular_rad)
        f = without_collapsed(v, f)
        tight, winding, _, _ = mesh_stats(v, f)
        if tight and winding:
            break
        linear_mm, angular_rad = 0.5 * linear_mm, 0.5 * angular_rad
    return v, f


def subdivide_to_size(
    vertices: np.ndarray, faces: np.ndarray, max_edge_mm: float, max_iter: int = 10
) -> tuple[np.ndarray, np.ndarray]:
    """``(vertices, faces)`` (mm) with every edge longer than ``max_edge_mm`` bisected at one
    midpoint shared by the faces on both sides, round after round, until none is.

    The triangles are those of trimesh's ``remesh.subdivide_to_size`` (the same three
    templates: a fan for one split edge, a corner and the quad cut along its shorter
    diagonal for two, the 1 → 4 split for three; midpoints are the mean of the two ends),
    but a face with no long edge is set aside once and for all instead of being examined
    again every round (it can never be split: only long edges are), so the work shrinks
    with the faces left. The faces come out in another order.
    """
    v = np.asarray(vertices, dtype=np.float64)
    f = np.asarray(faces, dtype=np.int64)
    done: list[np.ndarray] = []
    for i in range(max_iter + 1):
        edges = np.sort(f[:, [0, 1, 1, 2, 2, 0]].reshape(-1, 2), axis=1)
        d = v[edges[:, 0]] - v[edges[:, 1]]
        long_edge = ((d**2).sum(axis=1) ** 0.5 > max_edge_mm).reshape(-1, 3)
        busy = long_edge.any(axis=1)
        done.append(f[~busy])
        if not busy.any():
            break
        if i >= max_iter:
            raise ValueError("max_iter exceeded!")
        f, long_edge, edges = f[busy], long_edge[busy], edges.reshape(-1, 3, 2)[busy]
        edges = edges.reshape(-1, 2)
        key = edges[:, 0] * np.int64(len(v)) + edges[:, 1]
        _, first, inverse = np.unique(key, return_index=True, return_inverse=True)
        split_u = long_edge.reshape(-1)[first]
        mid = np.full(len(first), -1, dtype=np.int64)
        mid[split_u] = np.arange(int(split_u.sum())) + len(v)
        v = np.vstack((v, v[edges[first[split_u]]].mean(axis=1)))
        f = _split_faces(v, f, mid[inverse.reshape(-1)].reshape(-1, 3))
    return v, np.vstack(done)


def _split_faces(v: np.ndarray, f: np.ndarray, face_mid: np.ndarray) -> np.ndarray:
    """Faces ``f`` (each with 1 to 3 edges to split, columns v0v1, v1v2, v2v0; ``face_mid``
    the midpoint vertex of each, −1 where kept) replaced by their pieces."""
    split = face_mid >= 0
    count = split.sum(axis=1)
    one, two, three = count == 1, count == 2, count == 3
    # one edge: rotate it to (a, b) and fan its midpoint p to c
    j = np.argmax(split[one], axis=1)
    r = np.arange(len(j))
    f1, m1 = f[one], face_mid[one]
    a, b, c = f1[r, j], f1[r, (j + 1) % 3], f1[r, (j + 2) % 3]
    p = m1[r, j]
    faces_one = np.column_stack((a, p, c, p, b, c)).reshape((-1, 3))
    # two edges: rotate the kept one to (c, a); the corner (p, b, q) and the quad (a, p, q,
    # c) cut along its shorter diagonal
    j = (np.argmin(split[two], axis=1) + 1) % 3
    r = np.arange(len(j))
    f2, m2 = f[two], face_mid[two]
    a, b, c = f2[r, j], f2[r, (j + 1) % 3], f2[r, (j + 2) % 3]
    p, q = m2[r, j], m2[r, (j + 1) % 3]
    use_aq = (((v[a] - v[q]) ** 2).sum(axis=1) <= ((v[p] - v[c]) ** 2).sum(axis=1))[:, None]
    corner = np.column_stack((p, b, q))
    quad_a = np.where(use_aq, np.column_stack((a, p, q)), np.column_stack((a, p, c)))
    quad_b = np.where(use_aq, np.column_stack((a, q, c)), np.column_stack((p, q, c)))
    # three edges: the 1 -> 4 split
    v0, v1, v2 = f[three].T
    m0, mm1, mm2 = face_mid[three].T
    faces_three = np.column_stack((v0, m0, mm2, m0, v1, mm1, mm2, mm1, v2, m0, mm1, mm2)).reshape(
        (-1, 3)
    )
    return np.vstack((faces_one, corner, quad_a, quad_b, faces_three)).astype(np.int64)


def wetted_area_mm2(vertices: Any, faces: Any, g: InletGeometry, fn: Any = None) -> float:
    """Area of the cutter's air-washed surface (mm²) from its design-coordinate
    triangulation: everything below the skin (triangles crossing it are clipped; the overcut
    above is left out) except the outlet (or throat exit) face. ``fn``: the point map onto a
    curved skin (the clipped mesh is subdivided to 2 mm and mapped before its area is taken)."""
    soup, tris = _clipped_below_skin(np.asarray(vertices, dtype=float), np.asarray(faces), g)
    if fn is not None:
        import trimesh

        fine_v, fine_f = subdivide_to_size(soup, tris, 2.0)
        return float(trimesh.Trimesh(fn(fine_v), fine_f, process=False).area)
    t = soup[tris]
    return float(0.5 * np.linalg.norm(np.cross(t[:, 1] - t[:, 0], t[:, 2] - t[:, 0]), axis=1).sum())


def _clipped_below_skin(vertices: Any, faces: Any, g: InletGeometry) -> tuple[Any, Any]:
    """The part of a design-coordinate triangulation below the skin (w ≤ 0), without the
    outlet face, as a triangle soup (vertices, faces)."""
    tri = vertices[faces]
    tri = tri[~np.all(np.abs(tri[:, :, 0] - g.outlet_x_mm) < 1e-6, axis=1)]
    out = []
    for t in tri[np.any(tri[:, :, 2] < 0.0, axis=1)]:
        if np.all(t[:, 2] <= 0.0):
            out.append(t)
            continue
        poly = []
        for i in range(3):
            p, q = t[i], t[(i + 1) % 3]
            if p[2] <= 0.0:
                poly.append(p)
            if (p[2] < 0.0) != (q[2] < 0.0) and p[2] != q[2]:
                poly.append(p + (q - p) * (p[2] / (p[2] - q[2])))
        out += [np.array([poly[0], poly[k], poly[k + 1]]) for k in range(1, len(poly) - 1)]
    soup = np.array(out).reshape(-1, 3)
    return soup, np.arange(len(soup)).reshape(-1, 3)
