"""The ``flow`` section of ``report.json`` from ``[flow]`` and the duct shape:
:func:`flow_section` solves the system (:func:`ductgen.flow.system.flow_analysis`) and turns
the result into report keys (SI, unit in each name) and flow warnings.
"""

from __future__ import annotations

from typing import Any

from ductgen.errors import DesignWarning
from ductgen.flow.gradient import layer_keys
from ductgen.flow.inputs import DuctShape
from ductgen.flow.operating_point import OperatingPoint, System
from ductgen.flow.recovery import CAPTURE_IVR_RANGE, CaptureRecovery, TableRecovery
from ductgen.flow.recovery_map import recovery_keys
from ductgen.flow.system import (
    SENSITIVITY_DELTA,
    TRANSITION_NAME,
    FlowAnalysis,
    flow_analysis,
)
from ductgen.flow.terms import impact_pressure_pa
from ductgen.flow.transition import TransitionElement, ideal_pressure_recovery
from ductgen.flow.warnings import flow_warnings
from ductgen.spec.flow import FlowSpec

__all__ = ["DRAG_NOTE", "flow_section"]

DRAG_NOTE = (
    "momentum_drag_n is the ram (internal) drag m*V0 unless flow.exit_direction = 'rearward', "
    "when it is the net m*(V0 - V_exit) (still without the (p_e - p0)*A_e term). The external "
    "drag increment of the opening (lip, ramp, spillage) is included only when "
    "flow.external_drag_coefficient is given (on q0 and the throat area, e.g. from ESDU 86002 "
    "or a test): no sourced table for it is available to ductgen"
)
INLET_LOSS_NOTE = "assumption, no source: lip and ramp losses lumped into one factor"
INLET_CP_NOTE = (
    "ram_recovery = inlet_cp + (1 - inlet_cp) * yaw_factor * local_ram_recovery: the "
    "recovery model applies to the local head (1 - Cp) q above the local static pressure "
    "(free-stream total pressure outside the boundary layer, derived); the boundary layer is "
    "the flat-plate one unless flow.inlet_cp_gradient_per_m is given (then Head's method "
    "along a linear Cp, see boundary_layer_method)"
)
YAW_NOTE = (
    "cos^2 of flow_angle_deg on the recovered head: the head along the inlet's axis "
    "(first principles, not a published curve; NACA RM A50C13 reports recovery falling with "
    "flow angle, its values are not available here, so real lips may lose more)"
)
KE_DEFAULT_NOTE = (
    "default 1.25 from the project's own CFD cross-check (1.20-1.32 at the transition exit of "
    "two samples), not a published value"
)
EXIT_DEFAULT_NOTE = "default: plenum without loss elements, hose with them"


def _transition_report(fa: FlowAnalysis) -> dict[str, Any] | None:
    t = next((e for e in fa.system.elements if isinstance(e, TransitionElement)), None)
    if t is None or not fa.point.found:
        return None
    assert fa.point.volume_flow_m3_s is not None
    ks = t.k_by_method(fa.point.volume_flow_m3_s, fa.air)
    return {
        "method": t.method,
        "effectiveness": t.effectiveness,
        "ideal_pressure_recovery": ideal_pressure_recovery(t.a_out_m2 / t.a_in_m2),
        "k": ks[t.method],
        "k_by_method": ks,
        "basis": "conical diffuser of the same area ratio and equivalent-cone angle; "
        "effectiveness: K = (1 - eta_D)(1 - (A1/A2)^2), Blevins 7.4, default eta_D 0.6 for "
        "an offset rectangle-to-round duct fed with distorted air; crane/rennels/idelchik: "
        "fluids.fittings.diffuser_conical; K on the small-end velocity",
    }


def _drag(flow: FlowSpec, p: OperatingPoint, q_inf_pa: float, throat_m2: float) -> dict[str, Any]:
    """Momentum (ram or net) drag, and the opening's external drag when its coefficient is
    given (N)."""
    out: dict[str, Any] = {
        "exit_direction": flow.exit_direction,
        "ram_drag_n": p.ram_drag_n,
        "momentum_drag_n": p.ram_drag_n,
        "drag_note": DRAG_NOTE,
    }
    if flow.exit_direction == "rearward":
        out["net_momentum_drag_n"] = p.net_momentum_drag_n
        out["momentum_drag_n"] = p.net_momentum_drag_n
    cd = flow.external_drag_coefficient
    out["external_drag_n"] = None if cd is None else cd * q_inf_pa * throat_m2
    if cd is not None:
        out["external_drag_coefficient"] = cd
        out["total_drag_n"] = out["momentum_drag_n"] + out["external_drag_n"]
    return out


def flow_section(flow: FlowSpec, shape: DuctShape) -> tuple[dict[str, Any], list[DesignWarning]]:
    """The report's ``flow`` section and the flow warnings."""
    fa = flow_analysis(flow, shape)
    air, bl, sys_, p = fa.air, fa.boundary_layer, fa.system, fa.point
    mach = air.mach(flow.speed)
    layer, d_max, delta_max_m, warnings = layer_keys(flow, air, bl, shape.throat_depth_mm * 1e-3)
    out = {**_air_keys(flow, sys_, mach), **layer}
    out.update(_recovery_model_keys(flow, sys_))
    out.update(_terms(flow, sys_))
    rec_keys, outside = recovery_keys(sys_.recovery, p.inlet_velocity_ratio if p.found else None)
    out.update(rec_keys)
    warnings += [DesignWarning("recovery_map_extrapolated", m) for m in outside]
    out.update(_capture_keys(flow, sys_))
    if p.found:
        out.update(_operating_keys(fa))
        warnings += _table_warnings(fa)
    else:
        out["operating_point"] = "none"
        out["operating_point_note"] = p.reason
        warnings.append(DesignWarning("no_operating_point", p.reason))
    out["sensitivity"] = _band(fa)
    if flow.required_flow is not None:
        required, warns = _requirement(flow.required_flow, p)
        out.update(required)
        warnings += warns
    warnings += flow_warnings(
        mach=mach,
        delta_over_depth=d_max,
        delta_m=delta_max_m,
        flow_angle_deg=flow.flow_angle_deg,
        exit_cp_given=flow.exit_cp is not None,
        ivr=p.inlet_velocity_ratio if p.found else None,
    )
    return out, warnings


def _air_keys(flow: FlowSpec, sys_: System, mach: float) -> dict[str, Any]:
    """The air, the speed, its Mach number and head, the flow angle (SI), in order."""
    air = sys_.air
    return {
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
        "flow_angle_deg": flow.flow_angle_deg,
    }


def _recovery_model_keys(flow: FlowSpec, sys_: System) -> dict[str, Any]:
    """The recovery model and the exit."""
    return {
        "recovery_model": sys_.recovery.kind,
        "recovery_assumption": sys_.recovery.assumption,
        "exit_area_m2": sys_.exit_area_m2,
        "exit_cp": sys_.exit_cp,
        "exit_cp_source": "given" if flow.exit_cp is not None else "default",
    }


def _capture_keys(flow: FlowSpec, sys_: System) -> dict[str, Any]:
    """The exit's defaulted pressure note, the capture model's assumptions, the table."""
    out: dict[str, Any] = {}
    rec = sys_.recovery
    if flow.exit_cp is None:
        out["exit_cp_note"] = (
            "defaulted to 0 (ambient): the static pressure where the duct dumps is rarely "
            "ambient and can dominate a small budget"
        )
    if isinstance(rec, CaptureRecovery):
        out["inlet_loss_factor"] = flow.inlet_loss_factor
        out["inlet_loss_factor_note"] = INLET_LOSS_NOTE
        out["recovery_floor"] = rec.floor
        out["recovery_valid_ivr_range"] = list(CAPTURE_IVR_RANGE)
    if rec.kind == "table":
        out["recovery_table"] = str(flow.recovery)
    return out


def _operating_keys(fa: FlowAnalysis) -> dict[str, Any]:
    """The operating point's keys (found), with the transition's loss when there is one."""
    air, sys_, p, flow = fa.air, fa.system, fa.point, fa.flow
    assert p.volume_flow_m3_s is not None and p.recovered_pa is not None
    out: dict[str, Any] = {
        "operating_point": "found",
        "inlet_velocity_ratio": p.inlet_velocity_ratio,
        "volume_flow_m3_s": p.volume_flow_m3_s,
        "mass_flow_kg_s": p.mass_flow_kg_s,
        "ram_recovery": p.ram_recovery,
        "recovered_total_pressure_pa": p.recovered_pa,
        # p_t1/p_t∞ for readers used to that ratio (it is not ram_recovery)
        "total_pressure_ratio": (air.pressure_pa + p.recovered_pa)
        / (air.pressure_pa + sys_.head_pa),
        "local_ram_recovery": p.local_recovery,
        "inlet_velocity_ratio_local": sys_.local_ivr(p.volume_flow_m3_s),
        "exit_velocity_m_s": p.exit_velocity_m_s,
        **_drag(flow, p, sys_.dynamic_pressure_pa, sys_.throat_area_m2),
        "budget": [b.to_dict() for b in p.budget],
        "budget_sum_pa": sum(b.dp_pa for b in p.budget),
    }
    tr = _transition_report(fa)
    if tr is not None:
        out["transition_loss"] = tr
    return out


def _table_warnings(fa: FlowAnalysis) -> list[DesignWarning]:
    """A recovery table read beyond its IVR range."""
    rec, p = fa.system.recovery, fa.point
    if isinstance(rec, TableRecovery) and not rec.covers(p.inlet_velocity_ratio or 0.0):
        return [
            DesignWarning(
                "recovery_table_extrapolated",
                f"operating IVR {p.inlet_velocity_ratio:.3f} is outside the recovery table "
                f"({rec.ivr[0]:g}-{rec.ivr[-1]:g}); its end value was used",
            )
        ]
    return []


def _requirement(required: float, p: OperatingPoint) -> tuple[dict[str, Any], list[DesignWarning]]:
    """The required flow (m³/s), whether it is met, and the warning when it is not."""
    meets = bool(p.found and (p.volume_flow_m3_s or 0.0) >= required)
    out = {"required_flow_m3_s": required, "meets_required_flow": meets}
    if meets:
        return out, []
    got = f"{p.volume_flow_m3_s:.4g} m^3/s" if p.found else "no flow"
    return out, [
        DesignWarning(
            "required_flow_not_met",
            f"estimated delivery {got} is below the required {required:.4g} m^3/s",
        )
    ]


def _terms(flow: FlowSpec, sys_: System) -> dict[str, Any]:
    """Report keys of the compressibility, surface-pressure, yaw and outflow terms."""
    air = sys_.air
    return {
        "impact_pressure_pa": impact_pressure_pa(air.pressure_pa, air.mach(flow.speed)),
        "recovery_head_pa": sys_.head_pa,
        "recovery_head": "isentropic impact pressure (Mach > 0.3, NACA Report 1135)"
        if sys_.total_head_pa is not None
        else "incompressible dynamic pressure 1/2 rho V^2 (Mach <= 0.3)",
        "inlet_cp": flow.inlet_cp,
        "inlet_cp_note": INLET_CP_NOTE,
        "yaw_factor": sys_.yaw_factor,
        "yaw_basis": YAW_NOTE,
        "kinetic_energy_factor": sys_.kinetic_energy_factor,
        "kinetic_energy_factor_source": "given"
        if "kinetic_energy_factor" in flow.model_fields_set
        else KE_DEFAULT_NOTE,
        "momentum_factor": sys_.momentum_factor,
        "momentum_factor_source": "given"
        if flow.momentum_factor is not None
        else "1 + (alpha - 1)/3 (small-distortion relation, derived)",
        "exit": sys_.exit_kind,
        "exit_source": "given" if flow.exit is not None else EXIT_DEFAULT_NOTE,
    }


def _band(fa: FlowAnalysis) -> dict[str, Any]:
    low, high = fa.band
    band: dict[str, Any] = {"recovery_delta": SENSITIVITY_DELTA}
    for tag, bp in (("low", low), ("high", high)):
        if bp.found:
            band[f"volume_flow_{tag}_m3_s"] = bp.volume_flow_m3_s
            band[f"mass_flow_{tag}_kg_s"] = bp.mass_flow_kg_s
            k = next((b.k for b in bp.budget if b.element == TRANSITION_NAME), None)
            if k is not None:
                band[f"transition_k_{tag}"] = k
        else:
            band[f"{tag}_note"] = bp.reason
    band["basis"] = (
        "low: recovery - 0.1 with the lossiest transition method; high: recovery + 0.1 with "
        "the least lossy one"
    )
    return band
