"""Plan footprints of the cavity, built as exact kernel wires and faces (mm, x downstream,
y across, z up): the planform's closed outline, its outward offset with round (or mitred)
corners, and prisms of plan faces. Shared by the insert, the plug and the marking jig.

An outward offset of the wall curve folds into a loop ("swallowtail") where the distance
exceeds the wall's radius of curvature on its concave side; :func:`untangled_runs` cuts the
loop out at the point where the offset crosses itself.
"""

from __future__ import annotations

import math

import cadquery as cq
import numpy as np

from ductgen.geometry.inlet import InletGeometry
from ductgen.solids.primitives import arc3, polyline_edges, wall_spline

__all__ = ["footprint_face", "footprint_wire", "offset_wire", "prism", "untangled_runs"]

V = cq.Vector


def footprint_wire(g: InletGeometry, x_end: float, z: float = 0.0) -> cq.Wire:
    """Closed plan wire of the planform, walls straight at ±W/2 past the lip to ``x_end``."""
    pf = g.planform
    hw0, hw1, L = float(pf.node_half_width_mm[0]), g.width_mm / 2.0, g.length_mm
    edges = [wall_spline(pf, +1.0, z)]
    if x_end > L + 1e-9:
        edges += polyline_edges([(L, hw1, z), (x_end, hw1, z), (x_end, -hw1, z), (L, -hw1, z)])
    else:
        edges += polyline_edges([(L, hw1, z), (L, -hw1, z)])
    edges += [wall_spline(pf, -1.0, z), cq.Edge.makeLine(V(0, -hw0, z), V(0, hw0, z))]
    return cq.Wire.assembleEdges(edges)


def _arc(cx: float, cy: float, d: float, a0: float, a1: float, z: float) -> cq.Edge:
    am = 0.5 * (a0 + a1)
    pts = [(cx + d * math.cos(a), cy + d * math.sin(a), z) for a in (a0, am, a1)]
    return arc3(*pts)


def offset_wire(
    g: InletGeometry, x_end: float, d: float, z: float = 0.0, n: int = 40, square_end: bool = False
) -> cq.Wire:
    """The footprint wire offset outward by ``d`` (mm) with round corners, built from
    B-spline, line and arc edges (the kernel's own offset curves make booleans ~10× slower).
    The wall offset is interpolated through ``n`` exact offset points plus every station
    (deviation ≪ 0.01 mm). ``square_end`` gives the downstream corners mitred, not round."""
    if d <= 0:
        return footprint_wire(g, x_end, z)
    pf = g.planform
    L, h1 = g.length_mm, g.width_mm / 2.0
    x = np.union1d(np.linspace(0.0, L, n), pf.node_x_mm)
    fine = pf.wall_offset(np.linspace(0.0, L, 20 * n), d)
    # upper wall (y > 0) offset outward; past the wall's concave radius the offset folds
    # over itself, and the fold is cut out
    folds = not np.all(np.diff(fine[:, 0]) > 0.0)
    runs = untangled_runs(fine) if folds else [pf.wall_offset(x, d)]
    upper_edges = [cq.Edge.makeSpline([V(float(a), float(b), z) for a, b in r]) for r in runs]
    lower_edges = [cq.Edge.makeSpline([V(float(a), float(-b), z) for a, b in r]) for r in runs]
    a_apex = math.atan2(1.0, -float(pf.slope(0.0)))
    hw0 = float(pf.half_width(0.0))
    edges = list(lower_edges)
    if x_end > L + 1e-9:
        edges.append(cq.Edge.makeLine(V(L, -h1 - d, z), V(x_end, -h1 - d, z)))
    if square_end:
        edges += polyline_edges(
            [
                (x_end, -h1 - d, z),
                (x_end + d, -h1 - d, z),
                (x_end + d, h1 + d, z),
                (x_end, h1 + d, z),
            ]
        )
    else:
        edges += [
            _arc(x_end, -h1, d, -0.5 * math.pi, 0.0, z),
            cq.Edge.makeLine(V(x_end + d, -h1, z), V(x_end + d, h1, z)),
            _arc(x_end, h1, d, 0.0, 0.5 * math.pi, z),
        ]
    if x_end > L + 1e-9:
        edges.append(cq.Edge.makeLine(V(x_end, h1 + d, z), V(L, h1 + d, z)))
    edges += [
        *reversed(upper_edges),
        _arc(0.0, hw0, d, a_apex, math.pi, z),
        cq.Edge.makeLine(V(-d, hw0, z), V(-d, -hw0, z)),
        _arc(0.0, -hw0, d, math.pi, 2.0 * math.pi - a_apex, z),
    ]
    return cq.Wire.assembleEdges(edges)


def untangled_runs(pts: np.ndarray) -> list[np.ndarray]:
    """A polyline (N, 2) mm with its self-intersecting loops cut out (each loop replaced by
    the point where the curve crosses itself): the smooth runs between those corners, each
    (k ≥ 2, 2). An offset curve folds into such loops ("swallowtails") where the offset
    distance exceeds the base curve's radius of curvature on its concave side; the region
    the offset bounds (the points within the distance of the base curve) ends at the
    crossing."""
    pts = np.asarray(pts, dtype=float)
    a, b = pts[:-1], pts[1:]
    runs: list[list[np.ndarray]] = [[pts[0]]]
    i = 0
    while i < len(a):
        p, r = a[i], b[i] - a[i]
        q, sv = a[i + 2 :], b[i + 2 :] - a[i + 2 :]
        den = r[0] * sv[:, 1] - r[1] * sv[:, 0]
        ok = np.abs(den) > 1e-15
        qp = q - p
        with np.errstate(divide="ignore", invalid="ignore"):
            t = (qp[:, 0] * sv[:, 1] - qp[:, 1] * sv[:, 0]) / den
            u = (qp[:, 0] * r[1] - qp[:, 1] * r[0]) / den
        hit = np.nonzero(ok & (t > 0.0) & (t < 1.0) & (u > 0.0) & (u < 1.0))[0]
        if len(hit):
            j = int(hit[-1])  # the widest loop starting on this segment
            cross = p + t[j] * r
            runs[-1].append(cross)
            runs.append([cross])
            i = i + 2 + j + 1
            runs[-1].append(b[i - 1])
            continue
        runs[-1].append(b[i])
        i += 1
    return [np.asarray(r) for r in runs if len(r) >= 2]


def footprint_face(
    g: InletGeometry, x_end: float, offset: float = 0.0, z: float = 0.0, square_end: bool = False
) -> cq.Face:
    """Plan face of the footprint offset outward by ``offset`` (mm, round joins) at height z."""
    return cq.Face.makeFromWires(offset_wire(g, x_end, offset, z, square_end=square_end))


def prism(face: cq.Face, z0: float, z1: float) -> cq.Solid:
    """A plan face at z = 0 (or any z) extruded between heights z0 < z1 (mm)."""
    f = face.translate(V(0, 0, z0 - face.Center().z))
    return cq.Solid.extrudeLinear(f, V(0, 0, z1 - z0))
