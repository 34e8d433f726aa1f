"""Operating point, pressure budget, report section and warnings."""

from __future__ import annotations

from typing import Any

import pytest

from ductgen.design import build_design
from ductgen.errors import DesignWarning
from ductgen.flow.operating_point import solve
from ductgen.flow.report import flow_section
from ductgen.flow.system import build_system
from ductgen.report import start_record
from ductgen.spec import parse_spec


def _spec(flow: dict[str, Any] | None = None, **over: Any) -> Any:
    data: dict[str, Any] = {
        "name": "t",
        "throat": {"width": 120, "depth": 30},
        "ramp": {"angle_deg": 7.0, "entry_radius": 150},
        "outlet": {"kind": "round", "diameter": "3 in", "transition_length": 160},
    }
    data.update(over)
    if flow is not None:
        data["flow"] = flow
    return parse_spec(data)


BASE_FLOW = {
    "speed": "160 km/h",
    "run_length": "1.4 m",
    "required_flow": "0.06 m^3/s",
    "losses": [
        {"kind": "hose", "length": "1.2 m", "diameter": "3 in"},
        {"kind": "bend", "angle_deg": 90, "radius": "6 in", "diameter": "3 in"},
        {"kind": "cooler", "k": 6.0, "face_area": "150 cm^2"},
    ],
}


def _section(spec: Any) -> tuple[dict[str, Any], list[DesignWarning]]:
    return flow_section(spec.flow, build_design(spec).duct)


def test_energy_balance_and_budget_close() -> None:
    spec = _spec(BASE_FLOW)
    f, _ = _section(spec)
    assert f["operating_point"] == "found"
    q_inf = 0.5 * f["density_kg_m3"] * f["speed_m_s"] ** 2
    assert f["dynamic_pressure_pa"] == pytest.approx(q_inf, rel=1e-12)
    recovered = f["ram_recovery"] * q_inf
    assert f["recovered_total_pressure_pa"] == pytest.approx(recovered, rel=1e-12)
    # the budget, exit included, adds up to the recovered pressure
    total = sum(b["dp_pa"] for b in f["budget"])
    assert total == pytest.approx(recovered, rel=1e-6)
    # each line is k * 1/2 rho V^2 at its own velocity
    for b in f["budget"]:
        if b["element"] == "exit static pressure":
            assert b["dp_pa"] == pytest.approx(b["k"] * q_inf, rel=1e-12)
        else:
            assert b["dp_pa"] == pytest.approx(
                b["k"] * 0.5 * f["density_kg_m3"] * b["velocity_m_s"] ** 2, rel=1e-12
            )
    names = [b["element"] for b in f["budget"]]
    assert names == [
        "internal transition",
        "hose mixing",  # the transition's non-uniform outflow mixes out in the hose
        "hose 1",
        "bend 1",
        "cooler 1",
        "exit static pressure",
        "exit dynamic head",
    ]
    # re-evaluate the balance independently at the reported flow
    system, _, _ = build_system(spec.flow, build_design(spec).duct)
    q = f["volume_flow_m3_s"]
    assert abs(system.residual_pa(q)) <= 1e-6 * recovered
    assert f["mass_flow_kg_s"] == pytest.approx(f["density_kg_m3"] * q, rel=1e-12)
    assert f["inlet_velocity_ratio"] == pytest.approx(
        q / (0.120 * 0.030 * f["speed_m_s"]), rel=1e-12
    )
    # the exit defaults to the last element's outlet: here the cooler face, 150 cm^2
    assert f["exit_area_m2"] == pytest.approx(0.015, rel=1e-12)
    v_exit = q / 0.015
    assert f["exit_velocity_m_s"] == pytest.approx(v_exit, rel=1e-12)
    # default: the air is dumped internally, so the drag is the ram drag m*V0 (no exit thrust)
    assert f["exit_direction"] == "internal" and "net_momentum_drag_n" not in f
    assert f["ram_drag_n"] == pytest.approx(f["mass_flow_kg_s"] * f["speed_m_s"], rel=1e-9)
    assert f["momentum_drag_n"] == f["ram_drag_n"]


def test_longer_hose_lowers_flow() -> None:
    short = _section(_spec(BASE_FLOW))[0]["volume_flow_m3_s"]
    longer = {
        **BASE_FLOW,
        "losses": [{**BASE_FLOW["losses"][0], "length": "2.4 m"}, *BASE_FLOW["losses"][1:]],
    }
    long_q = _section(_spec(longer))[0]["volume_flow_m3_s"]
    assert long_q < short


def test_mass_flow_example_with_fixed_recovery_and_ivr() -> None:
    # source: [derived] flow sanity figure: m = rho (V1/V0) V0 W D; W = 100 mm, D = 25 mm,
    # V0 = 50 m/s, IVR 0.6, rho = 1.225 -> 0.091875 kg/s.
    # With no outlet and no losses, the exit is the throat: r q = cp q + IVR^2 q, so a
    # constant recovery 0.8 and exit_cp = 0.44 fix IVR = sqrt(0.8 - 0.44) = 0.6 [derived]
    # for uniform outflow (kinetic_energy_factor 1; the plenum dump of alpha q is tested in
    # tests/test_flow_terms.py).
    flow = {"speed": "50 m/s", "density": "1.225 kg/m^3", "recovery": 0.8, "exit_cp": 0.44}
    spec = _spec(
        {**flow, "kinetic_energy_factor": 1.0},
        throat={"width": 100, "depth": 25},
        outlet={"kind": "none"},
    )
    f, _ = _section(spec)
    assert f["ram_recovery"] == 0.8  # a constant recovery is used exactly
    assert f["inlet_velocity_ratio"] == pytest.approx(0.6, rel=1e-9)
    assert f["mass_flow_kg_s"] == pytest.approx(0.091875, rel=1e-9)


def test_ram_recovery_is_not_total_pressure_ratio() -> None:
    # source: [derived]: (H - p0)/(H0 - p0) = 0.80 at sea level, 50 m/s
    # -> H/H0 = 0.99702
    spec = _spec({"speed": "50 m/s", "recovery": 0.8}, outlet={"kind": "none"})
    f, _ = _section(spec)
    assert f["total_pressure_ratio"] == pytest.approx(0.99702, abs=1e-5)


def test_capture_model_labelled_and_band() -> None:
    f, _ = _section(_spec(BASE_FLOW))
    assert f["recovery_model"] == "capture"
    assert (
        "first-principles" in f["recovery_assumption"]
        and "not a published curve" in f["recovery_assumption"]
    )
    assert f["inlet_loss_factor"] == 0.95
    band = f["sensitivity"]
    assert band["recovery_delta"] == 0.1
    assert band["volume_flow_low_m3_s"] < f["volume_flow_m3_s"] < band["volume_flow_high_m3_s"]
    assert f["meets_required_flow"] is True


def test_no_operating_point_is_said_not_numbered() -> None:
    spec = _spec(
        {"speed": "30 m/s", "recovery": 0.5, "exit_cp": 0.7, "required_flow": "0.01 m^3/s"}
    )
    f, warns = _section(spec)
    assert f["operating_point"] == "none"
    assert "no positive flow" in f["operating_point_note"]
    assert "volume_flow_m3_s" not in f and "mass_flow_kg_s" not in f
    assert f["meets_required_flow"] is False
    codes = {w.code for w in warns}
    assert {"no_operating_point", "required_flow_not_met"} <= codes
    system, _, _ = build_system(spec.flow, build_design(spec).duct)
    assert not solve(system).found


def test_flow_warnings() -> None:
    # Mach > 0.3 (incompressible model); delta/D > 1 (long run, shallow throat)
    spec = _spec({"speed": "420 km/h", "run_length": "6 m"}, throat={"width": 60, "depth": 15})
    codes = {w.code for w in _section(spec)[1]}
    assert "mach_above_incompressible" in codes
    assert "boundary_layer_thick" in codes


class _Report:
    """The report sections and warnings a build without solids writes."""

    def __init__(self, spec: Any) -> None:
        record = start_record(spec, build_design(spec), {}, "0" * 64, "t")
        self.report, self.warnings = record.to_report(), record.warnings


def _run_hooks(spec: Any) -> _Report:
    return _Report(spec)


def test_report_hook_fills_flow_keys() -> None:
    ctx = _run_hooks(_spec(BASE_FLOW))
    f = ctx.report["flow"]
    for key in (
        "density_kg_m3",
        "speed_m_s",
        "dynamic_pressure_pa",
        "boundary_layer_thickness_m",
        "delta_over_depth",
        "inlet_velocity_ratio",
        "volume_flow_m3_s",
        "mass_flow_kg_s",
        "ram_recovery",
        "momentum_drag_n",
        "meets_required_flow",
        "budget",
        "mach",
        "recovery_model",
        "recovery_assumption",
        "sensitivity",
    ):
        assert key in f, key


def test_geometry_warnings_without_flow() -> None:
    # NACA RM A7I30: ramp angle 5-7 deg and W/D 3-5 recommended [published];
    # included diffuser angle above ~8 deg (common practice, no source)
    spec = parse_spec(
        {
            "throat": {"width": 200, "depth": 25},
            "ramp": {"angle_deg": 10.0},
            "outlet": {"kind": "round", "diameter": 90, "transition_length": 40},
        }
    )
    ctx = _run_hooks(spec)
    assert "flow" not in ctx.report
    codes = {w.code for w in ctx.warnings}
    assert {
        "ramp_angle_outside_tested",
        "aspect_ratio_outside_tested",
        "diffuser_angle_large",
    } <= codes
    good = parse_spec({"throat": {"width": 100, "depth": 25}, "ramp": {"angle_deg": 6.0}})
    good_codes = {w.code for w in _run_hooks(good).warnings}
    assert not {"ramp_angle_outside_tested", "aspect_ratio_outside_tested"} & good_codes


def test_table_recovery_in_report(tmp_path: Any) -> None:
    table = tmp_path / "rec.csv"
    table.write_text("ivr,recovery\n0.2,0.6\n1.5,0.6\n", encoding="utf-8")
    flow = {**BASE_FLOW, "recovery": str(table)}
    f, _ = _section(_spec(flow))
    assert f["recovery_model"] == "table"
    assert f["ram_recovery"] == pytest.approx(0.6, abs=1e-15)
