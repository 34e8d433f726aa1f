"""The straight extension behind the duct outlet, and the duct system that remains behind it.

An outlet boundary on the transition's exit sees a distorted flow (a kinetic-energy factor
α of 1.2–1.3 measured on three samples here) while the fan-curve boundary assumes a
uniform one, so part of the dynamic pressure leaves the budget unbooked. The case therefore
carries the duct on as a straight run of :data:`~ductgen.cfd.case.EXTENSION_DIAMETERS`
diameters with the outlet's own cross-section, and the outlet boundary at its end carries
the rest of the 1-D budget: every element but the internal transition (the CFD resolves
it), minus the friction the modelled run already has, counted as the 1-D model counts a
hose (Darcy f·L/D with the first hose's diameter and roughness; with no hose, a smooth run
of the outlet's hydraulic diameter), at the run's own mean velocity Q/A (A the outlet's area:
a rectangular run of hydraulic diameter D_h is not as fast as a round one of diameter D_h).
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

from ductgen.spec.flow import HoseLoss
from ductgen.spec.model import Spec

__all__ = ["ExtensionPlan", "downstream_need", "extension_plan"]


@dataclass(frozen=True)
class ExtensionPlan:
    """Length (m) of the modelled extension and the diameter (m) and roughness (m) its
    1-D friction is counted with; ``diameters`` = length / diameter; ``source`` says
    where the diameter came from; ``area_m2`` the run's cross-section (the outlet's, m²)."""

    length_m: float
    diameter_m: float
    roughness_m: float
    diameters: float
    source: str
    area_m2: float


def extension_plan(
    spec: Spec, hydraulic_diameter_m: float, diameters: float, area_m2: float
) -> ExtensionPlan:
    """The extension of ``diameters`` hose diameters: the spec's first hose's diameter,
    else the outlet's hydraulic diameter 4A/P (m); ``area_m2`` the outlet's area (m²)."""
    losses = spec.flow.losses if spec.flow is not None else ()
    hose = next((e for e in losses if isinstance(e, HoseLoss)), None)
    if hose is not None:
        d, rough, src = float(hose.diameter), float(hose.roughness), "first hose diameter"
    else:
        d, rough, src = hydraulic_diameter_m, 0.0, "outlet hydraulic diameter (no hose)"
    return ExtensionPlan(diameters * d, d, rough, diameters, src, area_m2)


def downstream_need(spec: Spec, design: Any, plan: ExtensionPlan) -> Callable[[float], float]:
    """Q (m³/s) → static pressure above ambient (Pa) the duct system behind the extension
    needs: the 1-D budget without the internal transition, less the modelled run's
    friction (module doc)."""
    from ductgen.flow.losses import HoseElement
    from ductgen.flow.system import TRANSITION_NAME, build_system

    assert spec.flow is not None  # checked before any work (cfd.run.check_inputs)
    system = build_system(spec.flow, design.duct)[0]
    run = HoseElement("modelled extension", plan.length_m, plan.diameter_m, plan.roughness_m)
    # the element's velocity is q / (π d²/4); scale q so that it is the run's own Q / A
    to_round = math.pi * plan.diameter_m**2 / 4.0 / plan.area_m2

    # the CFD resolves the transition and the non-uniform outflow (its mixing in the
    # modelled run, its kinetic energy leaving through the outlet): their 1-D lines are left out
    resolved = {TRANSITION_NAME, "hose mixing", "plenum dump", "plenum dump (alpha - 1)"}

    def need(q: float) -> float:
        rest = sum(i.dp_pa for i in system.budget(q) if i.element not in resolved)
        return rest - (run.evaluate(q * to_round, system.air).dp_pa if q > 0.0 else 0.0)

    return need
