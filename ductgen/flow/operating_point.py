"""The operating point: the volume flow at which the recovered pressure is used up.

Energy balance along the duct, incompressible, pressures relative to the free-stream static
pressure p∞:

    [Cp + (1 − Cp)·cos²ψ·η(IVR_local)]·q_t = exit_cp·q∞ + Σ_i K_i·½ρV_i² + ½ρV_exit²

left: the total pressure recovered at the throat: the fraction η (the recovery model) of the
local head (1 − Cp)·q_t above the local static pressure at a surface of pressure coefficient
``inlet_cp`` = Cp, along an inlet met by the flow at ψ (:mod:`ductgen.flow.terms`); q_t is
q∞ = ½ρV∞², or the isentropic impact pressure above Mach 0.3. Right: the static pressure
where the air leaves, the losses of each element at its own velocity (the inlet's own duct,
then the kinetic-energy line of its non-uniform outflow: a hose's mixing loss or a plenum's
dump, then the rest), and the dynamic head thrown away at the exit. With Cp = 0, ψ = 0,
α = 1 below Mach 0.3 this is η(IVR)·q∞ = exit_cp·q∞ + Σ K_i·½ρV_i² + ½ρV_exit².

With IVR = Q/(A_throat·V∞) every term is a function of the volume flow Q, and the balance
is solved for Q with ``scipy.optimize.brentq``. When several flows balance, the largest one
is taken (the stable one, where a little more flow would lose more than is recovered); when
none does, the result says so instead of giving a number.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace

import numpy as np
from scipy.optimize import brentq

from ductgen.flow.atmosphere import Air
from ductgen.flow.losses import BudgetItem, Element, budget_item
from ductgen.flow.recovery import RecoveryModel, ShiftedRecovery
from ductgen.flow.terms import local_head_ratio, mixing_loss_k

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
        inlet_cp: static-pressure coefficient of the surface at the inlet.
        yaw_factor: cos²ψ of the flow angle ψ (1 = aligned).
        total_head_pa: free-stream head the recovery applies to (Pa): the impact pressure
            above Mach 0.3; None = ½ρV∞².
        kinetic_energy_factor: α of the flow leaving the inlet's own duct.
        momentum_factor: β of that flow.
        exit_kind: ``"hose"`` (mixing loss (α − 2β + 1)·q) or ``"plenum"`` (α·q lost).
        duct_elements: how many leading ``elements`` are the inlet's own duct (the
            transition: 0 or 1); the kinetic-energy line follows them.
        duct_outlet_area_m2: flow area where the inlet's own duct ends (m²).
    """

    air: Air
    speed_m_s: float
    throat_area_m2: float
    recovery: RecoveryModel
    elements: tuple[Element, ...]
    exit_area_m2: float
    exit_cp: float = 0.0
    inlet_cp: float = 0.0
    yaw_factor: float = 1.0
    total_head_pa: float | None = None
    kinetic_energy_factor: float = 1.0
    momentum_factor: float = 1.0
    exit_kind: str = "hose"
    duct_elements: int = 0
    duct_outlet_area_m2: float | None = None

    @property
    def dynamic_pressure_pa(self) -> float:
        """Incompressible free-stream dynamic pressure ½ρV∞² (Pa)."""
        return self.air.dynamic_pressure_pa(self.speed_m_s)

    @property
    def head_pa(self) -> float:
        """The free-stream head the recovery applies to (Pa)."""
        return self.dynamic_pressure_pa if self.total_head_pa is None else self.total_head_pa

    def ivr(self, q_m3_s: float) -> float:
        """Inlet velocity ratio V1/V∞ at volume flow q."""
        return q_m3_s / (self.throat_area_m2 * self.speed_m_s)

    def local_ivr(self, q_m3_s: float) -> float:
        """V1 over the local edge velocity V∞·√(1 − Cp): the IVR the recovery model sees."""
        return self.ivr(q_m3_s) / float(local_head_ratio(self.inlet_cp) ** 0.5)

    def ram_recovery(self, q_m3_s: float) -> float:
        """(p_t1 − p∞)/q_t = Cp + (1 − Cp)·cos²ψ·η(IVR_local) (dimensionless)."""
        eta = self.recovery(self.local_ivr(q_m3_s))
        return self.inlet_cp + local_head_ratio(self.inlet_cp) * self.yaw_factor * eta

    def recovered_pa(self, q_m3_s: float) -> float:
        """Recovered total pressure above p∞ at the throat (Pa)."""
        return self.ram_recovery(q_m3_s) * self.head_pa

    def _outflow_item(self, q_m3_s: float) -> BudgetItem:
        """The kinetic-energy line of the inlet duct's non-uniform outflow."""
        a = self.duct_outlet_area_m2 or self.throat_area_m2
        v = q_m3_s / a
        if self.exit_kind == "plenum":
            if len(self.elements) > self.duct_elements:  # the whole α·q dumped, then the rest
                return budget_item("plenum dump", v, self.kinetic_energy_factor, self.air)
            # the duct's outlet is the exit: the exit head (k = 1) follows, this is the excess
            v_e = q_m3_s / self.exit_area_m2
            return budget_item(
                "plenum dump (alpha - 1)", v_e, self.kinetic_energy_factor - 1.0, self.air
            )
        k = mixing_loss_k(self.kinetic_energy_factor, self.momentum_factor)
        return budget_item("hose mixing", v, k, self.air)

    def budget(self, q_m3_s: float) -> list[BudgetItem]:
        """Every element's loss (the kinetic-energy line after the inlet's own duct), then
        the exit static pressure and the exit dynamic head."""
        items = [e.evaluate(q_m3_s, self.air) for e in self.elements]
        items.insert(self.duct_elements, self._outflow_item(q_m3_s))
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
    local_recovery: float | None = None
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
        ram_recovery=system.ram_recovery(q),
        local_recovery=system.recovery(system.local_ivr(q)),
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
