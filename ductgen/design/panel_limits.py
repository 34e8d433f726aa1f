"""Where the parts reach on the user's panel, and the analytic skins' limits the panel is
held to there, from its own curvatures: the wrap angle (the normal's turn along and across
the flow, each side of the datum), the depth inside a convex region, the straight outlet in
a convex run along the flow, and the crease measure's threshold. mm, deg.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from ductgen.errors import SpecError
from ductgen.geometry.panel import PanelSkin
from ductgen.geometry.panel_surface import convex_curvatures

__all__ = [
    "PANEL_MARGIN_MM",
    "PICTURE_BAND_MM",
    "PanelRegion",
    "check_limits",
    "crease_limit",
    "wrap_at_datum",
]

#: Margin (mm) round the parts' footprint where the panel file must have surface: the
#: jig's fit is measured on the skin up to 5 mm beyond its outer edge (``solids/jig.py``).
PANEL_MARGIN_MM = 5.0
#: Band (mm) round the parts that the map is tabulated over for pictures: the preview
#: draws the skin 20 mm round the plug's plate (``sheets/preview.py``). Where the file
#: ends inside it the surface is continued along its own tangent planes, for pictures
#: only: no part lies there.
PICTURE_BAND_MM = 20.0


@dataclass(frozen=True)
class PanelRegion:
    """Where the parts reach in design coordinates (mm), without margins: u from ``u_lo``
    to ``u_hi`` (the duct's straightening end included) and |v| ≤ ``v_max``; ``u_parts``
    the largest u of the parts that lie on the skin (flange, plug plate, cut-out, jig)."""

    u_lo: float
    u_hi: float
    v_max: float
    u_parts: float

    def needed(self) -> tuple[float, float, float, float]:
        """(u_lo, u_hi, −v, v) mm where the panel must have surface: the parts plus
        :data:`PANEL_MARGIN_MM`."""
        m = PANEL_MARGIN_MM
        return (self.u_lo - m, self.u_hi + m, -self.v_max - m, self.v_max + m)

    def table(self) -> tuple[float, float, float]:
        """(u_lo, u_hi, v) mm the map is tabulated over: the needed box, and the pictures'
        band (:data:`PICTURE_BAND_MM`) round the parts on the skin."""
        u_lo, u_hi, _, v = self.needed()
        b = PICTURE_BAND_MM
        return (
            min(u_lo, self.u_lo - b),
            max(u_hi, self.u_parts + b),
            max(v, self.v_max + b),
        )


def wrap_at_datum(
    x: np.ndarray, y: np.ndarray, h: np.ndarray, region: PanelRegion, wrap_deg: float
) -> None:
    """Refuse, by the wrap limit, a panel whose radii at the datum (second differences of
    the samples there) are too small for the parts' reach."""
    i, j = int(np.argmin(np.abs(x))), int(np.argmin(np.abs(y)))
    dx, dy = float(x[1] - x[0]), float(y[1] - y[0])
    for k, reach, along in (
        (
            (h[i + 1, j] - 2 * h[i, j] + h[i - 1, j]) / dx**2,
            max(-region.u_lo, region.u_parts),
            "along",
        ),
        ((h[i, j + 1] - 2 * h[i, j] + h[i, j - 1]) / dy**2, region.v_max, "across"),
    ):
        if not np.isfinite(k) or abs(k) < 1e-9:
            continue
        radius = 1.0 / abs(float(k))
        need = math.ceil(reach / math.radians(wrap_deg))
        if radius < need:
            raise SpecError(
                "skin.at",
                None,
                f"a radius {along} the flow of at least {need} mm",
                f"the panel's smallest radius under the parts is {radius:.0f} mm ({along} the "
                f"flow, at the datum): the parts reach {reach:.0f} mm and would wrap more "
                f"than {wrap_deg:.0f}° of it",
            )


def crease_limit(step: float) -> float:
    """Normal turn (deg) between samples ``step`` mm apart taken as a crease: 4° on a 2 mm
    grid (a 29 mm radius), scaled with the step so the radius stays the same."""
    return 4.0 * step / 2.0


def _turn(ps: PanelSkin, uv_a: np.ndarray, uv_b: np.ndarray) -> np.ndarray:
    """Angles (rad) between the panel normals at paired design points."""
    na, nb = ps.normal(uv_a), ps.normal(uv_b)
    out: np.ndarray = np.arccos(np.clip(np.sum(na * nb, axis=1), -1.0, 1.0))
    return out


def check_limits(
    ps: PanelSkin,
    region: PanelRegion,
    deep: float,
    outlet_need: Any,
    wrap_deg: float,
    depth_fraction: float,
) -> dict[str, Any]:
    """Hold the panel under the parts to the analytic skins' limits; the radii found."""
    us = np.linspace(region.u_lo, region.u_parts, 41)
    vs = np.linspace(-region.v_max, region.v_max, 41)
    radii, here, k = _radii(ps, us, vs)
    _check_wrap(ps, region, us, wrap_deg, here)
    k_max = float(np.max(k))
    if k_max > 0 and deep > depth_fraction / k_max:
        raise SpecError(
            "skin.at",
            None,
            f"a convex radius of at least {math.ceil(deep / depth_fraction)} mm under the parts",
            f"the floor and duct reach {deep:.0f} mm deep and the panel's smallest convex "
            f"radius under them is {1.0 / k_max:.0f} mm: inside a convex skin the walls "
            f"converge toward its centre, and deeper than {depth_fraction:.0%} of the radius "
            "the flat design no longer holds",
        )
    if outlet_need is not None:
        _check_outlet(ps, region, outlet_need)
    return radii


def _radii(ps: PanelSkin, us: np.ndarray, vs: np.ndarray) -> tuple[dict[str, Any], str, np.ndarray]:
    """The panel's smallest radius over the grid ``us`` × ``vs`` (mm) as report entries,
    where it is (a phrase for messages), and the principal curvatures there (1/mm)."""
    uu, vv = np.meshgrid(us, vs, indexing="ij")
    pts, _ = ps.surface_local(np.column_stack([uu.ravel(), vv.ravel()]))
    k = convex_curvatures(ps.surface, pts[:, 0], pts[:, 1])
    worst = int(np.argmax(np.max(np.abs(k), axis=1)))
    k_worst = k[worst][np.argmax(np.abs(k[worst]))]
    smallest = 1.0 / max(abs(float(k_worst)), 1e-12)
    where = ps.frame.to_model(pts[worst : worst + 1])[0]
    radii: dict[str, Any] = {
        "smallest_radius_mm": smallest if smallest < 1e7 else None,
        "smallest_radius_at_mm": [float(c) for c in where],
        "smallest_radius_side": "convex" if k_worst > 0 else "concave",
    }
    here = f"the panel's smallest radius under the parts is {smallest:.0f} mm, at " + (
        f"({where[0]:.1f}, {where[1]:.1f}, {where[2]:.1f}) mm"
    )
    return radii, here, k


def _check_wrap(
    ps: PanelSkin, region: PanelRegion, us: np.ndarray, wrap_deg: float, here: str
) -> None:
    """Refuse a panel that turns more than ``wrap_deg`` under the parts, along the
    centreline or across it."""
    wrap = math.radians(wrap_deg)
    along = max(
        float(_turn(ps, np.array([[0.0, 0.0]]), np.array([[u, 0.0]]))[0])
        for u in (region.u_lo, region.u_parts)
    )
    centre_uv = np.column_stack([us, np.zeros(len(us))])
    across = max(
        float(np.max(_turn(ps, centre_uv, np.column_stack([us, np.full(len(us), sv)]))))
        for sv in (-region.v_max, region.v_max)
    )
    for turn, direction in ((along, "along the flow"), (across, "across the flow")):
        if turn > wrap:
            raise SpecError(
                "skin.at",
                None,
                f"a place where the parts wrap at most {wrap_deg:.0f}° of the panel",
                f"the panel turns {math.degrees(turn):.0f}° {direction} under the parts; {here}",
            )


def _check_outlet(ps: PanelSkin, region: PanelRegion, outlet_need: Any) -> None:
    """Refuse a centreline radius along the flow below what the straight spigot needs."""
    need, why = outlet_need()
    u_line = np.linspace(0.0, region.u_hi, 41)
    _, t, _, n = ps.centre_frame(u_line)
    # the centreline's normal curvature along the flow: dT/du · N (convex positive)
    dt = np.gradient(t, u_line, axis=0)
    k_line = float(np.max(-np.sum(dt * n, axis=1)))
    if k_line > 0 and 1.0 / k_line < need:
        raise SpecError(
            "skin.at",
            None,
            f"a radius along the flow of at least {math.ceil(need)} mm over the duct",
            f"the panel's radius along the centreline falls to {1.0 / k_line:.0f} mm: {why}",
        )
