"""Planform: the divergent wall curve at the user's size.

The wall half-width is y(x) = (W/2)·F(x/L), with F a monotone cubic Hermite interpolant of
the tabulated 2y/W: Fritsch–Carlson (PCHIP) slopes at the stations, except a zero slope at
the lip station so the walls run parallel into the throat. Both slope choices lie inside
the Fritsch–Carlson monotone region, so F passes through every tabulated point, never
decreases and never overshoots the table between stations (no bulge past W/2 near the lip,
where C2 splines waist).
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property

import numpy as np
from scipy.interpolate import CubicHermiteSpline, PchipInterpolator

from ductgen.geometry.profile import Profile

__all__ = ["Planform", "hermite_slopes"]


def hermite_slopes(x: np.ndarray, f: np.ndarray) -> np.ndarray:
    """Node slopes dF/d(x/L) of the wall curve: PCHIP's, with 0 at the lip station."""
    d = PchipInterpolator(x, f).derivative()(x)
    d = np.asarray(d, dtype=float)
    d[-1] = 0.0
    return d


@dataclass(frozen=True)
class Planform:
    """Wall curve of one inlet.

    Attributes:
        profile: the validated table.
        width_mm: throat width W (mm).
        length_mm: ramp length L (mm), ramp start to lip station.
    """

    profile: Profile
    width_mm: float
    length_mm: float

    @cached_property
    def _spline(self) -> CubicHermiteSpline:
        p = self.profile
        return CubicHermiteSpline(p.x, p.f, hermite_slopes(p.x, p.f))

    @property
    def node_x_mm(self) -> np.ndarray:
        """Station positions x (mm), shape (N,)."""
        return self.profile.x * self.length_mm

    @property
    def node_half_width_mm(self) -> np.ndarray:
        """Tabulated half-widths scaled to W (mm), shape (N,)."""
        return 0.5 * self.width_mm * self.profile.f

    @property
    def node_slopes(self) -> np.ndarray:
        """Wall slopes dy/dx at the stations (dimensionless), shape (N,)."""
        p = self.profile
        return hermite_slopes(p.x, p.f) * 0.5 * self.width_mm / self.length_mm

    def half_width(self, x_mm: np.ndarray | float) -> np.ndarray:
        """Half-width y (mm) at x (mm); x beyond L gives W/2, x below 0 the apex half-width."""
        s = np.clip(np.asarray(x_mm, dtype=float) / self.length_mm, 0.0, 1.0)
        return 0.5 * self.width_mm * self._spline(s)

    def slope(self, x_mm: np.ndarray | float) -> np.ndarray:
        """Wall slope dy/dx (dimensionless) at x (mm); 0 beyond L."""
        s = np.asarray(x_mm, dtype=float) / self.length_mm
        inside = (s >= 0) & (s <= 1)
        d = self._spline.derivative()(np.clip(s, 0, 1)) * 0.5 * self.width_mm / self.length_mm
        return np.where(inside, d, 0.0)

    def wall_normal(self, x_mm: np.ndarray | float) -> np.ndarray:
        """Outward unit normal (n_x, n_y) of the y > 0 wall at x (mm), shape (N, 2):
        n = (−y′, 1)/√(1 + y′²). The y < 0 wall's normal is its mirror image."""
        d = np.atleast_1d(self.slope(x_mm))
        s = np.sqrt(1.0 + d * d)
        return np.column_stack([-d / s, 1.0 / s])

    def wall_offset(self, x_mm: np.ndarray | float, d_mm: float) -> np.ndarray:
        """The y > 0 wall moved along its outward normal by ``d_mm`` (mm; negative: toward
        the centreline), parametrised by the base curve's x: P(x) = (x, y(x)) + d·n(x).
        Returns (N, 2) in mm. This is the one normal offset of the wall curve that the
        flange, trim line, template kerf, insert walls and plug draft all use."""
        x = np.atleast_1d(np.asarray(x_mm, dtype=float))
        hw = self.half_width(x)
        if d_mm == 0.0:
            return np.column_stack([x, hw])
        s = np.atleast_1d(self.slope(x))
        den = np.sqrt(1.0 + s * s)
        return np.column_stack([x - d_mm * s / den, hw + d_mm / den])

    @property
    def apex_width_mm(self) -> float:
        """Wall-to-wall width at the ramp start (mm)."""
        return float(self.width_mm * self.profile.f[0])

    @cached_property
    def max_divergence_deg(self) -> float:
        """Largest wall angle to the centreline, atan(dy/dx), over the ramp (deg)."""
        x = np.linspace(0.0, self.length_mm, 4001)
        return float(np.degrees(np.arctan(np.max(self.slope(x)))))

    def outline(self, n: int = 400) -> np.ndarray:
        """Closed planform outline from the ramp start to the lip station, shape (M, 2) in mm.

        Counter-clockwise: right wall (y > 0) downstream, lip line, left wall upstream,
        apex line. Samples include every station; the first point is not repeated.
        """
        x = np.union1d(np.linspace(0.0, self.length_mm, n), self.node_x_mm)
        y = self.half_width(x)
        right = np.column_stack([x, -y])
        left = np.column_stack([x[::-1], y[::-1]])
        return np.vstack([right, left])
