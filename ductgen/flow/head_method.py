"""The turbulent boundary layer ahead of the ramp in a pressure gradient: Head's method.

Without a pressure gradient the layer is the flat plate of :mod:`ductgen.flow.boundary_layer`.
With ``flow.inlet_cp_gradient`` the surface pressure coefficient along the run is taken as
linear, Cp(x) = Cp_inlet − (dCp/dx)·(L − x) (x from the run's start, L the run length), the
edge velocity U(x) = V∞·√(1 − Cp(x)) (free-stream total pressure outside the layer), and the
layer is integrated along the run by Head's entrainment method (Head, M. R., *Entrainment in
the turbulent boundary layer*, ARC R&M 3152, 1958), the two-equation integral method for
turbulent layers (Thwaites' method is for laminar ones):

* momentum integral (von Kármán): dθ/dx = c_f/2 − (H + 2)·(θ/U)·dU/dx
* entrainment: d(U·θ·H1)/dx = U·F(H1), with H1 = (δ − δ*)/θ and F = 0.0306 (H1 − 3)^−0.6169
* shape factors: H1 = 3.3 + 0.8234 (H − 1.1)^−1.287 for H ≤ 1.6, 3.3 + 1.5501 (H − 0.6778)^−3.064
  above (the curve fits of Head's correlations by Cebeci & Bradshaw, *Momentum Transfer in
  Boundary Layers*, 1977) — **recalled**, not re-read here
* skin friction by Ludwieg & Tillmann (1949): c_f = 0.246·10^(−0.678 H)·Re_θ^(−0.268) —
  **recalled**

The layer starts turbulent near the run's leading edge (at :data:`START_FRACTION` of the run)
with the flat-plate values there (θ = 7δ/72, H = 9/7 of the 1/7-power profile, δ by
0.37 Re^(−1/5) at the local edge velocity). Head's own δ is θ·(H1 + H). The recovery model keeps
its 1/7-power profile; it is given the 1/7-power layer with Head's displacement thickness,
δ = 8·δ* (the layer's mass deficit, which grows with both θ and H), so an adverse gradient
thickens the layer the inlet swallows and a favourable one thins it.

Zero gradient: over Re_x = 1e5–5e7 Head's method gives H = 1.51–1.30 at the ramp start (the
1/7-power profile's 9/7 = 1.286 is a rougher fit), θ from 17 % below to 2 % above the flat-plate
θ = 7δ/72, and δ* within :data:`FLAT_PLATE_AGREEMENT` (−2.8 % to +3.8 %) of the flat-plate δ/8
with δ = 0.37 x Re_x^(−1/5) (Schlichting), measured in ``tests/test_flow_head.py``; so 8·δ*
reproduces the flat-plate δ to 4 %, the difference of the two skin-friction laws. Past
H = :data:`SEPARATION_H` the layer is taken to separate (Head's method loses meaning there; the
report warns).
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import numpy as np
from scipy.integrate import solve_ivp

from ductgen.flow.boundary_layer import turbulent_flat_plate

__all__ = [
    "FLAT_PLATE_AGREEMENT",
    "HEAD_SOURCE",
    "SEPARATION_H",
    "HeadLayer",
    "entrainment_shape_factor",
    "head_layer",
    "ludwieg_tillmann_cf",
    "shape_factor_from_h1",
]

#: Where the integration starts, as a fraction of the run (flat-plate values there).
START_FRACTION = 1e-3
#: Head's method is stopped here: a turbulent layer is near separation for H about 2-2.4
#: (common practice, no source; Head's fits also end near H1 = 3.3).
SEPARATION_H = 2.4
#: Zero-gradient 8·δ* from Head's method against the flat-plate δ (measured, see module).
FLAT_PLATE_AGREEMENT = 0.04
HEAD_SOURCE = (
    "Head's entrainment method (Head 1958, ARC R&M 3152) with Ludwieg-Tillmann skin friction; "
    "shape-factor fits of Cebeci & Bradshaw (1977), recalled"
)


def entrainment_shape_factor(h: float) -> float:
    """Head's H1 = (δ − δ*)/θ from H = δ*/θ (Cebeci & Bradshaw's fits, recalled)."""
    if h <= 1.6:
        return 3.3 + 0.8234 * float((h - 1.1) ** -1.287)
    return 3.3 + 1.5501 * float((h - 0.6778) ** -3.064)


def shape_factor_from_h1(h1: float) -> float:
    """H from H1, the inverse of :func:`entrainment_shape_factor` (closed form per branch)."""
    if h1 >= entrainment_shape_factor(1.6):
        return 1.1 + float(((h1 - 3.3) / 0.8234) ** (-1.0 / 1.287))
    return 0.6778 + float(((h1 - 3.3) / 1.5501) ** (-1.0 / 3.064))


def ludwieg_tillmann_cf(h: float, re_theta: float) -> float:
    """Skin-friction coefficient c_f = 0.246·10^(−0.678 H)·Re_θ^(−0.268) (recalled)."""
    return 0.246 * float(10.0 ** (-0.678 * h)) * float(re_theta**-0.268)


def _entrainment(h1: float) -> float:
    return 0.0306 * float((h1 - 3.0) ** -0.6169)


@dataclass(frozen=True)
class HeadLayer:
    """The layer at the ramp start by Head's method (SI).

    Attributes:
        run_length_m: the run x (m).
        edge_speed_m_s: U at the ramp start (m/s).
        momentum_thickness_m: θ (m).
        shape_factor: H = δ*/θ.
        skin_friction: c_f at the ramp start.
        separated: True when H passed :data:`SEPARATION_H` before the ramp (the values are
            those where it did).
    """

    run_length_m: float
    edge_speed_m_s: float
    momentum_thickness_m: float
    shape_factor: float
    skin_friction: float
    separated: bool

    @property
    def displacement_thickness_m(self) -> float:
        """δ* = H·θ (m)."""
        return self.shape_factor * self.momentum_thickness_m

    @property
    def thickness_head_m(self) -> float:
        """Head's δ = θ·(H1 + H) (m)."""
        h = self.shape_factor
        return self.momentum_thickness_m * (entrainment_shape_factor(h) + h)

    @property
    def thickness_m(self) -> float:
        """δ of the 1/7-power layer with Head's displacement thickness, 8·δ* (m): the δ the
        recovery model is given."""
        return 8.0 * self.displacement_thickness_m


def head_layer(
    speed_m_s: float,
    run_length_m: float,
    kinematic_viscosity_m2_s: float,
    inlet_cp: float,
    cp_gradient_per_m: float,
) -> HeadLayer:
    """Integrate Head's method along the run to the ramp start.

    Args:
        speed_m_s: free-stream speed V∞ (m/s), > 0.
        run_length_m: the run L (m), > 0.
        kinematic_viscosity_m2_s: ν (m²/s).
        inlet_cp: the surface pressure coefficient at the inlet (Cp at x = L).
        cp_gradient_per_m: dCp/dx along the run (1/m): > 0 adverse (pressure rising toward
            the inlet), < 0 favourable. Cp must stay below 1 along the run.

    Raises:
        ValueError: when Cp reaches 1 on the run (no edge velocity there).
    """
    length, nu = run_length_m, kinematic_viscosity_m2_s
    cp_start = inlet_cp - cp_gradient_per_m * length
    if max(cp_start, inlet_cp) >= 1.0:
        raise ValueError(f"Cp reaches 1 on the run (start {cp_start:g}, inlet {inlet_cp:g})")

    def edge(x: float) -> tuple[float, float]:
        s = math.sqrt(1.0 - (inlet_cp - cp_gradient_per_m * (length - x)))
        return speed_m_s * s, -speed_m_s * cp_gradient_per_m / (2.0 * s)

    return _integrate(edge, length, nu)


def _integrate(edge: Callable[[float], tuple[float, float]], length: float, nu: float) -> HeadLayer:
    """Head's two equations from the flat-plate start at :data:`START_FRACTION` of the run
    to its end ``length`` (m), or to separation; ``edge(x)`` is U (m/s) and dU/dx (1/s) at
    x (m), ``nu`` the kinematic viscosity (m²/s)."""
    x0 = START_FRACTION * length
    u0 = edge(x0)[0]
    flat = turbulent_flat_plate(u0, x0, nu)
    theta0, h0 = flat.momentum_thickness_m, 9.0 / 7.0
    y0 = u0 * theta0 * entrainment_shape_factor(h0)

    def state(x: float, z: Any) -> tuple[float, float, float, float, float]:
        u, du = edge(x)
        theta = z[0]
        h1 = max(z[1] / (u * theta), 3.3 + 1e-9)
        return u, du, theta, h1, shape_factor_from_h1(h1)

    def rhs(x: float, z: Any) -> Any:
        u, du, theta, h1, h = state(x, z)
        cf = ludwieg_tillmann_cf(h, u * theta / nu)
        return np.array([0.5 * cf - (h + 2.0) * theta / u * du, u * _entrainment(h1)])

    def separation(x: float, z: Any) -> float:
        return SEPARATION_H - state(x, z)[4]

    separation.terminal = True  # type: ignore[attr-defined]
    sol = solve_ivp(
        rhs, (x0, length), [theta0, y0], events=separation, rtol=1e-9, atol=1e-14, method="LSODA"
    )
    x_end = float(sol.t[-1])
    u, _, theta, _, h = state(x_end, sol.y[:, -1])
    return HeadLayer(
        run_length_m=length,
        edge_speed_m_s=u,
        momentum_thickness_m=theta,
        shape_factor=h,
        skin_friction=ludwieg_tillmann_cf(h, u * theta / nu),
        separated=sol.status == 1,
    )
