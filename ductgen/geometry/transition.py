"""Internal transition from the throat rectangle to the outlet face.

The transition is a ruled duct between two sections of four edges each: the throat
rectangle W × D and the outlet (a circle split into four quarter arcs centred on the
rectangle's corner directions, or a smaller/larger rectangle). Corresponding edges are
joined by straight rulings with the same parameter fraction on both, which is also how
the CAD kernel builds a ruled loft, so the volume integrated here is the solid's volume.

The outlet is placed roof-aligned: its top is level with the throat roof (or the skin's
inner surface, whichever is lower), so the duct deepens downward and never breaks through
the skin; it is centred on y = 0. Coordinates: x downstream, y spanwise, z up (mm).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

__all__ = ["SteepestWall", "Transition"]


@dataclass(frozen=True)
class SteepestWall:
    """The steepest diverging point of the transition's wall (deg, mm).

    Attributes:
        angle_deg: local wall angle to the duct axis, asin(−n_x) of the outward unit normal
            (positive: the wall moves away from the axis downstream).
        opposite_deg: the same angle on the facing wall (the ruling half-way round the
            section: floor ↔ roof, side ↔ side).
        included_deg: ``angle_deg`` + max(0, ``opposite_deg``): the divergence between the
            two walls in that plane, the 2θ of a two-dimensional diffuser.
        across_mm: distance between the two walls at the throat, across that plane (the
            W1 of a two-dimensional diffuser).
        s: fraction of the transition length where it is steepest (0 throat, 1 outlet).
        wall: ``"floor"``, ``"roof"`` or ``"side"`` (which throat edge the point comes from).
    """

    angle_deg: float
    opposite_deg: float
    included_deg: float
    across_mm: float
    s: float
    wall: str


@dataclass(frozen=True)
class Transition:
    """Throat-to-outlet duct (mm).

    Attributes:
        x_start_mm: x of the throat end of the transition.
        length_mm: transition length along x.
        width_mm, roof_z_mm, floor_z_mm: the throat rectangle.
        kind: ``"round"`` or ``"rect"``.
        outlet_width_mm, outlet_height_mm: outlet size (both = diameter for round).
        outlet_top_z_mm: z of the outlet's highest point.
    """

    x_start_mm: float
    length_mm: float
    width_mm: float
    roof_z_mm: float
    floor_z_mm: float
    kind: str
    outlet_width_mm: float
    outlet_height_mm: float
    outlet_top_z_mm: float

    @property
    def x_end_mm(self) -> float:
        return self.x_start_mm + self.length_mm

    @property
    def outlet_centre_z_mm(self) -> float:
        return self.outlet_top_z_mm - self.outlet_height_mm / 2.0

    @property
    def throat_area_mm2(self) -> float:
        return self.width_mm * (self.roof_z_mm - self.floor_z_mm)

    @property
    def outlet_area_mm2(self) -> float:
        if self.kind == "round":
            return math.pi * self.outlet_width_mm**2 / 4.0
        return self.outlet_width_mm * self.outlet_height_mm

    @property
    def area_ratio(self) -> float:
        """Outlet area over throat area (dimensionless)."""
        return self.outlet_area_mm2 / self.throat_area_mm2

    @property
    def equivalent_cone_half_angle_deg(self) -> float:
        """Half-angle θ of the conical diffuser with the same length and area ratio:
        tan θ = (√AR − 1)/(L/R1), R1 the radius of a circle of the throat area (Dixon,
        Sovran & Klomp); negative for a contraction (deg)."""
        r1 = math.sqrt(self.throat_area_mm2 / math.pi)
        return math.degrees(math.atan((math.sqrt(self.area_ratio) - 1.0) * r1 / self.length_mm))

    def throat_corners(self) -> np.ndarray:
        """Throat rectangle corners (y, z), shape (4, 2), in edge order TR, TL, BL, BR."""
        h = self.width_mm / 2.0
        return np.array(
            [[h, self.roof_z_mm], [-h, self.roof_z_mm], [-h, self.floor_z_mm], [h, self.floor_z_mm]]
        )

    def outlet_points(self) -> np.ndarray:
        """Outlet vertices (y, z) matching :meth:`throat_corners`, shape (4, 2)."""
        if self.kind == "round":
            r = self.outlet_width_mm / 2.0
            ang = np.radians([45.0, 135.0, 225.0, 315.0])
            return np.column_stack([r * np.cos(ang), self.outlet_centre_z_mm + r * np.sin(ang)])
        h, top = self.outlet_width_mm / 2.0, self.outlet_top_z_mm
        bot = top - self.outlet_height_mm
        return np.array([[h, top], [-h, top], [-h, bot], [h, bot]])

    def _edge_points(self, u: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Matched points on the throat and outlet boundaries at parameter u ∈ [0, 4)."""
        rc = self.throat_corners()
        k = np.floor(u).astype(int) % 4
        s = (u - np.floor(u))[:, None]
        throat = rc[k] * (1 - s) + rc[(k + 1) % 4] * s
        if self.kind == "round":
            r = self.outlet_width_mm / 2.0
            ang = np.radians(45.0 + 90.0 * u)
            outlet = np.column_stack([r * np.cos(ang), self.outlet_centre_z_mm + r * np.sin(ang)])
        else:
            oc = self.outlet_points()
            outlet = oc[k] * (1 - s) + oc[(k + 1) % 4] * s
        return throat, outlet

    @property
    def ruling_stretch(self) -> float:
        """√(1 + (longest ruling's run / length)²): how much a wall of thickness w measured
        along a section must grow to be w square to the steepest ruling (dimensionless)."""
        u = np.linspace(0.0, 4.0, 400, endpoint=False)
        a, b = self._edge_points(u)
        run = float(np.max(np.linalg.norm(b - a, axis=1)))
        return math.sqrt(1.0 + (run / self.length_mm) ** 2)

    def section_area_mm2(self, s: float, n: int = 2000) -> float:
        """Cross-section area (mm²) at fraction s ∈ [0, 1] of the transition length."""
        u = np.linspace(0.0, 4.0, 4 * n, endpoint=False)
        a, b = self._edge_points(u)
        p = (1 - s) * a + s * b
        y, z = p[:, 0], p[:, 1]
        return float(0.5 * abs(np.dot(y, np.roll(z, -1)) - np.dot(z, np.roll(y, -1))))

    def volume_mm3(self, n: int = 64) -> float:
        """Volume of the ruled duct (mm³), Simpson's rule over n (even) intervals."""
        s = np.linspace(0.0, 1.0, n + 1)
        a = np.array([self.section_area_mm2(v) for v in s])
        w = np.ones(n + 1)
        w[1:-1:2], w[2:-1:2] = 4.0, 2.0
        return float(self.length_mm * np.dot(w, a) / (3 * n))

    def _wall_angles(self, u: np.ndarray, s: np.ndarray) -> np.ndarray:
        """Local wall angle to the axis (deg) at edge parameters u (shape (n,)) and length
        fractions s (shape (m,)), shape (m, n). The ruled surface is
        P(u, s) = (x0 + sL, (1 − s)·a(u) + s·b(u)); its normal P_u × P_s points outward for
        the counter-clockwise edge order of :meth:`throat_corners`."""
        h = 1e-6
        a0, b0 = self._edge_points(u - h)
        a1, b1 = self._edge_points(u + h)
        a, b = self._edge_points(u)
        da, db = (a1 - a0) / (2 * h), (b1 - b0) / (2 * h)
        out = np.empty((s.size, u.size))
        for i, sv in enumerate(s):
            t = (1 - sv) * da + sv * db  # P_u (y, z); its x part is 0
            d = b - a  # P_s (y, z); its x part is L
            nx = t[:, 0] * d[:, 1] - t[:, 1] * d[:, 0]
            ny, nz = t[:, 1] * self.length_mm, -t[:, 0] * self.length_mm
            norm = np.sqrt(nx * nx + ny * ny + nz * nz)
            out[i] = np.degrees(np.arcsin(np.clip(-nx / norm, -1.0, 1.0)))
        return out

    def steepest_wall(self, n: int = 201, m: int = 21) -> SteepestWall:
        """The steepest diverging point of the wall and the facing wall's angle there.

        Sampled on ``n`` points per edge (corners excluded, where the throat's tangent jumps;
        an odd ``n`` includes each edge's middle, the floor's centre ruling) at ``m``
        stations along the length; the ruled surface's angle varies smoothly along an edge,
        so the sampled maximum is within ~(1/n)² of the true one.
        """
        frac = (np.arange(n) + 1.0) / (n + 1.0)
        u = np.concatenate([k + frac for k in range(4)])
        s = np.linspace(0.0, 1.0, m)
        ang = self._wall_angles(u, s)
        i, j = np.unravel_index(int(np.argmax(ang)), ang.shape)
        u_opp = np.array([(u[j] + 2.0) % 4.0])
        opp = float(self._wall_angles(u_opp, s[i : i + 1])[0, 0])
        a, _ = self._edge_points(np.array([u[j], u_opp[0]]))
        k = int(np.floor(u[j])) % 4
        # across the plane of the wall: the throat dimension normal to that edge
        across = abs(a[0, 1] - a[1, 1]) if k in (0, 2) else abs(a[0, 0] - a[1, 0])
        top = float(ang[i, j])
        return SteepestWall(
            angle_deg=top,
            opposite_deg=opp,
            included_deg=top + max(0.0, opp),
            across_mm=float(across),
            s=float(s[i]),
            wall={0: "roof", 2: "floor"}.get(k, "side"),
        )
