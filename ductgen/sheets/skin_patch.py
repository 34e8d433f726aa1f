"""The skin round a part in the preview picture (model coordinates, mm; numpy and scipy,
no renderer): the patch of the skin's outer surface with the part's cut-out cut exactly
(:func:`curved_panel`), and the marks drawn on it (:func:`patch_marks`: the patch's edges,
the cut edge, the datum and the flow arrow).
"""

from __future__ import annotations

from typing import Any

import numpy as np

__all__ = ["curved_panel", "patch_marks"]


def curved_panel(
    skin: Any,
    around_xy: np.ndarray,
    hole_xy: np.ndarray | None,
    turned: Any = None,
    step: float = 4.0,
) -> tuple[np.ndarray, np.ndarray]:
    """A patch of the skin's outer surface round a part (model coordinates, mm): a
    rectangle over ``around_xy``'s extent plus a 20 mm margin with ``hole_xy`` cut out
    exactly (both closed outlines in design coordinates). The patch is triangulated in
    (u, v) (Delaunay, scipy) over a ``step`` grid and the hole's outline sampled every
    ``step`` / 8, grid points nearer the outline than ``step`` / 3 left out, so the cut edge
    follows the outline to within the sag of a 0.5 mm chord; triangles inside the hole are
    dropped, then every point is mapped; ``hole_xy`` None: the whole patch. Triangles run
    counter-clockwise in (u, v), so their normals point out of the skin. ``turned``: the
    plug's map (it is built turned over), used instead of the skin's."""
    from matplotlib.path import Path as MplPath
    from scipy.spatial import Delaunay

    lo, hi = around_xy.min(axis=0) - 20.0, around_xy.max(axis=0) + 20.0
    nu, nv = int((hi[0] - lo[0]) / step) + 2, int((hi[1] - lo[1]) / step) + 2
    uu, vv = np.meshgrid(
        np.linspace(lo[0], hi[0], nu), np.linspace(lo[1], hi[1], nv), indexing="ij"
    )
    grid = np.column_stack([uu.ravel(), vv.ravel()])
    if hole_xy is None:  # the whole patch (the surface a curved cutter is clipped by)
        uv = grid
        faces = Delaunay(uv).simplices
    else:
        ring = _dense_ring(np.asarray(hole_xy, dtype=float), step / 8.0)
        hole = MplPath(np.vstack([ring, ring[:1]]))
        near = _distance_to(grid, ring) < step / 3.0
        grid = grid[~near & ~hole.contains_points(grid)]
        uv = np.vstack([grid, ring])
        faces = Delaunay(uv).simplices
        faces = faces[~hole.contains_points(uv[faces].mean(axis=1))]
    # counter-clockwise in (u, v): every normal points out of the skin (+w)
    a, b, c = (uv[faces[:, i]] for i in range(3))
    cw = (b[:, 0] - a[:, 0]) * (c[:, 1] - a[:, 1]) - (b[:, 1] - a[:, 1]) * (c[:, 0] - a[:, 0]) < 0
    faces[cw] = faces[cw][:, ::-1]
    pts = np.column_stack([uv, np.zeros(len(uv))])
    xyz = skin.to_model(pts) if turned is None else turned(pts)
    return xyz, faces


def patch_marks(
    skin: Any,
    around_xy: np.ndarray,
    hole_xy: np.ndarray,
    length_mm: float,
    width_mm: float,
    turned: Any = None,
) -> dict[str, Any]:
    """What the preview marks on the skin (model coordinates, mm): the patch's edges and
    the cut edge as polylines (``lines``), the datum (design origin) and a flow arrow beside
    the opening (``arrow``: tail, head), lifted 0.5 mm off the skin."""
    lo, hi = around_xy.min(axis=0) - 20.0, around_xy.max(axis=0) + 20.0
    rect = np.array([[lo[0], lo[1]], [hi[0], lo[1]], [hi[0], hi[1]], [lo[0], hi[1]], lo])
    edge = _dense_ring(rect[:-1], 2.0)
    cut = _dense_ring(np.asarray(hole_xy, dtype=float), 1.0)

    def on(uv: np.ndarray, lift: float = 0.0) -> np.ndarray:
        p = np.column_stack([uv, np.full(len(uv), lift)])
        return skin.to_model(p) if turned is None else turned(p)

    v_arrow = 0.5 * width_mm + 0.45 * (hi[1] - 0.5 * width_mm)
    arrow = on(np.array([[0.05 * length_mm, v_arrow], [0.45 * length_mm, v_arrow]]), 0.5)
    datum = on(np.zeros((1, 2)))[0]
    normal = on(np.zeros((1, 2)), 1.0)[0] - datum
    return {
        "lines": [on(np.vstack([edge, edge[:1]])), on(np.vstack([cut, cut[:1]]), 0.05)],
        "datum": datum,
        "normal": normal / np.linalg.norm(normal),
        "arrow": arrow,
    }


def _dense_ring(ring: np.ndarray, step: float) -> np.ndarray:
    """A closed outline (N, 2) resampled so no segment is longer than ``step`` (mm)."""
    p = np.vstack([ring, ring[:1]])
    d = np.diff(p, axis=0)
    n = np.maximum(1, np.ceil(np.hypot(d[:, 0], d[:, 1]) / step)).astype(int)
    out = [p[i] + d[i] * (np.arange(n[i])[:, None] / n[i]) for i in range(len(d))]
    return np.vstack(out)


def _distance_to(points: np.ndarray, ring: np.ndarray) -> np.ndarray:
    """Distance (mm) from each point to the nearest vertex of a densely sampled ring."""
    from scipy.spatial import cKDTree

    return np.asarray(cKDTree(ring).query(points)[0])
