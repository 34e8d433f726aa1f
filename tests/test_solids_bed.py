"""Printer-bed fit (:mod:`ductgen.solids.bed`), checked against closed forms: a rectangle
a × b turned by θ spans a·cos θ + b·sin θ by a·sin θ + b·cos θ [derived], so 230 × 40 mm
fits a 220 mm square bed turned (at 45°: 190.9 mm each way) but not straight, and
250 × 100 mm fits at no turn (at 0°: 250 mm; at 45°: 247.5 mm).
"""

from __future__ import annotations

import numpy as np
import pytest

from ductgen.solids.bed import bed_fit, estimate_stations

BED = (220.0, 220.0, 250.0)


def _box(a: float, b: float, c: float) -> np.ndarray:
    return np.array([[x, y, z] for x in (0, a) for y in (0, b) for z in (0, c)], dtype=float)


def test_fit_closed_forms() -> None:
    assert bed_fit(_box(200, 100, 50), BED).fits
    turned = bed_fit(_box(230, 40, 10), BED)
    assert turned.fits and 10.0 < turned.turn_deg < 80.0  # 230 mm > 220 mm at no turn
    assert not bed_fit(_box(250, 100, 10), BED).fits
    assert not bed_fit(_box(100, 100, 260), BED).fits  # too tall
    assert bed_fit(_box(240, 60, 60), BED, "+x").size_mm[2] == pytest.approx(240)  # standing
    # 255 mm tall does not stand on a 250 mm printer; laid on its side (x up) and turned
    # 45° it spans (50 + 255) / √2 = 215.7 mm ≤ 220 mm each way
    assert not bed_fit(_box(50, 50, 255), BED, "+z").fits
    assert bed_fit(_box(50, 50, 255), BED, "+x").fits


def test_station_estimate_is_monotone_in_bed_size() -> None:
    v = _box(600, 120, 80)
    assert estimate_stations(v, BED, "+z") == pytest.approx([200.0, 400.0])  # 3 pieces
    assert estimate_stations(v, (320, 320, 250), "+z") == pytest.approx([300.0])
    assert estimate_stations(v, (650, 320, 250), "+z") == []


def test_footprint_of_a_dense_mesh_is_its_outline_s() -> None:
    """A turned rectangle: its corners, 400 points along one edge and 5000 inside (the fit
    looks at the outline only): the closed form above at the fit's turn, and the same fit as
    the four corners alone."""
    rng = np.random.default_rng(7)
    a, b, theta = 230.0, 40.0, np.radians(20.0)
    edge = np.c_[rng.uniform(0, 1, 400), np.zeros(400)]
    u = np.vstack([rng.uniform(0, 1, (5000, 2)), edge, [[0, 0], [1, 0], [1, 1], [0, 1]]])
    rot = np.array([[np.cos(theta), -np.sin(theta)], [np.sin(theta), np.cos(theta)]])
    xy = (u * [a, b]) @ rot.T
    v = np.c_[xy, rng.uniform(0, 10, len(xy))]
    corners = np.array([[0, 0], [a, 0], [a, b], [0, b]]) @ rot.T
    fit, alone = bed_fit(v, BED), bed_fit(np.c_[corners, [0, 0, 10, 10]], BED)
    t = np.radians(fit.turn_deg) + theta  # the rectangle's turn on the bed
    span = sorted(
        [a * abs(np.cos(t)) + b * abs(np.sin(t)), a * abs(np.sin(t)) + b * abs(np.cos(t))]
    )
    assert fit.fits and sorted(fit.size_mm[:2]) == pytest.approx(span, abs=0.05)
    assert fit.turn_deg == alone.turn_deg
    assert fit.size_mm[:2] == pytest.approx(alone.size_mm[:2], abs=0.05)
