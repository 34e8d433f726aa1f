"""Ramp floor in the centreline section: a convex tangent entry arc and a straight ramp.

Depth is measured downward from the skin (mm, positive below the outer surface). The floor
leaves the skin at x = 0 tangentially along an arc of radius R, turns to the ramp angle θ
at x_a = R·sin θ and runs straight to the floor drop H at the lip station x = L:

    L = R·sin θ + (H − R(1 − cos θ)) / tan θ

(tangent-arc geometry; R = 0 gives L = H / tan θ, 8.144·H at 7°).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy.optimize import brentq

from ductgen.errors import SpecError

__all__ = ["Floor", "ramp_angle_for_length", "ramp_length"]


def ramp_length(drop_mm: float, angle_deg: float, entry_radius_mm: float = 0.0) -> float:
    """Ramp length L (mm) for floor drop H (mm), angle θ (deg) and entry radius R (mm)."""
    t = math.radians(angle_deg)
    r = entry_radius_mm
    return r * math.sin(t) + (drop_mm - r * (1.0 - math.cos(t))) / math.tan(t)


def max_entry_radius(drop_mm: float, angle_deg: float) -> float:
    """Largest entry radius (mm) whose arc fits in the drop H at angle θ: H / (1 − cos θ)."""
    return drop_mm / (1.0 - math.cos(math.radians(angle_deg)))


def ramp_angle_for_length(length_mm: float, drop_mm: float, entry_radius_mm: float = 0.0) -> float:
    """Ramp angle θ (deg) giving ramp length L for drop H and entry radius R.

    L(θ) falls monotonically with θ, so the root is unique where it exists.

    Raises:
        SpecError: on ``ramp.length`` when no angle in (0.5°, 30°) fits.
    """
    lo, hi = 0.5, 29.999
    if entry_radius_mm > 0:
        hi = min(hi, math.degrees(math.acos(max(-1.0, 1.0 - drop_mm / entry_radius_mm))) - 1e-9)

    def g(a: float) -> float:
        return ramp_length(drop_mm, a, entry_radius_mm) - length_mm

    l_short, l_long = (
        ramp_length(drop_mm, hi, entry_radius_mm),
        ramp_length(drop_mm, lo, entry_radius_mm),
    )
    if not (l_short <= length_mm <= l_long):
        raise SpecError(
            "ramp.length",
            length_mm,
            f"{l_short:.1f} to {l_long:.1f} mm for this depth and entry radius",
            "the ramp angle that follows must lie between 0.5° and 30° "
            "with the entry arc inside the drop",
        )
    return float(brentq(g, lo, hi, xtol=1e-12, rtol=1e-14))


@dataclass(frozen=True)
class Floor:
    """Centreline floor profile.

    Attributes:
        angle_deg: ramp angle θ of the straight section (deg).
        entry_radius_mm: radius R of the tangent entry arc (mm), 0 = sharp.
        drop_mm: floor depth H below the skin at the lip station (mm).
    """

    angle_deg: float
    entry_radius_mm: float
    drop_mm: float

    def __post_init__(self) -> None:
        if self.entry_radius_mm > max_entry_radius(self.drop_mm, self.angle_deg) * (1 + 1e-12):
            raise SpecError(
                "ramp.entry_radius",
                self.entry_radius_mm,
                f"<= {max_entry_radius(self.drop_mm, self.angle_deg):.1f} mm (H / (1 - cos θ))",
                f"the entry arc would drop more than the floor drop H = {self.drop_mm:.2f} mm "
                "before reaching the ramp angle",
            )

    @property
    def length_mm(self) -> float:
        """Ramp length L (mm)."""
        return ramp_length(self.drop_mm, self.angle_deg, self.entry_radius_mm)

    @property
    def arc_end_mm(self) -> tuple[float, float]:
        """(x, depth) where the entry arc meets the straight ramp (mm)."""
        t = math.radians(self.angle_deg)
        r = self.entry_radius_mm
        return r * math.sin(t), r * (1.0 - math.cos(t))

    def depth(self, x_mm: np.ndarray | float) -> np.ndarray:
        """Floor depth below the skin (mm, ≥ 0) at x (mm); H beyond L, 0 before the ramp."""
        x = np.asarray(x_mm, dtype=float)
        t = math.radians(self.angle_deg)
        r = self.entry_radius_mm
        xa, za = self.arc_end_mm
        xc = np.clip(x, 0.0, None)
        arc = (
            r - np.sqrt(np.clip(r * r - np.minimum(xc, xa) ** 2, 0.0, None)) if r > 0 else 0.0 * xc
        )
        line = za + (xc - xa) * math.tan(t)
        d = np.where(xc <= xa, arc, line)
        return np.clip(d, 0.0, self.drop_mm) * (x >= 0)
