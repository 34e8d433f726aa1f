"""Design warnings with stable codes (brief §6). They never block a build.

Geometry warnings apply with or without a ``[flow]`` section:

* ``ramp_angle_outside_tested`` — ramp angle outside 5°–7° (NACA RM A7I30, abstract);
* ``aspect_ratio_outside_tested`` — W/D outside 3–5 (NACA RM A7I30, abstract);
* ``wall_divergence_outside_vortex_range`` — largest wall angle outside ~20°–30°, where the
  vortex pair forms (common practice, no source);
* ``diffuser_angle_large`` — internal transition's equivalent-cone included angle above ~8°
  (common practice, no source: good diffusers keep 5°–8°).

Flow warnings: ``mach_above_incompressible`` (Mach > 0.3), ``boundary_layer_thick``
(δ/D > 1, the whole throat sits inside the boundary layer; NACA RM A7I30 reports the large
effect of boundary-layer thickness on recovery), ``no_operating_point``,
``required_flow_not_met``, ``recovery_table_extrapolated``, ``ivr_above_one`` (throat faster
than the free stream; common practice, no source).
"""

from __future__ import annotations

from ductgen.errors import DesignWarning
from ductgen.geometry.inlet import InletGeometry

__all__ = [
    "ASPECT_RANGE",
    "DELTA_OVER_DEPTH_MAX",
    "DIFFUSER_INCLUDED_MAX_DEG",
    "DIVERGENCE_RANGE_DEG",
    "MACH_MAX",
    "RAMP_ANGLE_RANGE_DEG",
    "geometry_warnings",
]

RAMP_ANGLE_RANGE_DEG = (5.0, 7.0)  # NACA RM A7I30
ASPECT_RANGE = (3.0, 5.0)  # NACA RM A7I30
DIVERGENCE_RANGE_DEG = (20.0, 30.0)  # common practice, no source
DIFFUSER_INCLUDED_MAX_DEG = 8.0  # common practice, no source
MACH_MAX = 0.3  # incompressible model
DELTA_OVER_DEPTH_MAX = 1.0  # throat fully immersed in the boundary layer

_EPS = 1e-9


def geometry_warnings(g: InletGeometry) -> list[DesignWarning]:
    """Warnings about the shape alone (no flow condition needed)."""
    out: list[DesignWarning] = []
    lo, hi = RAMP_ANGLE_RANGE_DEG
    a = g.floor.angle_deg
    if not lo - _EPS <= a <= hi + _EPS:
        out.append(
            DesignWarning(
                "ramp_angle_outside_tested",
                f"ramp angle {a:.2f} deg is outside the {lo:g}-{hi:g} deg recommended by "
                "NACA RM A7I30",
            )
        )
    lo, hi = ASPECT_RANGE
    ar = g.width_mm / g.depth_mm
    if not lo - _EPS <= ar <= hi + _EPS:
        out.append(
            DesignWarning(
                "aspect_ratio_outside_tested",
                f"width/depth {ar:.2f} is outside the {lo:g}-{hi:g} recommended by NACA RM A7I30",
            )
        )
    lo, hi = DIVERGENCE_RANGE_DEG
    dv = g.planform.max_divergence_deg
    if not lo <= dv <= hi:
        out.append(
            DesignWarning(
                "wall_divergence_outside_vortex_range",
                f"largest wall divergence {dv:.1f} deg is outside ~{lo:g}-{hi:g} deg, where the "
                "vortex pair forms (common practice, no source)",
            )
        )
    t = g.transition
    if t is not None:
        inc = 2.0 * t.equivalent_cone_half_angle_deg
        if inc > DIFFUSER_INCLUDED_MAX_DEG:
            out.append(
                DesignWarning(
                    "diffuser_angle_large",
                    f"internal transition's equivalent-cone included angle {inc:.1f} deg exceeds "
                    f"~{DIFFUSER_INCLUDED_MAX_DEG:g} deg (common practice: 5-8 deg); "
                    "expect separation "
                    "and more loss than the Crane estimate - lengthen outlet.transition_length",
                )
            )
    return out
