"""Plan outlines of the opening and its offsets (pure numpy, mm).

Every outline is a closed polyline, counter-clockwise, first point not repeated, in design
coordinates (x downstream from the ramp start, y across the flow). Offsets are taken normal
to the outline with round joins at the corners — the same construction as the wall offset
:meth:`~ductgen.geometry.planform.Planform.wall_offset` — so the drawn flange, the trim line
and the solids' offset edges agree to the sampling error (< 0.01 mm at the default sampling).
"""

from __future__ import annotations

import math

import numpy as np

from ductgen.geometry.planform import Planform

__all__ = [
    "Piece",
    "footprint_pieces",
    "offset_outline",
    "offset_runs",
    "opening_outline",
    "polygon_area",
    "polyline_lengths",
]

#: A smooth piece of an outline: points (k, 2) and their outward unit normals (k, 2).
Piece = tuple[np.ndarray, np.ndarray]


def footprint_pieces(pf: Planform, x_end: float, n: int = 400) -> list[Piece]:
    """Smooth pieces of the CCW footprint 0 ≤ x ≤ ``x_end`` (mm): the y < 0 wall, the
    downstream end line, the y > 0 wall, the apex line; walls straight at ±W/2 past L."""
    x = np.union1d(np.linspace(0.0, pf.length_mm, n), pf.node_x_mm)
    if x_end > pf.length_mm:
        x = np.append(x, x_end)
    hw = pf.half_width(x)
    nrm = pf.wall_normal(x)
    lower = (np.column_stack([x, -hw]), nrm * np.array([1.0, -1.0]))
    upper = (np.column_stack([x, hw])[::-1], nrm[::-1])
    h1, h0 = pf.width_mm / 2.0, float(hw[0])
    end = (np.array([[x_end, -h1], [x_end, h1]]), np.array([[1.0, 0.0], [1.0, 0.0]]))
    apex = (np.array([[0.0, h0], [0.0, -h0]]), np.array([[-1.0, 0.0], [-1.0, 0.0]]))
    return [lower, end, upper, apex]


def _join_arc(
    corner: np.ndarray, n0: np.ndarray, n1: np.ndarray, d: float, step_deg: float
) -> np.ndarray | None:
    """The round join (mm) of radius ``d`` about ``corner`` from the outward normal ``n0``
    to ``n1`` at ``step_deg`` steps, both ends included, or None where the outline turns
    concave or not at all (no join)."""
    a0 = math.atan2(n0[1], n0[0])
    turn = (math.atan2(n1[1], n1[0]) - a0) % (2 * math.pi)
    if not 1e-9 < turn < math.pi:
        return None
    m = max(math.ceil(math.degrees(turn) / step_deg), 1)
    ang = a0 + turn * np.arange(m + 1) / m
    return np.column_stack([corner[0] + d * np.cos(ang), corner[1] + d * np.sin(ang)])


def offset_outline(pieces: list[Piece], d: float, arc_step_deg: float = 3.0) -> np.ndarray:
    """Offset a closed CCW outline made of smooth pieces outward by ``d`` ≥ 0 (mm), with
    round joins at the convex corners between pieces. Returns (N, 2), first point not
    repeated."""
    out: list[np.ndarray] = []
    k = len(pieces)
    for i, (pts, nrm) in enumerate(pieces):
        seg = pts + d * nrm
        out.append(seg[:-1] if d == 0 else seg)
        if d > 0:
            arc = _join_arc(pts[-1], nrm[-1], pieces[(i + 1) % k][1][0], d, arc_step_deg)
            if arc is not None:
                out.append(arc[1:-1])
    poly = np.vstack(out)
    keep = np.ones(len(poly), dtype=bool)
    keep[1:] = np.linalg.norm(np.diff(poly, axis=0), axis=1) > 1e-9
    return poly[keep]


def offset_runs(pieces: list[Piece], d: float, arc_step_deg: float = 3.0) -> list[np.ndarray]:
    """The smooth runs of :func:`offset_outline` (mm), in its order: each piece offset by
    ``d`` > 0 and each round join, every run (k, 2) from its first point to its last, which
    is the next run's first. A curve through a run's points has no corner: the outline's
    only changes of curvature fall where one run meets the next."""
    runs: list[np.ndarray] = []
    k = len(pieces)
    for i, (pts, nrm) in enumerate(pieces):
        runs.append(pts + d * nrm)
        arc = _join_arc(pts[-1], nrm[-1], pieces[(i + 1) % k][1][0], d, arc_step_deg)
        if arc is not None:
            runs.append(arc)
    return runs


def opening_outline(pf: Planform, x_end: float, n: int = 400) -> np.ndarray:
    """The air opening in the skin, 0 ≤ x ≤ ``x_end`` (the throat end), CCW (N, 2) in mm."""
    return offset_outline(footprint_pieces(pf, x_end, n), 0.0)


def polygon_area(xy: np.ndarray) -> float:
    """Signed area of a closed polygon (mm², positive when counter-clockwise; shoelace)."""
    x, y = xy[:, 0], xy[:, 1]
    return float(0.5 * (np.dot(x, np.roll(y, -1)) - np.dot(y, np.roll(x, -1))))


def polyline_lengths(xy: np.ndarray, closed: bool = True) -> np.ndarray:
    """Cumulative arc length (mm) at each vertex, starting at 0; for a closed polyline the
    last entry is the full perimeter (back to the first point)."""
    p = np.vstack([xy, xy[:1]]) if closed else xy
    return np.concatenate([[0.0], np.cumsum(np.linalg.norm(np.diff(p, axis=0), axis=1))])
