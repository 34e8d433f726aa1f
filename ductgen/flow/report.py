"""The ``flow`` section of ``report.json`` from ``[flow]`` and the duct shape.

:func:`flow_analysis` assembles the air, the boundary layer, the recovery model, the loss
elements (the internal transition first, from the :class:`~ductgen.flow.inputs.DuctShape`)
and the exit into a :class:`~ductgen.flow.operating_point.System`, solves it and its
sensitivity band; :func:`flow_section` turns the result into report keys (SI, unit in each
name) and flow warnings.

The sensitivity band shifts the recovery by ± 0.1 *and* takes the lossiest (low end) and the
least lossy (high end) of the transition-loss methods, whose spread is as large as the
recovery's uncertainty on short ducts (:mod:`ductgen.flow.transition`).
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any, Literal

from ductgen.errors import DesignWarning, SpecError
from ductgen.flow.atmosphere import Air, standard_air
from ductgen.flow.boundary_layer import BoundaryLayer, turbulent_flat_plate
from ductgen.flow.gradient import check_inlet_cp_gradient, layer_keys, model_thickness_m
from ductgen.flow.inputs import DuctShape
from ductgen.flow.losses import BendElement, ConeElement, CoolerElement, Element, HoseElement
from ductgen.flow.operating_point import OperatingPoint, System, solve, solve_band
from ductgen.flow.recovery import (
    CAPTURE_IVR_RANGE,
    CaptureRecovery,
    ConstantRecovery,
    RecoveryModel,
    TableRecovery,
    table_recovery,
)
from ductgen.flow.recovery_map import map_recovery, recovery_keys
from ductgen.flow.terms import INCOMPRESSIBLE_MACH, impact_pressure_pa, yaw_factor
from ductgen.flow.transition import TransitionElement, ideal_pressure_recovery
from ductgen.flow.warnings import flow_warnings
from ductgen.spec.flow import BendLoss, CoolerLoss, DiffuserLoss, FlowSpec, HoseLoss
from ductgen.spec.recovery_table import read_recovery_table

__all__ = [
    "DRAG_NOTE",
    "ELEMENT_OF",
    "SENSITIVITY_DELTA",
    "FlowAnalysis",
    "build_system",
    "flow_analysis",
    "flow_section",
]

#: Recovery shift of the sensitivity band (the flow is also given at recovery ± 0.1).
SENSITIVITY_DELTA = 0.1

TRANSITION_NAME = "internal transition"

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


def _hose(e: HoseLoss, name: str) -> Element:
    return HoseElement(name, e.length, e.diameter, e.roughness)


def _bend(e: BendLoss, name: str) -> Element:
    return BendElement(name, e.angle_deg, e.radius, e.diameter, e.roughness)


def _cooler(e: CoolerLoss, name: str) -> Element:
    return CoolerElement(name, e.k, e.face_area, e.pressure_drop, e.reference_flow)


def _diffuser(e: DiffuserLoss, name: str) -> Element:
    if e.angle_deg is not None:
        angle = e.angle_deg
    else:
        assert e.length is not None
        angle = 2.0 * math.degrees(
            math.atan(abs(e.outlet_diameter - e.inlet_diameter) / (2.0 * e.length))
        )
    return ConeElement.from_diameters(name, e.inlet_diameter, e.outlet_diameter, angle)


#: Loss ``kind`` (:data:`ductgen.spec.losses.LOSS_KINDS`) → the flow element it makes, from
#: its spec model and its name (the label, or "KIND N").
ELEMENT_OF: dict[str, Callable[[Any, str], Element]] = {
    "hose": _hose,
    "bend": _bend,
    "cooler": _cooler,
    "diffuser": _diffuser,
}


def _elements(flow: FlowSpec) -> list[Element]:
    out: list[Element] = []
    counts: dict[str, int] = {}
    for e in flow.losses:
        counts[e.kind] = counts.get(e.kind, 0) + 1
        out.append(ELEMENT_OF[e.kind](e, e.label or f"{e.kind} {counts[e.kind]}"))
    return out


def _recovery(flow: FlowSpec, delta_over_depth: float, shape: DuctShape) -> RecoveryModel:
    kind = flow.recovery_kind
    if kind == "map":
        return map_recovery(delta_over_depth, shape)
    if kind == "constant":
        assert isinstance(flow.recovery, float)
        return ConstantRecovery(flow.recovery)
    if kind == "table":
        path = str(flow.recovery)
        return table_recovery(*read_recovery_table(path), path=path)
    return CaptureRecovery(delta_over_depth=delta_over_depth, loss_factor=flow.inlet_loss_factor)


def _transition(
    flow: FlowSpec, shape: DuctShape, pick: Literal["method", "min", "max"]
) -> TransitionElement | None:
    if not shape.has_transition:
        return None
    assert shape.transition_inlet_area_mm2 and shape.transition_outlet_area_mm2
    assert shape.transition_cone_half_angle_deg is not None
    return TransitionElement(
        TRANSITION_NAME,
        shape.transition_inlet_area_mm2 * 1e-6,
        shape.transition_outlet_area_mm2 * 1e-6,
        2.0 * shape.transition_cone_half_angle_deg,
        method=flow.transition_loss,
        effectiveness=flow.transition_effectiveness,
        pick=pick,
    )


@dataclass(frozen=True)
class FlowAnalysis:
    """Everything the flow estimate computed (SI)."""

    air: Air
    boundary_layer: BoundaryLayer
    system: System
    point: OperatingPoint
    band: tuple[OperatingPoint, OperatingPoint]
    flow: FlowSpec


#: Above this Mach number the one-dimensional incompressible model is no estimate at all
#: (compressibility changes the dynamic pressure by > 9 % and the inlet's flow pattern): the
#: speed is refused; between 0.3 and this the report warns.
MACH_REFUSED = 0.6


def check_speed(flow: FlowSpec) -> None:
    """Refuse a design speed above :data:`MACH_REFUSED` at the flow section's air.

    Raises:
        SpecError: on ``flow.speed``, with the fastest speed allowed there (m/s).
    """
    air = standard_air(flow.altitude, flow.temperature_offset, flow.density)
    mach = air.mach(flow.speed)
    if mach > MACH_REFUSED:
        top = flow.speed * MACH_REFUSED / mach
        raise SpecError(
            "flow.speed",
            f"{flow.speed:.4g} m/s",
            f"<= {top:.0f} m/s (Mach {MACH_REFUSED:g} in this air)",
            f"Mach {mach:.2f}: the incompressible one-dimensional model is no estimate there",
        )


def build_system(
    flow: FlowSpec, shape: DuctShape, pick: Literal["method", "min", "max"] = "method"
) -> tuple[System, Air, BoundaryLayer]:
    """The duct system of a spec's flow section and the inlet's shape.

    ``pick`` chooses the transition's K: the spec's method, or the min/max over methods.
    """
    check_speed(flow)
    check_inlet_cp_gradient(flow)
    air = standard_air(flow.altitude, flow.temperature_offset, flow.density)
    bl = turbulent_flat_plate(flow.speed, flow.run_length, air.kinematic_viscosity_m2_s)
    depth_m, throat_m2 = shape.throat_depth_mm * 1e-3, shape.throat_area_mm2 * 1e-6
    elements: list[Element] = []
    t = _transition(flow, shape, pick)
    if t is not None:
        elements.append(t)
    elements += _elements(flow)
    exit_area = flow.exit_area
    if exit_area is None:
        areas = [e.outlet_area_m2 for e in elements if e.outlet_area_m2 is not None]
        exit_area = areas[-1] if areas else throat_m2
    mach = air.mach(flow.speed)
    system = System(
        air=air,
        speed_m_s=flow.speed,
        throat_area_m2=throat_m2,
        recovery=_recovery(flow, model_thickness_m(flow, air, bl) / depth_m, shape),
        elements=tuple(elements),
        exit_area_m2=exit_area,
        exit_cp=flow.exit_cp_value,
        inlet_cp=flow.inlet_cp,
        yaw_factor=yaw_factor(flow.flow_angle_deg),
        total_head_pa=impact_pressure_pa(air.pressure_pa, mach)
        if mach > INCOMPRESSIBLE_MACH
        else None,
        kinetic_energy_factor=flow.kinetic_energy_factor,
        momentum_factor=flow.momentum_factor_value,
        exit_kind=flow.exit_kind,
        duct_elements=0 if t is None else 1,
        duct_outlet_area_m2=throat_m2 if t is None else t.a_out_m2,
    )
    return system, air, bl


def flow_analysis(flow: FlowSpec, shape: DuctShape) -> FlowAnalysis:
    """Solve the operating point and its sensitivity band."""
    system, air, bl = build_system(flow, shape)
    point = solve(system)
    band = solve_band(
        system,
        SENSITIVITY_DELTA,
        low_system=build_system(flow, shape, "max")[0],
        high_system=build_system(flow, shape, "min")[0],
    )
    return FlowAnalysis(
        air=air, boundary_layer=bl, system=system, point=point, band=band, flow=flow
    )


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
    depth_m = shape.throat_depth_mm * 1e-3
    layer, d_max, delta_max_m, warnings = layer_keys(flow, air, bl, depth_m)
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
        "flow_angle_deg": flow.flow_angle_deg,
        **layer,
        "recovery_model": rec.kind,
        "recovery_assumption": rec.assumption,
        "exit_area_m2": sys_.exit_area_m2,
        "exit_cp": sys_.exit_cp,
        "exit_cp_source": "given" if flow.exit_cp is not None else "default",
    }
    out.update(_terms(flow, sys_))
    rec_keys, outside = recovery_keys(rec, p.inlet_velocity_ratio if p.found else None)
    out.update(rec_keys)
    warnings += [DesignWarning("recovery_map_extrapolated", m) for m in outside]
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
                / (air.pressure_pa + sys_.head_pa),
                "local_ram_recovery": p.local_recovery,
                "inlet_velocity_ratio_local": sys_.local_ivr(p.volume_flow_m3_s),
                "exit_velocity_m_s": p.exit_velocity_m_s,
                **_drag(flow, p, sys_.dynamic_pressure_pa, sys_.throat_area_m2),
                "budget": [b.to_dict() for b in p.budget],
                "budget_sum_pa": sum(b.dp_pa for b in p.budget),
            }
        )
        tr = _transition_report(fa)
        if tr is not None:
            out["transition_loss"] = tr
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
    out["sensitivity"] = _band(fa)
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
    warnings += flow_warnings(
        mach=mach,
        delta_over_depth=d_max,
        delta_m=delta_max_m,
        flow_angle_deg=flow.flow_angle_deg,
        exit_cp_given=flow.exit_cp is not None,
        ivr=p.inlet_velocity_ratio if p.found else None,
    )
    return out, warnings


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
