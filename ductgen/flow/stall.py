"""When the transition's steepest wall stalls: the two-dimensional diffuser's stall line.

The transition from the throat rectangle to a roof-aligned outlet diverges on one wall (the
floor) far more than its equivalent cone suggests: on a 110 × 28 mm throat into a 3 in hose
over 170 mm (the club-racer sample as it first shipped) the floor drops at 15.8° while the
equivalent cone's included angle is 4.6°. A wall that steep behaves like
one wall of a two-dimensional (flat-wall) diffuser whose walls diverge at the included angle
2θ = steepest wall + the facing wall's divergence (the roof's, 0 when it stays level), over a
length N from a throat W1 across that plane (the throat depth for the floor).

Two-dimensional diffusers were mapped by Kline, Abbott & Fox (1959) and Reneau, Johnston &
Kline (1967) (J. Basic Eng. 89, "Performance and design of straight, two-dimensional
diffusers"): on a chart of 2θ against N/W1, line a-a separates "no appreciable stall" from
transitory stall. ductgen uses a straight line on those log-log axes through two points
**recalled** from that chart, (N/W1, 2θ) = (2, 22°) and (20, 5.5°), not re-read from the
papers here; take it as good to a few degrees. Above the line the wall is judged to stall
(``diffuser_angle_large``), and :func:`length_under_stall_line` gives the transition length
that brings the wall under it.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

from scipy.optimize import brentq

from ductgen.flow.inputs import DuctShape

__all__ = [
    "STALL_LINE_POINTS",
    "STALL_LINE_SOURCE",
    "SteepestWall",
    "length_under_stall_line",
    "stall_line_included_deg",
    "steepest_wall",
    "steepest_wall_report",
]

#: Two points of line a-a, (N/W1, 2θ in deg), recalled from the flow-regime chart of
#: Kline, Abbott & Fox (1959) / Reneau, Johnston & Kline (1967); not re-read here.
STALL_LINE_POINTS = ((2.0, 22.0), (20.0, 5.5))
STALL_LINE_SOURCE = (
    "line a-a (first appreciable stall) of the two-dimensional diffuser flow-regime chart, "
    "Kline, Abbott & Fox (1959) / Reneau, Johnston & Kline (1967), as a straight line on its "
    "log-log axes through (N/W1 2, 22 deg) and (20, 5.5 deg): recalled, not re-read here"
)


def stall_line_included_deg(length_over_width: float) -> float:
    """Included angle 2θ (deg) of line a-a at N/W1 (power law through the recalled points)."""
    (x0, y0), (x1, y1) = STALL_LINE_POINTS
    slope = math.log(y1 / y0) / math.log(x1 / x0)
    return y0 * float((length_over_width / x0) ** slope)


def length_under_stall_line(
    included_deg_at: Callable[[float], float],
    across_mm: float,
    length_mm: float,
    *,
    max_factor: float = 50.0,
) -> float | None:
    """Shortest transition length (mm) at which the included angle is on line a-a.

    Args:
        included_deg_at: the wall's included angle 2θ (deg) as a function of the transition
            length (mm), the outlet held where it is.
        across_mm: W1, the throat dimension across the steep wall's plane (mm).
        length_mm: the present length (mm); returned as is when already under the line.
        max_factor: give up (None) beyond this many times the present length.
    """

    def excess(length: float) -> float:
        return included_deg_at(length) - stall_line_included_deg(length / across_mm)

    if excess(length_mm) <= 0.0:
        return length_mm
    hi = length_mm
    while excess(hi) > 0.0:
        hi *= 2.0
        if hi > max_factor * length_mm:
            return None
    return float(brentq(excess, hi / 2.0, hi, xtol=1e-6))


@dataclass(frozen=True)
class SteepestWall:
    """The transition's steepest wall against line a-a.

    Attributes:
        name: ``"floor"``, ``"roof"`` or ``"side"``.
        angle_deg: its steepest local angle to the duct's axis (deg).
        included_deg: its divergence from the facing wall, 2θ (deg).
        length_over_width: the transition's length over the throat across that plane, N/W1.
        stall_line_included_deg: line a-a's 2θ at that N/W1 (deg).
        stalls: the wall diverges past the line.
        length_under_stall_line_mm: the transition length that brings the wall under the
            line (mm), None when no length within the search does.
    """

    name: str | None
    angle_deg: float | None
    included_deg: float
    length_over_width: float
    stall_line_included_deg: float
    stalls: bool
    length_under_stall_line_mm: float | None

    def report(self) -> dict[str, Any]:
        """Its report keys (deg, mm), in the written order."""
        return {
            "steepest_wall_angle_deg": self.angle_deg,
            "steepest_wall": self.name,
            "steepest_wall_included_deg": self.included_deg,
            "steepest_wall_length_over_width": self.length_over_width,
            "stall_line_included_deg": self.stall_line_included_deg,
            "steepest_wall_stalls": self.stalls,
            "length_under_stall_line_mm": self.length_under_stall_line_mm,
            "stall_line_source": STALL_LINE_SOURCE,
        }


def steepest_wall(shape: DuctShape) -> SteepestWall | None:
    """The transition's steepest wall against line a-a; None without a transition."""
    if shape.steepest_wall_included_deg is None or not shape.steepest_wall_across_mm:
        return None
    assert shape.transition_length_mm is not None
    n_w = shape.transition_length_mm / shape.steepest_wall_across_mm
    line = stall_line_included_deg(n_w)
    return SteepestWall(
        name=shape.steepest_wall_name,
        angle_deg=shape.steepest_wall_angle_deg,
        included_deg=shape.steepest_wall_included_deg,
        length_over_width=n_w,
        stall_line_included_deg=line,
        stalls=shape.steepest_wall_included_deg > line,
        length_under_stall_line_mm=shape.transition_length_under_stall_mm,
    )


def steepest_wall_report(shape: DuctShape) -> dict[str, Any]:
    """Report keys (deg, mm) of the transition's steepest wall against line a-a; empty
    without a transition."""
    wall = steepest_wall(shape)
    return {} if wall is None else wall.report()
