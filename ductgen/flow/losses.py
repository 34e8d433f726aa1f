"""Pressure losses of the system behind the throat, each ½ρV²K at its own velocity.

Loss coefficients come from the ``fluids`` package rather than hand-written tables:

* hose friction: Darcy, ``K = f·L/D`` with ``fluids.friction_factor`` (Clamond's solution of
  Colebrook; laminar 64/Re below its transition Reynolds number);
* bends: ``fluids.fittings.bend_rounded`` (Rennels' method), on the hose velocity;
* diffusers: ``fluids.fittings.diffuser_conical`` with Crane TP-410's gradual-enlargement
  formula K = 2.6 sin(θ/2)(1 − β²)² (θ ≤ 45°; θ the included angle, β = d1/d2, on the
  small-end velocity), contractions with ``fluids.fittings.contraction_conical`` (Crane, on
  the small-end velocity);
* coolers: a stated K on the face velocity, or a measured pressure drop scaled with Q².

The inlet's own internal transition (rectangle → outlet), where the methods disagree
widely, has its own element with several methods: :mod:`ductgen.flow.transition`.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import fluids
from fluids.fittings import bend_rounded, contraction_conical, diffuser_conical

from ductgen.flow.atmosphere import Air

__all__ = [
    "BendElement",
    "BudgetItem",
    "ConeElement",
    "CoolerElement",
    "Element",
    "HoseElement",
    "budget_item",
    "cone_k",
    "equivalent_cone_included_angle_deg",
    "gradual_expansion_k",
]


@dataclass(frozen=True)
class BudgetItem:
    """One line of the pressure budget: ``dp_pa`` = k·½ρV² (k, V None when not defined)."""

    element: str
    velocity_m_s: float | None
    k: float | None
    dp_pa: float

    def to_dict(self) -> dict[str, object]:
        return {
            "element": self.element,
            "velocity_m_s": self.velocity_m_s,
            "k": self.k,
            "dp_pa": self.dp_pa,
        }


def equivalent_cone_included_angle_deg(area_ratio: float, length_over_r1: float) -> float:
    """Included angle 2θ (deg) of the conical diffuser with the same area ratio and length:
    2θ = 2·atan((√AR − 1)/(L/R1)), R1 the inlet radius (Dixon, after Sovran & Klomp)."""
    return 2.0 * math.degrees(math.atan((math.sqrt(area_ratio) - 1.0) / length_over_r1))


def gradual_expansion_k(d1_m: float, d2_m: float, included_angle_deg: float) -> float:
    """Crane TP-410 gradual-enlargement K on the small-end velocity (via ``fluids``)."""
    return float(diffuser_conical(d1_m, d2_m, angle=included_angle_deg, method="Crane"))


def cone_k(d_in_m: float, d_out_m: float, included_angle_deg: float) -> tuple[float, float]:
    """K and the diameter whose velocity it applies to (the small end) for a cone from
    ``d_in_m`` to ``d_out_m``: an expansion or a contraction (Crane, via ``fluids``)."""
    if abs(d_out_m / d_in_m - 1.0) < 1e-9:
        return 0.0, d_in_m
    angle = min(max(abs(included_angle_deg), 1e-6), 180.0)
    if d_out_m > d_in_m:
        return gradual_expansion_k(d_in_m, d_out_m, angle), d_in_m
    return float(contraction_conical(d_in_m, d_out_m, angle=angle, method="Crane")), d_out_m


def _area(d_m: float) -> float:
    return math.pi * d_m * d_m / 4.0


class Element:
    """A loss element: ``evaluate(q, air)`` gives its budget line at volume flow q (m³/s).

    ``name`` labels it; ``outlet_area_m2`` is the flow area leaving it (None if unknown),
    used as the default exit area of the system.
    """

    name: str
    outlet_area_m2: float | None

    def evaluate(self, q_m3_s: float, air: Air) -> BudgetItem:  # pragma: no cover - interface
        raise NotImplementedError


def budget_item(name: str, v_m_s: float, k: float, air: Air) -> BudgetItem:
    """Budget line of a loss K at velocity V: Δp = K·½ρV² (Pa)."""
    return BudgetItem(name, v_m_s, k, k * 0.5 * air.density_kg_m3 * v_m_s * v_m_s)


def _darcy(re: float, rel_roughness: float) -> float:
    if re <= 0.0:
        return 0.0
    return float(fluids.friction_factor(Re=re, eD=rel_roughness))


@dataclass(frozen=True)
class HoseElement(Element):
    """Straight hose: K = f·L/D (Darcy), f from ``fluids.friction_factor``."""

    name: str
    length_m: float
    diameter_m: float
    roughness_m: float

    @property
    def outlet_area_m2(self) -> float:  # type: ignore[override]
        return _area(self.diameter_m)

    def evaluate(self, q_m3_s: float, air: Air) -> BudgetItem:
        v = q_m3_s / _area(self.diameter_m)
        re = v * self.diameter_m / air.kinematic_viscosity_m2_s
        k = _darcy(re, self.roughness_m / self.diameter_m) * self.length_m / self.diameter_m
        return budget_item(self.name, v, k, air)


@dataclass(frozen=True)
class BendElement(Element):
    """Smooth bend: K from ``fluids.fittings.bend_rounded`` (Rennels)."""

    name: str
    angle_deg: float
    radius_m: float
    diameter_m: float
    roughness_m: float

    @property
    def outlet_area_m2(self) -> float:  # type: ignore[override]
        return _area(self.diameter_m)

    def evaluate(self, q_m3_s: float, air: Air) -> BudgetItem:
        v = q_m3_s / _area(self.diameter_m)
        re = max(v * self.diameter_m / air.kinematic_viscosity_m2_s, 1.0)
        fd = _darcy(re, self.roughness_m / self.diameter_m)  # laminar-safe, unlike Clamond alone
        k = float(bend_rounded(self.diameter_m, self.angle_deg, fd=fd, rc=self.radius_m, Re=re))
        return budget_item(self.name, v, k, air)


@dataclass(frozen=True)
class ConeElement(Element):
    """A conical diffuser or contraction with a fixed K on its small-end area."""

    name: str
    k_value: float
    area_m2: float
    outlet_area: float

    @property
    def outlet_area_m2(self) -> float:  # type: ignore[override]
        return self.outlet_area

    @classmethod
    def from_diameters(
        cls, name: str, d_in_m: float, d_out_m: float, included_angle_deg: float
    ) -> ConeElement:
        k, d_small = cone_k(d_in_m, d_out_m, included_angle_deg)
        return cls(name=name, k_value=k, area_m2=_area(d_small), outlet_area=_area(d_out_m))

    @classmethod
    def from_areas(
        cls, name: str, a_in_m2: float, a_out_m2: float, included_angle_deg: float
    ) -> ConeElement:
        d1, d2 = math.sqrt(4.0 * a_in_m2 / math.pi), math.sqrt(4.0 * a_out_m2 / math.pi)
        k, d_small = cone_k(d1, d2, included_angle_deg)
        return cls(
            name=name,
            k_value=k,
            area_m2=a_in_m2 if d_small == d1 else a_out_m2,
            outlet_area=a_out_m2,
        )

    def evaluate(self, q_m3_s: float, air: Air) -> BudgetItem:
        v = q_m3_s / self.area_m2
        return budget_item(self.name, v, self.k_value, air)


@dataclass(frozen=True)
class CoolerElement(Element):
    """Heat exchanger: K on the face velocity, or Δp = Δp_ref·(Q/Q_ref)²."""

    name: str
    k_value: float | None = None
    face_area_m2: float | None = None
    dp_ref_pa: float | None = None
    q_ref_m3_s: float | None = None

    @property
    def outlet_area_m2(self) -> float | None:  # type: ignore[override]
        return self.face_area_m2

    def evaluate(self, q_m3_s: float, air: Air) -> BudgetItem:
        v = q_m3_s / self.face_area_m2 if self.face_area_m2 else None
        if self.k_value is not None and v is not None:
            return budget_item(self.name, v, self.k_value, air)
        assert self.dp_ref_pa is not None and self.q_ref_m3_s is not None
        dp = self.dp_ref_pa * (q_m3_s / self.q_ref_m3_s) ** 2
        k = dp / (0.5 * air.density_kg_m3 * v * v) if v else None
        return BudgetItem(self.name, v, k, dp)
