"""The boundary layer in a surface-pressure gradient (``flow.inlet_cp_gradient_per_m``): Head's
entrainment method (Head 1958, ARC R&M 3152) with Ludwieg-Tillmann skin friction, against
the flat-plate formulas of Schlichting and White, hand values of the recalled correlations,
and the direction a pressure gradient must move the layer and the recovery."""

from __future__ import annotations

from pathlib import Path
from typing import Any

import pytest

from ductgen.cli import main
from ductgen.design import build_design
from ductgen.errors import SpecError
from ductgen.flow.boundary_layer import turbulent_flat_plate
from ductgen.flow.head_method import (
    FLAT_PLATE_AGREEMENT,
    entrainment_shape_factor,
    head_layer,
    ludwieg_tillmann_cf,
    shape_factor_from_h1,
)
from ductgen.flow.report import flow_section
from ductgen.spec import parse_spec

NU = 1.5e-5
#: A flush inlet with a 1.2 m run, capture recovery (the default), a hose behind it.
SPEC: dict[str, Any] = {
    "name": "t",
    "throat": {"width": 100, "depth": 25},
    "ramp": {"angle_deg": 7.0},
    "outlet": {"kind": "none"},
}
FLOW = {
    "speed": "40 m/s",
    "run_length": "1.2 m",
    "exit_cp": 0.0,
    "losses": [{"kind": "hose", "length": "1 m", "diameter": "50 mm"}],
}


def _section(**flow: Any) -> tuple[dict[str, Any], set[str]]:
    spec = parse_spec({**SPEC, "flow": {**FLOW, **flow}})
    assert spec.flow is not None
    f, ws = flow_section(spec.flow, build_design(spec).duct)
    return f, {w.code for w in ws}


@pytest.mark.parametrize("re_x", [1e5, 3e5, 1e6, 3e6, 1e7, 5e7])
def test_zero_gradient_reproduces_the_flat_plate(re_x: float) -> None:
    # Schlichting's turbulent flat plate [published formula]: delta = 0.37 x Re^-1/5, and the
    # 1/7-power profile's delta* = delta/8. Head's method (own skin-friction law) gives delta*
    # within 4 % of it over Re_x 1e5-5e7 (measured: -2.8 % at 1e5 to +3.8 % at 5e7)
    run = 1.0
    speed = re_x * NU / run
    head = head_layer(speed, run, NU, 0.0, 0.0)
    flat = turbulent_flat_plate(speed, run, NU)
    assert head.thickness_m == pytest.approx(flat.thickness_m, rel=FLAT_PLATE_AGREEMENT)
    assert head.thickness_m == pytest.approx(8.0 * head.displacement_thickness_m, rel=1e-12)
    # a turbulent flat plate's H is 1.3-1.5 at these Re (9/7 = 1.286 for the 1/7 power law),
    # falling with Re (common practice, no source)
    assert 1.29 < head.shape_factor < 1.52
    assert not head.separated


def test_zero_gradient_against_whites_worked_value() -> None:
    # White, Fluid Mechanics [published]: U = 30 m/s, x = 2.0 m, nu = 1.4607e-5 -> 36.3 mm
    head = head_layer(30.0, 2.0, 1.4607e-5, 0.0, 0.0)
    assert head.thickness_m == pytest.approx(0.0363, rel=0.015)


def test_shape_factor_fits_by_hand() -> None:
    # Cebeci & Bradshaw's fits of Head's curves [recalled], evaluated by hand:
    # H = 1.4: 3.3 + 0.8234 * 0.3^-1.287 = 3.3 + 0.8234 * 4.7092 = 7.1775
    assert entrainment_shape_factor(1.4) == pytest.approx(7.1775, abs=2e-4)
    # H = 2.0: 3.3 + 1.5501 * 1.3222^-3.064 = 3.3 + 1.5501 * 0.42496 = 3.9587
    assert entrainment_shape_factor(2.0) == pytest.approx(3.9587, abs=2e-4)
    # the two branches meet at H = 1.6 (to the fits' rounding) and invert exactly
    lo, hi = 3.3 + 0.8234 * 0.5**-1.287, 3.3 + 1.5501 * 0.9222**-3.064
    assert lo == pytest.approx(hi, rel=5e-3)
    for h in (1.25, 1.4, 1.6, 1.8, 2.3):
        assert shape_factor_from_h1(entrainment_shape_factor(h)) == pytest.approx(h, rel=1e-9)


def test_ludwieg_tillmann_by_hand() -> None:
    # Ludwieg & Tillmann [recalled]: 0.246 * 10^(-0.678 * 1.4) * 1e4^-0.268
    # = 0.246 * 0.112409 * 0.084723 = 0.0023428
    assert ludwieg_tillmann_cf(1.4, 1e4) == pytest.approx(0.0023428, rel=1e-4)


def test_adverse_gradient_thickens_the_layer_and_costs_recovery() -> None:
    # an adverse gradient (pressure rising toward the inlet) thickens the layer and raises H;
    # a thicker layer gives less ram recovery (NACA RM A7I30, abstract: boundary-layer
    # thickness has a large effect on recovery) and less flow; a favourable one the reverse
    base, _ = _section(inlet_cp_gradient_per_m=0.0)
    adverse, _ = _section(inlet_cp_gradient_per_m=0.3)
    favourable, _ = _section(inlet_cp_gradient_per_m=-0.3)
    for key in ("boundary_layer_thickness_m", "momentum_thickness_m"):
        assert favourable[key] < base[key] < adverse[key], key
    shape = [f["boundary_layer_gradient"]["shape_factor"] for f in (favourable, base, adverse)]
    assert shape[0] < shape[1] < shape[2]
    assert favourable["ram_recovery"] > base["ram_recovery"] > adverse["ram_recovery"]
    assert favourable["volume_flow_m3_s"] > base["volume_flow_m3_s"] > adverse["volume_flow_m3_s"]
    assert "Head" in adverse["boundary_layer_method"]
    # Cp is linear and ends at inlet_cp: Cp at the run's start = 0 - 0.3 * 1.2 [derived]
    assert adverse["boundary_layer_gradient"]["cp_at_run_start"] == pytest.approx(-0.36)


def test_without_a_gradient_the_flat_plate_is_used() -> None:
    flat, _ = _section()
    ref = turbulent_flat_plate(40.0, 1.2, flat["kinematic_viscosity_m2_s"])
    assert flat["boundary_layer_thickness_m"] == pytest.approx(ref.thickness_m, rel=1e-12)
    assert "flat plate" in flat["boundary_layer_method"]
    assert "boundary_layer_gradient" not in flat
    zero, _ = _section(inlet_cp_gradient_per_m=0.0)
    assert zero["boundary_layer_thickness_m"] == pytest.approx(
        flat["boundary_layer_thickness_m"], rel=FLAT_PLATE_AGREEMENT
    )


def test_steep_adverse_gradient_separates_and_warns() -> None:
    # Cp rising from -2.1 to 0.3 over the run: H passes 2.4 before the ramp
    f, codes = _section(inlet_cp=0.3, inlet_cp_gradient_per_m=2.0)
    assert f["boundary_layer_gradient"]["separated"] is True
    assert f["boundary_layer_gradient"]["shape_factor"] == pytest.approx(2.4, abs=1e-6)
    assert "boundary_layer_separates" in codes
    _, mild = _section(inlet_cp_gradient_per_m=0.3)
    assert "boundary_layer_separates" not in mild


def test_gradient_past_the_cp_range_is_refused(tmp_path: Path) -> None:
    # Cp at the run's start = 0.5 - (-1) * 1.2 = 1.7: outside -3..0.9, the air would stand
    spec = parse_spec({**SPEC, "flow": {**FLOW, "inlet_cp": 0.5, "inlet_cp_gradient_per_m": -1.0}})
    with pytest.raises(SpecError) as err:
        build_design(spec)
    assert "flow.inlet_cp_gradient_per_m" in str(err.value)
    assert "-0.3333 to 2.917 1/m" in str(err.value)  # (0.5 - 0.9)/1.2 .. (0.5 + 3)/1.2
    text = (
        'name = "t"\nthroat = { width = 100, depth = 25 }\nramp = { angle_deg = 7 }\n'
        'outlet = { kind = "none" }\n[flow]\nspeed = "40 m/s"\nrun_length = "1.2 m"\n'
        "inlet_cp = 0.5\ninlet_cp_gradient_per_m = -1.0\n"
    )
    (tmp_path / "s.toml").write_text(text)
    out = tmp_path / "out"
    assert main(["build", str(tmp_path / "s.toml"), "-o", str(out), "--only", "template"]) == 2
    assert not out.exists() or not any(out.iterdir())


def test_sheet_block_names_the_method() -> None:
    from ductgen.flow.record import FlowRecord
    from ductgen.flow.sheet_block import flow_block_lines

    f, _ = _section(inlet_cp_gradient_per_m=0.3)
    line = flow_block_lines(FlowRecord.of_section(f))[-1]
    h = f["boundary_layer_gradient"]["shape_factor"]
    assert f"Head's method, dCp/dx 0.3 /m, H {h:.2f}" in line
    assert "Head" not in flow_block_lines(FlowRecord.of_section(_section()[0]))[-1]
