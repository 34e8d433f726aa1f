"""Closure, winding and volume of a triangle mesh (used on kernel triangulations and on any
STL a user hands to ``ductgen check``), in NumPy: the rules are trimesh's (merged by rounding
to a grid, every edge in exactly two faces, each shared edge run once each way), which the
tests check it against on meshes of every kind, without importing trimesh (~0.3 s of a kernel
worker's start, on the path of a command-line build)."""

from __future__ import annotations

import math

import numpy as np

__all__ = ["mesh_stats", "without_collapsed"]


def mesh_stats(
    vertices: np.ndarray, faces: np.ndarray, merge_mm: float = 1e-5
) -> tuple[bool, bool, float, float]:
    """(closed, winding consistent, signed volume mm³, area mm²) of a triangle mesh.

    Vertices closer than about ``merge_mm`` are merged first (an STL repeats each vertex per
    facet; the kernel's mesher gives bit-identical points on shared edges): their
    coordinates rounded to the grid of that step (10^-d mm, d = round(−log10 merge_mm)) are
    one vertex. Faces left with a repeated vertex are dropped, but zero-area slivers of
    three distinct collinear vertices are kept: the kernel's mesher closes T-junctions on
    small faces with them, and dropping them opened sound solids (a 5 x 2 mm throat's plug).
    Closed means every edge is shared by exactly two faces, consistent that those two run
    it in opposite directions. Volume (Σ v0·(v1 × v2)/6) and area are those of the mesh as
    given.
    """
    faces = np.asarray(faces, dtype=np.int64).reshape(-1, 3)
    vertices = np.asarray(vertices, dtype=float).reshape(-1, 3)
    if len(faces) == 0:
        return False, False, 0.0, 0.0
    tri = vertices[faces]
    volume = float(np.einsum("ij,ij->", tri[:, 0], np.cross(tri[:, 1], tri[:, 2])) / 6.0)
    area = float(
        np.linalg.norm(np.cross(tri[:, 1] - tri[:, 0], tri[:, 2] - tri[:, 0]), axis=1).sum() / 2.0
    )
    f = _merged(vertices, merge_mm)[faces]
    f = f[_distinct(f)]
    if len(f) == 0:
        return False, False, volume, area
    edges = f[:, [0, 1, 1, 2, 2, 0]].reshape(-1, 2)
    n = int(f.max()) + 1
    undirected = np.minimum(edges[:, 0], edges[:, 1]) * n + np.maximum(edges[:, 0], edges[:, 1])
    u = np.sort(undirected)  # closed: each value twice, i.e. equal in pairs, pairs apart
    closed = len(u) % 2 == 0 and bool((u[0::2] == u[1::2]).all() and (u[2::2] != u[1:-1:2]).all())
    directed = np.sort(edges[:, 0] * n + edges[:, 1])
    winding = closed and bool((directed[1:] != directed[:-1]).all())
    return closed, winding, volume, area


def without_collapsed(
    vertices: np.ndarray, faces: np.ndarray, merge_mm: float = 1e-5
) -> np.ndarray:
    """``faces`` without those that :func:`mesh_stats` drops: two of their vertices merged
    (closer than about ``merge_mm``). A reader merges them too, and such a face then runs
    one edge twice (seen where a face closed on itself meets an end face: the kernel's
    mesher put two nodes 5e-12 mm apart on the seam, and trimesh read the piece's STL as not
    watertight)."""
    faces = np.asarray(faces, dtype=np.int64).reshape(-1, 3)
    keep = _distinct(_merged(np.asarray(vertices, dtype=float).reshape(-1, 3), merge_mm)[faces])
    return faces if keep.all() else faces[keep]


def _merged(vertices: np.ndarray, merge_mm: float) -> np.ndarray:
    """Each vertex's index after merging those whose coordinates round to one point of the
    grid 10^-d mm, d = round(−log10 merge_mm)."""
    digits = max(round(-math.log10(merge_mm)), 0)
    grid = np.round(vertices * 10.0**digits).astype(np.int64)
    order = np.lexsort(grid.T)
    step = np.any(grid[order[1:]] != grid[order[:-1]], axis=1)
    merged = np.empty(len(grid), dtype=np.int64)
    merged[order] = np.concatenate([[0], np.cumsum(step)])
    return merged


def _distinct(f: np.ndarray) -> np.ndarray:
    """Whether each face (M, 3) has three distinct vertex indices."""
    return (f[:, 0] != f[:, 1]) & (f[:, 1] != f[:, 2]) & (f[:, 0] != f[:, 2])
