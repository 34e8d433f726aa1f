"""Richardson extrapolation and the grid convergence index of three meshes (pure numbers).

Follows the procedure of Celik, Ghia, Roache, Freitas, Coleman and Raad, "Procedure for
estimation and reporting of uncertainty due to discretization in CFD applications",
J. Fluids Eng. 130(7) 078001 (2008), which applies Roache's GCI with safety factor 1.25
to three systematically refined grids:

- representative cell size ``h = (V / N)^(1/3)``; grid 1 is the finest, ``r21 = h2/h1``,
  ``r32 = h3/h2`` (both should exceed 1.3);
- ``e21 = φ2 − φ1``, ``e32 = φ3 − φ2``, ``s = sign(e32/e21)``; the apparent order ``p``
  solves ``p = |ln|e32/e21| + q(p)| / ln r21`` with ``q(p) = ln((r21^p − s)/(r32^p − s))``
  (fixed-point iteration);
- ``φ_ext = (r21^p φ1 − φ2)/(r21^p − 1)``, ``e_a = |(φ1 − φ2)/φ1|``,
  ``e_ext = |(φ_ext − φ1)/φ_ext|``, ``GCI_fine = 1.25 e_a/(r21^p − 1)``.

Oscillatory convergence (``s < 0``) is flagged; a difference of exactly zero gives no order.
"""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass
from typing import Any

__all__ = ["SAFETY_FACTOR", "GciResult", "gci", "representative_size"]

#: Roache's safety factor for three-grid studies (Celik et al. 2008).
SAFETY_FACTOR = 1.25


@dataclass(frozen=True)
class GciResult:
    """One quantity's three-grid study (grid 1 finest).

    Attributes:
        phi: values on grids 1, 2, 3.
        h: representative cell sizes (same unit as given, e.g. m).
        r21, r32: refinement ratios h2/h1, h3/h2.
        order: apparent order p (None when it cannot be found).
        extrapolated: φ_ext21 (None without an order).
        approx_rel_error: e_a21 = |(φ1 − φ2)/φ1|.
        extrapolated_rel_error: e_ext21 (None without an order).
        gci_fine: GCI_fine21 as a fraction of φ1 (None without an order).
        oscillatory: the differences change sign.
        note: why no order was found, or an empty text.
    """

    phi: tuple[float, float, float]
    h: tuple[float, float, float]
    r21: float
    r32: float
    order: float | None
    extrapolated: float | None
    approx_rel_error: float
    extrapolated_rel_error: float | None
    gci_fine: float | None
    oscillatory: bool
    note: str = ""

    def to_dict(self) -> dict[str, Any]:
        return asdict(self)


def representative_size(volume: float, cells: int, dims: int = 3) -> float:
    """Celik's representative cell size ``(V/N)^(1/dims)`` (unit of V^(1/dims))."""
    if cells < 1 or volume <= 0.0:
        raise ValueError("cells must be >= 1 and volume > 0")
    return (volume / cells) ** (1.0 / dims)


def _order(e21: float, e32: float, r21: float, r32: float) -> float | None:
    """Apparent order by fixed-point iteration (Celik et al. 2008, eqs. 3a-3c)."""
    s = math.copysign(1.0, e32 / e21)
    ratio = abs(e32 / e21)
    ln_r21 = math.log(r21)
    p = abs(math.log(ratio)) / ln_r21
    for _ in range(500):
        a, b = r21**p - s, r32**p - s
        if a <= 0.0 or b <= 0.0:
            return None
        p_new = abs(math.log(ratio) + math.log(a / b)) / ln_r21
        if abs(p_new - p) < 1e-12:
            return p_new
        p = p_new
    return p if math.isfinite(p) else None


def gci(
    phi: tuple[float, float, float] | list[float], h: tuple[float, float, float] | list[float]
) -> GciResult:
    """Three-grid study of one quantity; ``phi`` and ``h`` ordered finest first.

    Raises:
        ValueError: the sizes are not strictly increasing (grid 1 must be the finest).
    """
    p1, p2, p3 = (float(v) for v in phi)
    h1, h2, h3 = (float(v) for v in h)
    if not (0.0 < h1 < h2 < h3):
        raise ValueError(f"cell sizes must increase from grid 1 (finest): {h1}, {h2}, {h3}")
    r21, r32 = h2 / h1, h3 / h2
    e21, e32 = p2 - p1, p3 - p2
    e_a = abs((p1 - p2) / p1) if p1 != 0.0 else math.inf

    def no_order(oscillatory: bool, note: str) -> GciResult:
        return GciResult(
            phi=(p1, p2, p3),
            h=(h1, h2, h3),
            r21=r21,
            r32=r32,
            order=None,
            extrapolated=None,
            approx_rel_error=e_a,
            extrapolated_rel_error=None,
            gci_fine=None,
            oscillatory=oscillatory,
            note=note,
        )

    if e21 == 0.0 or e32 == 0.0:
        return no_order(False, "two grids gave the same value: no apparent order")
    oscillatory = (e32 / e21) < 0.0
    p = _order(e21, e32, r21, r32)
    if p is None or p <= 0.0:
        return no_order(
            oscillatory, "no positive apparent order: the grids are not in the asymptotic range"
        )
    rp = r21**p
    ext = (rp * p1 - p2) / (rp - 1.0)
    e_ext = abs((ext - p1) / ext) if ext != 0.0 else math.inf
    return GciResult(
        phi=(p1, p2, p3),
        h=(h1, h2, h3),
        r21=r21,
        r32=r32,
        order=p,
        extrapolated=ext,
        approx_rel_error=e_a,
        extrapolated_rel_error=e_ext,
        gci_fine=SAFETY_FACTOR * e_a / (rp - 1.0),
        oscillatory=oscillatory,
        note="oscillatory convergence: the GCI is only indicative" if oscillatory else "",
    )
