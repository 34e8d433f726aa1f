"""The ``flow`` section of ``report.json`` (brief §5, §6) from ``[flow]`` and the geometry.

:func:`flow_analysis` assembles the air, the boundary layer, the recovery model, the loss
elements (the internal transition first, taken from the geometry) and the exit into a
:class:`~ductgen.flow.operating_point.System`, solves it, and :func:`flow_section` turns the
result into report keys (SI, unit in each name) and design warnings.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

from ductgen.errors import DesignWarning
from ductgen.flow.atmosphere import Air, standard_air
from ductgen.flow.boundary_layer import BoundaryLayer, turbulent_flat_plate
from ductgen.flow.losses import BendElement, ConeElement, CoolerElement, Element, HoseElement
from ductgen.flow.operating_point import OperatingPoint, System, solve, solve_band
from ductgen.flow.recovery import (
    CaptureRecovery,
    ConstantRecovery,
    RecoveryModel,
    TableRecovery,
    load_recovery_table,
)
from ductgen.flow.warnings import DELTA_OVER_DEPTH_MAX, MACH_MAX
from ductgen.geometry.inlet import InletGeometry
from ductgen.spec.flow import BendLoss, CoolerLoss, DiffuserLoss, FlowSpec, HoseLoss

__all__ = ["SENSITIVITY_DELTA", "FlowAnalysis", "build_system", "flow_analysis", "flow_section"]

#: Recovery shift of the sensitivity band (brief §6).
SENSITIVITY_DELTA = 0.1

TRANSITION_NAME = "internal transition"


def _elements(flow: FlowSpec) -> list[Element]:
    out: list[Element] = []
    counts: dict[str, int] = {}
    for e in flow.losses:
        counts[e.kind] = counts.get(e.kind, 0) + 1
        name = e.label or f"{e.kind} {counts[e.kind]}"
        if isinstance(e, HoseLoss):
            out.append(HoseElement(name, e.length, e.diameter, e.roughness))
        elif isinstance(e, BendLoss):
            out.append(BendElement(name, e.angle_deg, e.radius, e.diameter, e.roughness))
        elif isinstance(e, CoolerLoss):
            out.append(CoolerElement(name, e.k, e.face_area, e.pressure_drop, e.reference_flow))
        elif isinstance(e, DiffuserLoss):
            if e.angle_deg is not None:
                angle = e.angle_deg
            else:
                assert e.length is not None
                angle = 2.0 * math.degrees(
                    math.atan(abs(e.outlet_diameter - e.inlet_diameter) / (2.0 * e.length))
                )
            out.append(ConeElement.from_diameters(name, e.inlet_diameter, e.outlet_diameter, angle))
    return out


def _recovery(flow: FlowSpec, delta_over_depth: float) -> RecoveryModel:
    kind = flow.recovery_kind
    if kind == "constant":
        assert isinstance(flow.recovery, float)
        return ConstantRecovery(flow.recovery)
    if kind == "table":
        return load_recovery_table(str(flow.recovery))
    return CaptureRecovery(delta_over_depth=delta_over_depth, loss_factor=flow.inlet_loss_factor)


@dataclass(frozen=True)
class FlowAnalysis:
    """Everything the flow estimate computed (SI)."""

    air: Air
    boundary_layer: BoundaryLayer
    system: System
    point: OperatingPoint
    band: tuple[OperatingPoint, OperatingPoint]
    flow: FlowSpec


def build_system(flow: FlowSpec, g: InletGeometry) -> tuple[System, Air, BoundaryLayer]:
    """The duct system of a spec's flow section and the inlet's geometry."""
    air = standard_air(flow.altitude, flow.temperature_offset, flow.density)
    bl = turbulent_flat_plate(flow.speed, flow.run_length, air.kinematic_viscosity_m2_s)
    depth_m, throat_m2 = g.depth_mm * 1e-3, g.throat_area_mm2 * 1e-6
    elements: list[Element] = []
    t = g.transition
    if t is not None:
        elements.append(
            ConeElement.from_areas(
                TRANSITION_NAME,
                t.throat_area_mm2 * 1e-6,
                t.outlet_area_mm2 * 1e-6,
                2.0 * t.equivalent_cone_half_angle_deg,
            )
        )
    elements += _elements(flow)
    exit_area = flow.exit_area
    if exit_area is None:
        areas = [e.outlet_area_m2 for e in elements if e.outlet_area_m2 is not None]
        exit_area = areas[-1] if areas else throat_m2
    system = System(
        air=air,
        speed_m_s=flow.speed,
        throat_area_m2=throat_m2,
        recovery=_recovery(flow, bl.thickness_m / depth_m),
        elements=tuple(elements),
        exit_area_m2=exit_area,
        exit_cp=flow.exit_cp,
    )
    return system, air, bl


def flow_analysis(flow: FlowSpec, g: InletGeometry) -> FlowAnalysis:
    """Solve the operating point and its sensitivity band."""
    system, air, bl = build_system(flow, g)
    point = solve(system)
    band = solve_band(system, SENSITIVITY_DELTA)
    return FlowAnalysis(
        air=air, boundary_layer=bl, system=system, point=point, band=band, flow=flow
    )


def flow_section(flow: FlowSpec, g: InletGeometry) -> tuple[dict[str, Any], list[DesignWarning]]:
    """The report's ``flow`` section and the flow warnings."""
    fa = flow_analysis(flow, g)
    air, bl, sys_, p = fa.air, fa.boundary_layer, fa.system, fa.point
    warnings: list[DesignWarning] = []
    mach = air.mach(flow.speed)
    d_over = bl.thickness_m / (g.depth_mm * 1e-3)
    rec = sys_.recovery
    out: dict[str, Any] = {
        "density_kg_m3": air.density_kg_m3,
        "density_source": air.density_source,
        "altitude_m": air.altitude_m,
        "altitude_kind": "geometric (US Standard Atmosphere 1976 via fluids)",
        "temperature_k": air.temperature_k,
        "pressure_pa": air.pressure_pa,
        "kinematic_viscosity_m2_s": air.kinematic_viscosity_m2_s,
        "speed_m_s": flow.speed,
        "mach": mach,
        "dynamic_pressure_pa": sys_.dynamic_pressure_pa,
        "run_length_m": bl.run_length_m,
        "reynolds_run": bl.reynolds,
        "boundary_layer_thickness_m": bl.thickness_m,
        "displacement_thickness_m": bl.displacement_thickness_m,
        "momentum_thickness_m": bl.momentum_thickness_m,
        "delta_over_depth": d_over,
        "recovery_model": rec.kind,
        "recovery_assumption": rec.assumption,
        "exit_area_m2": sys_.exit_area_m2,
        "exit_cp": sys_.exit_cp,
    }
    if rec.kind == "capture":
        out["inlet_loss_factor"] = flow.inlet_loss_factor
    if rec.kind == "table":
        out["recovery_table"] = str(flow.recovery)
    if p.found:
        assert p.volume_flow_m3_s is not None and p.recovered_pa is not None
        out.update(
            {
                "operating_point": "found",
                "inlet_velocity_ratio": p.inlet_velocity_ratio,
                "volume_flow_m3_s": p.volume_flow_m3_s,
                "mass_flow_kg_s": p.mass_flow_kg_s,
                "ram_recovery": p.ram_recovery,
                "recovered_total_pressure_pa": p.recovered_pa,
                # p_t1/p_t∞ for readers used to that ratio (it is not ram_recovery)
                "total_pressure_ratio": (air.pressure_pa + p.recovered_pa)
                / (air.pressure_pa + sys_.dynamic_pressure_pa),
                "exit_velocity_m_s": p.exit_velocity_m_s,
                "momentum_drag_n": p.momentum_drag_n,
                "budget": [b.to_dict() for b in p.budget],
                "budget_sum_pa": sum(b.dp_pa for b in p.budget),
            }
        )
        if (p.inlet_velocity_ratio or 0.0) > 1.0:
            warnings.append(
                DesignWarning(
                    "ivr_above_one",
                    f"inlet velocity ratio {p.inlet_velocity_ratio:.2f} > 1: the throat air "
                    "would be faster than the free stream, which a passive inlet delivers only "
                    "on paper (the diffuser pays it back in the 1-D balance); enlarge the "
                    "throat (common practice, no source)",
                )
            )
        if isinstance(rec, TableRecovery) and not rec.covers(p.inlet_velocity_ratio or 0.0):
            warnings.append(
                DesignWarning(
                    "recovery_table_extrapolated",
                    f"operating IVR {p.inlet_velocity_ratio:.3f} is outside the recovery table "
                    f"({rec.ivr[0]:g}-{rec.ivr[-1]:g}); its end value was used",
                )
            )
    else:
        out["operating_point"] = "none"
        out["operating_point_note"] = p.reason
        warnings.append(DesignWarning("no_operating_point", p.reason))
    low, high = fa.band
    band: dict[str, Any] = {"recovery_delta": SENSITIVITY_DELTA}
    for tag, bp in (("low", low), ("high", high)):
        if bp.found:
            band[f"volume_flow_{tag}_m3_s"] = bp.volume_flow_m3_s
            band[f"mass_flow_{tag}_kg_s"] = bp.mass_flow_kg_s
        else:
            band[f"{tag}_note"] = bp.reason
    out["sensitivity"] = band
    if flow.required_flow is not None:
        out["required_flow_m3_s"] = flow.required_flow
        meets = bool(p.found and (p.volume_flow_m3_s or 0.0) >= flow.required_flow)
        out["meets_required_flow"] = meets
        if not meets:
            got = f"{p.volume_flow_m3_s:.4g} m^3/s" if p.found else "no flow"
            warnings.append(
                DesignWarning(
                    "required_flow_not_met",
                    f"estimated delivery {got} is below the required "
                    f"{flow.required_flow:.4g} m^3/s",
                )
            )
    if mach > MACH_MAX:
        warnings.append(
            DesignWarning(
                "mach_above_incompressible",
                f"Mach {mach:.2f} exceeds {MACH_MAX:g}: the incompressible flow estimate "
                "is no longer reliable",
            )
        )
    if d_over > DELTA_OVER_DEPTH_MAX:
        warnings.append(
            DesignWarning(
                "boundary_layer_thick",
                f"boundary layer delta = {bl.thickness_m * 1e3:.1f} mm is {d_over:.2f} x the "
                "throat depth: the throat swallows only slow air (NACA RM A7I30: "
                "boundary-layer thickness has a large "
                "effect on recovery); move the inlet forward or deepen it",
            )
        )
    return out, warnings
