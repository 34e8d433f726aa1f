"""Planform: the wall curve through the tabulated ordinates (NACA ACR 5I20 table, recalled)."""

from __future__ import annotations

import itertools

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from ductgen.geometry import Planform, load_profile
from tests.conftest import naca_ordinates

# NACA ACR 5I20 divergent-wall ordinates (tests/data/naca_ordinates.json, recalled)
NACA_TABLE = dict(naca_ordinates())


def test_bundled_table_is_the_naca_table() -> None:
    p = load_profile("naca-standard")
    assert dict(zip(p.x.tolist(), p.f.tolist(), strict=True)) == NACA_TABLE
    assert "NACA ACR 5I20" in p.source
    assert "memory" in p.note


@settings(max_examples=40, deadline=None)
@given(
    width=st.floats(10.0, 600.0),
    length=st.floats(30.0, 3000.0),
)
def test_passes_through_every_scaled_ordinate(width: float, length: float) -> None:
    pf = Planform(load_profile("naca-standard"), width, length)
    for s, f in NACA_TABLE.items():
        assert abs(float(pf.half_width(s * length)) - 0.5 * width * f) <= 1e-9


@settings(max_examples=25, deadline=None)
@given(width=st.floats(10.0, 600.0), length=st.floats(30.0, 3000.0))
def test_monotone_and_no_overshoot_between_stations(width: float, length: float) -> None:
    pf = Planform(load_profile("naca-standard"), width, length)
    xs = np.linspace(0.0, length, 20001)
    y = pf.half_width(xs)
    assert np.all(np.diff(y) >= -1e-12), "the wall must never converge"
    assert y.max() <= width / 2 + 1e-12, "no bulge past W/2 near the lip"
    stations = sorted(NACA_TABLE)
    for a, b in itertools.pairwise(stations):
        seg = pf.half_width(np.linspace(a * length, b * length, 201))
        lo, hi = 0.5 * width * NACA_TABLE[a], 0.5 * width * NACA_TABLE[b]
        assert seg.min() >= lo - 1e-9 and seg.max() <= hi + 1e-9


def test_walls_parallel_at_the_lip_and_straight_beyond() -> None:
    pf = Planform(load_profile("naca-standard"), 100.0, 200.0)
    assert float(pf.slope(200.0)) == pytest.approx(0.0, abs=1e-15)
    assert float(pf.half_width(260.0)) == 50.0


def test_worked_example_half_width() -> None:
    # [derived] from the table: W = 100, D = 25, 7°, straight, raised lip
    # -> half-width at x/L = 0.5 is 23.3 mm
    pf = Planform(load_profile("naca-standard"), 100.0, 203.6)
    assert float(pf.half_width(0.5 * 203.6)) == pytest.approx(23.3, abs=1e-9)


def test_max_divergence_of_the_standard_table() -> None:
    # W/L fixed by a 7° straight ramp at W/D = 4: divergence lies in the roughly 20-30° band
    # where the vortex pair forms (common practice, no source) - a sanity check of scaling.
    pf = Planform(load_profile("naca-standard"), 100.0, 203.6)
    slope = np.max(pf.slope(np.linspace(0, 203.6, 5001)))
    assert pf.max_divergence_deg == pytest.approx(np.degrees(np.arctan(slope)), rel=1e-6)
    assert 15.0 < pf.max_divergence_deg < 30.0
