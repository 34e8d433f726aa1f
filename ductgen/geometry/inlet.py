"""The whole inlet as pure geometry: planform, floor, lip, transition, offsets, volumes.

:class:`InletGeometry` holds floats and arrays in mm and degrees (no CAD kernel, no spec):
:func:`ductgen.design.build_design` makes it from a validated spec, checking the cross-field
rules. The solids are built from it and checked against the volumes it integrates
independently.

Stations along x (mm): 0 ramp start → L lip station (nose tip) → L + a nose end (start of
the straight throat and of the transition) → L + a + transition length (outlet face).
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass
from functools import cached_property

import numpy as np
from scipy.integrate import quad

from ductgen.geometry.floor import Floor
from ductgen.geometry.lip import Lip
from ductgen.geometry.planform import Planform
from ductgen.geometry.transition import Transition

__all__ = ["InletGeometry", "fillet_flare_area_mm2", "min_transition_length_mm"]


def fillet_flare_area_mm2(radius_mm: float, z_lo: float, z_hi: float) -> float:
    """Area (mm²) of a concave edge round's flare between heights z_lo ≤ z ≤ z_hi (mm,
    skin at z = 0), in the plane normal to the wall. The flare's width at height z is
    r − √(r² − (z + r)²) for −r ≤ z ≤ 0; the full flare is r²(1 − π/4)."""
    r = radius_mm
    lo, hi = max(z_lo, -r), min(z_hi, 0.0)
    if r <= 0 or hi <= lo:
        return 0.0

    def prim(z: float) -> float:  # antiderivative of r - sqrt(r^2 - (z + r)^2)
        u = z + r
        u = min(max(u, -r), r)
        return r * z - 0.5 * (u * math.sqrt(max(r * r - u * u, 0.0)) + r * r * math.asin(u / r))

    return prim(hi) - prim(lo)


@dataclass(frozen=True)
class InletGeometry:
    """Pure geometry of one inlet (mm, deg).

    Attributes:
        name: spec name (file prefix).
        width_mm, depth_mm: throat W and D.
        planform, floor, lip: the parts; ``transition`` is None for ``outlet.kind = "none"``.
        edge_radius_mm: round where the walls meet the skin (0 = sharp).
        skin_thickness_mm: panel thickness.
        spigot_length_mm: outlet spigot/collar length (0 without outlet).
        overcut_mm: how far the cutter rises above the outer skin over the opening, so
            the subtraction never meets coplanar faces and the tangent ramp entry is not a
            zero-angle edge.
    """

    name: str
    width_mm: float
    depth_mm: float
    planform: Planform
    floor: Floor
    lip: Lip
    transition: Transition | None
    edge_radius_mm: float
    skin_thickness_mm: float
    spigot_length_mm: float = 0.0
    overcut_mm: float = 1.0

    # --- stations ---------------------------------------------------------------------
    @property
    def length_mm(self) -> float:
        """Ramp length L (mm)."""
        return self.planform.length_mm

    @property
    def drop_mm(self) -> float:
        """Floor drop H at the lip station (mm)."""
        return self.floor.drop_mm

    @property
    def throat_end_mm(self) -> float:
        """x where the straight throat ends and the transition starts (mm)."""
        return self.lip.nose_end_mm

    @property
    def outlet_x_mm(self) -> float:
        """x of the outlet face (mm); the throat end without an outlet."""
        return self.transition.x_end_mm if self.transition else self.throat_end_mm

    @property
    def throat_area_mm2(self) -> float:
        return self.width_mm * self.depth_mm

    # --- volumes, integrated without the CAD kernel -----------------------------------
    def _quad(self, fn: Callable[[float], float], a: float, b: float) -> float:
        pts = [p for p in self.planform.node_x_mm if a < p < b]
        pts.append(min(max(self.floor.arc_end_mm[0], a), b))
        val, _ = quad(fn, a, b, points=sorted(set(pts)), limit=400, epsabs=1e-9, epsrel=1e-12)
        return float(val)

    @cached_property
    def ramp_cavity_volume_mm3(self) -> float:
        """Volume between the skin plane and the floor inside the walls, 0 ≤ x ≤ L (mm³)."""
        pf, fl = self.planform, self.floor
        return self._quad(
            lambda x: 2.0 * float(pf.half_width(x)) * float(fl.depth(x)), 0.0, self.length_mm
        )

    def _air_band(self, x: float) -> list[tuple[float, float]]:
        """Air intervals (z_lo, z_hi) of the cutter at station x inside the walls (mm, z
        up): from the floor to the overcut top, less the lip nose where it stands."""
        bands = [(-float(self.floor.depth(x)), self.overcut_mm)]
        lip = self.lip
        if x > lip.station_mm:
            u = min((x - lip.nose_end_mm) / lip.semi_major_mm, 0.0)
            s = lip.semi_minor_mm * math.sqrt(max(1.0 - u * u, 0.0))
            lo_n, hi_n = lip.centre_z_mm - s, lip.centre_z_mm + s
            out = []
            for lo, hi in bands:
                if lo < lo_n:
                    out.append((lo, min(hi, lo_n)))
                if hi > hi_n:
                    out.append((max(lo, hi_n), hi))
            bands = [(lo, hi) for lo, hi in out if hi > lo]
        return bands

    @cached_property
    def throat_block_volume_mm3(self) -> float:
        """Cutter volume between the lip station and the nose end, L ≤ x ≤ L + a (mm³)."""
        return self._quad(
            lambda x: self.width_mm * sum(hi - lo for lo, hi in self._air_band(x)),
            self.length_mm,
            self.throat_end_mm,
        )

    @cached_property
    def overcut_volume_mm3(self) -> float:
        """Cutter volume above the skin plane over the ramp, 0 ≤ x ≤ L (mm³)."""
        pf = self.planform
        return self.overcut_mm * self._quad(
            lambda x: 2.0 * float(pf.half_width(x)), 0.0, self.length_mm
        )

    @cached_property
    def edge_round_volume_mm3(self) -> float:
        """Extra volume of the two wall edge rounds (mm³), integrated along the wall: the
        flare below the skin plus the band of width r it adds to the overcut above it."""
        r = self.edge_radius_mm
        if r <= 0:
            return 0.0
        pf = self.planform
        h = self.overcut_mm

        def per_x(x: float) -> float:
            area = 0.0
            for lo, hi in self._air_band(x):
                area += fillet_flare_area_mm2(r, lo, min(hi, 0.0))
                area += r * max(0.0, min(hi, h) - max(lo, 0.0))
            return 2.0 * area * math.sqrt(1.0 + float(pf.slope(x)) ** 2)

        return self._quad(per_x, 0.0, self.throat_end_mm)

    @cached_property
    def cutter_volume_mm3(self) -> float:
        """Expected cutter volume: cavity + overcut + throat + edge rounds + duct (mm³)."""
        duct = self.transition.volume_mm3() if self.transition else 0.0
        return (
            self.overcut_volume_mm3
            + self.ramp_cavity_volume_mm3
            + self.throat_block_volume_mm3
            + self.edge_round_volume_mm3
            + duct
        )

    # --- tables -----------------------------------------------------------------------
    def offsets(self, stations: np.ndarray | None = None) -> list[dict[str, float]]:
        """Table of offsets: x, half-width and floor depth (mm) at the profile's stations
        (or at the given x/L fractions)."""
        s = self.planform.profile.x if stations is None else np.asarray(stations, dtype=float)
        x = s * self.length_mm
        hw = self.planform.half_width(x)
        d = self.floor.depth(x)
        return [
            {"x_mm": float(a), "half_width_mm": float(b), "floor_depth_mm": float(c)}
            for a, b, c in zip(x, hw, d, strict=True)
        ]


def min_transition_length_mm(t: Transition) -> float:
    """Shortest transition (mm) whose equivalent-cone half-angle stays within 30°."""
    r1 = math.sqrt(t.throat_area_mm2 / math.pi)
    return abs(math.sqrt(t.area_ratio) - 1.0) * r1 / math.tan(math.radians(30.0))
