"""The CFD domain's floor where the skin cannot be used as it is (datum frame, mm).

Two cases, each stated in cfd.json (``skin_wall``) and in the run's warnings:

- **Past the edge of the user's panel file.** A panel file covers the inlet but often not
  the domain's whole floor (the boundary layer grows over a stretch ahead of the inlet, and
  the domain reaches round it). Where the file has no surface, the floor continues the
  panel's least-squares quadratic surface (its slope and curvature), joined to the panel
  without a step: the quadratic's residual on the panel is carried on past the edge and
  smoothed (nearest panel value, then Laplace sweeps), so the filled floor meets the panel
  exactly at its edge. What the inlet itself stands on must be the file's own surface.
- **Behind the duct's outlet on a convex skin.** A straight run behind the outlet (the
  case's outlet boundary needs one; see :mod:`ductgen.cfd.extension`) can break out through
  a skin that falls away below the outlet's direction. Downstream of the outlet's station
  the floor then runs on along the skin's tangent there instead of the skin: the
  inlet, its cavity and the transition stand on the true skin; only the outer flow far
  behind the lip sees the fairing.
"""

from __future__ import annotations

import numpy as np

__all__ = ["continue_panel", "fair_downstream"]

#: Smoothing sweeps over the filled residual (common practice, no source: enough to take the
#: nearest-value steps out of a few-hundred-point fill).
SWEEPS = 200


def continue_panel(x: np.ndarray, y: np.ndarray, h: np.ndarray) -> tuple[np.ndarray, float]:
    """Heights ``h`` (len(x), len(y)) mm over the grid ``x`` × ``y`` (mm), NaN where the panel
    file has no surface, filled by the panel's quadratic continuation (module docstring).

    Returns the filled heights and the largest distance (mm) of a filled point from the
    panel's surface (0 when nothing was filled).
    """
    from scipy.ndimage import distance_transform_edt

    valid = ~np.isnan(h)
    if valid.all():
        return h, 0.0
    if valid.sum() < 6:
        raise ValueError("the panel file covers fewer than six points of the domain's floor")
    xx, yy = np.meshgrid(x, y, indexing="ij")
    basis = np.stack([np.ones_like(xx), xx, yy, xx * xx, xx * yy, yy * yy], axis=-1)
    coef, *_ = np.linalg.lstsq(basis[valid], h[valid], rcond=None)
    quad = basis @ coef
    resid = np.where(valid, h - quad, 0.0)
    step = (float(x[1] - x[0]), float(y[1] - y[0]))
    dist, (ii, jj) = distance_transform_edt(~valid, sampling=step, return_indices=True)
    resid = resid[ii, jj]  # the nearest panel point's residual
    for _ in range(SWEEPS):
        p = np.pad(resid, 1, mode="edge")
        mean = 0.25 * (p[:-2, 1:-1] + p[2:, 1:-1] + p[1:-1, :-2] + p[1:-1, 2:])
        resid = np.where(valid, resid, mean)
    out: np.ndarray = np.where(valid, h, quad + resid)
    return out, float(dist.max())


def fair_downstream(
    points: np.ndarray, grid: tuple[int, int], x_from: float
) -> tuple[np.ndarray, float | None]:
    """The sheet's corners ``points`` ((nu·nv, 3) mm, rows of constant u running downstream,
    ``grid`` = (nu, nv)) with every row past the first whose middle corner lies at
    x ≥ ``x_from`` (mm) replaced by the straight continuation of that row along the skin's
    tangent, column by column: the tangent is the second-order backward difference
    (3·p_i − 4·p_(i−1) + p_(i−2)) / 2 per grid step, exact on a parabola.

    Returns the corners and that row's middle x (mm), or the corners unchanged and None
    when no row with two rows before it lies there.
    """
    nu, nv = grid
    p = np.asarray(points, float).reshape(nu, nv, 3).copy()
    past = np.nonzero(p[:, nv // 2, 0] >= x_from)[0]
    if len(past) == 0 or past[0] < 2:
        return np.asarray(points, float), None
    i = int(past[0])
    step = 0.5 * (3.0 * p[i] - 4.0 * p[i - 1] + p[i - 2])
    p[i + 1 :] = p[i] + np.arange(1, nu - i)[:, None, None] * step[None]
    return p.reshape(-1, 3), float(p[i, nv // 2, 0])
