r"""Ram recovery at the throat: ``ram_recovery`` = (p_t1 − p∞)/q∞.

This is the NACA ram-recovery ratio, not p_t1/p_t∞. No published recovery curve is available
to ductgen, so the default is a first-principles **boundary-layer capture** estimate; the user
can replace it with a constant or with a table of their own (IVR → recovery).

Capture model (derived here, not a published curve)
---------------------------------------------------
The inlet of width W is taken to swallow the lowest layer, of height h, of the 1/7-power
boundary layer u = V(y/δ)^(1/7) approaching the ramp, with the static pressure p∞ across
the layer. The captured volume flow fixes h:

    Q = W ∫₀ʰ u dy = W V δ (7/8) (h/δ)^(8/7)            (h ≤ δ)

Each streamline keeps its total pressure p∞ + ½ρu², so its ram recovery is (u/V)²
= (y/δ)^(2/7). Mass-averaging over the captured layer:

    η = ∫₀ʰ u (u/V)² dy / ∫₀ʰ u dy
      = [(7/10) δ (h/δ)^(10/7)] / [(7/8) δ (h/δ)^(8/7)] = 0.8 (h/δ)^(2/7).

Above δ the free stream (recovery 1) is added: with s = Q/(W V δ) = IVR·D/δ,

    h ≤ δ (s ≤ 7/8):  h/δ = (8s/7)^(7/8),  η = 0.8 (h/δ)^(2/7) = 0.8 (8s/7)^(1/4)
    h > δ  (s > 7/8):  η = (7/10 + s − 7/8) / s = 1 − 0.175/s,

continuous at h = δ (η = 0.8) and rising monotonically with IVR. The lip and ramp losses are
lumped into a factor ``flow.inlet_loss_factor`` (default 0.95, an assumption, no source):
the model's ram recovery is that factor times η. A constant or tabulated recovery is used
exactly as given (neither the factor nor the floor below applies to it).

Low flow: a floor
-----------------
As IVR → 0 the capture height h → 0 and the estimate falls to 0, but a real flush inlet at
zero through-flow is a dead-ended cavity under the boundary layer: the air that stagnates
against the lip and fills the cavity keeps part of its total pressure, so the recovery stays
well above zero. The capture picture (only a streamtube of height h feeds the throat) fails
there, where spillage and recirculation at the lip set the pressure. ductgen therefore uses

    η = max(η_floor, factor · η_capture),   η_floor = 0.5,

continuous and non-decreasing in IVR. The 0.5 is a *recalled* figure for flush inlets at
zero flow, not verified here: an assumption. The capture estimate is meant for
0.3 ≤ IVR ≤ 1 (``CAPTURE_IVR_RANGE``); below 0.3, where high-loss systems run, the report
warns (``ivr_low``).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

__all__ = [
    "CAPTURE_IVR_RANGE",
    "ZERO_FLOW_RECOVERY",
    "CaptureRecovery",
    "ConstantRecovery",
    "RecoveryModel",
    "ShiftedRecovery",
    "TableRecovery",
    "capture_height_ratio",
    "capture_recovery",
    "table_recovery",
]

#: Ram recovery of a flush inlet at zero through-flow: a recalled figure, not verified here
#: (an assumption); the floor of the capture estimate.
ZERO_FLOW_RECOVERY = 0.5
#: IVR range the capture estimate is meant for (below it the report warns ``ivr_low``;
#: common practice, no source).
CAPTURE_IVR_RANGE = (0.3, 1.0)


def capture_height_ratio(s: float) -> float:
    """Capture height h/δ for the flow ratio s = Q/(W·V·δ) = IVR·D/δ (dimensionless)."""
    if s <= 0.0:
        return 0.0
    if s <= 0.875:
        return float((s / 0.875) ** 0.875)
    return 1.0 + (s - 0.875)


def capture_recovery(s: float) -> float:
    """Mass-averaged ram recovery of the captured layer for s = IVR·D/δ (before the lip and
    ramp loss factor): 0.8 (h/δ)^(2/7) for h ≤ δ, blended with free stream above δ."""
    if s <= 0.0:
        return 0.0
    if s <= 0.875:
        return 0.8 * float(capture_height_ratio(s) ** (2.0 / 7.0))
    return 1.0 - 0.175 / s


class RecoveryModel:
    """Ram recovery as a function of inlet velocity ratio IVR = V1/V∞.

    Subclasses set ``kind`` (``capture`` | ``constant`` | ``table``) and ``assumption``
    (a sentence for the report).
    """

    kind: str = ""
    assumption: str = ""

    def __call__(self, ivr: float) -> float:  # pragma: no cover - interface
        raise NotImplementedError


@dataclass(frozen=True)
class CaptureRecovery(RecoveryModel):
    """The boundary-layer capture estimate (module docstring).

    Attributes:
        delta_over_depth: δ/D, boundary-layer thickness over throat depth.
        loss_factor: lip and ramp loss factor (``flow.inlet_loss_factor``).
    """

    delta_over_depth: float
    loss_factor: float = 0.95
    floor: float = ZERO_FLOW_RECOVERY
    kind: str = "capture"
    assumption: str = (
        "first-principles estimate, not a published curve: the inlet swallows the lowest "
        "layer of a 1/7-power turbulent boundary layer, recovery = mass-averaged total "
        "pressure of that layer, 0.8 (h/delta)^(2/7), times inlet_loss_factor (an "
        "assumption); floored at 0.5, a recalled zero-flow figure not verified here (an "
        "assumption); meant for IVR 0.3-1"
    )

    def __call__(self, ivr: float) -> float:
        if self.delta_over_depth <= 0.0:
            return max(self.floor, self.loss_factor)
        return max(self.floor, self.loss_factor * capture_recovery(ivr / self.delta_over_depth))


@dataclass(frozen=True)
class ConstantRecovery(RecoveryModel):
    """A ram recovery given by the user, the same at every flow."""

    value: float
    kind: str = "constant"
    assumption: str = "constant ram recovery given in the spec (flow.recovery), used as given"

    def __call__(self, ivr: float) -> float:
        return self.value


@dataclass(frozen=True)
class TableRecovery(RecoveryModel):
    """Measured recovery against IVR, interpolated linearly, held constant beyond the ends."""

    ivr: np.ndarray
    recovery: np.ndarray
    path: str = ""
    kind: str = "table"
    assumption: str = field(default="")

    def __post_init__(self) -> None:
        if not self.assumption:
            object.__setattr__(
                self,
                "assumption",
                f"user table {Path(self.path).name} (IVR -> recovery), linear between rows, "
                "held at the end values outside the table",
            )

    def __call__(self, ivr: float) -> float:
        return float(np.interp(ivr, self.ivr, self.recovery))

    def covers(self, ivr: float) -> bool:
        """True if ``ivr`` is inside the tabulated range."""
        return bool(self.ivr[0] <= ivr <= self.ivr[-1])


@dataclass(frozen=True)
class ShiftedRecovery(RecoveryModel):
    """Another model shifted by ``delta`` (sensitivity band), capped at 1."""

    base: RecoveryModel
    delta: float

    def __call__(self, ivr: float) -> float:
        return min(self.base(ivr) + self.delta, 1.0)


def table_recovery(
    ivr: tuple[float, ...], recovery: tuple[float, ...], path: str = ""
) -> TableRecovery:
    """A :class:`TableRecovery` from validated columns (see ``ductgen.spec.recovery_table``)."""
    return TableRecovery(
        ivr=np.asarray(ivr, float), recovery=np.asarray(recovery, float), path=path
    )
