"""Standard atmosphere and boundary layer (check values: docs/sources.md)."""

from __future__ import annotations

import math

import pytest
from fluids.atmosphere import ATMOSPHERE_1976

from ductgen.errors import SpecError
from ductgen.flow.atmosphere import standard_air
from ductgen.flow.boundary_layer import turbulent_flat_plate

# ISO 2533:1975 / ICAO standard atmosphere, tabulated density (kg/m^3) [published]; the
# geometric-vs-geopotential difference is in the 4th decimal, hence the 2e-4 tolerance.
ISO_2533_DENSITY = {0.0: 1.2250, 1000.0: 1.1117, 2000.0: 1.0066, 3000.0: 0.9093}


@pytest.mark.parametrize(("altitude", "rho"), sorted(ISO_2533_DENSITY.items()))
def test_density_matches_iso_2533(altitude: float, rho: float) -> None:
    # source: ISO 2533:1975 tabulated values [published]
    assert standard_air(altitude).density_kg_m3 == pytest.approx(rho, abs=2e-4)


@pytest.mark.parametrize("altitude", sorted(ISO_2533_DENSITY))
def test_density_is_fluids_atmosphere_1976(altitude: float) -> None:
    # source: reference library fluids.atmosphere.ATMOSPHERE_1976 (geometric altitude)
    air = standard_air(altitude)
    ref = ATMOSPHERE_1976(altitude)
    assert air.density_kg_m3 == pytest.approx(ref.rho, rel=1e-9)
    assert air.viscosity_pa_s == pytest.approx(ref.mu, rel=1e-9)


def test_sea_level_state() -> None:
    # source: ISO 2533 sea level: T = 288.15 K, p = 101 325 Pa, nu = 1.461e-5 m^2/s [published]
    air = standard_air(0.0)
    assert air.temperature_k == pytest.approx(288.15, abs=1e-9)
    assert air.pressure_pa == pytest.approx(101325.0, abs=1e-6)
    assert air.kinematic_viscosity_m2_s == pytest.approx(1.461e-5, abs=0.001e-5)
    # speed of sound a = sqrt(1.4 * 287.05 * 288.15) = 340.29 m/s [derived]
    assert air.speed_of_sound_m_s == pytest.approx(340.29, abs=0.01)


def test_temperature_offset_and_explicit_density() -> None:
    # ideal gas at the same pressure: rho ~ 1/T [derived]
    hot = standard_air(0.0, temperature_offset_k=15.0)
    assert hot.density_kg_m3 == pytest.approx(1.2250 * 288.15 / 303.15, rel=1e-3)
    given = standard_air(0.0, density_kg_m3=1.1)
    assert given.density_kg_m3 == 1.1
    assert given.density_source == "spec"


@pytest.mark.parametrize("altitude", [-700.0, 90000.0, math.nan])
def test_altitude_outside_model_range(altitude: float) -> None:
    # the US Standard Atmosphere 1976 model is documented for -610 m to 86 km (fluids docs)
    with pytest.raises(SpecError) as info:
        standard_air(altitude)
    assert info.value.key == "flow.altitude"


def test_boundary_layer_worked_example() -> None:
    # source: [derived] hand computation with Prandtl/Schlichting's
    # delta/x = 0.37 Re^-1/5, delta* = delta/8, theta = 7 delta/72
    bl = turbulent_flat_plate(30.0, 2.0, 1.4607e-5)
    assert bl.reynolds == pytest.approx(4.108e6, rel=1e-3)
    assert bl.thickness_m == pytest.approx(35.2e-3, rel=5e-3)
    assert bl.displacement_thickness_m == pytest.approx(4.40e-3, rel=5e-3)
    assert bl.momentum_thickness_m == pytest.approx(3.42e-3, rel=5e-3)


def test_boundary_layer_second_case_and_white() -> None:
    # source: [derived] hand computation: 50 m/s, 3.0 m -> delta = 43.96 mm
    assert turbulent_flat_plate(50.0, 3.0, 1.4607e-5).thickness_m == pytest.approx(
        43.96e-3, rel=5e-3
    )
    # source: White, Fluid Mechanics, delta/x = 0.16 Re^-1/7 -> 36.3 mm; methods agree within ~5 %
    bl = turbulent_flat_plate(30.0, 2.0, 1.4607e-5)
    white = 0.16 * 2.0 * bl.reynolds ** (-1.0 / 7.0)
    assert white == pytest.approx(36.3e-3, rel=5e-3)
    assert bl.thickness_m == pytest.approx(white, rel=0.05)


def test_profile_integrals_give_delta_star_and_theta() -> None:
    # the 1/7-power profile's integrals: delta* = int(1 - u/V), theta = int(u/V (1 - u/V)) [derived]
    from scipy.integrate import quad

    bl = turbulent_flat_plate(40.0, 1.5, 1.5e-5)
    d = bl.thickness_m

    def u(y: float) -> float:
        return (y / d) ** (1 / 7)

    assert quad(lambda y: 1 - u(y), 0, d)[0] == pytest.approx(bl.displacement_thickness_m, rel=1e-6)
    th = quad(lambda y: u(y) * (1 - u(y)), 0, d)[0]
    assert th == pytest.approx(bl.momentum_thickness_m, rel=1e-6)
