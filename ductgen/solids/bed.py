"""Printer-bed fit of a mesh (pure numpy; lengths in mm, turns in deg): the part stands in
its suggested orientation (the axis direction that is "up"); it may turn about the vertical
axis on the bed, so the footprint's smallest enclosing rectangle over turns of 0-90° (0.5°
steps) is compared with the bed in both ways round, and the height with the bed's z. Also
the stations of the fewest equal pieces across the flow whose slabs fit, estimated from the
mesh before any cut (:mod:`ductgen.solids.split` makes the pieces).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from itertools import pairwise
from typing import Any

import numpy as np

__all__ = ["UP_AXES", "BedFit", "bed_fit", "estimate_stations", "stand_on_bed", "up_rotation"]


#: Orientation name → (axis index, sign) of the direction that points up on the printer.
UP_AXES: dict[str, tuple[int, int]] = {
    "+z": (2, 1),
    "-z": (2, -1),
    "+x": (0, 1),
    "-x": (0, -1),
    "+y": (1, 1),
    "-y": (1, -1),
}


@dataclass(frozen=True)
class BedFit:
    """Whether a part fits the bed standing ``up``.

    Attributes:
        fits: True when it fits.
        up: the orientation ("+z", "-x", ...).
        size_mm: footprint length, width and height (mm) at the best turn.
        turn_deg: turn about the vertical axis that gives that footprint (deg).
        bed_mm: the bed (x, y, z) mm.
    """

    fits: bool
    up: str
    size_mm: tuple[float, float, float]
    turn_deg: float
    bed_mm: tuple[float, float, float]

    def as_dict(self) -> dict[str, Any]:
        """Report form (keys with units)."""
        return {
            "fits": self.fits,
            "orientation_up": self.up,
            "size_mm": list(self.size_mm),
            "turn_deg": self.turn_deg,
            "bed_mm": list(self.bed_mm),
        }


def _standing(vertices: np.ndarray, up: str) -> np.ndarray:
    """Vertices (N, 3) re-expressed with ``up`` as +z (a rotation, or its mirror image for
    ±y: the extents are the same)."""
    axis, sign = UP_AXES[up]
    v = np.asarray(vertices, dtype=float)
    others = [a for a in range(3) if a != axis]
    z = sign * v[:, axis]
    x, y = v[:, others[0]], sign * v[:, others[1]]
    return np.column_stack([x, y, z])


def up_rotation(up: str) -> np.ndarray:
    """The proper rotation (3, 3; rows: the new x, y, z axes in the old frame) that turns the
    axis ``up`` ("+z", "-x", ...) to +Z."""
    sign = -1.0 if up.startswith("-") else 1.0
    axis = "xyz".index(up[-1])
    if axis == 2:
        rot = np.diag([1.0, sign, sign])
    elif axis == 0:
        rot = np.array([[0.0, 1.0, 0.0], [0.0, 0.0, 1.0], [1.0, 0.0, 0.0]])
    else:
        rot = np.array([[0.0, 0.0, 1.0], [1.0, 0.0, 0.0], [0.0, 1.0, 0.0]])
    if axis != 2:
        rot[1] *= sign
        rot[2] *= sign
    return rot


def stand_on_bed(vertices: np.ndarray, up: str, turn_deg: float) -> np.ndarray:
    """``vertices`` (N, 3, mm) as printed: turned so ``up`` points up (+Z, a rotation, never
    a mirror image), turned ``turn_deg`` about Z (the bed fit's turn), and moved onto the bed
    with its lowest point at Z = 0 and its footprint from X = 0, Y = 0."""
    v = np.asarray(vertices, dtype=float) @ up_rotation(up).T
    t = math.radians(turn_deg)
    rot = np.array([[math.cos(t), -math.sin(t)], [math.sin(t), math.cos(t)]])
    v[:, :2] = v[:, :2] @ rot.T
    out: np.ndarray = v - v.min(axis=0)
    return out


def _outline(xy: np.ndarray) -> np.ndarray:
    """The points of ``xy`` (N, 2) that can be outermost in some direction: the vertices of
    their convex hull (a footprint's extents at every turn are taken there, so the turn
    search costs the hull's few points, not the mesh's thousands); every point when the
    hull cannot be made (fewer than three, or all on a line)."""
    if len(xy) < 16:
        return xy
    from scipy.spatial import ConvexHull, QhullError

    try:
        return xy[ConvexHull(xy).vertices]
    except (QhullError, ValueError):
        return xy


def bed_fit(vertices: np.ndarray, bed: tuple[float, float, float], up: str = "+z") -> BedFit:
    """Fit of a mesh (vertices (N, 3) mm) on a bed (x, y, z mm), standing ``up``."""
    v = _standing(vertices, up)
    height = float(np.ptp(v[:, 2]))
    xy = _outline(v[:, :2] - v[:, :2].mean(axis=0))
    best = None
    for deg in np.arange(0.0, 90.0, 0.5):
        t = math.radians(float(deg))
        rot = np.array([[math.cos(t), -math.sin(t)], [math.sin(t), math.cos(t)]])
        p = xy @ rot.T
        ex, ey = float(np.ptp(p[:, 0])), float(np.ptp(p[:, 1]))
        ok = (ex <= bed[0] and ey <= bed[1]) or (ex <= bed[1] and ey <= bed[0])
        # fitting turns first, then the smallest footprint, then the smallest turn
        key = (not ok, round(ex * ey, 6), float(deg))
        if best is None or key < best[0]:
            best = (key, ex, ey, float(deg))
    assert best is not None
    fits = not best[0][0] and height <= bed[2]
    return BedFit(fits, up, (best[1], best[2], height), best[3], (bed[0], bed[1], bed[2]))


def _slab_fits(v: np.ndarray, a: float, b: float, bed: tuple[float, float, float], up: str) -> bool:
    """Fit of the part between x = a and b, estimated from its vertices there, each also
    moved to both end planes (so a slab between two vertex rings keeps its full length)."""
    sl = v[(v[:, 0] >= a - 1e-6) & (v[:, 0] <= b + 1e-6)]
    if len(sl) == 0:
        return True
    ends = [sl.copy(), sl.copy()]
    ends[0][:, 0], ends[1][:, 0] = a, b
    return bed_fit(np.vstack([sl, *ends]), bed, up).fits


def estimate_stations(
    vertices: np.ndarray,
    bed: tuple[float, float, float],
    up: str,
    key_length: float = 6.0,
    max_pieces: int = 8,
) -> list[float] | None:
    """Stations x (mm) of the fewest equal pieces across the flow whose vertex slabs (each
    with the downstream tongue) fit the bed; [] when the part fits whole, None when
    ``max_pieces`` are not enough. Pure numpy: an estimate from the mesh, before any cut."""
    v = np.asarray(vertices, dtype=float)
    if bed_fit(v, bed, up).fits:
        return []
    x0, x1 = float(v[:, 0].min()), float(v[:, 0].max())
    for n in range(2, max_pieces + 1):
        xs = [x0 + (x1 - x0) * k / n for k in range(1, n)]
        edges = [x0, *xs, x1]
        if all(_slab_fits(v, a, min(b + key_length, x1), bed, up) for a, b in pairwise(edges)):
            return xs
    return None
