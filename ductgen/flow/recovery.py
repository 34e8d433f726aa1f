r"""Ram recovery at the throat: ``ram_recovery`` = (p_t1 − p∞)/q∞ (brief §6).

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
lumped into a factor ``flow.inlet_loss_factor`` (default 0.95, an assumption): the model's
ram recovery is that factor times η. A constant or tabulated recovery is used exactly as
given (the factor does not apply to it).
"""

from __future__ import annotations

import csv
import math
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

__all__ = [
    "CaptureRecovery",
    "ConstantRecovery",
    "RecoveryModel",
    "ShiftedRecovery",
    "TableRecovery",
    "capture_height_ratio",
    "capture_recovery",
    "find_recovery_table",
    "load_recovery_table",
]


def capture_height_ratio(s: float) -> float:
    """Capture height h/δ for the flow ratio s = Q/(W·V·δ) = IVR·D/δ (dimensionless)."""
    if s <= 0.0:
        return 0.0
    if s <= 0.875:
        return (s / 0.875) ** 0.875
    return 1.0 + (s - 0.875)


def capture_recovery(s: float) -> float:
    """Mass-averaged ram recovery of the captured layer for s = IVR·D/δ (before the lip and
    ramp loss factor): 0.8 (h/δ)^(2/7) for h ≤ δ, blended with free stream above δ."""
    if s <= 0.0:
        return 0.0
    if s <= 0.875:
        return 0.8 * capture_height_ratio(s) ** (2.0 / 7.0)
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
    kind: str = "capture"
    assumption: str = (
        "first-principles estimate, not a published curve: the inlet swallows the lowest "
        "layer of a 1/7-power turbulent boundary layer, recovery = mass-averaged total "
        "pressure of that layer, 0.8 (h/delta)^(2/7), times inlet_loss_factor"
    )

    def __call__(self, ivr: float) -> float:
        if self.delta_over_depth <= 0.0:
            return self.loss_factor
        return self.loss_factor * capture_recovery(ivr / self.delta_over_depth)


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


def find_recovery_table(text: str) -> Path:
    """Resolve a recovery-table path: as given (the loader makes it relative to the spec's
    folder), else among the bundled data (``ductgen/data/``, its ``profiles/``).

    Raises:
        ValueError: no such file.
    """
    from ductgen.resources import data_path, profiles_dir

    p = Path(text).expanduser()
    candidates = [p] if p.is_absolute() else [p, data_path() / p, profiles_dir() / p]
    for c in candidates:
        if c.is_file():
            return c.resolve()
    raise ValueError(
        f"recovery table {text!r} not found (looked in the spec's folder and the bundled data)"
    )


def load_recovery_table(path: str | Path) -> TableRecovery:
    """Read and validate a recovery table: CSV with columns ``ivr,recovery`` (a header row
    and ``#`` comment lines allowed); IVR ≥ 0 strictly increasing, recovery in [0, 1].

    Raises:
        ValueError: a row that breaks a rule, named by line number.
    """
    path = Path(path)
    try:
        text = path.read_text(encoding="utf-8")
    except OSError as err:
        raise ValueError(f"cannot read recovery table {path}: {err.strerror or err}") from err
    rows: list[tuple[float, float]] = []
    lines = [
        (n, ln)
        for n, ln in enumerate(text.splitlines(), 1)
        if ln.strip() and not ln.lstrip().startswith("#")
    ]
    for n, cells in ((n, next(csv.reader([ln]))) for n, ln in lines):
        if len(cells) != 2:
            raise ValueError(f"{path.name} line {n}: expected two columns 'ivr,recovery'")
        try:
            a, b = float(cells[0]), float(cells[1])
        except ValueError:
            if not rows and n == lines[0][0]:
                continue  # header row
            raise ValueError(f"{path.name} line {n}: not numbers: {','.join(cells)}") from None
        if not (math.isfinite(a) and math.isfinite(b)):
            raise ValueError(f"{path.name} line {n}: values must be finite")
        if a < 0:
            raise ValueError(f"{path.name} line {n}: IVR {a:g} is negative")
        if not 0.0 <= b <= 1.0:
            raise ValueError(f"{path.name} line {n}: recovery {b:g} outside [0, 1]")
        if rows and a <= rows[-1][0]:
            raise ValueError(
                f"{path.name} line {n}: IVR must increase strictly ({a:g} after {rows[-1][0]:g})"
            )
        rows.append((a, b))
    if len(rows) < 2:
        raise ValueError(f"{path.name}: a recovery table needs at least two rows")
    arr = np.array(rows)
    return TableRecovery(ivr=arr[:, 0], recovery=arr[:, 1], path=str(path))
