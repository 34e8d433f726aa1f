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

__all__ = [
    "MIN_ARC_MM",
    "Floor",
    "FloorSection",
    "floor_section",
    "ramp_angle_for_length",
    "ramp_length",
    "x_at_depth",
]


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
        depth: np.ndarray = np.clip(d, 0.0, self.drop_mm) * (x >= 0)
        return depth


#: An entry arc shorter than this along x (mm) is drawn sharp: its largest departure from the
#: arc is below 1e-9 mm, and the CAD kernel cannot make a circle that short.
MIN_ARC_MM = 1e-3


@dataclass(frozen=True)
class FloorSection:
    """Centreline section of the floor moved down by ``offset_mm`` along its normal (mm;
    x downstream, z up, skin at z = 0). The one description of the floor that the cutter,
    the insert's outer floor and the plug are all built from.

    The section runs: ``entry`` (where the offset floor starts, below the ramp start) →
    the entry arc through ``arc_mid`` to ``ramp_start`` (when ``arc_mid`` is not None) →
    the straight ramp to ``ramp_end`` → flat at ``ramp_end[1]`` downstream.

    Attributes:
        offset_mm: normal offset w (0 = the cavity floor itself).
        entry: (x, z) start of the offset floor; (0, −w) with an arc, else the corner of
            the offset tangent lines.
        arc_mid: (x, z) a point on the offset entry arc, or None for a sharp start.
        ramp_start: (x, z) start of the straight ramp (the arc's end, or ``entry``).
        ramp_end: (x, z) where the straight ramp meets the flat floor at z = −(H + w).
    """

    offset_mm: float
    entry: tuple[float, float]
    arc_mid: tuple[float, float] | None
    ramp_start: tuple[float, float]
    ramp_end: tuple[float, float]


def floor_section(floor: Floor, offset_mm: float = 0.0) -> FloorSection:
    """The floor's centreline section offset by ``offset_mm`` ≥ 0 (mm) along its normal.

    With an entry arc of radius R > w the offset arc has radius R − w about the same centre
    (0, −R). A sharp start, or an arc smaller than the wall, is offset as two tangent lines
    moved by w plus the arc's sag below their corner, R·(1/cos(θ/2) − 1) (conservative).
    """
    th = math.radians(floor.angle_deg)
    r, h = floor.entry_radius_mm, floor.drop_mm
    xa, za = floor.arc_end_mm
    w = float(offset_mm)
    arc_ok = r > w and (w > 0 or xa >= MIN_ARC_MM)
    if arc_ok:
        ri = r - w
        entry = (0.0, -w)
        if w == 0.0:  # written as the arc's own end point, bit for bit
            mid = (r * math.sin(th / 2.0), -r * (1.0 - math.cos(th / 2.0)))
            p0 = (xa, -za)
        else:
            mid = (ri * math.sin(th / 2.0), -r + ri * math.cos(th / 2.0))
            p0 = (ri * math.sin(th), -r + ri * math.cos(th))
        arc_mid: tuple[float, float] | None = mid
    else:
        ww = w + (r * (1.0 / math.cos(th / 2.0) - 1.0) if (r > 0 and w > 0) else 0.0)
        if ww > 0:
            px, pz = xa - ww * math.sin(th), -za - ww * math.cos(th)
            p0 = (px + (pz + ww) / math.tan(th), -ww)
        else:
            p0 = (0.0, 0.0)
        entry, arc_mid = p0, None
    if w == 0.0:  # the cavity floor: the ramp ends at the lip station by definition
        return FloorSection(w, entry, arc_mid, p0, (floor.length_mm, -h))
    xc = p0[0] + (p0[1] + h + w) / math.tan(th)
    return FloorSection(w, entry, arc_mid, p0, (xc, -h - w))


def x_at_depth(floor: Floor, depth_mm: float) -> float:
    """x (mm) where the floor's depth below the skin reaches ``depth_mm`` (the inverse of
    :meth:`Floor.depth` on 0 ≤ depth ≤ H)."""
    if depth_mm <= 0:
        return 0.0
    th = math.radians(floor.angle_deg)
    xa, za = floor.arc_end_mm
    r = floor.entry_radius_mm
    if depth_mm <= za and r > 0:
        return math.sqrt(max(r * r - (r - depth_mm) ** 2, 0.0))
    return xa + (depth_mm - za) / math.tan(th)
