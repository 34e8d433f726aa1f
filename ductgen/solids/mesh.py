"""Triangulating B-rep shapes into numpy arrays (kernel side; no trimesh here)."""

from __future__ import annotations

import cadquery as cq
import numpy as np
from OCP.BRep import BRep_Tool
from OCP.BRepMesh import BRepMesh_IncrementalMesh
from OCP.BRepTools import BRepTools
from OCP.TopAbs import TopAbs_REVERSED
from OCP.TopLoc import TopLoc_Location

__all__ = ["triangulate"]


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
        trsf = loc.Transformation()
        n = tri.NbNodes()
        pts = np.empty((n, 3))
        for i in range(1, n + 1):
            p = tri.Node(i).Transformed(trsf)
            pts[i - 1] = (p.X(), p.Y(), p.Z())
        m = tri.NbTriangles()
        idx = np.empty((m, 3), dtype=np.int64)
        for i in range(1, m + 1):
            idx[i - 1] = tri.Triangle(i).Get()
        idx -= 1
        if face.wrapped.Orientation() == TopAbs_REVERSED:
            idx = idx[:, ::-1]
        verts.append(pts)
        faces.append(idx + offset)
        offset += n
    if not verts:
        return np.zeros((0, 3)), np.zeros((0, 3), dtype=np.int64)
    return np.vstack(verts), np.vstack(faces)
