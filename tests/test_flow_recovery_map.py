"""The recovery map's machinery: reading a table, the fit, the range check, the report keys
and the warning. These tests use tables made here from closed forms (not the campaign's
data): they check the code that reads and fits a map, not the map's numbers."""

from __future__ import annotations

import fnmatch
import math
import re
from pathlib import Path

import numpy as np
import pytest
import tomllib

from ductgen.design.build import build_design
from ductgen.errors import SpecError
from ductgen.flow import recovery_map
from ductgen.flow.recovery_map import (
    INPUTS,
    MAP_FILE,
    MIN_POINTS,
    MapTable,
    fit_map,
    read_map_table,
)
from ductgen.flow.report import flow_section
from ductgen.spec.load import parse_spec

ROOT = Path(__file__).resolve().parents[1]
RANGES = ((5.0, 11.0), (2.0, 6.0), (0.1, 1.5), (0.3, 1.1))


def quadratic(a: float, wd: float, dd: float, ivr: float) -> float:
    """A closed-form quadratic with the trends the NACA reports state (falls with δ/D, a
    best angle, falls as IVR drops) [test data, not a measurement]."""
    return 0.86 - 0.002 * (a - 7.5) ** 2 - 0.1 * dd + 0.01 * (wd - 4.0) + 0.15 * (ivr - 0.7)


def smooth(a: float, wd: float, dd: float, ivr: float) -> float:
    """A non-polynomial closed form (test data)."""
    return (
        0.9
        - 0.12 * math.tanh(dd)
        - 0.03 * math.cos(0.5 * (a - 7.0)) * (1 - 0.1 * wd)
        + (0.1 * math.log(ivr / 0.7))
    )


def table_text(f, n: int = 64, header: str = "status: test table") -> str:  # type: ignore[no-untyped-def]
    from scipy.stats import qmc

    pts = qmc.scale(qmc.LatinHypercube(d=4, seed=7).random(n), *zip(*RANGES, strict=True))
    rows = [f"# {header}", "point," + ",".join(INPUTS) + ",ram_recovery,cells"]
    for i, p in enumerate(pts):
        rows.append(f"t{i}," + ",".join(f"{v:.6f}" for v in p) + f",{f(*p):.9f},1000")
    return "\n".join(rows) + "\n"


def test_quadratic_closed_form_is_reproduced_off_the_table() -> None:
    # [closed form] a quadratic table is fitted exactly: leave-one-out picks the polynomial
    m = fit_map(read_map_table(table_text(quadratic)))
    assert m.kind.startswith("quadratic")
    rng = np.random.default_rng(3)
    for _ in range(20):  # inside the points' own range (beyond it the map holds the edge)
        x = tuple(float(v) for v in rng.uniform(m.lo, m.hi))
        assert m(x) == pytest.approx(quadratic(*x), abs=1e-6)
    assert m.loo_rms < 1e-6


def test_stated_residual_bounds_every_table_point() -> None:
    # the stated residual (fit vs points) holds when each row is evaluated through the
    # public call (scaling, clipping), read back from the CSV text independently
    text = table_text(smooth)
    m = fit_map(read_map_table(text))
    lines = [ln for ln in text.splitlines() if not ln.startswith("#")][1:]
    errs = []
    for ln in lines:
        vals = [float(v) for v in ln.split(",")[1:6]]
        errs.append(abs(m(tuple(vals[:4])) - vals[4]))
    assert max(errs) <= m.residual_max + 1e-12
    assert max(errs) == pytest.approx(m.residual_max, rel=1e-6)
    # a smooth closed form is followed to a few thousandths between the points
    x = (7.3, 3.7, 0.8, 0.75)
    assert m(x) == pytest.approx(smooth(*x), abs=0.01)


def test_outside_the_range_is_named_and_held_at_the_edge() -> None:
    m = fit_map(read_map_table(table_text(quadratic)))
    inside = (7.0, 4.0, 0.5, 0.8)
    assert m.outside(inside) == []
    far = (14.0, 4.0, 0.5, 0.8)
    assert m.outside(far) == ["ramp_angle_deg"]
    edge = (float(m.hi[0]), 4.0, 0.5, 0.8)
    assert m(far) == pytest.approx(m(edge), abs=1e-12)


@pytest.mark.parametrize(
    ("text", "words"),
    [
        ("point,ramp_angle_deg,ivr,ram_recovery\np,7,0.8,0.8\n", "missing column"),
        ("ramp_angle_deg,width_over_depth,delta_over_depth,ivr,ram_recovery\n7,4,x,1,0.8\n",
         "row 2"),
        ("ramp_angle_deg,width_over_depth,delta_over_depth,ivr,ram_recovery\n7,4,1,1,1.3\n",
         "outside (0, 1]"),
    ],
)  # fmt: skip
def test_bad_tables_are_refused_naming_the_row(text: str, words: str) -> None:
    with pytest.raises(ValueError, match=words.replace("(", r"\(").replace("]", r"\]")):
        read_map_table(text)


def test_partial_campaign_is_not_fitted() -> None:
    with pytest.raises(ValueError, match=f"at least {MIN_POINTS}"):
        fit_map(read_map_table(table_text(quadratic, n=MIN_POINTS - 1)))


def test_map_file_is_packaged() -> None:
    # the map's file name is inside the wheel's package-data globs (pyproject.toml)
    globs = tomllib.loads((ROOT / "pyproject.toml").read_text())["tool"]["setuptools"][
        "package-data"
    ]["ductgen"]
    assert any(fnmatch.fnmatch(f"data/{MAP_FILE}", g) for g in globs)


SPEC = """
name = "m"
throat = {{ width = {w}, depth = 20 }}
ramp = {{ angle_deg = {a} }}
lip = {{ style = "flush", thickness = 2, nose_ratio = 2.0 }}
outlet = {{ kind = "none" }}
[flow]
speed = "40 m/s"
run_length = "{run} m"
exit_cp = 0
recovery = "map"
"""


@pytest.fixture
def synthetic_map(monkeypatch: pytest.MonkeyPatch) -> None:
    m = fit_map(read_map_table(table_text(quadratic)))
    monkeypatch.setattr(recovery_map, "default_map", lambda: m)


def _flow(a: float = 7.0, w: float = 80.0, run: float = 0.5):  # type: ignore[no-untyped-def]
    spec = parse_spec(tomllib.loads(SPEC.format(a=a, w=w, run=run)))
    assert spec.flow is not None
    return flow_section(spec.flow, build_design(spec).duct)


@pytest.mark.usefixtures("synthetic_map")
def test_design_variables_reach_the_map() -> None:
    # ramp angle, W/D and delta/D each move the recovery through the spec and the design
    by_angle = [_flow(a=a)[0]["ram_recovery"] for a in (5.0, 7.0, 9.0)]
    assert max(by_angle) - min(by_angle) >= 0.01
    assert _flow(w=60.0)[0]["ram_recovery"] != pytest.approx(_flow(w=80.0)[0]["ram_recovery"])
    assert _flow(run=1.5)[0]["ram_recovery"] < _flow(run=0.3)[0]["ram_recovery"]
    f, warns = _flow()
    assert f["recovery_model"] == "map"
    assert "CFD recovery map" in f["recovery_source"]
    assert f["recovery_uncertainty"] == pytest.approx(f["recovery_map"]["leave_one_out_rms"])
    assert "recovery_map_extrapolated" not in {w.code for w in warns}


@pytest.mark.usefixtures("synthetic_map")
def test_extrapolation_warns() -> None:
    _f, warns = _flow(a=13.0)
    hits = [w for w in warns if w.code == "recovery_map_extrapolated"]
    assert hits and "ramp_angle_deg" in hits[0].message


def test_unusable_map_is_a_spec_error(monkeypatch: pytest.MonkeyPatch) -> None:
    def partial() -> MapTable:
        raise ValueError("recovery_map.csv has 3 points (PARTIAL campaign: 3 of 64 points)")

    monkeypatch.setattr(recovery_map, "default_map", partial)
    with pytest.raises(SpecError) as err:
        _flow()
    assert err.value.key == "flow.recovery" and "3 points" in str(err.value)


def test_other_models_name_their_source() -> None:
    spec = parse_spec(tomllib.loads(SPEC.format(a=7, w=80, run=0.5).replace('"map"', '"capture"')))
    assert spec.flow is not None
    f = flow_section(spec.flow, build_design(spec).duct)[0]
    assert f["recovery_source"].startswith("capture model")
    assert f["recovery_uncertainty"] is None


@pytest.mark.usefixtures("synthetic_map")
def test_pages_show_the_source_and_uncertainty() -> None:
    # the sweep's comparison table and the design page's airflow block
    from ductgen.page.preview import flow_rows
    from ductgen.sweep.compare import metric_value
    from ductgen.sweep.html import table_html

    f = _flow()[0]
    report = {"flow": f}
    row = {"variant": "v1", "status": "built", "error": None}
    row |= {k: metric_value(report, k) for k in ("ram_recovery", "recovery_uncertainty",
                                                   "recovery_source")}  # fmt: skip
    page = table_html([row], "v1")
    assert 'data-col="recovery_source"' in page and "CFD recovery map" in page
    shown = dict(re.findall(r'data-col="([^"]+)" data-value="[^"]*"[^>]*>([^<]*)<', page))
    assert shown["recovery_uncertainty"] == f"{f['recovery_uncertainty']:.3f}"
    rows = {r["key"]: r for r in flow_rows(f)}
    assert rows["recovery_uncertainty"]["value"] == f["recovery_uncertainty"]
    assert rows["recovery_source"]["text"] == "ductgen CFD map (64 points)"


def test_spec_accepts_map_and_round_trips() -> None:
    from ductgen.spec.flow import FlowSpec, flow_data

    f = FlowSpec.model_validate({"speed": "40 m/s", "recovery": "map"})
    assert f.recovery_kind == "map"
    assert FlowSpec.model_validate(flow_data(f)) == f
    with pytest.raises(ValueError, match="'map'"):
        FlowSpec.model_validate({"speed": "40 m/s", "recovery": "mapp"})
