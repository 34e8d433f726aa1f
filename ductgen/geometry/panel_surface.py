"""The panel's surface in its local frame: the frame at the datum, the height field
z = h(x, y) over the tangent plane, its principal curvatures, and unit-speed geodesics on it
(the construction of :mod:`ductgen.geometry.panel`'s geodesic parallel coordinates). mm.

The geodesic equations of a graph surface r = (x, y, h(x, y)) with unit speed are
x'' = −h_x Q / (1 + |∇h|²), y'' = −h_y Q / (1 + |∇h|²), Q = h_xx x'² + 2 h_xy x'y' + h_yy y'²
(the acceleration is along the normal); they are integrated with classical RK4.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
from numpy.typing import NDArray
from scipy.interpolate import RectBivariateSpline

__all__ = ["HeightField", "PanelFrame", "both_ways", "convex_curvatures", "tangent3"]


@dataclass(frozen=True)
class PanelFrame:
    """The local frame at the datum (model coordinates, mm).

    Attributes:
        origin: the datum on the panel surface, (3,).
        axes: rows x (flow direction in the tangent plane), y (across, = z × x), z (outward
            normal), (3, 3).
    """

    origin: NDArray[np.float64]
    axes: NDArray[np.float64]

    def to_model(self, local: np.ndarray) -> np.ndarray:
        return self.origin + np.asarray(local, dtype=float).reshape(-1, 3) @ self.axes

    def to_local(self, model: np.ndarray) -> np.ndarray:
        d = np.asarray(model, dtype=float).reshape(-1, 3) - self.origin
        local: np.ndarray = d @ self.axes.T
        return local


@dataclass(frozen=True)
class HeightField:
    """The panel's outer surface as z = h(x, y) in the local frame (mm), a bicubic spline
    through (or, with ``smoothing`` > 0, fitted to) the grid ``h`` over ``x`` × ``y``."""

    x: np.ndarray
    y: np.ndarray
    h: np.ndarray
    spline: RectBivariateSpline = field(init=False, repr=False, compare=False)

    def __post_init__(self) -> None:
        object.__setattr__(self, "spline", RectBivariateSpline(self.x, self.y, self.h, s=0))

    def ev(self, x: np.ndarray, y: np.ndarray, dx: int = 0, dy: int = 0) -> np.ndarray:
        return self.spline.ev(x, y, dx=dx, dy=dy)

    def contains(self, x: np.ndarray, y: np.ndarray, tol: float = 1e-6) -> bool:
        return bool(
            np.all(x >= self.x[0] - tol)
            and np.all(x <= self.x[-1] + tol)
            and np.all(y >= self.y[0] - tol)
            and np.all(y <= self.y[-1] + tol)
        )

    def normal(self, x: np.ndarray, y: np.ndarray) -> np.ndarray:
        """Unit outward normals (N, 3) in the local frame."""
        hx, hy = self.ev(x, y, 1, 0), self.ev(x, y, 0, 1)
        n = np.column_stack([-hx, -hy, np.ones_like(hx)])
        unit: np.ndarray = n / np.linalg.norm(n, axis=1)[:, None]
        return unit

    def second_form(self, x: np.ndarray, y: np.ndarray) -> tuple[np.ndarray, ...]:
        """hx, hy, hxx, hxy, hyy at the points."""
        return (
            self.ev(x, y, 1, 0),
            self.ev(x, y, 0, 1),
            self.ev(x, y, 2, 0),
            self.ev(x, y, 1, 1),
            self.ev(x, y, 0, 2),
        )


def convex_curvatures(hf: HeightField, x: np.ndarray, y: np.ndarray) -> np.ndarray:
    """Principal curvatures (N, 2) of the panel at local points, 1/mm, signed as the skins
    are: positive where the surface bulges outward (convex), negative concave."""
    hx, hy, hxx, hxy, hyy = hf.second_form(np.asarray(x), np.asarray(y))
    w = np.sqrt(1.0 + hx * hx + hy * hy)
    e, f, g = 1.0 + hx * hx, hx * hy, 1.0 + hy * hy
    big_l, big_m, big_n = -hxx / w, -hxy / w, -hyy / w  # sign: convex positive
    det1 = e * g - f * f
    mean = (e * big_n - 2.0 * f * big_m + g * big_l) / (2.0 * det1)
    gauss = (big_l * big_n - big_m * big_m) / det1
    root = np.sqrt(np.maximum(mean * mean - gauss, 0.0))
    return np.column_stack([mean + root, mean - root])


def _rhs(hf: HeightField, s: np.ndarray) -> np.ndarray:
    x, y, p, q = s.T
    hx, hy, hxx, hxy, hyy = hf.second_form(x, y)
    acc = (hxx * p * p + 2.0 * hxy * p * q + hyy * q * q) / (1.0 + hx * hx + hy * hy)
    return np.column_stack([p, q, -hx * acc, -hy * acc])


def _geodesics(hf: HeightField, start: np.ndarray, length: float, step: float) -> np.ndarray:
    """States (n + 1, M, 4) = (x, y, x', y') along M unit-speed geodesics from ``start``
    (M, 4), arc-length samples 0, step, …, n·step ≥ length."""
    n = max(1, int(np.ceil(length / step - 1e-9)))
    out = np.empty((n + 1, *start.shape))
    s = start.astype(float).copy()
    out[0] = s
    for i in range(n):
        k1 = _rhs(hf, s)
        k2 = _rhs(hf, s + 0.5 * step * k1)
        k3 = _rhs(hf, s + 0.5 * step * k2)
        k4 = _rhs(hf, s + step * k3)
        s = s + step / 6.0 * (k1 + 2.0 * k2 + 2.0 * k3 + k4)
        out[i + 1] = s
    return out


def tangent3(hf: HeightField, st: np.ndarray) -> np.ndarray:
    """Unit 3-D tangents (N, 3), local frame, of geodesic states ``st`` (N, 4) =
    (x, y, x', y')."""
    hx, hy = hf.ev(st[:, 0], st[:, 1], 1, 0), hf.ev(st[:, 0], st[:, 1], 0, 1)
    t = np.column_stack([st[:, 2], st[:, 3], hx * st[:, 2] + hy * st[:, 3]])
    unit: np.ndarray = t / np.linalg.norm(t, axis=1)[:, None]
    return unit


def both_ways(
    hf: HeightField, start: np.ndarray, lo: float, hi: float, step: float
) -> tuple[np.ndarray, np.ndarray]:
    """Geodesics from ``start`` (M, 4) sampled at arc lengths lo…hi (lo ≤ 0 ≤ hi): the
    parameters (K,) and states (K, M, 4), with velocities pointing toward increasing
    parameter."""
    fwd = _geodesics(hf, start, hi, step)
    back_start = start.copy()
    back_start[:, 2:] *= -1.0
    back = _geodesics(hf, back_start, -lo, step)[1:][::-1]
    back[..., 2:] *= -1.0
    states = np.concatenate([back, fwd], axis=0)
    params = step * (np.arange(len(states)) - len(back))
    return params, states
