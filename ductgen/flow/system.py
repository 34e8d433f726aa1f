"""The duct system of ``[flow]`` and the duct shape, solved.

:func:`flow_analysis` assembles the air, the boundary layer, the recovery model, the loss
elements (the internal transition first, from the :class:`~ductgen.flow.inputs.DuctShape`)
and the exit into a :class:`~ductgen.flow.operating_point.System`, solves it and its
sensitivity band (:mod:`ductgen.flow.report` turns the result into report keys).

The sensitivity band shifts the recovery by ± 0.1 *and* takes the lossiest (low end) and the
least lossy (high end) of the transition-loss methods, whose spread is as large as the
recovery's uncertainty on short ducts (:mod:`ductgen.flow.transition`).
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any, Literal

from ductgen.errors import SpecError
from ductgen.flow.atmosphere import Air, standard_air
from ductgen.flow.boundary_layer import BoundaryLayer, turbulent_flat_plate
from ductgen.flow.gradient import check_inlet_cp_gradient, model_thickness_m
from ductgen.flow.inputs import DuctShape
from ductgen.flow.losses import BendElement, ConeElement, CoolerElement, Element, HoseElement
from ductgen.flow.operating_point import OperatingPoint, System, solve, solve_band
from ductgen.flow.recovery import (
    CaptureRecovery,
    ConstantRecovery,
    RecoveryModel,
    table_recovery,
)
from ductgen.flow.recovery_map import map_recovery
from ductgen.flow.terms import INCOMPRESSIBLE_MACH, impact_pressure_pa, yaw_factor
from ductgen.flow.transition import TransitionElement
from ductgen.spec.flow import BendLoss, CoolerLoss, DiffuserLoss, FlowSpec, HoseLoss
from ductgen.spec.recovery_table import read_recovery_table

__all__ = [
    "ELEMENT_OF",
    "MACH_REFUSED",
    "SENSITIVITY_DELTA",
    "TRANSITION_NAME",
    "FlowAnalysis",
    "build_system",
    "check_speed",
    "flow_analysis",
]

#: Recovery shift of the sensitivity band (the flow is also given at recovery ± 0.1).
SENSITIVITY_DELTA = 0.1

TRANSITION_NAME = "internal transition"


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
