"""Ramp floor and ramp length (tangent-arc geometry [derived], docs/sources.md)."""

from __future__ import annotations

import math

import numpy as np
import pytest

from ductgen.errors import SpecError
from ductgen.geometry.floor import Floor, ramp_angle_for_length, ramp_length


def test_straight_seven_degree_ramp_is_8_144_depths_long() -> None:
    # [derived] trigonometry: L = H / tan θ; 7° -> L/H = 8.144
    assert ramp_length(1.0, 7.0, 0.0) == pytest.approx(8.144, abs=5e-4)
    assert Floor(7.0, 0.0, 29.0).length_mm / 29.0 == pytest.approx(1 / math.tan(math.radians(7.0)))


def test_worked_example_length() -> None:
    # [derived] from the table: W = 100, D = 25, 7°, straight, raised lip (H = D) -> L = 203.6 mm
    assert Floor(7.0, 0.0, 25.0).length_mm == pytest.approx(203.6, abs=0.05)


@pytest.mark.parametrize("angle", [4.0, 5.0, 6.0, 7.0, 9.0, 12.0])
@pytest.mark.parametrize("radius", [0.0, 20.0, 150.0, 400.0])
def test_length_matches_tangent_arc_construction(angle: float, radius: float) -> None:
    """Construct the floor point by point: arc from the skin with centre (0, -R), tangent
    point at angle θ, straight line at θ to depth H; find where it reaches H."""
    drop = 36.0
    if radius * (1 - math.cos(math.radians(angle))) > drop:
        pytest.skip("arc deeper than the drop")
    fl = Floor(angle, radius, drop)
    t = math.radians(angle)
    xa, za = radius * math.sin(t), radius * (1 - math.cos(t))
    x_end = xa + (drop - za) / math.tan(t)
    assert fl.length_mm == pytest.approx(x_end, rel=1e-12)
    # tangent-arc geometry [derived]: L = R sin θ + (H - R(1 - cos θ)) / tan θ
    assert fl.length_mm == pytest.approx(
        radius * math.sin(t) + (drop - radius * (1 - math.cos(t))) / math.tan(t), rel=1e-12
    )
    # the floor is continuous and tangent (C1) where the arc meets the ramp
    if radius > 0:
        eps = 1e-6
        d = fl.depth(np.array([xa - eps, xa, xa + eps]))
        assert d[1] == pytest.approx(za, abs=1e-9)
        assert (d[2] - d[0]) / (2 * eps) == pytest.approx(math.tan(t), rel=1e-4)
        # the arc leaves the skin tangentially
        assert float(fl.depth(1e-3)) == pytest.approx(1e-6 / (2 * radius), rel=1e-3)
    assert float(fl.depth(fl.length_mm)) == pytest.approx(drop, abs=1e-9)


@pytest.mark.parametrize(("angle", "radius"), [(7.0, 0.0), (6.0, 100.0), (9.5, 60.0)])
def test_angle_from_length_inverts_length(angle: float, radius: float) -> None:
    length = ramp_length(30.0, angle, radius)
    assert ramp_angle_for_length(length, 30.0, radius) == pytest.approx(angle, abs=1e-9)


def test_entry_arc_too_large_for_the_depth_is_a_spec_error() -> None:
    with pytest.raises(SpecError) as err:
        Floor(7.0, 5000.0, 30.0)
    assert err.value.key == "ramp.entry_radius"
    assert "<=" in err.value.allowed


def test_impossible_length_is_a_spec_error() -> None:
    with pytest.raises(SpecError) as err:
        ramp_angle_for_length(5.0, 30.0, 0.0)
    assert err.value.key == "ramp.length"
