"""Loss coefficients of the system behind the throat (sources: docs/sources.md, losses).

Every expected value comes from outside ductgen: the ``fluids`` reference library's own
functions, or a published formula/value, named beside each check.
"""

from __future__ import annotations

import math

import fluids
import pytest
from fluids.core import dP_from_K
from fluids.fittings import bend_rounded, contraction_conical, diffuser_conical

from ductgen.design import geometry_from_spec
from ductgen.flow.atmosphere import standard_air
from ductgen.flow.losses import (
    BendElement,
    ConeElement,
    CoolerElement,
    HoseElement,
    equivalent_cone_included_angle_deg,
    gradual_expansion_k,
)
from ductgen.spec import parse_spec

AIR = standard_air(0.0)


def test_equivalent_cone_dixon_example_2_3() -> None:
    # source: Dixon, Fluid Mechanics and Thermodynamics of Turbomachinery, Example 2.3
    # (Sovran & Klomp data): L/R1 = 4.66, AR = 2.13 -> 2 theta = 11.26 deg [published]
    assert equivalent_cone_included_angle_deg(2.13, 4.66) == pytest.approx(11.26, abs=0.005)


def test_transition_angle_of_a_built_inlet_is_dixons_formula() -> None:
    # source: Dixon Example 2.3's definition 2 theta = 2 atan((sqrt(AR) - 1)/(L/R1)) [published],
    # on hand-computed areas: throat 100 x 25 = 2500 mm^2 (sharp corners), outlet circle of
    # 70 mm, L = 150 mm, R1 = sqrt(2500/pi) [derived]
    spec = parse_spec(
        {
            "throat": {"width": 100, "depth": 25},
            "outlet": {"kind": "round", "diameter": 70, "transition_length": 150},
        }
    )
    t = geometry_from_spec(spec).transition
    assert t is not None
    a1, a2 = 2500.0, math.pi * 35.0**2
    r1 = math.sqrt(a1 / math.pi)
    expect = 2.0 * math.degrees(math.atan((math.sqrt(a2 / a1) - 1.0) / (150.0 / r1)))
    assert t.area_ratio == pytest.approx(a2 / a1, rel=1e-9)
    assert 2 * t.equivalent_cone_half_angle_deg == pytest.approx(expect, rel=1e-9)


@pytest.mark.parametrize(
    ("d1", "d2", "angle"), [(0.05, 0.08, 7.0), (0.05, 0.1, 20.0), (0.03, 0.05, 40.0)]
)
def test_gradual_expansion_is_crane(d1: float, d2: float, angle: float) -> None:
    # source: Crane TP-410, K = 2.6 sin(theta/2) (1 - beta^2)^2 for theta <= 45 deg on the
    # small-pipe velocity [published]; and fluids.fittings.diffuser_conical
    # (method="Crane") [reference library]
    beta = d1 / d2
    crane = 2.6 * math.sin(math.radians(angle) / 2) * (1 - beta**2) ** 2
    k = gradual_expansion_k(d1, d2, angle)
    assert k == pytest.approx(crane, rel=1e-12)
    assert k == pytest.approx(diffuser_conical(d1, d2, angle=angle, method="Crane"), rel=1e-12)


def test_ideal_diffuser_recovery_bounds_the_loss() -> None:
    # source: Blevins, Applied Fluid Dynamics Handbook 7.4: Cp_ideal = 1 - (A1/A2)^2; the
    # loss of a real diffuser lies between 0 and the ideal recovery (both on the inlet head)
    d1, d2 = 0.05, 0.08
    cp_ideal = 1 - (d1 / d2) ** 4
    k = gradual_expansion_k(d1, d2, 10.0)
    assert 0 < k < cp_ideal


def test_hose_friction_is_darcy_with_fluids_colebrook() -> None:
    # source: Darcy-Weisbach K = f L/D with the Colebrook friction factor, from
    # fluids.friction_factor(Method="Colebrook") (ductgen uses Clamond's solution), and
    # dp from fluids.core.dP_from_K [reference library]
    hose = HoseElement("hose", length_m=2.0, diameter_m=0.0762, roughness_m=0.0)
    q = 0.05
    item = hose.evaluate(q, AIR)
    v = q / (math.pi * 0.0762**2 / 4)
    re = v * 0.0762 / AIR.kinematic_viscosity_m2_s
    f = fluids.friction_factor(Re=re, eD=0.0, Method="Colebrook")
    assert item.velocity_m_s == pytest.approx(v, rel=1e-12)
    assert item.k == pytest.approx(f * 2.0 / 0.0762, rel=1e-6)
    assert item.dp_pa == pytest.approx(dP_from_K(item.k, AIR.density_kg_m3, v), rel=1e-12)


def test_rough_hose_and_bend_are_fluids() -> None:
    # source: fluids.friction_factor with eD = 0.5 mm / 50 mm; fluids.fittings.bend_rounded
    # (Rennels) for a 90 deg bend of r = 0.1 m, D = 0.05 m [reference library]
    q, d = 0.03, 0.05
    v = q / (math.pi * d * d / 4)
    re = v * d / AIR.kinematic_viscosity_m2_s
    rough = HoseElement("h", 1.0, d, 0.5e-3).evaluate(q, AIR)
    f_rough = fluids.friction_factor(Re=re, eD=0.5e-3 / d, Method="Colebrook")
    assert rough.k == pytest.approx(f_rough * 1.0 / d, rel=1e-6)
    bend = BendElement("b", 90.0, 0.1, d, 0.5e-3).evaluate(q, AIR)
    k_ref = bend_rounded(d, 90.0, rc=0.1, Re=re, roughness=0.5e-3, method="Rennels")
    assert bend.k == pytest.approx(k_ref, rel=1e-6)
    assert bend.dp_pa == pytest.approx(dP_from_K(k_ref, AIR.density_kg_m3, v), rel=1e-6)


def test_cooler_models() -> None:
    # source: fluids.core.dP_from_K on the face velocity [reference library]; a measured
    # drop scales with Q^2 (150 Pa at 0.05 -> 600 Pa at 0.1 m^3/s) [derived]
    by_k = CoolerElement("c", k_value=8.0, face_area_m2=0.02).evaluate(0.04, AIR)
    assert by_k.dp_pa == pytest.approx(dP_from_K(8.0, AIR.density_kg_m3, 2.0), rel=1e-12)
    measured = CoolerElement("c", dp_ref_pa=150.0, q_ref_m3_s=0.05)
    assert measured.evaluate(0.1, AIR).dp_pa == pytest.approx(600.0, rel=1e-12)
    assert measured.evaluate(0.1, AIR).k is None


def test_contraction_k_on_small_end() -> None:
    # source: fluids.fittings.contraction_conical (method="Crane"), K on the small end
    # [reference library]
    cone = ConeElement.from_diameters("c", 0.1, 0.05, 30.0)
    item = cone.evaluate(0.02, AIR)
    assert item.velocity_m_s == pytest.approx(0.02 / (math.pi * 0.05**2 / 4), rel=1e-12)
    assert item.k == pytest.approx(contraction_conical(0.1, 0.05, angle=30.0, method="Crane"))


@pytest.mark.parametrize(
    ("a_in", "a_out", "angle"),
    [(0.003, 0.0045, 12.0), (0.003, 0.009, 40.0), (0.003, 0.003, 10.0), (0.004, 0.002, 30.0)],
)
@pytest.mark.parametrize("re", [80.0, 2.0e4, 3.0e5])
def test_one_transition_method_is_that_key_of_every_method(
    a_in: float, a_out: float, angle: float, re: float
) -> None:
    """The solver's single-method K is bit for bit the same as the table of every method
    (a diffuser, a strong diffuser, no area change, a contraction)."""
    from ductgen.flow.transition import transition_k, transition_k_by_method

    table = transition_k_by_method(a_in, a_out, angle, re, 0.7)
    assert set(table) == {
        "crane",
        "rennels",
        "idelchik",
        "effectiveness",
        "effectiveness_0.6",
        "effectiveness_0.8",
    }
    for method, k in table.items():
        assert transition_k(method, a_in, a_out, angle, re, 0.7) == k, method
