"""Airflow numbers an aerodynamicist would sign.

Sources beside each check: ``fluids`` (reference library), Blevins *Applied Fluid Dynamics
Handbook* §7.4, NACA RM A7I30 (recommended grid), [derived] values (docs/sources.md), White's
boundary-layer formula; rules of thumb are marked "common practice, no source".
"""

from __future__ import annotations

import json
import math
from pathlib import Path
from typing import Any

import pymupdf
import pytest
from fluids.fittings import diffuser_conical

from ductgen.design import build_design, geometry_from_spec
from ductgen.flow.boundary_layer import turbulent_flat_plate
from ductgen.flow.record import FlowRecord
from ductgen.flow.report import flow_section
from ductgen.flow.warnings import geometry_warnings
from ductgen.pipeline import build
from ductgen.resources import data_path
from ductgen.sheets.sheet import sheet_pdf
from ductgen.spec import load_spec, parse_spec, read_spec_data
from tests.conftest import naca_ordinates

SAMPLE = data_path() / "samples" / "club-racer-brake.toml"


def _section(spec: Any) -> tuple[dict[str, Any], set[str]]:
    f, warns = flow_section(spec.flow, build_design(spec).duct)
    return f, {w.code for w in warns}


def _with_flow(**flow: Any) -> Any:
    data = {
        "name": "t",
        "throat": {"width": 110, "depth": 28},
        "ramp": {"angle_deg": 7.0, "entry_radius": 120},
        "outlet": {"kind": "round", "diameter": "3 in", "transition_length": 170},
        "flow": {
            "speed": "140 km/h",
            "run_length": "1.6 m",
            "losses": [{"kind": "hose", "length": "1.5 m", "diameter": "3 in"}],
            **flow,
        },
    }
    return parse_spec(data)


# --- 1. drag --------------------------------------------------------------------------


def test_default_drag_is_ram_drag() -> None:
    # ram (internal) drag m*V0: the air is dumped inside the body
    f, _ = _section(load_spec(SAMPLE))
    m, v0 = f["mass_flow_kg_s"], f["speed_m_s"]
    assert f["exit_direction"] == "internal"
    assert f["ram_drag_n"] == pytest.approx(m * v0, rel=1e-9)
    assert f["momentum_drag_n"] == pytest.approx(m * v0, rel=1e-9)
    assert "net_momentum_drag_n" not in f
    # the opening's external drag is not estimated unless its coefficient is given
    assert "external drag increment" in f["drag_note"] and f["external_drag_n"] is None


def test_net_drag_only_with_rearward_exit() -> None:
    f, _ = _section(_with_flow(exit_direction="rearward"))
    m, v0, ve = f["mass_flow_kg_s"], f["speed_m_s"], f["exit_velocity_m_s"]
    assert f["net_momentum_drag_n"] == pytest.approx(m * (v0 - ve), rel=1e-9)
    assert f["momentum_drag_n"] == f["net_momentum_drag_n"]
    assert f["ram_drag_n"] == pytest.approx(m * v0, rel=1e-9)


# --- 2. transition loss ---------------------------------------------------------------


def test_transition_methods_are_fluids_and_blevins() -> None:
    # the duct of _with_flow: a 110 x 28 mm throat to a 3 in hose over 170 mm
    spec = _with_flow()
    f, _ = _section(spec)
    t = geometry_from_spec(spec).transition
    assert t is not None
    a1, a2 = t.throat_area_mm2 * 1e-6, t.outlet_area_mm2 * 1e-6
    d1, d2 = math.sqrt(4 * a1 / math.pi), math.sqrt(4 * a2 / math.pi)
    angle = 2 * t.equivalent_cone_half_angle_deg
    tl = f["transition_loss"]
    ks = tl["k_by_method"]
    # fluids.fittings.diffuser_conical [reference library]
    assert ks["crane"] == pytest.approx(diffuser_conical(d1, d2, angle=angle, method="Crane"))
    assert ks["idelchik"] == pytest.approx(diffuser_conical(d1, d2, angle=angle, method="Idelchik"))
    re = f["volume_flow_m3_s"] / a1 * d1 / f["kinematic_viscosity_m2_s"]
    assert ks["rennels"] == pytest.approx(
        diffuser_conical(d1, d2, angle=angle, Re=re, method="Rennels"), rel=1e-6
    )
    # Blevins 7.4: K = (1 - eta_D)(1 - (A1/A2)^2) on the inlet head [published formula]
    cp_ideal = 1 - (a1 / a2) ** 2
    assert ks["effectiveness_0.6"] == pytest.approx(0.4 * cp_ideal, rel=1e-12)
    assert ks["effectiveness_0.8"] == pytest.approx(0.2 * cp_ideal, rel=1e-12)
    # an independent hand computation on this duct [derived]: Crane 0.011,
    # Idelchik 0.054, effectiveness 0.8-0.6 -> 0.11-0.22
    assert ks["crane"] == pytest.approx(0.011, abs=5e-4)
    assert ks["idelchik"] == pytest.approx(0.054, abs=5e-4)
    assert (ks["effectiveness_0.8"], ks["effectiveness_0.6"]) == pytest.approx(
        (0.11, 0.22), abs=5e-3
    )
    # the default is the lossy end (effectiveness 0.6), and the budget uses it
    assert tl["method"] == "effectiveness" and tl["k"] == ks["effectiveness_0.6"]
    line = next(b for b in f["budget"] if b["element"] == "internal transition")
    assert line["k"] == pytest.approx(tl["k"], rel=1e-12)


def test_band_carries_method_spread_and_contains_default() -> None:
    f, _ = _section(load_spec(SAMPLE))
    band, ks = f["sensitivity"], f["transition_loss"]["k_by_method"]
    assert band["transition_k_low"] == pytest.approx(max(ks.values()), rel=1e-6)
    assert band["transition_k_high"] == pytest.approx(min(ks.values()), rel=1e-6)
    assert band["transition_k_high"] <= f["transition_loss"]["k"] <= band["transition_k_low"]
    assert band["volume_flow_low_m3_s"] < f["volume_flow_m3_s"] < band["volume_flow_high_m3_s"]
    # each method alone, at the nominal recovery, delivers a flow inside the band
    for method in ("crane", "rennels", "idelchik", "effectiveness"):
        q = _section(_sample_with(transition_loss=method))[0]["volume_flow_m3_s"]
        assert band["volume_flow_low_m3_s"] < q < band["volume_flow_high_m3_s"], method


def _sample_with(**flow: Any) -> Any:
    data = read_spec_data(SAMPLE)
    data["flow"].update(flow)
    return parse_spec(data)


# --- 3. low-flow recovery warning -----------------------------------------------------


def test_ivr_low_warning_below_threshold() -> None:
    # a cooler of K = 40 on the throat-sized face: a high-loss system
    lossy = _with_flow(losses=[{"kind": "cooler", "k": 40.0, "face_area": "30 cm^2"}])
    f, codes = _section(lossy)
    assert f["inlet_velocity_ratio"] < 0.3 and "ivr_low" in codes
    assert f["ram_recovery"] > 0
    f, codes = _section(_with_flow())
    assert f["inlet_velocity_ratio"] > 0.3 and "ivr_low" not in codes


# --- 4. wall divergence ---------------------------------------------------------------


def _grid_spec(angle: float, aspect: float, profile: str = "naca-standard") -> Any:
    # raised lip, straight floor: H = D, so L = D / tan(angle) and W/L = (W/D) tan(angle)
    return parse_spec(
        {
            "throat": {"width": 25.0 * aspect, "depth": 25.0},
            "ramp": {"angle_deg": angle},
            "lip": {"style": "raised", "thickness": 4},
            "planform": {"profile": profile},
        }
    )


@pytest.mark.parametrize("angle", [5.0, 6.0, 7.0])
@pytest.mark.parametrize("aspect", [3.0, 4.0, 5.0])
def test_no_shape_warning_on_naca_recommended_grid(angle: float, aspect: float) -> None:
    # NACA RM A7I30 (abstract): ramp 5-7 deg, W/D 3-5, curved divergent walls [published]
    shape = build_design(_grid_spec(angle, aspect)).duct
    assert shape.standard_walls
    assert geometry_warnings(shape) == []


@pytest.mark.parametrize(
    ("angle", "aspect", "steepest"), [(5.0, 3.0, 12.2), (6.0, 4.0, 19.2), (7.0, 5.0, 26.9)]
)
def test_divergence_reported_as_information(angle: float, aspect: float, steepest: float) -> None:
    # [derived, PCHIP on the standard table]: 12.2, 19.2, 26.9 deg
    g = geometry_from_spec(_grid_spec(angle, aspect))
    assert g.planform.max_divergence_deg == pytest.approx(steepest, abs=0.05)


def _table(tmp_path: Path, name: str, rows: list[tuple[float, float]]) -> str:
    p = tmp_path / name
    p.write_text("x_over_L,two_y_over_W\n" + "".join(f"{x},{f}\n" for x, f in rows), "utf-8")
    return str(p)


def test_straight_wall_user_table_warns(tmp_path: Path) -> None:
    xs = [0.0, 0.25, 0.5, 0.75, 1.0]
    parallel = _table(tmp_path, "parallel.csv", [(x, 1.0) for x in xs])
    nearly = _table(tmp_path, "nearly.csv", [(x, 0.8 + 0.2 * x) for x in xs])
    for table in (parallel, nearly):
        shape = build_design(_grid_spec(7.0, 4.0, table)).duct
        assert not shape.standard_walls
        assert "wall_divergence_too_small" in {w.code for w in geometry_warnings(shape)}
    # a user's copy of the standard ordinates (NACA ACR 5I20, recalled) is standard
    std = naca_ordinates()
    copy = build_design(_grid_spec(5.0, 3.0, _table(tmp_path, "copy.csv", std))).duct
    assert copy.standard_walls and geometry_warnings(copy) == []


# --- 5. flow angle, exit_cp, boundary-layer spread, labels ---------------------------


def test_white_boundary_layer_worked_example() -> None:
    # White, Fluid Mechanics [published]: U = 30 m/s, x = 2.0 m, nu = 1.4607e-5 -> 36.3 mm
    bl = turbulent_flat_plate(30.0, 2.0, 1.4607e-5)
    assert bl.thickness_white_m == pytest.approx(0.0363, abs=5e-5)


def test_flow_angle_exit_cp_and_delta_spread(tmp_path: Path) -> None:
    spec = _with_flow(flow_angle_deg=8.0)  # 28 mm deep throat, 1.6 m run
    build(spec, tmp_path, only=["template"])  # no solids needed for report.json
    rep = json.loads((tmp_path / "report.json").read_text())
    f, codes = rep["flow"], {w["code"] for w in rep["warnings"]}
    assert f["flow_angle_deg"] == 8.0 and "flow_angle_large" in codes
    assert f["exit_cp"] == 0.0 and f["exit_cp_source"] == "default"
    assert "exit_cp_defaulted" in codes and "rarely ambient" in f["exit_cp_note"]
    # [derived] by hand: delta/D = 0.998 (0.37 Re^-1/5) and 1.03 (White) on this duct
    assert f["delta_over_depth"] == pytest.approx(0.998, abs=1e-3)
    assert f["delta_over_depth_white"] == pytest.approx(1.03, abs=5e-3)
    assert f["delta_over_depth_max"] == f["delta_over_depth_white"]
    assert "boundary_layer_thick" in codes  # warned on the larger of the two
    assert f["inlet_loss_factor"] == 0.95 and "assumption" in f["inlet_loss_factor_note"]
    assert "wall_divergence_too_small" not in codes  # standard table


def test_small_flow_angle_and_given_exit_cp_do_not_warn() -> None:
    base, _ = _section(_with_flow())
    f, codes = _section(_with_flow(flow_angle_deg=3.0, exit_cp=0))
    assert not {"flow_angle_large", "exit_cp_defaulted"} & codes
    assert f["exit_cp_source"] == "given"
    # a small angle is not warned but costs its axial head, cos^2(3 deg) = 0.99726 [derived]
    assert f["yaw_factor"] == pytest.approx(math.cos(math.radians(3.0)) ** 2, rel=1e-12)
    assert f["volume_flow_m3_s"] < base["volume_flow_m3_s"]


# --- 9. the drawing sheet -------------------------------------------------------------


def test_sheet_shows_flow_block() -> None:
    spec = load_spec(SAMPLE)
    g = geometry_from_spec(spec)
    f, _ = flow_section(spec.flow, build_design(spec).duct)
    pdf = sheet_pdf(g, spec, "0" * 64, "test", None, FlowRecord.of_section(f))
    text = pymupdf.open(stream=pdf, filetype="pdf")[0].get_text()
    assert "AIRFLOW" in text
    band = f["sensitivity"]
    for needle in (
        f"delivered flow {f['volume_flow_m3_s'] * 1000:.1f} L/s",
        f"band {band['volume_flow_low_m3_s'] * 1000:.1f} - "
        f"{band['volume_flow_high_m3_s'] * 1000:.1f} L/s",
        f"inlet velocity ratio {f['inlet_velocity_ratio']:.2f}",
        f"ram recovery {f['ram_recovery']:.3f}",
        "required 50.0 L/s: MET",
        "design speed 140 km/h",
    ):
        assert needle in text, needle
    no_flow = pymupdf.open(stream=sheet_pdf(g, spec, "0" * 64, "test"), filetype="pdf")
    assert "AIRFLOW" not in no_flow[0].get_text()
