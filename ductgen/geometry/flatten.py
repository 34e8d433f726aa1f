"""Flattening the skin region under a template: exact on developable skins, least
distortion on doubly curved ones.

The template is drawn in design coordinates (u along the flow, v across). On a flat or
cylindrical skin the skin map is an isometry, so (u, v) *is* the developed (unrolled) panel
and nothing is changed. On a doubly curved skin no flat sheet fits without stretching: the
region under the template (a grid over the flange, trim line and opening, on the outer skin
surface) is flattened with libigl — a least-squares conformal map (LSCM) as the start and
as-rigid-as-possible (ARAP) iterations, which minimise length distortion — pinned so the
centreline keeps its true length and direction. Template points are carried through the
flattening by barycentric interpolation on the grid. The largest length distortion,
|flat edge length / surface edge length − 1| over the grid's edges, is reported in percent.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ductgen.geometry.panel import PanelSkin
from ductgen.geometry.skin import CurvedSkin, FlatSkin

__all__ = ["GRID_MM", "Development", "develop"]

#: Grid spacing (mm) of the flattened region.
GRID_MM = 4.0
#: ARAP iterations after the LSCM start.
ARAP_ITERATIONS = 30


@dataclass(frozen=True)
class Development:
    """The flat template's coordinates for points in design coordinates (u, v).

    Attributes:
        exact: True on flat and cylindrical skins (the identity: (u, v) develops exactly).
        max_length_distortion_pct: largest |flat / surface − 1| of a grid edge (percent).
        origin_uv, step: the grid (None when exact).
        flat_xy: flattened grid points, shape (nu, nv, 2) (None when exact).
    """

    exact: bool
    max_length_distortion_pct: float
    origin_uv: tuple[float, float] | None = None
    step: float = GRID_MM
    flat_xy: np.ndarray | None = None

    def xy(self, uv: np.ndarray) -> np.ndarray:
        """Template coordinates (mm) of design points ``uv`` (N, 2)."""
        p = np.asarray(uv, dtype=float).reshape(-1, 2)
        if self.exact or self.flat_xy is None or self.origin_uv is None:
            same: np.ndarray = p.copy()
            return same
        nu, nv = self.flat_xy.shape[:2]
        g = (p - np.asarray(self.origin_uv)) / self.step
        i = np.clip(np.floor(g[:, 0]).astype(int), 0, nu - 2)
        j = np.clip(np.floor(g[:, 1]).astype(int), 0, nv - 2)
        a, b = g[:, 0] - i, g[:, 1] - j
        q = self.flat_xy
        # the two triangles of each grid cell (split along its i+j diagonal): linear inside
        lower = a + b <= 1.0
        p00, p10, p01, p11 = q[i, j], q[i + 1, j], q[i, j + 1], q[i + 1, j + 1]
        low = p00 + a[:, None] * (p10 - p00) + b[:, None] * (p01 - p00)
        up = p11 + (1 - a)[:, None] * (p01 - p11) + (1 - b)[:, None] * (p10 - p11)
        xy: np.ndarray = np.where(lower[:, None], low, up)
        return xy


def _grid(lo: np.ndarray, hi: np.ndarray, step: float) -> tuple[np.ndarray, np.ndarray, int, int]:
    nu = int(np.ceil((hi[0] - lo[0]) / step)) + 1
    nv = int(np.ceil((hi[1] - lo[1]) / step)) + 1
    uu, vv = np.meshgrid(lo[0] + step * np.arange(nu), lo[1] + step * np.arange(nv), indexing="ij")
    idx = np.arange(nu * nv).reshape(nu, nv)
    a, b, c, d = idx[:-1, :-1], idx[1:, :-1], idx[:-1, 1:], idx[1:, 1:]
    faces = np.vstack(
        [
            np.column_stack([a.ravel(), b.ravel(), c.ravel()]),
            np.column_stack([d.ravel(), c.ravel(), b.ravel()]),
        ]
    )
    return np.column_stack([uu.ravel(), vv.ravel()]), faces, nu, nv


def develop(
    skin: CurvedSkin | FlatSkin | PanelSkin, region_uv: np.ndarray, step: float = GRID_MM
) -> Development:
    """The development of the skin region spanned by the points ``region_uv`` (N, 2, mm).

    Exact (identity) on a flat or cylindrical skin; on a doubly curved skin, and always on
    the user's panel (whose curvature varies), an ARAP flattening of a grid over the
    region's bounding box (plus one grid step all round).
    """
    if not isinstance(skin, PanelSkin) and (skin.k_stream == 0.0 or skin.k_span == 0.0):
        return Development(exact=True, max_length_distortion_pct=0.0)
    import igl

    pts = np.asarray(region_uv, dtype=float).reshape(-1, 2)
    lo, hi = pts.min(axis=0) - step, pts.max(axis=0) + step
    uv, faces, nu, nv = _grid(lo, hi, step)
    xyz = skin.to_model(np.column_stack([uv, np.zeros(len(uv))]))
    # pin the centreline's ends to their true arc length along the flow (u is arc length
    # on the centreline), which fixes position, direction and scale
    i0 = int(np.argmin(np.hypot(uv[:, 0] - max(lo[0] + step, 0.0), uv[:, 1])))
    i1 = int(np.argmin(np.hypot(uv[:, 0] - (hi[0] - step), uv[:, 1])))
    b = np.array([i0, i1], dtype=np.int64)
    bc = uv[b].copy()
    start, _ = igl.lscm(xyz, faces.astype(np.int64), b, bc)
    data = igl.ARAPData()
    data.max_iter = ARAP_ITERATIONS
    igl.arap_precomputation(xyz, faces.astype(np.int64), 2, b.astype(np.int32), data)
    flat = igl.arap_solve(bc, data, start)
    edges = np.vstack([faces[:, [0, 1]], faces[:, [1, 2]], faces[:, [2, 0]]])
    l3 = np.linalg.norm(xyz[edges[:, 0]] - xyz[edges[:, 1]], axis=1)
    l2 = np.linalg.norm(flat[edges[:, 0]] - flat[edges[:, 1]], axis=1)
    worst = float(np.max(np.abs(l2 / l3 - 1.0)) * 100.0)
    return Development(
        exact=False,
        max_length_distortion_pct=worst,
        origin_uv=(float(lo[0]), float(lo[1])),
        step=step,
        flat_xy=flat.reshape(nu, nv, 2),
    )
