"""Corrections to the one-dimensional balance a reviewer asks for, as closed forms.

* **Impact pressure** (compressibility). Above Mach 0.3 the free-stream head the inlet can
  recover is the isentropic impact pressure q_c = p∞[(1 + (γ−1)/2·M²)^(γ/(γ−1)) − 1]
  (NACA Report 1135, *Equations, tables and charts for compressible flow*, isentropic
  relations), not ½ρV². Below Mach 0.3 the model stays incompressible (q_c/q differs from 1
  by M²/4 + …, 2.3 % at Mach 0.3), so the samples' numbers do not move.
* **Local surface pressure** (``inlet_cp``). Outside the boundary layer the total pressure
  is the free stream's, so at a surface of static-pressure coefficient Cp the local head is
  (1 − Cp)·q∞ and the local edge velocity V∞·√(1 − Cp). The inlet recovers a fraction η of
  the *local* head above the *local* static pressure:
  (p_t1 − p∞)/q∞ = Cp + (1 − Cp)·η (derived; η = 1 gives the free-stream total pressure).
* **Yaw** (``flow_angle_deg``). The head along the inlet's axis is cos²ψ of the head of a
  flow meeting it at ψ: a first-principles factor on the recovered part (zero penalty at 0°).
  A lower bound: NACA RM A50C13 (Axelson & Taylor 1950, abstract) measured the ram-recovery
  ratio about 0.05 lower at 4° than at 0° at Mach 0.70–1.15 (cos² gives 0.004); no
  low-speed curve is available here, so this is the only penalty applied.
* **Non-uniform outflow** (α, β). The air leaving the inlet's own duct carries α·½ρV̄² of
  kinetic energy and β·ρV̄²·A of momentum. Dumped into a plenum, all of α·q is lost. Fed into
  a hose of the same area, the profile mixes out; momentum and energy across the mixing length
  give the loss (α − 2β + 1)·q (derived: p₂ − p₁ = (β − 1)ρV̄², loss = p₁ + αq − p₂ − q).
  Without a measured β, β = 1 + (α − 1)/3: for u = V̄(1 + ε), ⟨ε⟩ = 0, α = 1 + 3⟨ε²⟩ + ⟨ε³⟩
  and β = 1 + ⟨ε²⟩ (exact for laminar pipe flow, α = 2, β = 4/3; 1/7-power pipe flow:
  α = 1.058, β = 1.020 against 1.019 by the relation) so the mixing loss is (α − 1)/3·q.
"""

from __future__ import annotations

import math

__all__ = [
    "GAMMA_AIR",
    "INCOMPRESSIBLE_MACH",
    "default_momentum_factor",
    "impact_pressure_pa",
    "local_head_ratio",
    "mixing_loss_k",
    "yaw_factor",
]

#: Ratio of specific heats of air (NACA Report 1135 uses 1.4).
GAMMA_AIR = 1.4
#: Below this Mach number the model is incompressible (common practice, no source: the
#: density change at Mach 0.3 is about 4.5 %, by the isentropic relations of NACA Report 1135).
INCOMPRESSIBLE_MACH = 0.3


def impact_pressure_pa(static_pa: float, mach: float, gamma: float = GAMMA_AIR) -> float:
    """Isentropic impact pressure q_c = p_t − p (Pa) of a flow at static pressure
    ``static_pa`` (Pa) and Mach number ``mach`` (NACA Report 1135, isentropic relations)."""
    ratio: float = (1.0 + 0.5 * (gamma - 1.0) * mach * mach) ** (gamma / (gamma - 1.0))
    return static_pa * (ratio - 1.0)


def local_head_ratio(inlet_cp: float) -> float:
    """Local head over the free-stream head at a surface of pressure coefficient Cp, 1 − Cp
    (total pressure of the free stream kept outside the boundary layer)."""
    return 1.0 - inlet_cp


def yaw_factor(flow_angle_deg: float) -> float:
    """cos²ψ: the part of the head along an inlet met by the flow at ψ (deg); 1 at 0°."""
    c = math.cos(math.radians(flow_angle_deg))
    return c * c


def default_momentum_factor(kinetic_energy_factor: float) -> float:
    """β = 1 + (α − 1)/3, the small-distortion relation between the factors."""
    return 1.0 + (kinetic_energy_factor - 1.0) / 3.0


def mixing_loss_k(kinetic_energy_factor: float, momentum_factor: float) -> float:
    """Loss (in heads of the mean velocity) of a non-uniform profile mixing out in a duct of
    constant area, α − 2β + 1 (momentum and energy balances; 0 for uniform flow)."""
    return kinetic_energy_factor - 2.0 * momentum_factor + 1.0
