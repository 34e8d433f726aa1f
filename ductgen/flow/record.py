"""The flow estimate as a typed record: the report's ``flow`` section as written, and the
numbers later stages read (the drawing sheet's AIRFLOW block, the CFD case and its
comparison with the 1-D model), as attributes (SI units).

The section's keys are read here, once, beside the module that writes them
(:mod:`ductgen.flow.report`); every other stage reads the attributes.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

from ductgen.flow.losses import BudgetItem

__all__ = ["FlowRecord", "LayerGradient"]


@dataclass(frozen=True)
class LayerGradient:
    """Head's method along the surface-pressure gradient (``boundary_layer_gradient``)."""

    inlet_cp_gradient_per_m: float
    shape_factor: float
    separated: bool


def _opt(section: Mapping[str, Any], key: str) -> float | None:
    v = section.get(key)
    return None if v is None else float(v)


def _budget(section: Mapping[str, Any]) -> tuple[BudgetItem, ...]:
    """The section's pressure budget (m/s, K, Pa), in order; empty when it has none."""
    return tuple(
        BudgetItem(b["element"], _opt(b, "velocity_m_s"), _opt(b, "k"), float(b["dp_pa"]))
        for b in section.get("budget", [])
    )


def _gradient(section: Mapping[str, Any]) -> LayerGradient | None:
    """Head's method (dCp/dx in 1/m, H, separated) from ``boundary_layer_gradient``, or
    None when the section has no pressure gradient."""
    grad = section.get("boundary_layer_gradient")
    if grad is None:
        return None
    return LayerGradient(
        float(grad["inlet_cp_gradient_per_m"]),
        float(grad["shape_factor"]),
        bool(grad.get("separated")),
    )


@dataclass(frozen=True)
class FlowRecord:
    """The ``flow`` section (``section``, written to ``report.json`` unchanged) and its
    numbers as typed attributes.

    Attributes:
        speed_m_s, mach: design speed (m/s) and its Mach number.
        density_kg_m3, kinematic_viscosity_m2_s: the air (kg/m³, m²/s).
        run_length_m, boundary_layer_thickness_m: the run ahead of the inlet and the layer's
            thickness at the inlet (m).
        flow_angle_deg: the local flow's angle to the inlet's axis (deg).
        found: an operating point was found.
        volume_flow_m3_s, inlet_velocity_ratio, ram_recovery: at the operating point.
        volume_flow_low_m3_s, volume_flow_high_m3_s: the sensitivity band (m³/s).
        recovery_model: the recovery model's kind.
        momentum_drag_n, external_drag_n: drags (N); exit_direction: where the exit points.
        kinetic_energy_factor, kinetic_energy_given: the outflow's α and whether it was given.
        exit: ``plenum`` or ``hose``; mixing_k: the hose's mixing loss (K on q), if any.
        inlet_cp, yaw_factor, recovery_head: surface pressure, yaw factor, the head's basis.
        required_flow_m3_s, meets_required_flow: the requirement (m³/s) and the verdict.
        exit_cp, exit_cp_given: the exit's pressure coefficient and whether it was given.
        gradient: Head's method when a pressure gradient was given, else None.
        delta_over_depth_max: the largest δ/D the model used.
        transition_k, transition_k_by_method: the internal transition's K (on the small
            end's velocity) and its value by method, when there is a transition.
        operating_point_note: why no operating point was found (None when found).
        mass_flow_kg_s, recovered_total_pressure_pa: at the operating point (kg/s, Pa).
        budget: the pressure budget at the operating point, in order (empty when none).
        delta_over_depth: the boundary layer's δ/D at the inlet.
        recovery_source, recovery_uncertainty: where the recovery comes from (one line)
            and its stated uncertainty (None when none is stated);
            recovery_map_points: the CFD map's point count, when the model is the map.
        dynamic_pressure_pa, impact_pressure_pa, recovery_head_pa: ½ρV², the isentropic
            impact pressure and the head the recovery applies to (Pa).
        momentum_factor: the outflow's β.
    """

    section: dict[str, Any]
    speed_m_s: float
    mach: float
    density_kg_m3: float
    kinematic_viscosity_m2_s: float
    run_length_m: float
    boundary_layer_thickness_m: float
    flow_angle_deg: float
    found: bool
    volume_flow_m3_s: float | None
    inlet_velocity_ratio: float | None
    ram_recovery: float | None
    volume_flow_low_m3_s: float | None
    volume_flow_high_m3_s: float | None
    recovery_model: str | None
    momentum_drag_n: float | None
    exit_direction: str | None
    external_drag_n: float | None
    kinetic_energy_factor: float | None
    kinetic_energy_given: bool
    exit: str | None
    mixing_k: float | None
    inlet_cp: float | None
    yaw_factor: float | None
    recovery_head: str
    required_flow_m3_s: float | None
    meets_required_flow: bool
    exit_cp: float
    exit_cp_given: bool
    gradient: LayerGradient | None
    delta_over_depth_max: float
    transition_k: float | None
    transition_k_by_method: dict[str, float] | None
    operating_point_note: str | None
    mass_flow_kg_s: float | None
    recovered_total_pressure_pa: float | None
    budget: tuple[BudgetItem, ...]
    delta_over_depth: float
    recovery_source: str
    recovery_uncertainty: float | None
    recovery_map_points: int | None
    dynamic_pressure_pa: float
    impact_pressure_pa: float | None
    recovery_head_pa: float | None
    momentum_factor: float | None

    @classmethod
    def of_section(cls, section: dict[str, Any]) -> FlowRecord:
        """The record of a ``flow`` section (as :func:`ductgen.flow.report.flow_section`
        writes it)."""
        s = section
        band = s.get("sensitivity") or {}
        budget = _budget(s)
        mixing = next((b for b in budget if b.element == "hose mixing"), None)
        t = s.get("transition_loss") or {}
        rmap = s.get("recovery_map")
        return cls(
            section=section,
            speed_m_s=float(s["speed_m_s"]),
            mach=float(s["mach"]),
            density_kg_m3=float(s["density_kg_m3"]),
            kinematic_viscosity_m2_s=float(s["kinematic_viscosity_m2_s"]),
            run_length_m=float(s["run_length_m"]),
            boundary_layer_thickness_m=float(s["boundary_layer_thickness_m"]),
            flow_angle_deg=float(s.get("flow_angle_deg", 0.0)),
            found=s.get("operating_point") == "found",
            volume_flow_m3_s=_opt(s, "volume_flow_m3_s"),
            inlet_velocity_ratio=_opt(s, "inlet_velocity_ratio"),
            ram_recovery=_opt(s, "ram_recovery"),
            volume_flow_low_m3_s=_opt(band, "volume_flow_low_m3_s"),
            volume_flow_high_m3_s=_opt(band, "volume_flow_high_m3_s"),
            recovery_model=s.get("recovery_model"),
            momentum_drag_n=_opt(s, "momentum_drag_n"),
            exit_direction=s.get("exit_direction"),
            external_drag_n=_opt(s, "external_drag_n"),
            kinetic_energy_factor=_opt(s, "kinetic_energy_factor"),
            kinetic_energy_given=s.get("kinetic_energy_factor_source") == "given",
            exit=s.get("exit"),
            mixing_k=None if mixing is None else mixing.k,
            inlet_cp=_opt(s, "inlet_cp"),
            yaw_factor=_opt(s, "yaw_factor"),
            recovery_head=str(s.get("recovery_head")),
            required_flow_m3_s=_opt(s, "required_flow_m3_s"),
            meets_required_flow=bool(s.get("meets_required_flow")),
            exit_cp=float(s["exit_cp"]),
            exit_cp_given=s.get("exit_cp_source") != "default",
            gradient=_gradient(s),
            delta_over_depth_max=float(s["delta_over_depth_max"]),
            transition_k=_opt(t, "k"),
            transition_k_by_method=t.get("k_by_method"),
            operating_point_note=s.get("operating_point_note"),
            mass_flow_kg_s=_opt(s, "mass_flow_kg_s"),
            recovered_total_pressure_pa=_opt(s, "recovered_total_pressure_pa"),
            budget=budget,
            delta_over_depth=float(s["delta_over_depth"]),
            recovery_source=str(s.get("recovery_source", "")),
            recovery_uncertainty=_opt(s, "recovery_uncertainty"),
            recovery_map_points=None if rmap is None else int(rmap["points"]),
            dynamic_pressure_pa=float(s["dynamic_pressure_pa"]),
            impact_pressure_pa=_opt(s, "impact_pressure_pa"),
            recovery_head_pa=_opt(s, "recovery_head_pa"),
            momentum_factor=_opt(s, "momentum_factor"),
        )
