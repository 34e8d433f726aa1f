"""Cut contours as lines and circular arcs fitted to the true planform curve (pure numpy).

Cutting machines (laser, waterjet, vinyl cutter) and CAM importers want each contour as one
closed polyline of straight lines and arcs; a DXF ``LWPOLYLINE`` stores an arc as the
*bulge* of a segment, ``tan(θ/4)`` with θ the arc's included angle (positive
counter-clockwise). Splines are avoided (measured: a SPLINE written from fit points deviated
0.3 mm and broke an importer).

The wall curve is fitted directly from the planform's exact ``half_width(x)`` (not from a
polyline): each interval between tabulated stations is bisected until the arc through its
ends and its midpoint stays within half the tolerance of the curve at dense samples, so the
stations themselves are vertices of the contour. A kerf offset is applied to the true curve
first (the offset of a smooth curve along its normal) and the offset curve is then fitted the
same way. All lengths in mm; x downstream, y spanwise.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass
from itertools import pairwise

import numpy as np
from scipy.optimize import brentq

from ductgen.errors import SpecError
from ductgen.geometry.planform import Planform

__all__ = [
    "Contour",
    "arc_centre",
    "fit_arcs",
    "opening_contour",
    "outward_contour",
    "sample_segment",
]

#: Arcs flatter than this radius (mm) are written as straight lines.
_MAX_RADIUS_MM = 1e8
#: Dense samples per fitted segment for the deviation check.
_CHECK_SAMPLES = 24
_MAX_DEPTH = 24


def _bulge3(a: np.ndarray, m: np.ndarray, b: np.ndarray) -> float:
    """Bulge of the arc from ``a`` to ``b`` through ``m`` (0 for collinear points; positive
    for a counter-clockwise arc), by ``ezdxf.math.bulge_3_points``. (The DXF library is
    imported here, not with the module: the drawing sheet reads the template's layout
    module, which reads this one, and loading the library costs ~0.4 s.)"""
    from ezdxf.math import Vec2, bulge_3_points

    return float(bulge_3_points(Vec2(a), Vec2(b), Vec2(m)))


def arc_centre(a: np.ndarray, b: np.ndarray, bulge: float) -> tuple[np.ndarray, float]:
    """Centre (mm, shape (2,)) and radius (mm) of the bulged segment a→b (``bulge`` ≠ 0),
    by ``ezdxf.math``."""
    from ezdxf.math import Vec2, bulge_center, bulge_radius

    pa, pb = Vec2(a), Vec2(b)
    c = bulge_center(pa, pb, bulge)
    return np.array([c.x, c.y]), float(bulge_radius(pa, pb, bulge))


def sample_segment(a: np.ndarray, b: np.ndarray, bulge: float, n: int) -> np.ndarray:
    """``n + 1`` points from ``a`` to ``b`` along the line or arc (mm, shape (n+1, 2))."""
    t = np.linspace(0.0, 1.0, n + 1)[:, None]
    if bulge == 0.0:
        return a + t * (b - a)
    centre, r = arc_centre(a, b, bulge)
    theta = 4.0 * math.atan(bulge)
    a0 = math.atan2(a[1] - centre[1], a[0] - centre[0])
    ang = a0 + theta * t[:, 0]
    return np.column_stack([centre[0] + r * np.cos(ang), centre[1] + r * np.sin(ang)])


def _deviation(a: np.ndarray, b: np.ndarray, bulge: float, pts: np.ndarray) -> float:
    """Largest distance (mm) of ``pts`` from the line or arc a→b."""
    if bulge == 0.0:
        u = b - a
        c = math.hypot(u[0], u[1])
        return float(np.max(np.abs((pts[:, 0] - a[0]) * u[1] - (pts[:, 1] - a[1]) * u[0]) / c))
    centre, r = arc_centre(a, b, bulge)
    if r > _MAX_RADIUS_MM:
        return _deviation(a, b, 0.0, pts)
    return float(np.max(np.abs(np.hypot(pts[:, 0] - centre[0], pts[:, 1] - centre[1]) - r)))


def fit_arcs(
    curve: Callable[[np.ndarray], np.ndarray], breaks: np.ndarray, tol_mm: float
) -> tuple[np.ndarray, np.ndarray]:
    """Fit lines and arcs to a parametric curve within ``tol_mm``.

    Args:
        curve: maps parameters, shape (K,), to points (mm), shape (K, 2).
        breaks: increasing parameters that must be vertices (e.g. the table's stations);
            the first and last bound the fitted span.
        tol_mm: largest allowed distance from the curve (mm); the fit aims at half of it.

    Returns:
        (points, bulges): vertices shape (N+1, 2) from the first to the last break, and
        the bulge of each of the N segments.
    """
    target = 0.5 * tol_mm
    pts: list[np.ndarray] = []
    bulges: list[float] = []

    def seg(t0: float, t1: float, depth: int) -> None:
        ts = np.linspace(t0, t1, _CHECK_SAMPLES + 1)
        p = curve(ts)
        a, b = p[0], p[-1]
        m = curve(np.array([0.5 * (t0 + t1)]))[0]
        bulge = _bulge3(a, m, b)
        if bulge != 0.0 and arc_centre(a, b, bulge)[1] > _MAX_RADIUS_MM:
            bulge = 0.0
        if depth < _MAX_DEPTH and _deviation(a, b, bulge, p[1:-1]) > target:
            tm = 0.5 * (t0 + t1)
            seg(t0, tm, depth + 1)
            seg(tm, t1, depth + 1)
            return
        pts.append(b)
        bulges.append(bulge)

    breaks = np.asarray(breaks, dtype=float)
    pts.append(curve(breaks[:1])[0])
    for t0, t1 in pairwise(breaks):
        if t1 > t0:
            seg(float(t0), float(t1), 0)
    return np.array(pts), np.array(bulges)


@dataclass(frozen=True)
class Contour:
    """A closed contour of lines and arcs (mm).

    Attributes:
        points: vertices, shape (N, 2); the first is not repeated at the end.
        bulges: bulge of the segment from vertex i to vertex i+1 (the last closes the
            contour), shape (N,); 0 for a straight line.
    """

    points: np.ndarray
    bulges: np.ndarray

    def segments(self) -> list[tuple[np.ndarray, np.ndarray, float]]:
        """(start, end, bulge) of every segment, closing segment last."""
        n = len(self.points)
        return [(self.points[i], self.points[(i + 1) % n], float(self.bulges[i])) for i in range(n)]

    def sample(self, step_mm: float = 0.5) -> np.ndarray:
        """Points along the whole contour, at most ``step_mm`` apart (mm, shape (K, 2))."""
        out = []
        for a, b, bulge in self.segments():
            length = math.hypot(*(b - a))
            if bulge:
                length *= 1.0 + bulge * bulge  # ≥ the arc length for |bulge| ≤ 1
            n = max(1, math.ceil(length / step_mm))
            out.append(sample_segment(a, b, bulge, n)[:-1])
        return np.vstack(out)

    def scaled(self, factor: float) -> Contour:
        """The same contour in another unit (bulges are scale-free)."""
        return Contour(self.points * factor, self.bulges.copy())

    @property
    def area_mm2(self) -> float:
        """Enclosed area (mm², positive for counter-clockwise): polygon plus arc segments."""
        p, q = self.points, np.roll(self.points, -1, axis=0)
        area = 0.5 * float(np.sum(p[:, 0] * q[:, 1] - q[:, 0] * p[:, 1]))
        for a, b, bulge in self.segments():
            if bulge:
                theta = 4.0 * math.atan(bulge)
                c = math.hypot(*(b - a))
                r = c / (2.0 * math.sin(abs(theta) / 2.0))
                area += math.copysign(0.5 * r * r * (abs(theta) - math.sin(abs(theta))), bulge)
        return area

    @property
    def perimeter_mm(self) -> float:
        """Length of the contour (mm)."""
        total = 0.0
        for a, b, bulge in self.segments():
            c = math.hypot(*(b - a))
            if bulge:
                theta = abs(4.0 * math.atan(bulge))
                total += c * theta / (2.0 * math.sin(theta / 2.0))
            else:
                total += c
        return total


def _wall_curve(pf: Planform, inset_mm: float) -> Callable[[np.ndarray], np.ndarray]:
    """The y > 0 wall offset by ``inset_mm`` toward the centreline, parametrised by the
    base curve's x (mm): :meth:`~ductgen.geometry.planform.Planform.wall_offset`."""

    def curve(x: np.ndarray) -> np.ndarray:
        return pf.wall_offset(np.asarray(x, dtype=float), -inset_mm)

    return curve


def opening_contour(pf: Planform, tol_mm: float, inset_mm: float = 0.0) -> Contour:
    """The skin opening as one closed counter-clockwise contour (mm).

    The outline runs from the ramp start (apex line at x = 0) along the y < 0 wall to the
    lip station x = L, across the straight lip line and back along the y > 0 wall. With
    ``inset_mm`` = k > 0 (kerf/2: the opening is a hole) the walls are the true curves
    offset inward by k and the apex and lip lines move in by k; the corners stay sharp
    (both are convex, so the offset lines meet).

    Raises:
        SpecError: on ``template.kerf`` when the inset would close the opening.
    """
    k = float(inset_mm)
    length = pf.length_mm
    if k < 0:
        raise ValueError("inset_mm must be >= 0")
    if k >= 0.25 * min(pf.apex_width_mm, length):
        raise SpecError(
            "template.kerf",
            2 * k,
            f"< {0.5 * min(pf.apex_width_mm, length):.2f} mm",
            "half the kerf must stay well inside the opening's narrowest part (the apex)",
        )
    curve = _wall_curve(pf, k)
    if k > 0:
        x0 = brentq(lambda x: curve(np.array([x]))[0, 0] - k, 0.0, k, xtol=1e-13)
        x1 = brentq(
            lambda x: curve(np.array([x]))[0, 0] - (length - k),
            length - 2 * k,
            length - k,
            xtol=1e-13,
        )
    else:
        x0, x1 = 0.0, length
    nodes = pf.node_x_mm
    breaks = np.concatenate([[x0], nodes[(nodes > x0) & (nodes < x1)], [x1]])
    up, bul = fit_arcs(curve, breaks, tol_mm)
    if k > 0:  # the fitted ends are the exact corner points of the offset outline
        up[0, 0], up[-1, 0] = k, length - k
    low = up * np.array([1.0, -1.0])
    points = np.vstack([low, up[::-1]])
    bulges = np.concatenate([-bul, [0.0], -bul[::-1], [0.0]])
    return Contour(points, bulges)


def outward_contour(pf: Planform, x_end_mm: float, d_mm: float, tol_mm: float) -> Contour:
    """The opening extended straight to ``x_end_mm`` (≥ L) and offset outward by ``d_mm`` > 0
    with round corners: a flange outline or trim line, as one closed CCW contour (mm).

    The walls are the true offset curves P(x) = (x, h) + d·n (fitted like the opening); the
    four corners are exact arcs of radius d about the corners of the opening.
    """
    d, length, half = float(d_mm), pf.length_mm, 0.5 * pf.width_mm
    if d <= 0 or x_end_mm < length:
        raise ValueError("need d_mm > 0 and x_end_mm >= L")
    curve = _wall_curve(pf, -d)
    nodes = pf.node_x_mm
    breaks = np.unique(np.concatenate([nodes, [length, x_end_mm]]))
    up, bul = fit_arcs(curve, breaks[breaks <= x_end_mm], tol_mm)
    h0 = 0.5 * pf.apex_width_mm
    sweep = 0.5 * math.pi - math.atan(float(pf.slope(0.0)))
    b_apex, b_end = math.tan(sweep / 4.0), math.tan(math.pi / 8.0)
    low = up * np.array([1.0, -1.0])
    points = np.vstack(
        [
            low,
            [[x_end_mm + d, -half], [x_end_mm + d, half]],
            up[::-1],
            [[-d, h0], [-d, -h0]],
        ]
    )
    bulges = np.concatenate([-bul, [b_end, 0.0, b_end], -bul[::-1], [b_apex, 0.0, b_apex]])
    return Contour(points, bulges)
