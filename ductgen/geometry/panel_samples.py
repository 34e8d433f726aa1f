"""The samples of the user's panel (heights over the datum's tangent plane on a grid, mm;
NaN where the file has no surface): the largest turn between neighbouring samples' normals
(a crease), and the surface continued beyond the file's edge for the pictures' band. Pure
numbers: the kernel worker (``panel_file.py``) and ``design/panel.py`` both use them."""

from __future__ import annotations

import numpy as np

__all__ = ["continue_surface", "crease_angle"]


def crease_angle(
    normals: np.ndarray, h: np.ndarray, within: np.ndarray | None = None
) -> tuple[float, tuple[int, int]]:
    """Largest angle (deg) between the normals of neighbouring samples that the file has
    (both of them; and both ``within``, a mask like ``h``, when given), and where."""
    worst, where = 0.0, (0, 0)
    use = ~np.isnan(h) if within is None else ~np.isnan(h) & within
    for axis in (0, 1):
        first, second = range(h.shape[axis] - 1), range(1, h.shape[axis])
        a = np.take(normals, first, axis=axis)
        b = np.take(normals, second, axis=axis)
        cos = np.clip(np.sum(a * b, axis=2), -1.0, 1.0)
        ang = np.degrees(np.arccos(cos))
        ang[~np.isfinite(ang)] = 0.0
        ang[~(np.take(use, first, axis=axis) & np.take(use, second, axis=axis))] = 0.0
        k = np.unravel_index(int(np.argmax(ang)), ang.shape)
        if ang[k] > worst:
            worst, where = float(ang[k]), (int(k[0]), int(k[1]))
    return worst, where


def continue_surface(x: np.ndarray, y: np.ndarray, h: np.ndarray) -> np.ndarray:
    """The heights ``h`` (len(x), len(y); mm) with the samples the file does not have
    (NaN: beyond its edge) filled by the tangent plane of the nearest sample that it has
    (the plane fitted to that sample's 5 × 5 neighbours), so the height field runs on
    smoothly for the pictures' band."""
    missing = np.isnan(h)
    if not missing.any():
        return h
    from scipy.spatial import cKDTree

    xx, yy = np.meshgrid(x, y, indexing="ij")
    have = np.argwhere(~missing)
    want = np.argwhere(missing)
    _, near = cKDTree(have).query(want)
    out: np.ndarray = np.array(h, dtype=float)
    for k in np.unique(near):
        i, j = have[k]
        win = (slice(max(i - 2, 0), i + 3), slice(max(j - 2, 0), j + 3))
        ok = ~missing[win]
        a = np.column_stack(
            [np.ones(int(ok.sum())), xx[win][ok] - xx[i, j], yy[win][ok] - yy[i, j]]
        )
        plane = np.linalg.lstsq(a, h[win][ok], rcond=None)[0]
        for p, q in want[near == k]:
            out[p, q] = (
                plane[0] + plane[1] * (xx[p, q] - xx[i, j]) + plane[2] * (yy[p, q] - yy[i, j])
            )
    return out
