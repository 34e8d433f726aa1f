"""The transition's steepest wall (``Transition.steepest_wall``) and the two-dimensional
diffuser stall line it is judged on (``ductgen.flow.stall``)."""

from __future__ import annotations

import json
import math

import pytest
from scipy.optimize import brentq

from ductgen.design import build_design
from ductgen.flow.stall import STALL_LINE_POINTS, stall_line_included_deg, steepest_wall_report
from ductgen.geometry.transition import Transition
from ductgen.pipeline import build
from ductgen.sizing import size_result_dict, size_throat
from ductgen.spec import load_spec, parse_spec, read_spec_data
from tests.conftest import ROOT

#: The club and e-kart samples' throats and transitions as they first shipped (28 / 20 mm deep,
#: 170 / 100 mm long): their floors stalled, and the samples were since deepened and lengthened.
STALLING = {"club-racer-brake": (28.0, 170.0), "ekart-battery-vent": (20.0, 100.0)}


def _sample(name: str):  # type: ignore[no-untyped-def]
    return build_design(load_spec(ROOT / "samples" / f"{name}.toml"))


def _stalling_spec(name: str):  # type: ignore[no-untyped-def]
    data = read_spec_data(ROOT / "samples" / f"{name}.toml")
    data["throat"]["depth"], data["outlet"]["transition_length"] = STALLING[name]
    return parse_spec(data)


@pytest.mark.parametrize(
    ("name", "outlet_mm", "depth_mm", "length_mm"),
    [("club-racer-brake", 76.2, 28.0, 170.0), ("ekart-battery-vent", 50.0, 20.0, 100.0)],
)
def test_sample_floor_is_the_steepest_wall(
    name: str, outlet_mm: float, depth_mm: float, length_mm: float
) -> None:
    # [derived] roof-aligned round outlet: the floor's centre ruling drops from the throat
    # floor to the outlet's bottom, atan((d_out - D)/L): club 15.83 deg, e-kart 16.70 deg,
    # far above the equivalent cone's 4.6 / 2.8 deg included
    d = build_design(_stalling_spec(name))
    expected = math.degrees(math.atan((outlet_mm - depth_mm) / length_mm))
    assert d.duct.steepest_wall_angle_deg == pytest.approx(expected, abs=1e-4)
    assert d.duct.steepest_wall_name == "floor"
    assert d.duct.steepest_wall_across_mm == pytest.approx(depth_mm, rel=1e-12)
    assert 2.0 * (d.duct.transition_cone_half_angle_deg or 0.0) < 5.0
    warning = next(w for w in d.warnings if w.code == "diffuser_angle_large")
    assert f"{expected:.1f} deg" in warning.message and "Kline" in warning.message


def test_rect_outlet_side_walls_closed_form() -> None:
    # [derived] a rectangular outlet 40 mm wider, same height and top: both side walls are
    # planes at atan(20/100) = 11.31 deg, 22.62 deg apart, across the throat width
    t = Transition(0.0, 100.0, 100.0, 0.0, -20.0, "rect", 140.0, 20.0, 0.0)
    w = t.steepest_wall()
    side = math.degrees(math.atan(20.0 / 100.0))
    assert w.wall == "side" and w.angle_deg == pytest.approx(side, abs=1e-6)
    assert w.opposite_deg == pytest.approx(side, abs=1e-6)
    assert w.included_deg == pytest.approx(2.0 * side, abs=1e-6)
    assert w.across_mm == pytest.approx(100.0, rel=1e-12)


def test_stall_line_passes_its_recalled_points() -> None:
    # line a-a of the 2-D diffuser chart (Kline, Abbott & Fox 1959 / Reneau, Johnston &
    # Kline 1967): points recalled, not re-read here; straight on log-log axes
    for n_w, two_theta in STALL_LINE_POINTS:
        assert stall_line_included_deg(n_w) == pytest.approx(two_theta, rel=1e-12)
    assert stall_line_included_deg(6.0) > stall_line_included_deg(10.0)  # longer stalls sooner


def test_length_under_the_stall_line_for_the_club_sample() -> None:
    # [derived] the club's floor stays at atan(48.2/L) with the outlet held: the length
    # that puts it on line a-a, solved here from that closed form
    d = build_design(_stalling_spec("club-racer-brake"))
    rep = steepest_wall_report(d.duct)
    assert rep["steepest_wall_stalls"] is True
    length = brentq(
        lambda n: math.degrees(math.atan(48.2 / n)) - stall_line_included_deg(n / 28.0),
        170.0,
        5000.0,
    )
    assert rep["length_under_stall_line_mm"] == pytest.approx(length, rel=1e-4)
    assert rep["length_under_stall_line_mm"] > 170.0


@pytest.mark.parametrize(
    ("name", "outlet_mm", "depth_mm", "length_mm"),
    [("club-racer-brake", 76.2, 36.0, 220.0), ("ekart-battery-vent", 50.0, 24.0, 130.0)],
)
def test_samples_as_shipped_clear_the_line(
    name: str, outlet_mm: float, depth_mm: float, length_mm: float
) -> None:
    # [derived] the shipped samples: roof-aligned round outlet, the floor at
    # atan((d_out - D)/L) = 10.36 / 11.31 deg, under line a-a at N/W1 = L/D (11.2 / 12.1 deg)
    d = _sample(name)
    floor = math.degrees(math.atan((outlet_mm - depth_mm) / length_mm))
    rep = steepest_wall_report(d.duct)
    assert rep["steepest_wall_angle_deg"] == pytest.approx(floor, abs=1e-4)
    assert floor < stall_line_included_deg(length_mm / depth_mm)
    assert rep["steepest_wall_stalls"] is False
    assert rep["length_under_stall_line_mm"] == pytest.approx(length_mm, rel=1e-12)
    assert "diffuser_angle_large" not in {w.code for w in d.warnings}


def test_cowling_rect_outlet_is_under_the_line() -> None:
    d = _sample("cowling-oil-cooler")
    rep = steepest_wall_report(d.duct)
    assert rep["steepest_wall_stalls"] is False
    assert rep["length_under_stall_line_mm"] == d.duct.transition_length_mm
    assert "diffuser_angle_large" not in {w.code for w in d.warnings}


def test_size_offers_the_transition_length() -> None:
    base = load_spec(ROOT / "samples" / "club-racer-brake.toml")
    out = size_result_dict(size_throat(0.05, 38.9, base=base))
    tr = out["transition"]
    assert tr["steepest_wall"] == "floor" and tr["steepest_wall_stalls"] is True
    assert tr["length_under_stall_line_mm"] > tr["length_mm"]


def test_report_carries_the_steepest_wall(tmp_path) -> None:  # type: ignore[no-untyped-def]
    # [derived] as above: the club's floor at atan(48.2/170) = 15.83 deg, in report.json
    spec = _stalling_spec("club-racer-brake")
    build(spec, tmp_path, only=["template"])  # no solids needed for report.json
    rep = json.loads((tmp_path / "report.json").read_text())
    tr = rep["geometry"]["transition"]
    assert tr["steepest_wall_angle_deg"] == pytest.approx(
        math.degrees(math.atan(48.2 / 170.0)), abs=1e-4
    )
    assert tr["steepest_wall_stalls"] is True and "recalled" in tr["stall_line_source"]
    assert "diffuser_angle_large" in {w["code"] for w in rep["warnings"]}
