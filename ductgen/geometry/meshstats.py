"""Closure, winding and volume of a triangle mesh (pure numpy; used on kernel
triangulations and on any STL a user hands to ``ductgen check``)."""

from __future__ import annotations

import numpy as np

__all__ = ["mesh_stats"]


def mesh_stats(
    vertices: np.ndarray, faces: np.ndarray, merge_mm: float = 1e-5
) -> tuple[bool, bool, float, float]:
    """(closed, winding consistent, signed volume mm³, area mm²) of a triangle mesh.

    Vertices closer than about ``merge_mm`` are merged first (an STL repeats each vertex per
    facet; the kernel's mesher gives bit-identical points on shared edges). Closed: every
    undirected edge is used by exactly two faces; consistent: in opposite directions.
    """
    faces = np.asarray(faces, dtype=np.int64)
    vertices = np.asarray(vertices, dtype=float)
    if len(faces) == 0:
        return False, False, 0.0, 0.0
    key = np.round(vertices / merge_mm).astype(np.int64)
    _, inverse = np.unique(key, axis=0, return_inverse=True)
    f = inverse.reshape(-1)[faces]
    f = f[(f[:, 0] != f[:, 1]) & (f[:, 1] != f[:, 2]) & (f[:, 0] != f[:, 2])]
    e = np.concatenate([f[:, [0, 1]], f[:, [1, 2]], f[:, [2, 0]]])
    _, counts = np.unique(np.sort(e, axis=1), axis=0, return_counts=True)
    closed = bool(np.all(counts == 2))
    _, dcounts = np.unique(e, axis=0, return_counts=True)
    winding = closed and bool(np.all(dcounts == 1))
    v = vertices[faces]
    cross = np.cross(v[:, 1] - v[:, 0], v[:, 2] - v[:, 0])
    volume = float(np.einsum("ij,ij->i", v[:, 0], cross).sum() / 6.0)
    return closed, winding, volume, float(0.5 * np.linalg.norm(cross, axis=1).sum())
