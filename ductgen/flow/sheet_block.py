"""The drawing sheet's AIRFLOW block: a few lines of text from the build's flow record.

The workshop wall is where people look, so the sheet carries the result at the design speed:
delivered flow, its sensitivity band, IVR, recovery, whether the requirement is met, the ram
drag, the outflow's kinetic-energy factor and where it goes, the local surface pressure, the
flow angle's cost, and the assumptions that move the answer most. Plain ASCII (the sheet
uses the PDF core fonts). Pure: no drawing here.
"""

from __future__ import annotations

from ductgen.flow.record import FlowRecord

__all__ = ["FLOW_BLOCK_TITLE", "flow_block_lines"]

FLOW_BLOCK_TITLE = "AIRFLOW (1-D estimate, not a test result)"


def _litres(q: float | None) -> str:
    return "none" if q is None else f"{q * 1000:.1f}"


def flow_block_lines(flow: FlowRecord) -> list[str]:
    """Lines of the block, top to bottom, from the build's flow record (SI)."""
    v = flow.speed_m_s
    lines = [f"design speed {v * 3.6:.0f} km/h ({v:.1f} m/s), Mach {flow.mach:.2f}"]
    if flow.found:
        lines += _operating_lines(flow)
    else:
        lines.append("no operating point: the losses exceed the recovered pressure")
    if flow.inlet_cp is not None:
        head = "impact pressure" if "impact" in flow.recovery_head else "1/2 rho V^2"
        lines.append(
            f"inlet_cp {flow.inlet_cp:g}, flow angle {flow.flow_angle_deg:g} deg "
            f"(head x{flow.yaw_factor:.3f}), recovery on {head}"
        )
    if flow.required_flow_m3_s is not None:
        met = "MET" if flow.meets_required_flow else "NOT MET"
        lines.append(f"required {flow.required_flow_m3_s * 1000:.1f} L/s: {met}")
    cp = f"exit_cp {flow.exit_cp:g}"
    if not flow.exit_cp_given:
        cp += " (not given: ambient assumed)"
    layer = "boundary layer"
    grad = flow.gradient
    if grad is not None:
        layer = (
            f"Head's method, dCp/dx {grad.inlet_cp_gradient_per_m:g} /m, H "
            f"{grad.shape_factor:.2f}" + (", SEPARATES" if grad.separated else "")
        )
    lines.append(f"delta/D {flow.delta_over_depth_max:.2f} ({layer}), {cp}")
    return lines


def _operating_lines(flow: FlowRecord) -> list[str]:
    """Flow, band, IVR and recovery, drag and outflow at the operating point."""
    q = flow.volume_flow_m3_s
    assert q is not None
    lo_t, hi_t = _litres(flow.volume_flow_low_m3_s), _litres(flow.volume_flow_high_m3_s)
    drag = (
        f"drag {flow.momentum_drag_n:.2f} N "
        + ("(ram, m*V0)" if flow.exit_direction != "rearward" else "(net, rearward exit)")
        + (
            "; external drag not included"
            if flow.external_drag_n is None
            else f" + external {flow.external_drag_n:.2f} N (given C_D)"
        )
    )
    return [
        f"delivered flow {q * 1000:.1f} L/s ({q:.4f} m3/s)",
        f"band {lo_t} - {hi_t} L/s (recovery +/-0.1, transition-loss spread)",
        f"inlet velocity ratio {flow.inlet_velocity_ratio:.2f}, ram recovery "
        f"{flow.ram_recovery:.3f} ({flow.recovery_model})",
        drag,
        _outflow_line(flow),
    ]


def _outflow_line(flow: FlowRecord) -> str:
    """The kinetic-energy factor, where the inlet's duct delivers and what that costs."""
    a = flow.kinetic_energy_factor
    if a is None:
        return "outflow taken as uniform"
    src = "given" if flow.kinetic_energy_given else "project CFD"
    if flow.exit == "plenum":  # the whole alpha q of the duct's outflow is lost
        return f"outflow alpha {a:.2f} ({src}) into a plenum: {a:.2f} q lost"
    cost = "" if flow.mixing_k is None else f", mixing loss {flow.mixing_k:.2f} q"
    return f"outflow alpha {a:.2f} ({src}) into a hose{cost}"
