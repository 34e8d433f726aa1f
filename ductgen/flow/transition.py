"""Loss of the inlet's internal transition (throat rectangle → outlet), several methods.

The transition is treated as the conical diffuser of the same area ratio and
equivalent-cone angle (Sovran & Klomp via Dixon), on circles of the same areas. Published
methods disagree widely for it (on a 110 × 28 mm throat into a 3 in hose over 170 mm
K = 0.011 by Crane TP-410, 0.034 by Rennels, 0.054 by Idelchik, 0.11–0.22 by a diffuser
effectiveness of 0.8–0.6), so ductgen reports them all and carries their spread into the
sensitivity band:

* ``effectiveness`` (default): Blevins, *Applied Fluid Dynamics Handbook* §7.4 — the real
  pressure recovery is an effectiveness η_D times the ideal Cp,ideal = 1 − (A1/A2)², so the
  total-pressure loss on the inlet head is K = (1 − η_D)·Cp,ideal. Default η_D = 0.6, the
  lossy end of Blevins' 0.6–0.8, because this duct is offset, changes section from a
  rectangle to a circle and is fed the ramp's vortex-laden, distorted boundary-layer air,
  each of which lowers a diffuser's effectiveness below that of a clean conical one;
* ``crane``, ``rennels``, ``idelchik``: ``fluids.fittings.diffuser_conical`` with that
  method (Rennels with the smooth-wall Darcy friction factor at the transition's
  Reynolds number on the small-end equivalent diameter).

A transition that contracts (outlet smaller than the throat) uses Crane's conical
contraction (``fluids.fittings.contraction_conical``) on the outlet velocity for every method.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import lru_cache
from typing import Literal

from fluids.fittings import contraction_conical, diffuser_conical
from fluids.friction import friction_factor

from ductgen.flow.atmosphere import Air
from ductgen.flow.losses import BudgetItem, Element, budget_item

__all__ = [
    "BLEVINS_EFFECTIVENESS_RANGE",
    "FLUIDS_METHODS",
    "TransitionElement",
    "ideal_pressure_recovery",
    "transition_k",
    "transition_k_by_method",
]

#: Diffuser effectiveness range of Blevins §7.4 (both ends enter the spread).
BLEVINS_EFFECTIVENESS_RANGE = (0.6, 0.8)
#: ``fluids.fittings.diffuser_conical`` methods reported, by ductgen's lower-case name.
FLUIDS_METHODS = {"crane": "Crane", "rennels": "Rennels", "idelchik": "Idelchik"}


def ideal_pressure_recovery(area_ratio: float) -> float:
    """Cp,ideal = 1 − (A1/A2)² of a diffuser of area ratio A2/A1 (Blevins §7.4)."""
    return 1.0 - 1.0 / (area_ratio * area_ratio)


def _diameter(area_m2: float) -> float:
    return math.sqrt(4.0 * area_m2 / math.pi)


def _smooth_fd(reynolds: float) -> float:
    """Darcy friction factor of a smooth wall (``fluids.friction_factor``: laminar 64/Re
    below transition, Clamond's Colebrook solution above; safe at any Re > 0)."""
    return float(friction_factor(Re=max(reynolds, 1.0), eD=0.0))


@lru_cache(maxsize=1024)
def _fixed_k(d1: float, d2: float, angle: float, method: str) -> float:
    """A diffuser K that does not depend on the Reynolds number (cached: the operating-point
    solver asks for it at every trial flow)."""
    return float(diffuser_conical(d1, d2, angle=angle, method=method))


def _diffuser_k(d1: float, d2: float, angle: float, method: str, reynolds: float) -> float:
    if method == "Rennels":
        return float(diffuser_conical(d1, d2, angle=angle, fd=_smooth_fd(reynolds), method=method))
    return _fixed_k(d1, d2, angle, method)


def transition_k(
    method: str,
    a_in_m2: float,
    a_out_m2: float,
    included_angle_deg: float,
    reynolds: float,
    effectiveness: float,
) -> float:
    """K of one method: ``transition_k_by_method(...)[method]``, computing only that one."""
    d1, d2 = _diameter(a_in_m2), _diameter(a_out_m2)
    if abs(d2 / d1 - 1.0) < 1e-9:
        return 0.0
    angle = min(max(abs(included_angle_deg), 1e-6), 180.0)
    if d2 < d1:
        return float(contraction_conical(d1, d2, angle=angle, method="Crane"))
    if method in FLUIDS_METHODS:
        return _diffuser_k(d1, d2, angle, FLUIDS_METHODS[method], reynolds)
    cp = ideal_pressure_recovery(a_out_m2 / a_in_m2)
    if method == "effectiveness":
        return (1.0 - effectiveness) * cp
    for e in BLEVINS_EFFECTIVENESS_RANGE:
        if method == f"effectiveness_{e:g}":
            return (1.0 - e) * cp
    raise KeyError(method)


def transition_k_by_method(
    a_in_m2: float,
    a_out_m2: float,
    included_angle_deg: float,
    reynolds: float,
    effectiveness: float,
) -> dict[str, float]:
    """K of every method on the small-end velocity (dimensionless).

    Keys: ``crane``, ``rennels``, ``idelchik``, ``effectiveness`` (the spec's η_D) and
    ``effectiveness_0.6``/``effectiveness_0.8`` (Blevins' range ends). A contraction gives
    Crane's contraction K under every key.

    Args:
        a_in_m2, a_out_m2: inlet and outlet flow areas (m²).
        included_angle_deg: equivalent-cone included angle 2θ (deg).
        reynolds: Reynolds number at the inlet, on the equivalent diameter (Rennels only).
        effectiveness: diffuser effectiveness η_D of the ``effectiveness`` method.
    """
    d1, d2 = _diameter(a_in_m2), _diameter(a_out_m2)
    keys = ["crane", "rennels", "idelchik", "effectiveness"]
    keys += [f"effectiveness_{e:g}" for e in BLEVINS_EFFECTIVENESS_RANGE]
    if abs(d2 / d1 - 1.0) < 1e-9:
        return dict.fromkeys(keys, 0.0)
    angle = min(max(abs(included_angle_deg), 1e-6), 180.0)
    if d2 < d1:
        k = float(contraction_conical(d1, d2, angle=angle, method="Crane"))
        return dict.fromkeys(keys, k)
    out = {
        key: _diffuser_k(d1, d2, angle, method, reynolds) for key, method in FLUIDS_METHODS.items()
    }
    cp = ideal_pressure_recovery(a_out_m2 / a_in_m2)
    out["effectiveness"] = (1.0 - effectiveness) * cp
    for e in BLEVINS_EFFECTIVENESS_RANGE:
        out[f"effectiveness_{e:g}"] = (1.0 - e) * cp
    return out


@dataclass(frozen=True)
class TransitionElement(Element):
    """The internal transition as a loss element.

    ``pick`` selects the K used: ``method`` (the spec's choice), or the ``min``/``max`` over
    every method (the sensitivity band).
    """

    name: str
    a_in_m2: float
    a_out_m2: float
    included_angle_deg: float
    method: str = "effectiveness"
    effectiveness: float = 0.6
    pick: Literal["method", "min", "max"] = "method"

    @property
    def outlet_area_m2(self) -> float:  # type: ignore[override]
        return self.a_out_m2

    @property
    def velocity_area_m2(self) -> float:
        """Area whose velocity K applies to: the small end (m²)."""
        return min(self.a_in_m2, self.a_out_m2)

    def k_by_method(self, q_m3_s: float, air: Air) -> dict[str, float]:
        """Every method's K at volume flow q (m³/s)."""
        a = self.velocity_area_m2
        re = q_m3_s / a * _diameter(a) / air.kinematic_viscosity_m2_s
        return transition_k_by_method(
            self.a_in_m2, self.a_out_m2, self.included_angle_deg, re, self.effectiveness
        )

    def evaluate(self, q_m3_s: float, air: Air) -> BudgetItem:
        if self.pick == "method":  # one method's K only (the solver calls this a lot)
            a = self.velocity_area_m2
            re = q_m3_s / a * _diameter(a) / air.kinematic_viscosity_m2_s
            k = transition_k(
                self.method,
                self.a_in_m2,
                self.a_out_m2,
                self.included_angle_deg,
                re,
                self.effectiveness,
            )
        else:
            ks = self.k_by_method(q_m3_s, air)
            k = min(ks.values()) if self.pick == "min" else max(ks.values())
        return budget_item(self.name, q_m3_s / self.velocity_area_m2, k, air)
