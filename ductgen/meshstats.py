"""Closure, winding and volume of a triangle mesh, by trimesh (used on kernel
triangulations and on any STL a user hands to ``ductgen check``)."""

from __future__ import annotations

import math

import numpy as np

__all__ = ["mesh_stats"]


def mesh_stats(
    vertices: np.ndarray, faces: np.ndarray, merge_mm: float = 1e-5
) -> tuple[bool, bool, float, float]:
    """(closed, winding consistent, signed volume mm³, area mm²) of a triangle mesh.

    Vertices closer than about ``merge_mm`` are merged first (an STL repeats each vertex per
    facet; the kernel's mesher gives bit-identical points on shared edges) and faces left
    with a repeated vertex dropped; closed means every edge is shared by exactly two faces
    (trimesh's ``is_watertight``), consistent that they run in opposite directions
    (``is_winding_consistent``). Volume and area are those of the mesh as given.
    """
    import trimesh

    faces = np.asarray(faces, dtype=np.int64).reshape(-1, 3)
    vertices = np.asarray(vertices, dtype=float).reshape(-1, 3)
    if len(faces) == 0:
        return False, False, 0.0, 0.0
    raw = trimesh.Trimesh(vertices, faces, process=False, validate=False)
    merged = raw.copy()
    merged.merge_vertices(digits_vertex=max(round(-math.log10(merge_mm)), 0))
    # drop faces that merging collapsed (a repeated vertex), but keep zero-area slivers of
    # three distinct collinear vertices: the kernel's mesher closes T-junctions on small
    # faces with them, and dropping them opened sound solids (a 5 x 2 mm throat's plug)
    f = merged.faces
    merged.update_faces((f[:, 0] != f[:, 1]) & (f[:, 1] != f[:, 2]) & (f[:, 0] != f[:, 2]))
    closed = bool(merged.is_watertight)
    winding = closed and bool(merged.is_winding_consistent)
    return closed, winding, float(raw.volume), float(raw.area)
