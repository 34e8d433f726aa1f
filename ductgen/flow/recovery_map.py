r"""Ram recovery from a map of CFD runs: recovery(ramp angle, W/D, δ/D, IVR).

The table (``ductgen/data/recovery_map.csv``) comes from ductgen's own CFD campaign
(``bench/recovery_campaign.py``: one ``ductgen cfd`` per point, flat skin, the standard wall
table; the inputs are the values each run gave, IVR as the solver measured it). Its header
lines (``# key: value``) say how it was made; ``status`` says whether the campaign is
complete. It is not a published curve: it is one turbulence model (k-ω SST) on one mesh
level per point, and the report says so (``recovery_source``).

The fit
-------
The four inputs are scaled to [0, 1] over the table's range. Two smooth fits are tried and
the one with the smaller leave-one-out RMS error is kept:

- a full quadratic polynomial in the four scaled inputs (15 terms), least squares; its
  leave-one-out residuals are exact, e_i / (1 − h_ii) with h the hat matrix;
- a thin-plate-spline radial basis function with a linear tail
  (``scipy.interpolate.RBFInterpolator``) at a few smoothing values, refitted without each
  point in turn.

``residual_rms`` / ``residual_max`` are the fit's own misfit at the campaign points,
``loo_rms`` its leave-one-out error (what a new point would see); the stated
uncertainty combines ``loo_rms`` with the campaign's mesh uncertainty (a grid convergence
index on one point, when the header gives ``mesh_uncertainty_rel``) in quadrature.

Outside the table's range in any input the map is evaluated with that input held at the
range's edge (a polynomial or spline must not be trusted beyond its points) and the report
warns ``recovery_map_extrapolated``. A map needs at least :data:`MIN_POINTS` points: a
partial campaign below that is refused.
"""

from __future__ import annotations

import csv
import functools
import io
import itertools
import math
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from ductgen.errors import SpecError
from ductgen.flow.inputs import DuctShape
from ductgen.flow.recovery import RecoveryModel, TableRecovery

__all__ = [
    "INPUTS",
    "MAP_FILE",
    "MIN_POINTS",
    "MapRecovery",
    "MapTable",
    "RecoveryMap",
    "default_map",
    "fit_map",
    "map_recovery",
    "read_map_table",
    "recovery_keys",
    "recovery_source",
]

#: The bundled table, under ``ductgen/data``.
MAP_FILE = "recovery_map.csv"
#: The map's inputs, in order (column names of the table).
INPUTS = ("ramp_angle_deg", "width_over_depth", "delta_over_depth", "ivr")
#: The measured column.
OUTPUT = "ram_recovery"
#: Fewest points a map is fitted from: the quadratic has 15 terms, and ten points per input
#: is the campaign's own floor (common practice for response surfaces, no source).
MIN_POINTS = 40
#: Smoothing values of the RBF candidates (in recovery², on inputs scaled to [0, 1]).
RBF_SMOOTHING = (0.0, 1e-4, 1e-3, 1e-2)


@dataclass(frozen=True)
class MapTable:
    """A recovery table: ``x`` (n × 4, :data:`INPUTS`), ``y`` (n), the header's keys."""

    x: np.ndarray
    y: np.ndarray
    header: dict[str, str]
    name: str = MAP_FILE

    @property
    def n(self) -> int:
        return int(self.y.size)


def read_map_table(text: str, name: str = MAP_FILE) -> MapTable:
    """Parse a map table: ``# key: value`` header lines, then a CSV with the
    :data:`INPUTS` columns and ``ram_recovery`` (other columns are ignored).

    Raises:
        ValueError: naming the row or column that is missing or not a finite number, or a
            recovery outside (0, 1].
    """
    header: dict[str, str] = {}
    body: list[str] = []
    for line in text.splitlines():
        if line.startswith("#"):
            key, _, value = line[1:].partition(":")
            if value:
                header.setdefault(key.strip(), value.strip())
        elif line.strip():
            body.append(line)
    reader = csv.DictReader(io.StringIO("\n".join(body)))
    missing = [c for c in (*INPUTS, OUTPUT) if c not in (reader.fieldnames or [])]
    if missing:
        raise ValueError(f"{name}: missing column(s) {', '.join(missing)}")
    xs, ys = [], []
    for i, row in enumerate(reader, start=2):
        try:
            vals = [float(row[c]) for c in (*INPUTS, OUTPUT)]
        except (TypeError, ValueError):
            raise ValueError(f"{name}: row {i} has a value that is not a number") from None
        if not all(math.isfinite(v) for v in vals):
            raise ValueError(f"{name}: row {i} has a value that is not finite")
        if not 0.0 < vals[-1] <= 1.0:
            raise ValueError(f"{name}: row {i}: ram_recovery {vals[-1]:g} is outside (0, 1]")
        xs.append(vals[:-1])
        ys.append(vals[-1])
    x = np.asarray(xs, float).reshape(-1, len(INPUTS))
    return MapTable(x=x, y=np.asarray(ys, float), header=header, name=name)


def _quadratic_terms(u: np.ndarray) -> np.ndarray:
    """Design matrix of the full quadratic in the columns of ``u`` (n × 15 for 4 inputs)."""
    n, d = u.shape
    cols = [np.ones(n)] + [u[:, i] for i in range(d)]
    cols += [u[:, i] * u[:, j] for i, j in itertools.combinations_with_replacement(range(d), 2)]
    return np.column_stack(cols)


@dataclass(frozen=True)
class _Fit:
    kind: str
    loo: np.ndarray  # leave-one-out residuals at the table's points
    predict: Callable[[np.ndarray], np.ndarray]  # (m × 4 scaled) → m


def _quadratic_fit(u: np.ndarray, y: np.ndarray) -> _Fit:
    a = _quadratic_terms(u)
    coef, *_ = np.linalg.lstsq(a, y, rcond=None)
    hat = a @ np.linalg.pinv(a)
    resid = y - a @ coef
    loo = resid / np.clip(1.0 - np.diag(hat), 1e-9, None)
    return _Fit("quadratic polynomial (least squares)", loo, lambda v: _quadratic_terms(v) @ coef)


def _rbf_fit(u: np.ndarray, y: np.ndarray, smoothing: float) -> _Fit:
    from scipy.interpolate import RBFInterpolator

    def make(uu: np.ndarray, yy: np.ndarray) -> RBFInterpolator:
        return RBFInterpolator(uu, yy, kernel="thin_plate_spline", degree=1, smoothing=smoothing)

    loo = np.empty_like(y)
    for i in range(y.size):
        keep = np.arange(y.size) != i
        loo[i] = y[i] - float(make(u[keep], y[keep])(u[i : i + 1])[0])
    full = make(u, y)
    kind = f"thin-plate-spline RBF, linear tail, smoothing {smoothing:g}"
    return _Fit(kind, loo, lambda v: np.asarray(full(v)))


@dataclass(frozen=True)
class RecoveryMap:
    """A fitted map (module doc). Call it with the four inputs (:data:`INPUTS` order)."""

    table: MapTable
    kind: str
    lo: np.ndarray
    hi: np.ndarray
    residual_rms: float
    residual_max: float
    loo_rms: float
    mesh_uncertainty_rel: float | None
    _predict: Callable[[np.ndarray], np.ndarray] = field(repr=False)

    def clipped(self, x: tuple[float, ...]) -> np.ndarray:
        """The inputs held inside the table's range."""
        held: np.ndarray = np.clip(np.asarray(x, float), self.lo, self.hi)
        return held

    def outside(self, x: tuple[float, ...]) -> list[str]:
        """Names of the inputs outside the table's range (empty inside it)."""
        return [n for n, v, a, b in zip(INPUTS, x, self.lo, self.hi, strict=True)
                if not a - 1e-9 <= v <= b + 1e-9]  # fmt: skip

    def __call__(self, x: tuple[float, ...]) -> float:
        u = (self.clipped(x) - self.lo) / (self.hi - self.lo)
        r = float(self._predict(u[None, :])[0])
        return min(max(r, 1e-3), 1.0)

    def uncertainty(self, recovery: float) -> float:
        """The stated uncertainty of a map value (absolute): leave-one-out RMS and the mesh
        uncertainty (relative, times the value) in quadrature."""
        mesh = (self.mesh_uncertainty_rel or 0.0) * recovery
        return math.hypot(self.loo_rms, mesh)

    @property
    def points(self) -> int:
        return self.table.n

    def summary(self) -> dict[str, object]:
        """What the report says about the map (``flow.recovery_map``)."""
        h = self.table.header
        return {
            "table": self.table.name,
            "points": self.points,
            "status": h.get("status", ""),
            "made_by": h.get("made by", ""),
            "mesh": h.get("mesh", ""),
            "solver": h.get("solver", ""),
            "settings_fingerprint": h.get("settings fingerprint", ""),
            "fit": self.kind,
            "residual_rms": self.residual_rms,
            "residual_max": self.residual_max,
            "leave_one_out_rms": self.loo_rms,
            "mesh_uncertainty_rel": self.mesh_uncertainty_rel,
            "mesh_uncertainty_basis": h.get("mesh uncertainty basis", "not measured yet"),
            "range": {
                n: [float(a), float(b)] for n, a, b in zip(INPUTS, self.lo, self.hi, strict=True)
            },
        }


def fit_map(table: MapTable) -> RecoveryMap:
    """Fit a table (module doc); raises ValueError below :data:`MIN_POINTS` points or when
    an input does not vary."""
    if table.n < MIN_POINTS:
        raise ValueError(
            f"{table.name} has {table.n} points ({table.header.get('status', 'no status')}); "
            f"a map needs at least {MIN_POINTS}"
        )
    lo, hi = table.x.min(axis=0), table.x.max(axis=0)
    flat = [n for n, a, b in zip(INPUTS, lo, hi, strict=True) if not b > a]
    if flat:
        raise ValueError(f"{table.name}: {', '.join(flat)} does not vary over the table")
    u = (table.x - lo) / (hi - lo)
    fits = [_quadratic_fit(u, table.y)] + [_rbf_fit(u, table.y, s) for s in RBF_SMOOTHING]
    best = min(fits, key=lambda f: float(np.sqrt(np.mean(f.loo**2))))
    resid = table.y - np.asarray(best.predict(u))
    mesh = table.header.get("mesh_uncertainty_rel")
    return RecoveryMap(
        table=table,
        kind=best.kind,
        lo=lo,
        hi=hi,
        residual_rms=float(np.sqrt(np.mean(resid**2))),
        residual_max=float(np.max(np.abs(resid))),
        loo_rms=float(np.sqrt(np.mean(best.loo**2))),
        mesh_uncertainty_rel=float(mesh) if mesh else None,
        _predict=best.predict,
    )


@functools.lru_cache(maxsize=4)
def _map_from_path(path: str) -> RecoveryMap:
    return fit_map(read_map_table(Path(path).read_text(encoding="utf-8"), Path(path).name))


def default_map() -> RecoveryMap:
    """The bundled map, fitted once per process.

    Raises:
        FileNotFoundError: the table is not bundled; ValueError: it cannot be fitted
            (e.g. a partial campaign with fewer than :data:`MIN_POINTS` points).
    """
    from ductgen.resources import data_path

    try:
        path = data_path(MAP_FILE)
    except FileNotFoundError:
        raise FileNotFoundError(
            f"this version ships no {MAP_FILE}: the CFD campaign that makes it "
            "(bench/recovery_campaign.py) is not complete"
        ) from None
    return _map_from_path(str(path))


@dataclass(frozen=True)
class MapRecovery(RecoveryModel):
    """The map at one design (ramp angle, W/D, δ/D), as a function of IVR.

    ``standard_walls`` False (a user's wall table) puts the design outside the map, which
    was made with the standard table only.
    """

    map: RecoveryMap
    ramp_angle_deg: float
    width_over_depth: float
    delta_over_depth: float
    standard_walls: bool = True
    kind: str = "map"
    assumption: str = (
        "recovery map from ductgen's own CFD campaign (k-omega SST, one mesh level per "
        "point; not a measurement, not a published curve), fitted smoothly in ramp angle, "
        "W/D, delta/D and IVR; inputs outside the campaign's range are held at its edge"
    )

    def inputs(self, ivr: float) -> tuple[float, float, float, float]:
        return (self.ramp_angle_deg, self.width_over_depth, self.delta_over_depth, ivr)

    def __call__(self, ivr: float) -> float:
        return self.map(self.inputs(ivr))

    def outside(self, ivr: float) -> list[str]:
        """What puts the design at ``ivr`` outside the map (input names, and the walls)."""
        out = self.map.outside(self.inputs(ivr))
        return out if self.standard_walls else [*out, "wall table (not the standard one)"]


def map_recovery(delta_over_depth: float, shape: DuctShape) -> MapRecovery:
    """The bundled map at one design (``flow.recovery = "map"``); a map that cannot be used
    (missing, or a partial campaign too small to fit) is a :class:`SpecError` on
    ``flow.recovery``."""
    try:
        m = default_map()
    except (OSError, ValueError) as err:
        raise SpecError(
            "flow.recovery",
            "map",
            "'capture', a constant or a table until the map is complete",
            f"the recovery map cannot be used: {err}",
        ) from None
    return MapRecovery(
        m, shape.ramp_angle_deg, shape.aspect_ratio, delta_over_depth, shape.standard_walls
    )


def recovery_source(rec: RecoveryModel) -> str:
    """One line naming where the recovery comes from (``flow.recovery_source``)."""
    if isinstance(rec, MapRecovery):
        m = rec.map
        return (
            f"ductgen CFD recovery map ({m.table.name}, {m.points} points, "
            f"{m.table.header.get('mesh', 'mesh not stated')}; fit: {m.kind})"
        )
    if isinstance(rec, TableRecovery):
        return f"user table {Path(rec.path).name} (flow.recovery)"
    return {
        "capture": "capture model: first-principles boundary-layer capture estimate times "
        "inlet_loss_factor (not a published curve)",
        "constant": "constant given in the spec (flow.recovery)",
    }.get(rec.kind, rec.kind)


def recovery_keys(rec: RecoveryModel, ivr: float | None) -> tuple[dict[str, object], list[str]]:
    """Report keys on the recovery's source and uncertainty at the operating ``ivr``, and the
    messages of ``recovery_map_extrapolated`` (empty inside the map)."""
    out: dict[str, object] = {"recovery_source": recovery_source(rec)}
    if not isinstance(rec, MapRecovery):
        out["recovery_uncertainty"] = None
        out["recovery_uncertainty_basis"] = (
            "not stated for this model; see flow.sensitivity (recovery +/- 0.1)"
        )
        return out, []
    m = rec.map
    value = rec(ivr) if ivr is not None else None
    out["recovery_uncertainty"] = None if value is None else m.uncertainty(value)
    out["recovery_uncertainty_basis"] = "leave-one-out RMS error of the map's fit" + (
        " and the campaign's mesh uncertainty, in quadrature"
        if m.mesh_uncertainty_rel is not None
        else " only: the campaign's mesh uncertainty is not measured yet"
    )
    out["recovery_map"] = m.summary()
    where = rec.outside(ivr if ivr is not None else float(m.lo[3]))
    messages = []
    if where:
        rng = ", ".join(f"{n} {a:.3g}-{b:.3g}" for n, a, b in zip(INPUTS, m.lo, m.hi, strict=True))
        messages.append(
            f"the design is outside the recovery map in {', '.join(where)} (map range: {rng}); "
            "the map was evaluated at the nearest edge of its range: an extrapolation"
        )
    return out, messages
