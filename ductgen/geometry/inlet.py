"""The whole inlet as pure geometry: planform, floor, lip, transition, offsets, volumes.

:func:`build_geometry` turns a validated :class:`~ductgen.spec.Spec` into an
:class:`InletGeometry` (floats and arrays in mm and degrees, no CAD kernel), checking the
cross-field rules a spec model cannot see on its own. The solids are built from this object
and checked against the volumes it integrates independently.

Stations along x (mm): 0 ramp start → L lip station (nose tip) → L + a nose end (start of
the straight throat and of the transition) → L + a + transition length (outlet face).
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass
from functools import cached_property
from typing import Any

import numpy as np
from scipy.integrate import quad

from ductgen.errors import SpecError
from ductgen.geometry.floor import Floor, ramp_angle_for_length
from ductgen.geometry.lip import Lip
from ductgen.geometry.planform import Planform
from ductgen.geometry.profile import Profile, load_profile
from ductgen.geometry.transition import Transition
from ductgen.spec.model import DEFAULT_RAMP_ANGLE_DEG, NoOutlet, RectOutlet, RoundOutlet, Spec

__all__ = ["InletGeometry", "build_geometry", "fillet_flare_area_mm2"]


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
        fabrication: the insert and plug values
            (:class:`~ductgen.geometry.fabrication.Fabrication`) the solids are built with.
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
    fabrication: Any = None

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
    def _quad(self, fn, a: float, b: float) -> float:  # type: ignore[no-untyped-def]
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


def build_geometry(spec: Spec, profile: Profile | None = None) -> InletGeometry:
    """Pure geometry from a spec; raises :class:`SpecError` on cross-field problems."""
    from ductgen.geometry.fabrication import fabrication_params

    profile = profile or load_profile(spec.planform.profile)
    w, d = spec.throat.width, spec.throat.depth
    lip_t = spec.lip.thickness
    drop = d + lip_t if spec.lip.style == "flush" else d
    r_entry = spec.ramp.entry_radius

    if spec.ramp.length is not None:
        angle = ramp_angle_for_length(spec.ramp.length, drop, r_entry)
    else:
        angle = spec.ramp.angle_deg if spec.ramp.angle_deg is not None else DEFAULT_RAMP_ANGLE_DEG
    floor = Floor(angle_deg=angle, entry_radius_mm=r_entry, drop_mm=drop)
    length = floor.length_mm
    planform = Planform(profile=profile, width_mm=w, length_mm=length)

    if spec.lip.style == "raised":
        fairing = spec.lip.fairing_length if spec.lip.fairing_length is not None else 6.0 * lip_t
    else:
        if spec.lip.fairing_length is not None:
            raise SpecError(
                "lip.fairing_length",
                spec.lip.fairing_length,
                "only with lip.style = 'raised'",
                "a flush lip has no fairing: its top is the skin",
            )
        fairing = 0.0
    lip = Lip(spec.lip.style, lip_t, spec.lip.nose_ratio, length, fairing)
    if lip.semi_major_mm > 0.5 * length:
        raise SpecError(
            "lip.nose_ratio",
            spec.lip.nose_ratio,
            f"<= {length / lip_t:.2f} for this lip",
            "the elliptical nose would be longer than half the ramp",
        )

    r_edge = spec.planform.edge_radius
    if r_edge > 0:
        # flush lip: the nose cut through a round larger than ~0.6 t was measured to fail
        lip_limit = 0.6 * lip_t if spec.lip.style == "flush" else d / 2.0
        limit = min(d / 2.0, planform.apex_width_mm / 2.0, lip_limit)
        if r_edge > limit:
            raise SpecError(
                "planform.edge_radius",
                r_edge,
                f"<= {limit:.2f} mm",
                "the round must fit in half the throat depth, half the apex width "
                "and (flush lip) 0.6 x the lip thickness",
            )

    roof, flo = lip.roof_z_mm, -drop
    transition: Transition | None = None
    spigot = 0.0
    out = spec.outlet
    if isinstance(out, RoundOutlet | RectOutlet):
        # roof-aligned, but low enough that the insert's wall over the duct clears the skin
        top = min(roof, -(spec.skin.thickness + spec.insert.wall))
        if isinstance(out, RoundOutlet):
            ow = oh = out.diameter
        else:
            ow, oh = out.width, out.height
        transition = Transition(
            x_start_mm=lip.nose_end_mm,
            length_mm=out.transition_length,
            width_mm=w,
            roof_z_mm=roof,
            floor_z_mm=flo,
            kind=out.kind,
            outlet_width_mm=ow,
            outlet_height_mm=oh,
            outlet_top_z_mm=top,
        )
        # the insert's wall over a sloping duct is thickened by √(1 + slope²) to stay square
        # to the steepest ruling; lower the outlet until that wall clears the skin too
        for _ in range(2):
            wall = spec.insert.wall * transition.ruling_stretch
            top = min(roof, -(spec.skin.thickness + wall))
            transition = dataclasses.replace(transition, outlet_top_z_mm=top)
        spigot = out.spigot_length
        half = abs(transition.equivalent_cone_half_angle_deg)
        if half > 30.0:
            raise SpecError(
                "outlet.transition_length",
                out.transition_length,
                f">= {_min_transition(transition):.0f} mm for this outlet",
                f"equivalent-cone half-angle {half:.1f}° > 30°: "
                "the duct would be a sudden step, not a transition",
            )
    else:
        assert isinstance(out, NoOutlet)

    return InletGeometry(
        name=spec.name,
        width_mm=w,
        depth_mm=d,
        planform=planform,
        floor=floor,
        lip=lip,
        transition=transition,
        edge_radius_mm=r_edge,
        skin_thickness_mm=spec.skin.thickness,
        spigot_length_mm=spigot,
        overcut_mm=spec.cutter.overcut,
        fabrication=fabrication_params(spec),
    )


def _min_transition(t: Transition) -> float:
    r1 = math.sqrt(t.throat_area_mm2 / math.pi)
    return abs(math.sqrt(t.area_ratio) - 1.0) * r1 / math.tan(math.radians(30.0))
