"""The drawing sheet's AIRFLOW block: a few lines of text from the report's ``flow`` section.

The workshop wall is where people look, so the sheet carries the result at the design speed:
delivered flow, its sensitivity band, IVR, recovery, whether the requirement is met, the ram
drag, the outflow's kinetic-energy factor and where it goes, the local surface pressure, the
flow angle's cost, and the assumptions that move the answer most. Plain ASCII (the sheet
uses the PDF core fonts). Pure: no drawing here.
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

__all__ = ["FLOW_BLOCK_TITLE", "flow_block_lines"]

FLOW_BLOCK_TITLE = "AIRFLOW (1-D estimate, not a test result)"


def flow_block_lines(flow: Mapping[str, Any]) -> list[str]:
    """Lines of the block, top to bottom, from a report ``flow`` section (SI keys)."""
    v = float(flow["speed_m_s"])
    lines = [f"design speed {v * 3.6:.0f} km/h ({v:.1f} m/s), Mach {flow['mach']:.2f}"]
    if flow.get("operating_point") == "found":
        q = float(flow["volume_flow_m3_s"])
        lines.append(f"delivered flow {q * 1000:.1f} L/s ({q:.4f} m3/s)")
        band = flow.get("sensitivity", {})
        lo, hi = band.get("volume_flow_low_m3_s"), band.get("volume_flow_high_m3_s")
        lo_t = "none" if lo is None else f"{lo * 1000:.1f}"
        hi_t = "none" if hi is None else f"{hi * 1000:.1f}"
        lines.append(f"band {lo_t} - {hi_t} L/s (recovery +/-0.1, transition-loss spread)")
        lines.append(
            f"inlet velocity ratio {flow['inlet_velocity_ratio']:.2f}, ram recovery "
            f"{flow['ram_recovery']:.3f} ({flow['recovery_model']})"
        )
        lines.append(
            f"drag {flow['momentum_drag_n']:.2f} N "
            + (
                "(ram, m*V0)"
                if flow.get("exit_direction") != "rearward"
                else "(net, rearward exit)"
            )
            + (
                "; external drag not included"
                if flow.get("external_drag_n") is None
                else f" + external {flow['external_drag_n']:.2f} N (given C_D)"
            )
        )
        lines.append(_outflow_line(flow))
    else:
        lines.append("no operating point: the losses exceed the recovered pressure")
    if "inlet_cp" in flow:
        head = "impact pressure" if "impact" in str(flow.get("recovery_head")) else "1/2 rho V^2"
        lines.append(
            f"inlet_cp {flow['inlet_cp']:g}, flow angle {flow['flow_angle_deg']:g} deg "
            f"(head x{flow['yaw_factor']:.3f}), recovery on {head}"
        )
    if "required_flow_m3_s" in flow:
        met = "MET" if flow.get("meets_required_flow") else "NOT MET"
        lines.append(f"required {flow['required_flow_m3_s'] * 1000:.1f} L/s: {met}")
    cp = f"exit_cp {flow['exit_cp']:g}"
    if flow.get("exit_cp_source") == "default":
        cp += " (not given: ambient assumed)"
    layer = "boundary layer"
    grad = flow.get("boundary_layer_gradient")
    if grad is not None:
        layer = (
            f"Head's method, dCp/dx {grad['inlet_cp_gradient_per_m']:g} /m, H "
            f"{grad['shape_factor']:.2f}" + (", SEPARATES" if grad.get("separated") else "")
        )
    lines.append(f"delta/D {flow['delta_over_depth_max']:.2f} ({layer}), {cp}")
    return lines


def _outflow_line(flow: Mapping[str, Any]) -> str:
    """The kinetic-energy factor, where the inlet's duct delivers and what that costs."""
    a = flow.get("kinetic_energy_factor")
    if a is None:
        return "outflow taken as uniform"
    src = "given" if flow.get("kinetic_energy_factor_source") == "given" else "project CFD"
    if flow.get("exit") == "plenum":  # the whole alpha q of the duct's outflow is lost
        return f"outflow alpha {a:.2f} ({src}) into a plenum: {a:.2f} q lost"
    item = next((b for b in flow.get("budget", []) if b["element"] == "hose mixing"), None)
    cost = "" if item is None else f", mixing loss {item['k']:.2f} q"
    return f"outflow alpha {a:.2f} ({src}) into a hose{cost}"
