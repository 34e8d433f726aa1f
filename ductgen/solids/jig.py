"""The conformal marking jig (``NAME-jig.step/.stl``, and ``NAME-jig-partK`` when it is larger
than the bed): a frame built flat in design coordinates and carried onto the skin.

Flat (u, v, w): the region between the outer edge and the cut line
(:func:`~ductgen.geometry.jig.jig_layout`), from w = clearance to clearance + thickness, with
a V-notch in the outer edge on the centreline at each end. Split (flat, exact booleans) at
stations across the flow: each joint cuts both side bars; the upstream piece keeps a tongue
over the middle 40 % of each bar's width (the downstream piece the groove), as the insert's
joints (:mod:`ductgen.solids.split`); a piece that falls apart into the two side bars is
written as two parts. Each piece is then carried through the skin map itself (not the duct's
map: the jig lies on the skin); being a region swept along w, it is rebuilt on the skin with
its edges exactly on its faces (:func:`~ductgen.solids.prism_map.map_prism`: read back, a
second program's geometry check finds nothing; mapped face by face like the other solids,
12-22 edges a piece were 1e-6 to 2e-4 mm off a face), and its STL is the design
triangulation refined for the curvature and mapped.

Report: the underside's distance to the skin and the inner edge's distance to the opening's
cut line, measured on the kernel's triangulation of the mapped B-rep (the STEP), against a
fine mesh of the skin and the mapped cut line.
"""

from __future__ import annotations

import itertools
from pathlib import Path
from typing import Any

import cadquery as cq
import numpy as np

from ductgen.design import Design
from ductgen.geometry.jig import (
    NOTCH_DEPTH_MM,
    NOTCH_HALF_WIDTH_MM,
    JigLayout,
    jig_layout,
    jig_stations,
)
from ductgen.solids.footprint import offset_wire, prism
from ductgen.solids.primitives import boolean, box, polyline_edges

__all__ = ["build_jig", "jig_job", "split_jig"]

V = cq.Vector
#: Tongue length along the flow and its share of the bar's width (as the insert's joints).
KEY_LENGTH_MM = 6.0
KEY_FRACTION = 0.4
#: Largest departure (mm) of the mapped jig's underside from its clearance over the skin, and
#: of its inner edge from the cut line, measured on its STEP, before it is written.
FIT_TOL_MM = 0.05


def _inner_wire(jig: JigLayout, z: float) -> cq.Wire:
    xs, ys = jig.wall_x_mm, jig.wall_y_mm
    up = cq.Edge.makeSpline([V(float(a), float(b), z) for a, b in zip(xs, ys, strict=True)])
    low = cq.Edge.makeSpline([V(float(a), -float(b), z) for a, b in zip(xs, ys, strict=True)])
    x0, x1, y0, y1 = float(xs[0]), float(xs[-1]), float(ys[0]), float(ys[-1])
    edges = [low, cq.Edge.makeLine(V(x1, -y1, z), V(x1, y1, z)), up]
    edges.append(cq.Edge.makeLine(V(x0, y0, z), V(x0, -y0, z)))
    return cq.Wire.assembleEdges(edges)


def _notch(u: float, depth: float, z0: float, z1: float) -> cq.Solid:
    """A V-notch prism with its mouth on u (depth > 0 cuts downstream, < 0 upstream)."""
    h = NOTCH_HALF_WIDTH_MM
    pts = [
        (u - 0.5 * np.sign(depth), -h, z0),
        (u + depth, 0.0, z0),
        (u - 0.5 * np.sign(depth), h, z0),
    ]
    wire = cq.Wire.assembleEdges(polyline_edges([*pts, pts[0]]))
    return cq.Solid.extrudeLinear(cq.Face.makeFromWires(wire), V(0, 0, z1 - z0))


def build_jig(d: Design, jig: JigLayout) -> cq.Solid:
    """The jig in design coordinates (mm; w = z)."""
    g = d.geometry
    c, t = jig.clearance_mm, jig.thickness_mm
    outer = prism(cq.Face.makeFromWires(offset_wire(g, g.length_mm, jig.width_mm)), c, c + t)
    hole = prism(cq.Face.makeFromWires(_inner_wire(jig, 0.0)), c - 1.0, c + t + 1.0)
    u0, u1 = jig.notches_u_mm
    notches = [
        _notch(u0, NOTCH_DEPTH_MM, c - 1, c + t + 1),
        _notch(u1, -NOTCH_DEPTH_MM, c - 1, c + t + 1),
    ]
    frame = boolean("cut", outer, [hole, *notches], "jig")
    return frame.Solids()[0]


def split_jig(frame: cq.Solid, jig: JigLayout, stations: list[float]) -> list[cq.Solid]:
    """``frame`` (design coordinates) cut at u = each station into keyed pieces, upstream
    first; a piece between two joints is its two side bars (v < 0 first)."""
    if not stations:
        return [frame]
    bb = frame.BoundingBox()
    pad = 5.0
    w0, w1 = bb.zmin - pad, bb.zmax + pad
    vmax = bb.ymax + pad

    def tongues(s: float) -> list[cq.Shape]:
        vi, vo = float(jig.inner_half_width(s)), float(jig.outer_half_width(s))
        vc, half = 0.5 * (vi + vo), 0.5 * KEY_FRACTION * (vo - vi)
        return [box(s, s + KEY_LENGTH_MM, sg * vc - half, sg * vc + half, w0, w1) for sg in (-1, 1)]

    edges = [bb.xmin - pad, *stations, bb.xmax + pad]
    pieces: list[cq.Shape] = []
    for i in range(len(edges) - 1):
        a, b = edges[i], edges[i + 1]
        halves = [(-vmax, vmax)] if i in (0, len(edges) - 2) else [(-vmax, 0.0), (0.0, vmax)]
        for v0, v1 in halves:
            region: cq.Shape = box(a, b, v0, v1, w0, w1)
            if i < len(edges) - 2:
                region = boolean("fuse", region, tongues(b), "jig split region")
            if i > 0:
                region = boolean("cut", region, tongues(a), "jig split region")
            pieces.append(boolean("intersect", frame, [region], f"jig piece {len(pieces) + 1}"))
    return [p.Solids()[0] for p in pieces]


def _print_frame(d: Design, u_mid: float) -> tuple[np.ndarray, np.ndarray]:
    """The print frame of a piece (origin (3,), rows x y z (3, 3)): the skin's tangent frame
    at (u_mid, 0), its outward normal up, so a piece lies on the bed as on the skin there."""
    fn = d.skin.to_model
    p0, p1 = fn(np.array([[u_mid - 0.5, 0.0, 0.0], [u_mid + 0.5, 0.0, 0.0]]))
    z = d.skin.normal(np.array([[u_mid, 0.0]]))[0]
    x = p1 - p0
    x = x - (x @ z) * z
    x /= np.linalg.norm(x)
    return 0.5 * (p0 + p1), np.vstack([x, np.cross(z, x), z])


def _stand(d: Design, v: np.ndarray, u_mid: float) -> np.ndarray:
    """Vertices (N, 3) in the print frame of a piece (:func:`_print_frame`)."""
    origin, axes = _print_frame(d, u_mid)
    return (np.asarray(v, dtype=float) - origin) @ axes.T


def _mid_u(flat: cq.Shape) -> float:
    """Middle u (mm) of a piece in design coordinates."""
    bb = flat.BoundingBox()
    return 0.5 * (bb.xmin + bb.xmax)


def _pieces_for_bed(
    d: Design, frame_solid: cq.Solid, jig: JigLayout, bed: tuple[float, float, float]
) -> tuple[list[float], list[cq.Solid]]:
    """The fewest equal pieces (1-8 along the flow) whose mapped meshes fit the bed
    lying as on the skin (:func:`_stand`)."""
    from ductgen.errors import GeometryError
    from ductgen.solids.bed import bed_fit
    from ductgen.solids.jobs import mapped_mesh

    fn, k = d.skin.to_model, d.placement.curvature
    for n in range(1, 9):
        xs = jig_stations(jig, n)
        pieces = split_jig(frame_solid, jig, xs)
        meshes = [mapped_mesh(p, fn, 0.2, 0.5, k)[0] for p in pieces]
        stood = [_stand(d, m, _mid_u(p)) for m, p in zip(meshes, pieces, strict=True)]
        if all(bed_fit(m, bed, "+z").fits for m in stood):
            return xs, pieces
    raise GeometryError("jig split", f"8 pieces along the flow do not fit the bed {bed}")


def _densify(ring: np.ndarray, step: float) -> np.ndarray:
    """Points along a closed polyline (N, 2), at most ``step`` mm apart."""
    closed = np.vstack([ring, ring[:1]])
    out = []
    for p, q in itertools.pairwise(closed):
        n = max(1, int(np.ceil(np.linalg.norm(q - p) / step)))
        out.append(p + (q - p) * (np.arange(n) / n)[:, None])
    return np.vstack(out)


def _skin_mesh(d: Design, jig: JigLayout) -> Any:
    """The skin under the jig (w = 0): a grid of at most 1 mm steps over the frame's plan,
    mapped (a 1.4 mm diagonal chord sags < 0.001 mm on a 250 mm radius)."""
    import trimesh

    u0, u1 = -jig.width_mm - 5, jig.lip_mm + jig.width_mm + 5
    vm = float(np.max(jig.outer_xy[:, 1])) + 5
    u = np.linspace(u0, u1, int(np.ceil(u1 - u0)) + 1)
    v = np.linspace(-vm, vm, int(np.ceil(2 * vm)) + 1)
    uu, vv = np.meshgrid(u, v, indexing="ij")
    grid = d.skin.to_model(np.column_stack([uu.ravel(), vv.ravel(), np.zeros(uu.size)]))
    i, j = np.meshgrid(np.arange(len(u) - 1), np.arange(len(v) - 1), indexing="ij")
    a = (i * len(v) + j).ravel()
    b, c = a + len(v), a + 1
    tri = np.vstack([np.column_stack([a, b, c]), np.column_stack([c, b, b + 1])])
    return trimesh.Trimesh(grid, tri, process=False)


def _measure(d: Design, jig: JigLayout, verts: np.ndarray, faces: np.ndarray) -> dict[str, float]:
    """Fit of the mapped jig (a triangulation of its STEP, model coordinates, mm): distance
    of its underside's vertices to the skin, and of its underside's inner edge to the
    opening's cut line carried onto the underside (both ways: every cut-line point to the
    underside, every inner-edge vertex to the cut line)."""
    import trimesh
    from scipy.spatial import cKDTree

    mesh = trimesh.Trimesh(verts, faces)
    nrm = d.skin.normal(np.zeros((1, 2)))[0]
    down = np.flatnonzero(mesh.face_normals @ nrm < -0.8)
    under: Any = mesh.submesh([down], append=True)
    skin = _skin_mesh(d, jig)
    _, to_skin, _ = trimesh.proximity.closest_point(skin, under.vertices)
    # a sliver along a mapped top edge can face down too: its top corners (a thickness off
    # the skin) are not underside points
    low = to_skin < jig.clearance_mm + 0.5 * jig.thickness_mm
    to_skin = to_skin[low]
    cut_uv = _densify(jig.inner_xy, 0.05)
    cut = d.skin.to_model(np.column_stack([cut_uv, np.full(len(cut_uv), jig.clearance_mm)]))
    _, gap, _ = trimesh.proximity.closest_point(under, cut)  # the cut line lies on the underside
    edges = under.edges_sorted[trimesh.grouping.group_rows(under.edges_sorted, require_count=1)]
    rim_ix = np.unique(edges)
    rim = under.vertices[rim_ix[low[rim_ix]]]
    off = np.asarray(cKDTree(cut).query(rim)[0])
    inner = off < 0.5 * jig.width_mm  # the inner loop (the outer edge is a frame width away)
    return {
        "underside_to_skin_min_mm": float(to_skin.min()),
        "underside_to_skin_max_mm": float(to_skin.max()),
        "cut_line_off_underside_max_mm": float(gap.max()),
        "inner_edge_off_cut_line_max_mm": float(off[inner].max()),
    }


def jig_job(
    d: Design,
    kerf_mm: float,
    bed: tuple[float, float, float],
    quality: str,
    prefix: str,
    staging: str,
) -> dict[str, Any]:
    """Kernel-worker job: build, map, check and stage ``PREFIX-jig.step/.stl`` (and
    ``PREFIX-jig-partK`` when the whole does not fit ``bed``). Returns the report's facts."""
    from ductgen.solids.check import CHECK_MESH_CURVED
    from ductgen.solids.mesh import triangulate
    from ductgen.tolerances import STL_QUALITY
    from ductgen.worker import stage

    stage("jig")
    jig = jig_layout(d.geometry.planform, kerf_mm)
    flat = build_jig(d, jig)
    lin, ang = STL_QUALITY[quality]
    whole = _write_piece(d, flat, f"{prefix}-jig", staging, (lin, ang), bed)
    stage("jig check")
    kv, kf = triangulate(whole.pop("mapped"), *CHECK_MESH_CURVED)
    facts: dict[str, Any] = {
        "width_mm": jig.width_mm,
        "clearance_mm": jig.clearance_mm,
        "thickness_mm": jig.thickness_mm,
        "kerf_mm": kerf_mm,
        "cut_line_inset_mm": jig.inset_mm,
        "notches_u_mm": list(jig.notches_u_mm),
        "orientation": "as on the skin: the outward normal at the piece's middle up",
        **_measure(d, jig, kv, kf),
        **whole,
    }
    _check_fit(facts, jig)
    if not whole["fits"]:
        stage("jig split")
        xs, pieces = _pieces_for_bed(d, flat, jig, bed)
        parts = []
        for n, p in enumerate(pieces, start=1):
            part = _write_piece(d, p, f"{prefix}-jig-part{n}", staging, (lin, ang), bed)
            part.pop("mapped")
            parts.append(part)
        facts["split_stations_u_mm"] = xs
        facts["pieces"] = parts
    return facts


def _write_piece(
    d: Design,
    solid: cq.Solid,
    base: str,
    staging: str,
    mesh_quality: tuple[float, float],
    bed: tuple[float, float, float],
) -> dict[str, Any]:
    """Map the flat jig (or one piece) onto the skin, check it closed and valid, stage
    ``BASE.step/.stl`` (mesh deflection ``mesh_quality``: mm, rad); returns its facts (file
    names, volume mm³, size and bed fit standing on its middle, the print frame) and the
    mapped solid under ``mapped``."""
    from ductgen.atomic import write_atomic
    from ductgen.errors import GeometryError
    from ductgen.meshstats import mesh_stats
    from ductgen.solids.bed import bed_fit
    from ductgen.solids.cad_io import step_bytes, stl_bytes
    from ductgen.solids.deform import map_solid
    from ductgen.solids.jobs import mapped_mesh
    from ductgen.solids.prism_map import map_prism

    fn, k = d.skin.to_model, d.placement.curvature
    lin, ang = mesh_quality
    mapped = map_prism(solid, fn)  # its edges exactly on its faces
    if mapped is None:  # not a plain prism: face by face
        mapped = map_solid(solid, fn, "jig")
    v, f = mapped_mesh(solid, fn, lin, ang, k)
    tight, winding, volume, _ = mesh_stats(v, f)
    if not (mapped.isValid() and tight and winding):
        raise GeometryError("jig", f"{base} is not one valid closed solid")
    write_atomic(Path(staging) / f"{base}.step", step_bytes(mapped, base, exact_edges=False))
    write_atomic(Path(staging) / f"{base}.stl", stl_bytes(v, f, base))
    fit = bed_fit(_stand(d, v, _mid_u(solid)), bed, "+z")
    return {
        "step": f"{base}.step",
        "stl": f"{base}.stl",
        "volume_mm3": volume,
        "size_mm": list(fit.size_mm),
        "fits": fit.fits,
        "print_frame": [a.tolist() for a in _print_frame(d, _mid_u(solid))],
        "mapped": mapped,
    }


def _check_fit(facts: dict[str, Any], jig: JigLayout) -> None:
    """Raise :class:`GeometryError` when the mapped jig departs more than
    :data:`FIT_TOL_MM` from its clearance over the skin or from the cut line (mm)."""
    from ductgen.errors import GeometryError

    off_skin = max(
        abs(facts["underside_to_skin_min_mm"] - jig.clearance_mm),
        abs(facts["underside_to_skin_max_mm"] - jig.clearance_mm),
    )
    off_edge = max(facts["cut_line_off_underside_max_mm"], facts["inner_edge_off_cut_line_max_mm"])
    if off_skin > FIT_TOL_MM or off_edge > FIT_TOL_MM:
        raise GeometryError(
            "jig check",
            f"the mapped jig departs {off_skin:.3f} mm from its clearance over the skin and "
            f"{off_edge:.3f} mm from the cut line (allowed {FIT_TOL_MM} mm)",
        )
