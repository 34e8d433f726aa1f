"""Design warnings with stable codes. They never block a build.

Shape warnings (:func:`geometry_warnings`) apply with or without a ``[flow]`` section:

* ``ramp_angle_outside_tested`` — ramp angle outside 5°–7° (NACA RM A7I30, abstract);
* ``aspect_ratio_outside_tested`` — W/D outside 3–5 (NACA RM A7I30, abstract);
* ``wall_divergence_too_small`` — only for a user's own wall table: its steepest wall angle
  stays below 12°, so the walls are straight-sided or nearly parallel and may not shed the
  vortex pair that wall divergence forms (NACA TN 2323, abstract). Basis of the number:
  with the standard table the steepest wall angle only restates the ramp angle and W/D
  (W/L = (W/D)·tan θ); its smallest value over NACA's recommended designs is 12.2° at 5°,
  W/D 3 (derived by PCHIP; docs/sources.md). Walls that never diverge that steeply diverge less
  than any recommended design. With the standard table the angle is reported, not warned;
* ``diffuser_angle_large`` — the internal transition's steepest wall (with the facing wall's
  divergence, the 2θ of a two-dimensional diffuser) lies above line a-a of the
  two-dimensional diffuser flow-regime chart (Kline, Abbott & Fox 1959 / Reneau, Johnston &
  Kline 1967; the line's points recalled, :mod:`ductgen.flow.stall`), or the equivalent cone's
  included angle exceeds ~8° (common practice, no source: good diffusers keep 5°–8°). The
  equivalent cone alone hides a roof-aligned outlet's steep floor.

Flow warnings (:func:`flow_warnings`): ``mach_above_incompressible`` (Mach > 0.3; the
recovery then uses the impact pressure, the losses stay incompressible),
``boundary_layer_thick`` (δ/D > 1 by the larger of two boundary-layer methods; NACA RM
A7I30 reports the large effect of boundary-layer thickness on recovery),
``flow_angle_large`` (|yaw| > 5°: a rounded lip tolerates about 5°–10°, a sharp edge
1°–2°, common practice, no source; NACA RM A50C13, abstract, shows recovery falling with
flow angle; the estimate applies a cos² penalty on the recovered head, ``flow.yaw_factor``),
``exit_cp_defaulted`` (no ``exit_cp`` given, ambient
assumed), ``ivr_low`` (IVR < 0.3), ``ivr_above_one``, ``no_operating_point``,
``required_flow_not_met``, ``recovery_table_extrapolated``, ``recovery_map_extrapolated``
(raised in :mod:`ductgen.flow.recovery_map`: the design or its IVR outside the CFD map).
"""

from __future__ import annotations

import math

from ductgen.errors import DesignWarning
from ductgen.flow.inputs import DuctShape
from ductgen.flow.stall import STALL_LINE_SOURCE, stall_line_included_deg

__all__ = [
    "ASPECT_RANGE",
    "DELTA_OVER_DEPTH_MAX",
    "DIFFUSER_INCLUDED_MAX_DEG",
    "FLOW_ANGLE_MAX_DEG",
    "IVR_LOW",
    "MACH_MAX",
    "RAMP_ANGLE_RANGE_DEG",
    "WALL_DIVERGENCE_MIN_DEG",
    "flow_warnings",
    "geometry_warnings",
]

RAMP_ANGLE_RANGE_DEG = (5.0, 7.0)  # NACA RM A7I30
ASPECT_RANGE = (3.0, 5.0)  # NACA RM A7I30
#: 12.2° (derived, docs/sources.md) rounded down: a standard-shaped user table at 5°, W/D 3
#: must not warn on rounding.
WALL_DIVERGENCE_MIN_DEG = 12.0
DIFFUSER_INCLUDED_MAX_DEG = 8.0  # common practice, no source
MACH_MAX = 0.3  # incompressible model
DELTA_OVER_DEPTH_MAX = 1.0  # throat fully immersed in the boundary layer
FLOW_ANGLE_MAX_DEG = 5.0  # low end of a rounded lip's 5-10 deg (common practice, no source)
IVR_LOW = 0.3  # below: high-loss systems, capture estimate out of range (no source)

_EPS = 1e-9


def geometry_warnings(shape: DuctShape) -> list[DesignWarning]:
    """Warnings about the shape alone (no flow condition needed)."""
    out: list[DesignWarning] = []
    lo, hi = RAMP_ANGLE_RANGE_DEG
    a = shape.ramp_angle_deg
    if not lo - _EPS <= a <= hi + _EPS:
        out.append(
            DesignWarning(
                "ramp_angle_outside_tested",
                f"ramp angle {a:.2f} deg is outside the {lo:g}-{hi:g} deg recommended by "
                "NACA RM A7I30",
            )
        )
    lo, hi = ASPECT_RANGE
    ar = shape.aspect_ratio
    if not lo - _EPS <= ar <= hi + _EPS:
        out.append(
            DesignWarning(
                "aspect_ratio_outside_tested",
                f"width/depth {ar:.2f} is outside the {lo:g}-{hi:g} recommended by NACA RM A7I30",
            )
        )
    dv = shape.max_wall_divergence_deg
    if not shape.standard_walls and dv < WALL_DIVERGENCE_MIN_DEG:
        out.append(
            DesignWarning(
                "wall_divergence_too_small",
                f"the wall table's steepest wall angle is {dv:.1f} deg, below "
                f"{WALL_DIVERGENCE_MIN_DEG:g} deg: straight or nearly parallel walls may not "
                "shed the vortex pair that wall divergence forms (NACA TN 2323); the standard "
                "table reaches at least 12.2 deg on every NACA-recommended design",
            )
        )
    if shape.has_transition:
        w = _diffuser_warning(shape)
        if w is not None:
            out.append(w)
    return out


def _diffuser_warning(shape: DuctShape) -> DesignWarning | None:
    """``diffuser_angle_large`` on the steepest wall against the 2-D stall line, or on the
    equivalent cone against the common-practice ~8°."""
    assert shape.transition_cone_half_angle_deg is not None
    inc = 2.0 * shape.transition_cone_half_angle_deg
    said: list[str] = []
    if (
        shape.steepest_wall_included_deg is not None
        and shape.steepest_wall_across_mm
        and shape.transition_length_mm
    ):
        n_w = shape.transition_length_mm / shape.steepest_wall_across_mm
        line = stall_line_included_deg(n_w)
        if shape.steepest_wall_included_deg > line:
            said.append(
                f"the transition's {shape.steepest_wall_name} diverges at "
                f"{shape.steepest_wall_angle_deg:.1f} deg to the duct axis (walls "
                f"{shape.steepest_wall_included_deg:.1f} deg apart), above the "
                f"{line:.1f} deg where a two-dimensional diffuser of N/W1 = {n_w:.2f} first "
                f"stalls ({STALL_LINE_SOURCE})"
            )
    if inc > DIFFUSER_INCLUDED_MAX_DEG:
        said.append(
            f"the equivalent-cone included angle {inc:.1f} deg exceeds "
            f"~{DIFFUSER_INCLUDED_MAX_DEG:g} deg (common practice: 5-8 deg)"
        )
    if not said:
        return None
    fix = "lengthen outlet.transition_length"
    if shape.transition_length_under_stall_mm is not None and said[0].startswith("the trans"):
        fix += f" to about {math.ceil(shape.transition_length_under_stall_mm):.0f} mm"
    return DesignWarning(
        "diffuser_angle_large",
        "; ".join(said) + f": expect separation and more loss than estimated - {fix}",
    )


def flow_warnings(
    *,
    mach: float,
    delta_over_depth: float,
    delta_m: float,
    flow_angle_deg: float,
    exit_cp_given: bool,
    ivr: float | None,
) -> list[DesignWarning]:
    """Warnings on the flight condition and the operating point (``ivr`` None = none found).

    Args:
        mach: free-stream Mach number.
        delta_over_depth: the larger δ/D of the boundary-layer methods; ``delta_m`` its δ (m).
        flow_angle_deg: local flow angle to the inlet centreline (deg).
        exit_cp_given: False when ``flow.exit_cp`` was left to its default.
        ivr: inlet velocity ratio at the operating point.
    """
    return _condition_warnings(mach, delta_over_depth, delta_m, flow_angle_deg) + (
        _operating_point_warnings(exit_cp_given, ivr)
    )


def _condition_warnings(
    mach: float, delta_over_depth: float, delta_m: float, flow_angle_deg: float
) -> list[DesignWarning]:
    """The flight condition's warnings: Mach number, boundary layer, flow angle (SI, deg)."""
    out: list[DesignWarning] = []
    if mach > MACH_MAX:
        out.append(
            DesignWarning(
                "mach_above_incompressible",
                f"Mach {mach:.2f} exceeds {MACH_MAX:g}: the recovery is applied to the "
                "isentropic impact pressure, but the duct losses stay incompressible and the "
                "inlet's flow pattern changes with Mach number; treat the estimate with care",
            )
        )
    if delta_over_depth > DELTA_OVER_DEPTH_MAX:
        out.append(
            DesignWarning(
                "boundary_layer_thick",
                f"boundary layer delta = {delta_m * 1e3:.1f} mm is {delta_over_depth:.2f} x the "
                "throat depth (larger of the 0.37 Re^-1/5 and White 0.16 Re^-1/7 estimates): "
                "the throat swallows only slow air (NACA RM A7I30: boundary-layer thickness "
                "has a large effect on recovery); move the inlet forward or deepen it",
            )
        )
    if abs(flow_angle_deg) > FLOW_ANGLE_MAX_DEG:
        out.append(
            DesignWarning(
                "flow_angle_large",
                f"local flow meets the inlet at {abs(flow_angle_deg):.1f} deg: a rounded lip "
                "tolerates about 5-10 deg, a sharp edge stalls above 1-2 deg (common practice, "
                "no source) and recovery falls with flow angle (NACA RM A50C13); the estimate "
                "takes only the axial head (cos^2), real lips may lose more - align the "
                "inlet with the local flow",
            )
        )
    return out


def _operating_point_warnings(exit_cp_given: bool, ivr: float | None) -> list[DesignWarning]:
    """The exit pressure left to its default, and the inlet velocity ratio out of range."""
    out: list[DesignWarning] = []
    if not exit_cp_given:
        out.append(
            DesignWarning(
                "exit_cp_defaulted",
                "flow.exit_cp not given: the air is assumed to leave at ambient static pressure "
                "(exit_cp = 0). Where a brake or cooler duct dumps (wheel well, engine bay, "
                "cowling) the pressure is rarely ambient, and in a small budget it can decide "
                "the flow: give exit_cp from a measurement or a pressure map",
            )
        )
    if ivr is not None and ivr < IVR_LOW:
        out.append(
            DesignWarning(
                "ivr_low",
                f"inlet velocity ratio {ivr:.2f} < {IVR_LOW:g}: a high-loss system spends most "
                "of the ram pressure before the air moves, and the recovery estimate is least "
                "certain here (the capture estimate is meant for IVR 0.3-1 and is floored at a "
                "recalled zero-flow value); reduce the losses behind the inlet",
            )
        )
    if ivr is not None and ivr > 1.0:
        out.append(
            DesignWarning(
                "ivr_above_one",
                f"inlet velocity ratio {ivr:.2f} > 1: the throat air would be faster than the "
                "free stream, which a passive inlet delivers only on paper (the diffuser pays "
                "it back in the 1-D balance); enlarge the throat (common practice, no source)",
            )
        )
    return out
