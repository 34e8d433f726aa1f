"""The conformal marking jig's numbers (pure numpy, mm, design coordinates).

On a curved skin a flat paper template distorts (exactly developable only on a cylinder,
and even there it must be bent round a compound part of the panel by hand). The jig is a
printable frame that sits on the skin: its underside is the skin surface moved out along the
normal by a stated clearance, its inner edge is the opening's cut line (the template's kerf
rule: the opening is a hole, so the cut line moves inward by kerf/2, the apex and lip lines
too), and a V-notch on its outer edge marks the centreline upstream of the ramp start and
downstream of the lip. A fabricator holds it on the panel and marks or routs along the inner
edge.

Everything here is in design coordinates (u along the flow from the ramp start, v across,
w along the outward normal); :mod:`ductgen.solids.jig` builds the frame flat and carries it
through the skin map like every other solid.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.optimize import brentq

from ductgen.geometry.outline import footprint_pieces, offset_outline
from ductgen.geometry.planform import Planform

__all__ = [
    "JIG_CLEARANCE_MM",
    "JIG_THICKNESS_MM",
    "JIG_WIDTH_MM",
    "NOTCH_DEPTH_MM",
    "JigLayout",
    "jig_layout",
    "jig_stations",
]

#: Frame width beyond the cut line (mm): room for tape or clamps and a router bearing
#: (15-25 mm; common practice, no source).
JIG_WIDTH_MM = 20.0
#: Gap between the jig's underside and the outer skin surface (mm): paint or film and the
#: printer's tolerance (common practice, no source).
JIG_CLEARANCE_MM = 0.2
#: Frame thickness along the normal (mm): stiff enough in PLA/PETG to hold the curve
#: (common practice, no source).
JIG_THICKNESS_MM = 4.0
#: Depth and half-width of the centreline V-notches in the outer edge (mm).
NOTCH_DEPTH_MM = 4.0
NOTCH_HALF_WIDTH_MM = 3.0


@dataclass(frozen=True)
class JigLayout:
    """The jig in plan (design coordinates u, v; mm).

    Attributes:
        inset_mm: the cut line's inward offset from the opening (kerf/2).
        wall_x_mm, wall_y_mm: the y > 0 side of the cut line (the wall offset inward by
            ``inset_mm``), downstream, from the apex corner to the lip corner; the y < 0 side is
            its mirror image. The apex line is u = inset, the lip line u = L − inset.
        outer_xy: the frame's outer edge, (N, 2) CCW, first point not repeated: the opening
            offset outward by ``width_mm`` (round corners).
        width_mm: frame width from the opening to the outer edge.
        clearance_mm, thickness_mm: the underside's height above the skin and the frame's
            thickness, both along the normal.
        notches_u_mm: u of the centreline notches in the outer edge (upstream, downstream).
        lip_mm: L, the lip station.
    """

    inset_mm: float
    wall_x_mm: np.ndarray
    wall_y_mm: np.ndarray
    outer_xy: np.ndarray
    width_mm: float
    clearance_mm: float
    thickness_mm: float
    notches_u_mm: tuple[float, float]
    lip_mm: float

    @property
    def inner_xy(self) -> np.ndarray:
        """The cut line as a closed CCW polygon (N, 2), first point not repeated."""
        low = np.column_stack([self.wall_x_mm, -self.wall_y_mm])
        up = np.column_stack([self.wall_x_mm, self.wall_y_mm])[::-1]
        return np.vstack([low, up])

    def inner_half_width(self, u: np.ndarray | float) -> np.ndarray:
        """Half-width of the cut line at u (mm)."""
        return np.asarray(np.interp(u, self.wall_x_mm, self.wall_y_mm), dtype=float)

    def outer_half_width(self, u: np.ndarray | float) -> np.ndarray:
        """Half-width of the outer edge at u (mm; its y > 0 side)."""
        top = self.outer_xy[self.outer_xy[:, 1] > 0.0]
        order = np.argsort(top[:, 0])
        return np.asarray(np.interp(u, top[order, 0], top[order, 1]), dtype=float)


def jig_layout(
    pf: Planform,
    kerf_mm: float = 0.0,
    width_mm: float = JIG_WIDTH_MM,
    clearance_mm: float = JIG_CLEARANCE_MM,
    thickness_mm: float = JIG_THICKNESS_MM,
    n: int = 200,
) -> JigLayout:
    """The jig of planform ``pf`` for a cutter kerf ``kerf_mm`` (mm).

    The cut line is the template's: the walls offset inward by k = kerf/2 along their normal
    (:meth:`~ductgen.geometry.planform.Planform.wall_offset`), trimmed by the apex line
    u = k and the lip line u = L − k (both corners are convex, so the lines meet).
    """
    k = 0.5 * float(kerf_mm)
    length = pf.length_mm
    if k >= 0.25 * min(pf.apex_width_mm, length):
        raise ValueError("kerf/2 must stay well inside the opening's narrowest part")

    def ox(x: float) -> float:
        return float(pf.wall_offset(np.array([x]), -k)[0, 0])

    x0, x1 = 0.0, length
    if k > 0:  # the base-curve x where the offset wall meets the apex and lip lines
        x0 = brentq(lambda x: ox(x) - k, 0.0, k, xtol=1e-13)
        x1 = brentq(lambda x: ox(x) - (length - k), length - 2 * k, length - k, xtol=1e-13)
    xs = np.union1d(np.linspace(x0, x1, n), pf.node_x_mm[(pf.node_x_mm > x0) & (pf.node_x_mm < x1)])
    wall = pf.wall_offset(xs, -k)
    wall[0, 0], wall[-1, 0] = k, length - k
    outer = offset_outline(footprint_pieces(pf, length, n), width_mm)
    return JigLayout(
        inset_mm=k,
        wall_x_mm=wall[:, 0],
        wall_y_mm=wall[:, 1],
        outer_xy=outer,
        width_mm=width_mm,
        clearance_mm=clearance_mm,
        thickness_mm=thickness_mm,
        notches_u_mm=(-width_mm, length + width_mm),
        lip_mm=length,
    )


def jig_stations(jig: JigLayout, pieces: int) -> list[float]:
    """u of the ``pieces − 1`` joints (mm) splitting the frame across the flow into pieces
    of equal length, kept inside the opening's u range so each joint cuts both side bars."""
    lo, hi = -jig.width_mm, jig.lip_mm + jig.width_mm
    xs = [lo + (hi - lo) * i / pieces for i in range(1, pieces)]
    a, b = jig.inset_mm + 1.0, jig.lip_mm - jig.inset_mm - 1.0
    return [min(max(x, a), b) for x in xs]
