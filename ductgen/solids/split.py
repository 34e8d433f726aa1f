"""Splitting an over-size part across the flow into keyed pieces that fit the printer's bed
(the fit: :mod:`ductgen.solids.bed`).

Split (CAD kernel): planes x = s across the flow (x downstream) cut the part into
pieces whose cut faces are the glue faces. Each joint is keyed by a tongue and groove: the
upstream piece keeps a tongue of the part's material, ``key_length`` long, over the middle
``key_fraction`` of the section's width (the floor and roof there), the downstream piece the
matching groove; the tongue's sides locate the pieces across the flow and its end stops them
along it (a stepped joint, common practice for printed parts, no source). The pieces
partition the part exactly, so their volumes sum to the whole. Lengths in mm.
"""

from __future__ import annotations

from collections.abc import Callable
from itertools import pairwise
from pathlib import Path
from typing import TYPE_CHECKING, Any

import numpy as np

from ductgen.solids.bed import bed_fit, estimate_stations, stand_on_bed, up_rotation
from ductgen.solids.results import InsertPiece

if TYPE_CHECKING:  # the kernel loads only inside the split's jobs
    import cadquery as cq
    from OCP.gp import gp_Trsf

__all__ = [
    "keep_for_split",
    "split_across_flow",
    "split_for_bed",
    "split_insert_job",
    "split_shifted",
]

#: The tongue's length along x (mm) and its width as a fraction of the part's width: the
#: defaults of every split here, and of the test of the faces a split makes
#: (:func:`glue_faces`), which must match the split's.
KEY_LENGTH_MM = 6.0
KEY_FRACTION = 0.4

#: The last insert each kernel worker built, by the path of its staged STEP file: the split
#: cuts the solid still in memory (no STEP re-read, and before healing, so the new glue
#: edges are healed once, with the piece).
_IN_MEMORY: dict[str, cq.Shape] = {}


def keep_for_split(step_path: str, solid: cq.Shape) -> None:
    """Remember ``solid`` (cadquery, mm) as the insert written to ``step_path``, for
    :func:`split_insert_job` in the same worker (only the latest one is kept)."""
    _IN_MEMORY.clear()
    _IN_MEMORY[str(Path(step_path).resolve())] = solid


def close_box(solid: cq.Shape) -> cq.BoundBox:
    """``solid``'s bounding box (mm) from its geometry, not enlarged by tolerances
    (``BRepBndLib::AddClose``): on the samples' inserts its x and y extents equal the optimal
    box's to 1e-4 mm (z, where only padding uses it, to 0.05 mm), in milliseconds where the
    optimal box of a mapped insert takes ~1 CPU s."""
    import cadquery as cq
    from OCP.Bnd import Bnd_Box
    from OCP.BRepBndLib import BRepBndLib

    box = Bnd_Box()
    BRepBndLib.AddClose_s(solid.wrapped, box)
    return cq.BoundBox(box)


def split_across_flow(
    solid: cq.Shape,
    stations_x: list[float],
    key_length: float = KEY_LENGTH_MM,
    key_fraction: float = KEY_FRACTION,
    by_planes: bool = True,
) -> list[cq.Shape]:
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

    bb = close_box(solid)
    xs = sorted(stations_x)
    if not xs or xs[0] <= bb.xmin or xs[-1] + key_length >= bb.xmax:
        raise GeometryError("split", f"stations {xs} must lie inside x {bb.xmin:.1f}-{bb.xmax:.1f}")
    if any(b - a <= key_length for a, b in pairwise(xs)):
        raise GeometryError("split", "stations closer than the key length")
    key = _key(bb, key_length, key_fraction)
    pieces = split_by_planes(solid, xs, key, bb) if by_planes else None
    return pieces if pieces is not None else split_by_booleans(solid, xs, key, bb)


def _key(
    bb: cq.BoundBox, key_length: float, key_fraction: float = KEY_FRACTION
) -> tuple[float, float]:
    """The tongue's (length, half width) in mm for a part with the box ``bb``."""
    return key_length, 0.5 * key_fraction * (bb.ymax - bb.ymin)


def glue_faces(
    solid: cq.Shape, stations_x: list[float], key_length: float = KEY_LENGTH_MM
) -> Callable[[Any], bool]:
    """The test of the faces :func:`split_across_flow` makes when it cuts ``solid`` at
    ``stations_x`` (mm): see :func:`~ductgen.solids.split_cut.glue_face_test`."""
    from ductgen.solids.split_cut import glue_face_test

    bb = close_box(solid)
    return glue_face_test(sorted(stations_x), bb, _key(bb, key_length))


#: Shifts (mm) tried, in this order, for all the stations together when a cut leaves a piece
#: in two (a station through a place where the part's section falls apart into separate
#: bodies, e.g. flange ends beside the duct).
STATION_SHIFTS_MM = (4.0, -4.0, 8.0, -8.0, 12.0, -12.0)


def split_shifted(
    solid: cq.Shape,
    stations_x: list[float],
    key_length: float = KEY_LENGTH_MM,
    by_planes: bool = True,
) -> tuple[list[float], list[cq.Shape]]:
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
    solid: cq.Shape,
    vertices: np.ndarray,
    bed: tuple[float, float, float],
    up: str,
    max_pieces: int = 8,
    key_length: float = KEY_LENGTH_MM,
    by_planes: bool = True,
) -> tuple[list[float], list[cq.Shape]]:
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
        bb = close_box(solid)  # the estimate was short: one piece more
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
) -> list[InsertPiece]:
    """Kernel-worker job: split the staged insert STEP across the flow at ``stations_x`` (or
    at more stations, when a piece still does not fit) and stage each piece as
    ``PREFIX-insert-partK.step/.stl``: the STEP in model coordinates, the STL standing as it
    prints (:func:`~ductgen.solids.bed.stand_on_bed`: ``up`` along +Z, turned
    ``stl_turn_deg`` about Z, lowest point at Z = 0). Returns per piece: file names, volume
    (mm³, its triangulation), size standing ``up`` (mm), whether it fits ``bed`` and the
    turn (deg).

    ``frame`` (origin, rows x y z): on the user's panel the stations and the bed fit are in
    the datum's frame; the pieces are split there and written back in panel coordinates."""
    from ductgen.solids.cad_io import read_step
    from ductgen.worker import stage

    stage("insert split")
    path = Path(staging) / step_name
    # the insert healed in memory (every edge on its faces) is cut by planes; one read back
    # (its STEP came from the solid cache) by Booleans
    whole = _IN_MEMORY.pop(str(path.resolve()), None)
    by_planes = whole is not None
    if whole is None:
        whole = read_step(path)
    to_model = None
    if frame is not None:
        whole, to_model = _into_frame(whole, frame)
    xs, pieces, meshes = _pieces_that_fit(whole, stations_x, bed, up, quality, by_planes)
    # pieces cut by planes from the healed insert get their edges laid exactly on their
    # faces only where the cut made new faces (the rest keep the insert's); pieces cut by
    # Booleans are healed without (on a mapped insert read back that cleared nothing the
    # analyser flags, at a third of the split's CPU)
    heal_as = (by_planes, glue_faces(whole, xs) if by_planes and to_model is None else None)
    return [
        _stage_piece(
            piece, mesh, f"{prefix}-insert-part{k}", k, staging, (bed, up), to_model, heal_as
        )
        for k, (piece, mesh) in enumerate(zip(pieces, meshes, strict=True), start=1)
    ]


def _pieces_that_fit(
    whole: cq.Shape,
    stations_x: list[float],
    bed: tuple[float, float, float],
    up: str,
    quality: str,
    by_planes: bool,
) -> tuple[list[float], list[cq.Shape], list[tuple[np.ndarray, np.ndarray]]]:
    """The stations used (mm), the pieces of ``whole`` split there and their meshes at the
    STL ``quality``: at ``stations_x`` (or shifted), or when a piece does not fit ``bed``
    standing ``up``, the fewest equal pieces that do (:func:`split_for_bed`)."""
    from ductgen.solids.mesh import closed_mesh, triangulate
    from ductgen.tolerances import STL_QUALITY

    xs, pieces = split_shifted(whole, list(stations_x), by_planes=by_planes)
    lin, ang = STL_QUALITY[quality]
    meshes = [closed_mesh(p, lin, ang) for p in pieces]
    if not all(bed_fit(v, bed, up).fits for v, _ in meshes):
        v = triangulate(whole, 0.1, 0.3)[0]
        xs, pieces = split_for_bed(whole, v, bed, up, by_planes=by_planes)
        meshes = [closed_mesh(p, lin, ang) for p in pieces]
    return xs, pieces, meshes


def _stage_piece(
    piece: cq.Shape,
    mesh: tuple[np.ndarray, np.ndarray],
    base: str,
    k: int,
    staging: str,
    bed_up: tuple[tuple[float, float, float], str],
    to_model: Callable[[cq.Shape], cq.Shape] | None,
    heal_as: tuple[bool, Callable[[Any], bool] | None],
) -> InsertPiece:
    """Check piece ``k``'s mesh is closed and consistently wound (the piece came valid from
    :func:`split_across_flow`: the splitter's and the Booleans' pieces are checked there,
    a second check here cost ~0.06 s a piece) and stage ``BASE.step`` (model
    coordinates, through ``to_model`` when given; ``heal_as`` = (exact edges: laid on
    their faces, the test of the glue faces when only they are new), see
    :func:`~ductgen.solids.heal.heal`) and ``BASE.stl`` (standing on the bed ``bed_up`` =
    (bed size mm, up) as it prints); its record."""
    from ductgen.atomic import write_atomic
    from ductgen.meshstats import mesh_stats
    from ductgen.solids.cad_io import step_bytes, stl_bytes

    bed, up = bed_up
    v, f = mesh
    tight, winding, volume, _ = mesh_stats(v, f)
    if not (tight and winding):
        from ductgen.errors import GeometryError

        raise GeometryError(
            "insert split", f"piece {k}'s mesh is not closed and consistently wound"
        )
    fit = bed_fit(v, bed, up)
    turn = bed_fit(v @ up_rotation(up).T, bed, "+z").turn_deg  # its turn once standing
    if to_model is not None:
        piece = to_model(piece)
    # the STEP in model coordinates (for CAD), the STL standing on the bed as it prints
    step = step_bytes(piece, base, exact_edges=heal_as[0], fresh=heal_as[1])
    write_atomic(Path(staging) / f"{base}.step", step)
    write_atomic(Path(staging) / f"{base}.stl", stl_bytes(stand_on_bed(v, up, turn), f, base))
    return InsertPiece(
        step=f"{base}.step",
        stl=f"{base}.stl",
        volume_mm3=volume,
        size_mm=list(fit.size_mm),
        up=up,
        fits=fit.fits,
        stl_turn_deg=float(turn),
    )


def _into_frame(
    shape: cq.Shape, frame: tuple[list[float], list[list[float]]]
) -> tuple[cq.Shape, Callable[[cq.Shape], cq.Shape]]:
    """``shape`` moved into the frame (origin, rows x y z) and the move back."""
    from OCP.gp import gp_Trsf

    o, a = np.asarray(frame[0], dtype=float), np.asarray(frame[1], dtype=float)
    t = -a @ o
    trsf = gp_Trsf()
    trsf.SetValues(*a[0], t[0], *a[1], t[1], *a[2], t[2])
    back = trsf.Inverted()
    return shape.transformShape(_matrix(trsf)), lambda s: s.transformShape(_matrix(back))


def _matrix(trsf: gp_Trsf) -> cq.Matrix:
    import cadquery as cq

    return cq.Matrix(trsf)
