"""Printer-bed fit, and splitting an over-size part across the flow into keyed pieces.

Fit (pure numpy): the part stands in its suggested orientation (the axis direction that is
"up"); it may turn about the vertical axis on the bed, so the footprint's smallest enclosing
rectangle over turns of 0-90° (0.5° steps) is compared with the bed in both ways round, and
the height with the bed's z.

Split (CAD kernel): planes x = s across the flow (x downstream) cut the part into
pieces whose cut faces are the glue faces. Each joint is keyed by a tongue and groove: the
upstream piece keeps a tongue of the part's material, ``key_length`` long, over the middle
``key_fraction`` of the section's width (the floor and roof there), the downstream piece the
matching groove; the tongue's sides locate the pieces across the flow and its end stops them
along it (a stepped joint, common practice for printed parts, no source). The pieces
partition the part exactly, so their volumes sum to the whole. Lengths in mm.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from itertools import pairwise
from pathlib import Path
from typing import Any

import numpy as np

__all__ = [
    "UP_AXES",
    "BedFit",
    "bed_fit",
    "estimate_stations",
    "keep_for_split",
    "split_across_flow",
    "split_for_bed",
    "split_insert_job",
    "split_shifted",
    "stand_on_bed",
    "up_rotation",
]

#: The last insert each kernel worker built, by the path of its staged STEP file: the split
#: cuts the solid still in memory (no STEP re-read, and before healing, so the new glue
#: edges are healed once, with the piece).
_IN_MEMORY: dict[str, Any] = {}


def keep_for_split(step_path: str, solid: Any) -> None:
    """Remember ``solid`` (cadquery, mm) as the insert written to ``step_path``, for
    :func:`split_insert_job` in the same worker (only the latest one is kept)."""
    _IN_MEMORY.clear()
    _IN_MEMORY[str(Path(step_path).resolve())] = solid


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
    return v - v.min(axis=0)


def bed_fit(vertices: np.ndarray, bed: tuple[float, float, float], up: str = "+z") -> BedFit:
    """Fit of a mesh (vertices (N, 3) mm) on a bed (x, y, z mm), standing ``up``."""
    v = _standing(vertices, up)
    height = float(np.ptp(v[:, 2]))
    xy = v[:, :2] - v[:, :2].mean(axis=0)
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
    return BedFit(fits, up, (best[1], best[2], height), best[3], tuple(bed))  # type: ignore[arg-type]


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


def split_across_flow(
    solid: Any,
    stations_x: list[float],
    key_length: float = 6.0,
    key_fraction: float = 0.4,
    by_planes: bool = True,
) -> list[Any]:
    """Cut ``solid`` (a cadquery Solid, mm) at x = each station into keyed pieces.

    One splitting operation of the kernel (``BRepAlgoAPI_Splitter``) by the planar faces of
    every glue surface (no Boolean of volumes), then each resulting body is assigned to the
    piece between the glue surfaces it lies between. Where that leaves a piece invalid, or
    with ``by_planes`` False, the pieces are made by Booleans, with their fuzzy retries.

    Args:
        solid: the part.
        stations_x: increasing x of the glue faces (mm), inside the part's x range.
        key_length: tongue length along x (mm).
        key_fraction: tongue width as a fraction of the part's width (y).

    Returns:
        The pieces, upstream first, each one valid solid.
    """

    from ductgen.errors import GeometryError
    from ductgen.solids.split_cut import split_by_booleans, split_by_planes

    bb = solid.BoundingBox()
    xs = sorted(stations_x)
    if not xs or xs[0] <= bb.xmin or xs[-1] + key_length >= bb.xmax:
        raise GeometryError("split", f"stations {xs} must lie inside x {bb.xmin:.1f}-{bb.xmax:.1f}")
    if any(b - a <= key_length for a, b in pairwise(xs)):
        raise GeometryError("split", "stations closer than the key length")
    key = (key_length, 0.5 * key_fraction * (bb.ymax - bb.ymin))
    pieces = split_by_planes(solid, xs, key, bb) if by_planes else None
    return pieces if pieces is not None else split_by_booleans(solid, xs, key, bb)


#: Shifts (mm) tried, in this order, for all the stations together when a cut leaves a piece
#: in two (a station through a place where the part's section falls apart into separate
#: bodies, e.g. flange ends beside the duct).
STATION_SHIFTS_MM = (4.0, -4.0, 8.0, -8.0, 12.0, -12.0)


def split_shifted(
    solid: Any, stations_x: list[float], key_length: float = 6.0, by_planes: bool = True
) -> tuple[list[float], list[Any]]:
    """:func:`split_across_flow`, and where a piece comes out as more than one solid, the
    same split with every station moved by :data:`STATION_SHIFTS_MM` in turn; the stations
    used and the pieces. Raises the first failure when no shift works."""
    from ductgen.errors import GeometryError

    try:
        pieces = split_across_flow(solid, stations_x, key_length, by_planes=by_planes)
        return list(stations_x), pieces
    except GeometryError as first:
        for dx in STATION_SHIFTS_MM:
            xs = [x + dx for x in stations_x]
            try:
                return xs, split_across_flow(solid, xs, key_length, by_planes=by_planes)
            except GeometryError:
                continue
        raise first


def split_for_bed(
    solid: Any,
    vertices: np.ndarray,
    bed: tuple[float, float, float],
    up: str,
    max_pieces: int = 8,
    key_length: float = 6.0,
    by_planes: bool = True,
) -> tuple[list[float], list[Any]]:
    """Fewest equal pieces across the flow that each fit ``bed`` standing ``up``.

    Args:
        solid: the part (cadquery Solid, mm); vertices: its mesh vertices (N, 3) mm, for
            the quick fit estimate before any cut.

    Returns:
        (stations_x, pieces); ([], [solid]) when the whole part fits. Raises
        :class:`~ductgen.errors.GeometryError` when ``max_pieces`` are not enough.
    """
    from ductgen.errors import GeometryError
    from ductgen.solids.mesh import triangulate

    xs = estimate_stations(vertices, bed, up, key_length, max_pieces)
    if xs == []:
        return [], [solid]
    while xs is not None and len(xs) < max_pieces:
        xs, pieces = split_shifted(solid, xs, key_length, by_planes)
        if all(bed_fit(triangulate(p, 0.1, 0.3)[0], bed, up).fits for p in pieces):
            return xs, pieces
        bb = solid.BoundingBox()  # the estimate was short: one piece more
        n = len(xs) + 2
        xs = [bb.xmin + (bb.xmax - bb.xmin) * k / n for k in range(1, n)]
    raise GeometryError("split", f"{max_pieces} pieces across the flow do not fit the bed {bed}")


def split_insert_job(
    staging: str,
    step_name: str,
    prefix: str,
    stations_x: list[float],
    bed: tuple[float, float, float],
    up: str,
    quality: str,
    frame: tuple[list[float], list[list[float]]] | None = None,
) -> list[dict[str, Any]]:
    """Kernel-worker job: split the staged insert STEP across the flow at ``stations_x`` (or
    at more stations, when a piece still does not fit) and stage each piece as
    ``PREFIX-insert-partK.step/.stl``: the STEP in model coordinates, the STL standing as it
    prints (:func:`stand_on_bed`: ``up`` along +Z, turned ``stl_turn_deg`` about Z, lowest
    point at Z = 0). Returns per piece: file names, volume (mm³, its triangulation), size
    standing ``up`` (mm), whether it fits ``bed`` and the turn.

    ``frame`` (origin, rows x y z): on the user's panel the stations and the bed fit are in
    the datum's frame; the pieces are split there and written back in panel coordinates."""
    from ductgen.atomic import write_atomic
    from ductgen.meshstats import mesh_stats
    from ductgen.solids.cad_io import read_step, step_bytes, stl_bytes
    from ductgen.solids.mesh import triangulate
    from ductgen.tolerances import STL_QUALITY
    from ductgen.worker import stage

    stage("insert split")
    path = Path(staging) / step_name
    # a flat insert is cut in memory by planes; a mapped one (curved skin, not kept) is read
    # back and cut by Booleans: in memory, with healing's tolerances, the splitter's pieces
    # came out invalid and the Booleans took minutes
    whole = _IN_MEMORY.pop(str(path.resolve()), None)
    by_planes = whole is not None
    if whole is None:
        whole = read_step(path)
    to_model = None
    if frame is not None:
        whole, to_model = _into_frame(whole, frame)
    _, pieces = split_shifted(whole, list(stations_x), by_planes=by_planes)
    lin, ang = STL_QUALITY[quality]
    meshes = [triangulate(p, lin, ang) for p in pieces]
    if not all(bed_fit(v, bed, up).fits for v, _ in meshes):
        v = triangulate(whole, 0.1, 0.3)[0]
        _, pieces = split_for_bed(whole, v, bed, up, by_planes=by_planes)
        meshes = [triangulate(p, lin, ang) for p in pieces]
    out = []
    for k, (piece, (v, f)) in enumerate(zip(pieces, meshes, strict=True), start=1):
        base = f"{prefix}-insert-part{k}"
        tight, winding, volume, _ = mesh_stats(v, f)
        if not (piece.isValid() and tight and winding):
            from ductgen.errors import GeometryError

            raise GeometryError("insert split", f"piece {k} is not one valid closed solid")
        fit = bed_fit(v, bed, up)
        turn = bed_fit(v @ up_rotation(up).T, bed, "+z").turn_deg  # its turn once standing
        if to_model is not None:
            piece = to_model(piece)
        # the STEP in model coordinates (for CAD), the STL standing on the bed as it prints
        write_atomic(Path(staging) / f"{base}.step", step_bytes(piece, base))
        write_atomic(Path(staging) / f"{base}.stl", stl_bytes(stand_on_bed(v, up, turn), f, base))
        out.append(
            {
                "step": f"{base}.step",
                "stl": f"{base}.stl",
                "volume_mm3": volume,
                "size_mm": list(fit.size_mm),
                "up": up,
                "fits": fit.fits,
                "stl_turn_deg": turn,
            }
        )
    return out


def _into_frame(shape: Any, frame: tuple[list[float], list[list[float]]]) -> tuple[Any, Any]:
    """``shape`` moved into the frame (origin, rows x y z) and the move back."""
    from OCP.gp import gp_Trsf

    o, a = np.asarray(frame[0], dtype=float), np.asarray(frame[1], dtype=float)
    t = -a @ o
    trsf = gp_Trsf()
    trsf.SetValues(*a[0], t[0], *a[1], t[1], *a[2], t[2])
    back = trsf.Inverted()
    return shape.transformShape(_matrix(trsf)), lambda s: s.transformShape(_matrix(back))


def _matrix(trsf: Any) -> Any:
    import cadquery as cq

    return cq.Matrix(trsf)
