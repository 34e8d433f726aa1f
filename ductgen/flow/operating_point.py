"""The operating point: the volume flow at which the recovered pressure is used up.

Energy balance along the duct, incompressible, pressures relative to the free-stream static
pressure p∞:

    η(IVR)·q∞ = exit_cp·q∞ + Σ_i K_i·½ρV_i² + ½ρV_exit²

left: the total pressure recovered at the throat (``ram_recovery`` η times q∞ = ½ρV∞²);
right: the static pressure where the air leaves, the losses of each element at its own
velocity, and the dynamic head thrown away at the exit. With IVR = Q/(A_throat·V∞) every
term is a function of the volume flow Q, and the balance is solved for Q with
``scipy.optimize.brentq``. When several flows balance, the largest one is taken (the stable
one, where a little more flow would lose more than is recovered); when none does, the
result says so instead of giving a number.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace

import numpy as np
from scipy.optimize import brentq

from ductgen.flow.atmosphere import Air
from ductgen.flow.losses import BudgetItem, Element
from ductgen.flow.recovery import RecoveryModel, ShiftedRecovery

__all__ = ["OperatingPoint", "System", "solve", "solve_band"]


@dataclass(frozen=True)
class System:
    """An inlet at a flight condition with the duct system behind it (SI).

    Attributes:
        air: free-stream air.
        speed_m_s: free-stream speed V∞ (m/s).
        throat_area_m2: throat area W·D (m²).
        recovery: ram recovery as a function of IVR.
        elements: loss elements in flow order (the internal transition first).
        exit_area_m2: area where the air leaves (m²).
        exit_cp: static-pressure coefficient at the exit.
    """

    air: Air
    speed_m_s: float
    throat_area_m2: float
    recovery: RecoveryModel
    elements: tuple[Element, ...]
    exit_area_m2: float
    exit_cp: float = 0.0

    @property
    def dynamic_pressure_pa(self) -> float:
        return self.air.dynamic_pressure_pa(self.speed_m_s)

    def ivr(self, q_m3_s: float) -> float:
        """Inlet velocity ratio V1/V∞ at volume flow q."""
        return q_m3_s / (self.throat_area_m2 * self.speed_m_s)

    def recovered_pa(self, q_m3_s: float) -> float:
        """Recovered total pressure above p∞ at the throat, η·q∞ (Pa)."""
        return self.recovery(self.ivr(q_m3_s)) * self.dynamic_pressure_pa

    def budget(self, q_m3_s: float) -> list[BudgetItem]:
        """Every element's loss, then the exit static pressure and the exit dynamic head."""
        items = [e.evaluate(q_m3_s, self.air) for e in self.elements]
        q_inf = self.dynamic_pressure_pa
        items.append(
            BudgetItem("exit static pressure", self.speed_m_s, self.exit_cp, self.exit_cp * q_inf)
        )
        v_e = q_m3_s / self.exit_area_m2
        items.append(
            BudgetItem("exit dynamic head", v_e, 1.0, 0.5 * self.air.density_kg_m3 * v_e * v_e)
        )
        return items

    def residual_pa(self, q_m3_s: float) -> float:
        """Recovered minus used pressure at volume flow q (Pa); zero at the operating point."""
        return self.recovered_pa(q_m3_s) - sum(i.dp_pa for i in self.budget(q_m3_s))


@dataclass(frozen=True)
class OperatingPoint:
    """Result of :func:`solve`.

    ``found`` is False when no positive flow balances; then the flow fields are None and
    ``reason`` says why. ``ram_drag_n`` is the ram (internal) drag ṁ·V∞ (N): the free-stream
    momentum the inlet takes in. ``net_momentum_drag_n`` = ṁ·(V∞ − V_exit) (N) credits the
    exit jet as thrust, which holds only where the exit discharges rearward into the free
    stream (and still omits the (p_e − p∞)·A_e term).
    """

    found: bool
    volume_flow_m3_s: float | None = None
    mass_flow_kg_s: float | None = None
    inlet_velocity_ratio: float | None = None
    ram_recovery: float | None = None
    recovered_pa: float | None = None
    exit_velocity_m_s: float | None = None
    ram_drag_n: float | None = None
    net_momentum_drag_n: float | None = None
    residual_pa: float | None = None
    budget: list[BudgetItem] = field(default_factory=list)
    reason: str = ""


def _roots_bracket(system: System) -> tuple[float, float] | None:
    """A bracket (a, b) with residual(a) > 0 ≥ residual(b) around the largest root."""
    q_ref = system.throat_area_m2 * system.speed_m_s
    hi = 4.0 * q_ref
    for _ in range(40):
        if system.residual_pa(hi) < 0.0:
            break
        hi *= 2.0
    else:  # pragma: no cover - exit head grows as Q², so the residual turns negative
        return None
    qs = np.geomspace(1e-7 * q_ref, hi, 120)
    r = np.array([system.residual_pa(float(q)) for q in qs])
    pos = np.nonzero(r > 0.0)[0]
    if pos.size == 0:
        return None
    i = int(pos[-1])
    return float(qs[i]), float(qs[i + 1])


def solve(system: System) -> OperatingPoint:
    """Solve the energy balance for the volume flow (module docstring)."""
    bracket = _roots_bracket(system)
    q_inf = system.dynamic_pressure_pa
    if bracket is None:
        return OperatingPoint(
            found=False,
            reason=(
                "no positive flow balances: at every flow the recovered total pressure is "
                f"below the exit static pressure ({system.exit_cp * q_inf:.1f} Pa above ambient) "
                "plus the losses; lower exit_cp, the losses, or raise the recovery"
            ),
        )
    a, b = bracket
    q = float(brentq(system.residual_pa, a, b, xtol=1e-15 * b, rtol=1e-15, maxiter=400))
    budget = system.budget(q)
    rho = system.air.density_kg_m3
    v_e = q / system.exit_area_m2
    m = rho * q
    return OperatingPoint(
        found=True,
        volume_flow_m3_s=q,
        mass_flow_kg_s=m,
        inlet_velocity_ratio=system.ivr(q),
        ram_recovery=system.recovery(system.ivr(q)),
        recovered_pa=system.recovered_pa(q),
        exit_velocity_m_s=v_e,
        ram_drag_n=m * system.speed_m_s,
        net_momentum_drag_n=m * (system.speed_m_s - v_e),
        residual_pa=system.residual_pa(q),
        budget=budget,
    )


def solve_band(
    system: System,
    delta: float = 0.1,
    low_system: System | None = None,
    high_system: System | None = None,
) -> tuple[OperatingPoint, OperatingPoint]:
    """Operating points with the recovery lowered and raised by ``delta`` (capped at 1).

    ``low_system``/``high_system`` replace the system's elements on that side (e.g. the
    lossiest and the least lossy transition method); their recovery is ignored.
    """
    low = solve(replace(low_system or system, recovery=ShiftedRecovery(system.recovery, -delta)))
    high = solve(replace(high_system or system, recovery=ShiftedRecovery(system.recovery, delta)))
    return low, high
