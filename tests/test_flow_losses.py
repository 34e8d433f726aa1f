"""Loss coefficients of the system behind the throat (brief §6; checks.md, Diffuser and losses)."""

from __future__ import annotations

import math

import fluids
import pytest

from ductgen.flow.atmosphere import standard_air
from ductgen.flow.losses import (
    BendElement,
    ConeElement,
    CoolerElement,
    HoseElement,
    equivalent_cone_included_angle_deg,
    gradual_expansion_k,
)
from ductgen.geometry.inlet import build_geometry
from ductgen.spec import parse_spec


def test_equivalent_cone_dixon_example_2_3() -> None:
    # source: Dixon, Fluid Mechanics and Thermodynamics of Turbomachinery, Example 2.3
    # (Sovran & Klomp data): L/R1 = 4.66, AR = 2.13 -> 2 theta = 11.26 deg [published]
    assert equivalent_cone_included_angle_deg(2.13, 4.66) == pytest.approx(11.26, abs=0.005)


def test_transition_angle_matches_geometry() -> None:
    spec = parse_spec(
        {
            "throat": {"width": 100, "depth": 25},
            "outlet": {"kind": "round", "diameter": 70, "transition_length": 150},
        }
    )
    t = build_geometry(spec).transition
    assert t is not None
    r1 = math.sqrt(t.throat_area_mm2 / math.pi)
    inc = equivalent_cone_included_angle_deg(t.area_ratio, t.length_mm / r1)
    assert inc == pytest.approx(2 * t.equivalent_cone_half_angle_deg, rel=1e-12)


@pytest.mark.parametrize(
    ("d1", "d2", "angle"), [(0.05, 0.08, 7.0), (0.05, 0.1, 20.0), (0.03, 0.05, 40.0)]
)
def test_gradual_expansion_crane_formula(d1: float, d2: float, angle: float) -> None:
    # source: Crane TP-410, K = 2.6 sin(theta/2) (1 - beta^2)^2 for theta <= 45 deg, on the
    # small-pipe velocity [published]
    beta = d1 / d2
    crane = 2.6 * math.sin(math.radians(angle) / 2) * (1 - beta**2) ** 2
    assert gradual_expansion_k(d1, d2, angle) == pytest.approx(crane, rel=1e-12)


def test_ideal_diffuser_recovery_bounds_the_loss() -> None:
    # source: Blevins, Applied Fluid Dynamics Handbook 7.4: Cp_ideal = 1 - (A1/A2)^2; the
    # loss of a real diffuser lies between 0 and the ideal recovery (both on the inlet head)
    d1, d2 = 0.05, 0.08
    cp_ideal = 1 - (d1 / d2) ** 4
    k = gradual_expansion_k(d1, d2, 10.0)
    assert 0 < k < cp_ideal


def test_hose_friction_is_darcy_with_fluids_colebrook() -> None:
    # source: Darcy-Weisbach with the Colebrook friction factor, cross-checked with
    # fluids.friction_factor(Method="Colebrook") [published reference library]
    air = standard_air(0.0)
    hose = HoseElement("hose", length_m=2.0, diameter_m=0.0762, roughness_m=0.0)
    q = 0.05
    item = hose.evaluate(q, air)
    v = q / (math.pi * 0.0762**2 / 4)
    re = v * 0.0762 / air.kinematic_viscosity_m2_s
    f = fluids.friction_factor(Re=re, eD=0.0, Method="Colebrook")
    assert item.velocity_m_s == pytest.approx(v, rel=1e-12)
    assert item.k == pytest.approx(f * 2.0 / 0.0762, rel=1e-6)
    assert item.dp_pa == pytest.approx(item.k * 0.5 * air.density_kg_m3 * v * v, rel=1e-12)


def test_rough_hose_loses_more_and_bend_has_positive_k() -> None:
    air = standard_air(0.0)
    smooth = HoseElement("h", 1.0, 0.05, 0.0).evaluate(0.03, air)
    rough = HoseElement("h", 1.0, 0.05, 0.5e-3).evaluate(0.03, air)
    assert rough.dp_pa > smooth.dp_pa
    bend = BendElement("b", 90.0, 0.1, 0.05, 0.5e-3).evaluate(0.03, air)
    assert 0.05 < bend.k < 1.5  # a 90 deg bend of r/D = 2 is a fraction of a head (common practice)


def test_cooler_models() -> None:
    air = standard_air(0.0)
    by_k = CoolerElement("c", k_value=8.0, face_area_m2=0.02).evaluate(0.04, air)
    v = 0.04 / 0.02
    assert by_k.dp_pa == pytest.approx(8.0 * 0.5 * air.density_kg_m3 * v * v, rel=1e-12)
    measured = CoolerElement("c", dp_ref_pa=150.0, q_ref_m3_s=0.05)
    # scaled with the square of the flow (the rule)
    assert measured.evaluate(0.1, air).dp_pa == pytest.approx(600.0, rel=1e-12)
    assert measured.evaluate(0.1, air).k is None


def test_contraction_k_on_small_end() -> None:
    air = standard_air(0.0)
    cone = ConeElement.from_diameters("c", 0.1, 0.05, 30.0)
    item = cone.evaluate(0.02, air)
    assert item.velocity_m_s == pytest.approx(0.02 / (math.pi * 0.05**2 / 4), rel=1e-12)
    assert item.k == pytest.approx(
        fluids.fittings.contraction_conical(0.1, 0.05, angle=30.0, method="Crane")
    )
