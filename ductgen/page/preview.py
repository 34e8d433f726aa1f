"""The live preview: spec data as typed in the page → the numbers, drawings, airflow and
warnings the page shows, or the problems to show beside the fields.

Computed from :func:`~ductgen.design.build_design` and
:func:`~ductgen.flow.report.flow_section` only (tens of milliseconds; no CAD kernel).
"""

from __future__ import annotations

import copy
import threading
from pathlib import Path
from typing import Any

from ductgen.design import Design, build_design
from ductgen.display import SHOWN
from ductgen.errors import DesignWarning, DuctgenError, SpecError
from ductgen.flow.record import FlowRecord
from ductgen.page.captions import skin_caption
from ductgen.page.draw import plan_svg, section_svg
from ductgen.page.panel_view import panel_svg
from ductgen.spec import Spec, parse_spec

__all__ = ["check_spec", "flow_rows", "key_numbers", "preview", "problem_lines"]


def problem_lines(err: SpecError) -> list[dict[str, str]]:
    """One ``{"key", "sentence"}`` per problem; the sentence is the line the CLI prints for
    that key (``throat.width = '12 kg' (...)``), formatted by :class:`SpecError` itself."""
    out = []
    for p in err.problems:
        one = SpecError(p.key, p.value, p.allowed, p.reason)
        out.append({"key": p.key, "sentence": str(one).splitlines()[1].strip()})
    return out


def check_spec(data: Any, base_dir: Path | None) -> tuple[Spec, Design]:
    """Validate page data into a spec and its design (every cross-field rule checked).

    Raises:
        SpecError: any problem, naming the key.
    """
    if not isinstance(data, dict):
        raise SpecError("(top level)", None, "a table of sections", "nothing to read")
    spec = parse_spec(data, base_dir=base_dir)
    return spec, build_design(spec)


def _row(key: str, stored: float | None, shown_as: str | None = None) -> dict[str, Any]:
    """One shown number: its label, unit and digits from :data:`ductgen.display.SHOWN` (under
    ``shown_as`` when one report key is worded by context), its value (``stored`` in the
    report's unit) in the shown unit."""
    how = SHOWN[shown_as or key]
    value = None if stored is None else how.value(stored)
    return {"key": key, "label": how.label, "value": value, "unit": how.unit, "digits": how.digits}


def key_numbers(d: Design) -> list[dict[str, Any]]:
    """The key numbers block (mm, mm², deg, cm³), with the transition's steepest wall against
    the two-dimensional diffuser stall line (:mod:`ductgen.flow.stall`) when there is one."""
    from ductgen.flow.stall import steepest_wall

    g = d.geometry
    pf, fl = g.planform, g.floor
    rows = [
        _row("throat_width_mm", g.width_mm),
        _row("throat_depth_mm", g.depth_mm),
        _row("ramp_length_mm", g.length_mm),
        _row("floor_drop_mm", g.drop_mm),
        _row("ramp_angle_deg", fl.angle_deg),
        _row("throat_area_mm2", g.throat_area_mm2),
        _row("max_wall_divergence_deg", pf.max_divergence_deg),
        _row("apex_width_mm", pf.apex_width_mm),
        _row("ramp_cavity_volume_mm3", g.ramp_cavity_volume_mm3),
    ]
    if g.transition is not None:
        rows.append(_row("transition_area_ratio", g.transition.area_ratio))
    wall = steepest_wall(d.duct)
    if wall is not None:
        rows += [
            _row("steepest_wall_angle_deg", wall.angle_deg),
            _row("stall_line_included_deg", wall.stall_line_included_deg),
            _row("length_under_stall_line_mm", wall.length_under_stall_line_mm),
        ]
    return rows


def _source(flow: FlowRecord) -> str:
    """The recovery's source in a few words (the report's ``recovery_source`` says it in
    full)."""
    kind = flow.recovery_model or ""
    if kind == "map":
        return f"ductgen CFD map ({flow.recovery_map_points} points)"
    return {
        "capture": "capture model (no published source)",
        "constant": "constant from the spec",
        "table": "your table",
    }.get(kind, flow.recovery_source)


def flow_rows(section: dict[str, Any]) -> list[dict[str, Any]]:
    """The airflow block from the report's ``flow`` section (km/h, L/s, kg/s, N shown), read
    through its typed record (:class:`~ductgen.flow.record.FlowRecord`)."""
    flow = FlowRecord.of_section(section)
    rows = [
        _row("speed_m_s", flow.speed_m_s),
        _row("mach", flow.mach),
        _row("volume_flow_m3_s", flow.volume_flow_m3_s),
        _row("volume_flow_low_m3_s", flow.volume_flow_low_m3_s),
        _row("volume_flow_high_m3_s", flow.volume_flow_high_m3_s),
        _row("inlet_velocity_ratio", flow.inlet_velocity_ratio),
        _row("ram_recovery", flow.ram_recovery),
        _row("recovery_uncertainty", flow.recovery_uncertainty),
        {**_row("recovery_source", None), "text": _source(flow)},
        _row("mass_flow_kg_s", flow.mass_flow_kg_s),
        _row("delta_over_depth_max", flow.delta_over_depth_max),
        _row("momentum_drag_n", flow.momentum_drag_n),
    ]
    if flow.external_drag_n is not None:
        rows.append(_row("external_drag_n", flow.external_drag_n))
    if flow.required_flow_m3_s is not None:
        rows.append(_row("required_flow_m3_s", flow.required_flow_m3_s))
    return rows + _term_rows(flow)


def _term_rows(flow: FlowRecord) -> list[dict[str, Any]]:
    """The reviewer's terms: the head (½ρV² beside the isentropic impact pressure, and the
    one the recovery applies to), the surface Cp, the flow angle's factor, the outflow's α
    with where it goes, and β when a hose mixes it out."""
    if flow.recovery_head_pa is None:
        return []
    rows = [
        _row("dynamic_pressure_pa", flow.dynamic_pressure_pa),
        _row("impact_pressure_pa", flow.impact_pressure_pa),
        _row("recovery_head_pa", flow.recovery_head_pa),
        _row("inlet_cp", flow.inlet_cp),
        _row("yaw_factor", flow.yaw_factor),
    ]
    where = "plenum" if flow.exit == "plenum" else "hose"
    rows.append(
        _row(
            "kinetic_energy_factor",
            flow.kinetic_energy_factor,
            shown_as=f"kinetic_energy_factor_{where}",
        )
    )
    if flow.exit == "hose":
        rows.append(_row("momentum_factor", flow.momentum_factor))
    if flow.gradient is not None:  # Head's method along the Cp gradient
        rows.append(_row("shape_factor", flow.gradient.shape_factor))
    return rows


#: The airflow of recent (flow section, duct) pairs: an edit of the ramp, the lip or the
#: flange leaves the airflow inputs as they were, and its operating point takes most of a
#: redraw's time (dozens of root-finder steps through the loss models).
_FLOW_CACHE: dict[str, tuple[dict[str, Any], list[DesignWarning]]] = {}
_FLOW_CACHE_SIZE = 32
_FLOW_LOCK = threading.Lock()


def _flow(spec: Spec, d: Design) -> tuple[dict[str, Any], list[DesignWarning]]:
    from ductgen.flow.report import flow_section

    assert spec.flow is not None
    key = spec.flow.model_dump_json() + repr(d.duct)
    with _FLOW_LOCK:
        hit = _FLOW_CACHE.get(key)
    if hit is None:
        hit = flow_section(spec.flow, d.duct)
        with _FLOW_LOCK:
            if len(_FLOW_CACHE) >= _FLOW_CACHE_SIZE:
                _FLOW_CACHE.pop(next(iter(_FLOW_CACHE)))
            _FLOW_CACHE[key] = hit
    return copy.deepcopy(hit[0]), list(hit[1])


def _warnings(ws: list[DesignWarning]) -> list[dict[str, str]]:
    return [{"code": w.code, "message": w.message} for w in ws]


def preview(data: Any, base_dir: Path | None = None) -> dict[str, Any]:
    """Everything the page shows for ``data`` (the spec as plain data, units as text).

    Returns ``{"ok": False, "problems": [...], "message": CLI text}`` for bad input, else
    ``{"ok": True, "name", "numbers", "flow", "meets_required", "warnings", "plan_svg",
    "section_svg"}``.
    """
    try:
        spec, d = check_spec(data, base_dir)
    except SpecError as err:
        return {"ok": False, "problems": problem_lines(err), "message": str(err)}
    except DuctgenError as err:
        return {"ok": False, "problems": [], "message": str(err)}
    warnings = list(d.warnings)
    flow: dict[str, Any] | None = None
    meets = None
    if spec.flow is not None:
        section, fw = _flow(spec, d)
        warnings += fw
        rec = FlowRecord.of_section(section)
        flow = {
            "rows": flow_rows(section),
            "operating_point": "found" if rec.found else "none",
            "note": rec.operating_point_note,
        }
        meets = None if rec.required_flow_m3_s is None else rec.meets_required_flow
    return {
        "ok": True,
        "name": spec.name,
        "numbers": key_numbers(d),
        "flow": flow,
        "meets_required": meets,
        "warnings": _warnings(warnings),
        "plan_svg": plan_svg(d),
        "section_svg": section_svg(d),
        "skin_caption": skin_caption(d),
        "panel_svg": panel_svg(d),
    }
