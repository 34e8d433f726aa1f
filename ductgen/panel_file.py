"""The user's panel file, in the kernel worker: read it, find the datum, sample the surface.
Below ``design/``, which asks for the samples; besides ``solids/`` the only module that
touches the CAD kernel (inside its jobs only). A CAD file (STEP) is read with the kernel;
its outer surface under the inlet is sampled by casting rays along the datum's normal. A
mesh scan (STL, OBJ, PLY; no units of its own) is read with trimesh and a smoothing bicubic
spline is fitted to its vertices by least squares, whose residual is reported. Both give
the same thing back: the datum frame and a grid of heights over the tangent plane
(:class:`ductgen.geometry.panel_surface.HeightField`'s input), as plain arrays so the result
crosses the process boundary.
"""

from __future__ import annotations

import functools
import math
import os
from pathlib import Path
from typing import Any

import numpy as np

from ductgen.errors import SpecError
from ductgen.geometry.panel_samples import crease_angle
from ductgen.panel_sampling import brep_foot, brep_heights, mesh_heights

__all__ = [
    "CAD_SUFFIXES",
    "MAX_AT_DISTANCE_MM",
    "MESH_SUFFIXES",
    "load_panel",
    "sample_panel",
]

CAD_SUFFIXES = (".step", ".stp")
MESH_SUFFIXES = (".stl", ".obj", ".ply")
#: Largest distance (mm) from ``skin.at`` to the panel surface that is taken as "on it".
MAX_AT_DISTANCE_MM = 1.0
#: How far (as a fraction of the panel's size) the panel's area centroid must lie from the
#: datum's tangent plane for its side to count as evidence of where the body is: a panel
#: curving away from its outside lies behind its tangent plane (a convex surface lies wholly
#: on one side of it); a saddle or an S-shaped panel scatters about it (common practice,
#: no source).
SHAPE_EVIDENCE = 0.02
#: Millimetres per unit of a mesh file (``skin.units``).
MESH_UNITS_MM = {"mm": 1.0, "cm": 10.0, "m": 1000.0, "in": 25.4}
#: Largest panel file read (bytes).
MAX_PANEL_BYTES = 300_000_000
#: Angle (deg) between the normals of neighbouring samples taken as a crease: on a 2–4 mm
#: grid it is a radius of 30–60 mm, far below any radius an inlet can wrap.
CREASE_DEG = 4.0


def _bad_file(path: str, why: str) -> SpecError:
    return SpecError(
        "skin.file", path, "a readable STEP (.step/.stp) or mesh (.stl/.obj/.ply) file", why
    )


def _check_file(path: str) -> None:
    try:
        st = os.stat(path)
    except OSError as err:
        raise _bad_file(path, err.strerror or "cannot read it") from None
    if not os.path.isfile(path):
        raise _bad_file(path, "not a regular file")
    if st.st_size == 0:
        raise _bad_file(path, "the file is empty")
    if st.st_size > MAX_PANEL_BYTES:
        raise _bad_file(path, f"{st.st_size:,} bytes is over the {MAX_PANEL_BYTES:,} limit")


@functools.lru_cache(maxsize=4)
def _read(path: str, mtime_ns: int, units: str | None) -> tuple[str, Any]:
    """("brep", cq.Shape) or ("mesh", trimesh.Trimesh in mm); cached per file version."""
    del mtime_ns  # part of the cache key only
    suffix = Path(path).suffix.lower()
    if suffix in CAD_SUFFIXES:
        if units is not None:
            raise SpecError(
                "skin.units",
                units,
                "not given for a STEP file",
                "a STEP file states its own units, which the reader applies",
            )
        with open(path, "rb") as fh:
            if not fh.read(64).lstrip().startswith(b"ISO-10303-21"):
                raise _bad_file(path, "not a STEP file (no 'ISO-10303-21;' header)")
        import cadquery as cq

        try:
            shape = cq.importers.importStep(path).val()
        except Exception as err:  # the reader raises several unrelated classes
            raise _bad_file(path, f"the STEP reader failed ({type(err).__name__})") from None
        if not isinstance(shape, cq.Shape) or not shape.Faces():
            raise _bad_file(path, "it holds no surfaces")
        return "brep", shape
    if units is None:
        raise SpecError(
            "skin.units",
            None,
            " | ".join(MESH_UNITS_MM),
            f"a {suffix} mesh has no units of its own: say what its numbers are in",
        )
    import trimesh

    try:
        # unprocessed first: processing drops the faces of NaN vertices without a word
        mesh = trimesh.load(path, force="mesh", process=False)
    except Exception as err:
        raise _bad_file(path, f"the mesh reader failed ({type(err).__name__}: {err})") from None
    if not isinstance(mesh, trimesh.Trimesh) or len(mesh.faces) == 0:
        raise _bad_file(path, "it holds no triangles")
    if not np.all(np.isfinite(mesh.vertices)):
        raise _bad_file(path, "a vertex has a NaN or infinite coordinate")
    mesh.process()  # merge the duplicate vertices of an STL, as the loader would have
    mesh.apply_scale(MESH_UNITS_MM[units])
    return "mesh", mesh


def load_panel(path: str, units: str | None) -> tuple[str, Any]:
    """The panel file read (cached while the file is unchanged)."""
    suffix = Path(path).suffix.lower()
    if suffix not in CAD_SUFFIXES + MESH_SUFFIXES:
        raise _bad_file(path, f"unknown file type {suffix or '(none)'!r}")
    _check_file(path)
    return _read(path, os.stat(path).st_mtime_ns, units)


def _frame(
    foot: np.ndarray, normal: np.ndarray, flow: np.ndarray, outward: np.ndarray | None
) -> tuple[np.ndarray, float, bool]:
    """Rows x, y, z of the datum frame, the flow direction's angle off the tangent plane
    (deg), and whether the file's normal was turned over to agree with ``outward``."""
    n = normal / np.linalg.norm(normal)
    flipped = False
    if outward is not None and float(np.dot(n, outward)) < 0.0:
        n, flipped = -n, True
    d = flow / np.linalg.norm(flow)
    off = math.degrees(math.asin(min(1.0, abs(float(np.dot(d, n))))))
    t = d - np.dot(d, n) * n
    if np.linalg.norm(t) < 1e-9:
        return np.eye(3), 90.0, flipped
    x = t / np.linalg.norm(t)
    return np.vstack([x, np.cross(n, x), n]), off, flipped


def _area_centroid(kind: str, shape: Any) -> tuple[np.ndarray, float]:
    """The area centroid of a panel's surface and its bounding-box diagonal (mm)."""
    if kind == "brep":
        verts, tris = shape.tessellate(2.0, 0.5)
        v = np.array([(p.x, p.y, p.z) for p in verts], dtype=float)
        t = np.asarray(tris, dtype=int)
    else:
        v, t = np.asarray(shape.vertices, dtype=float), np.asarray(shape.faces, dtype=int)
    a, b, c = v[t[:, 0]], v[t[:, 1]], v[t[:, 2]]
    area = 0.5 * np.linalg.norm(np.cross(b - a, c - a), axis=1)
    centre = (area[:, None] * (a + b + c) / 3.0).sum(axis=0) / max(float(area.sum()), 1e-12)
    return centre, float(np.linalg.norm(v.max(axis=0) - v.min(axis=0)))


def _outward_evidence(
    kind: str, shape: Any, foot: np.ndarray, normal: np.ndarray, at: Any
) -> tuple[np.ndarray, str]:
    """An open surface's outward normal at the datum from evidence, and which evidence.

    The file's face orientation says one side; the side of the datum's tangent plane the
    panel's area centroid lies on says the other is the body's (beyond
    :data:`SHAPE_EVIDENCE` of the panel's size; nearer, the shape does not tell).

    Raises:
        SpecError: on ``skin.outward`` when the two disagree.
    """
    centre, size = _area_centroid(kind, shape)
    n = normal / np.linalg.norm(normal)
    side = float(np.dot(centre - foot, n)) / max(size, 1e-9)
    if side < -SHAPE_EVIDENCE:
        return n, "file faces, confirmed by the panel's shape"
    if side <= SHAPE_EVIDENCE:
        return n, "file faces only"
    out = -n
    raise SpecError(
        "skin.outward",
        None,
        f"a vector pointing out of the body, e.g. [{out[0]:.2f}, {out[1]:.2f}, {out[2]:.2f}]",
        f"the file's faces say the outside at skin.at is toward [{n[0]:.2f}, {n[1]:.2f}, "
        f"{n[2]:.2f}], but the panel curves toward that side (its surface lies mostly in "
        "front of the tangent plane there), as the inside of a body does: say which side "
        "is outside with skin.outward",
    )


def _datum(
    kind: str, shape: Any, at: tuple[float, float, float], outward: np.ndarray | None
) -> tuple[np.ndarray, np.ndarray, float, bool, str]:
    """The surface point nearest ``at`` (mm), the outward normal there, its distance (mm),
    whether the file is a closed solid, and what says which side is outside.

    Raises:
        SpecError: ``skin.at`` on a crease, or farther than :data:`MAX_AT_DISTANCE_MM` from
            the surface; the outside ambiguous (``skin.outward``).
    """
    at_v = np.asarray(at, dtype=float)
    if kind == "brep":
        foot, normal, dist = brep_foot(shape, at_v)
        closed = any(s.isValid() for s in shape.Solids())
        if not np.any(normal):
            raise SpecError(
                "skin.at",
                list(at),
                "a point where the panel is smooth",
                "the faces of the panel meet at an angle there (a crease or an edge)",
            )
    else:
        closest, distance, tri = shape.nearest.on_surface([at_v])
        foot, dist = np.asarray(closest[0]), float(distance[0])
        normal = np.asarray(shape.face_normals[int(tri[0])])
        closed = False
    if dist > MAX_AT_DISTANCE_MM:
        raise SpecError(
            "skin.at",
            list(at),
            f"within {MAX_AT_DISTANCE_MM:g} mm of the panel's surface",
            f"the nearest surface point, ({foot[0]:.2f}, {foot[1]:.2f}, {foot[2]:.2f}) mm, is "
            f"{dist:.2f} mm away",
        )
    evidence = "skin.outward" if outward is not None else "closed solid"
    if outward is None and not closed:
        normal, evidence = _outward_evidence(kind, shape, foot, normal, at)
    return foot, normal, dist, closed, evidence


def _heights(
    kind: str,
    shape: Any,
    frame: tuple[np.ndarray, np.ndarray, bool],
    grid: tuple[np.ndarray, np.ndarray],
    needed: tuple[float, float, float, float] | None,
    at: tuple[float, float, float],
) -> tuple[np.ndarray, dict[str, Any], tuple[float, tuple[int, int]]]:
    """Heights (mm) over the grid ``(xs, ys)`` in the datum frame ``(axes, origin,
    flipped)``; a scan's fit statistics; the largest crease angle (deg) inside ``needed``
    and its grid index (a CAD file's; none on a scan, whose spline is smooth)."""
    axes, foot, flipped = frame
    xs, ys = grid
    if kind == "brep":
        # the file's own face orientation, turned over once to match the datum's normal
        h, normals = brep_heights(shape, axes, foot, xs, ys, flipped)
        within = None
        if needed is not None:
            within = np.outer(
                (xs >= needed[0]) & (xs <= needed[1]), (ys >= needed[2]) & (ys <= needed[3])
            )
        return h, {}, crease_angle(normals, h, within)
    try:
        h, stats = mesh_heights(shape, axes, foot, xs, ys, flipped)
    except ValueError as err:
        raise SpecError(
            "skin.at", list(at), "a point with mesh all round it", f"the scan: {err}"
        ) from None
    return h, stats, (0.0, (0, 0))


def sample_panel(
    path: str,
    units: str | None,
    at: tuple[float, float, float],
    flow: tuple[float, float, float],
    outward: tuple[float, float, float] | None,
    box: tuple[float, float, float, float],
    step: float,
    needed: tuple[float, float, float, float] | None = None,
) -> dict[str, Any]:
    """The datum frame and the outer surface's heights over ``box`` = (x_lo, x_hi, y_lo,
    y_hi) in the datum's tangent plane (mm), on a ``step`` mm grid (runs in the worker);
    creases are looked for inside ``needed`` (a box like ``box``; default: all of it).

    Raises:
        SpecError: unreadable file or units (``skin.file``, ``skin.units``), ``skin.at``
            farther than :data:`MAX_AT_DISTANCE_MM` from the surface.
    """
    kind, shape = load_panel(path, units)
    out_v = None if outward is None else np.asarray(outward, dtype=float)
    foot, normal, dist, closed, evidence = _datum(kind, shape, at, out_v)
    axes, off_deg, flipped = _frame(foot, normal, np.asarray(flow, dtype=float), out_v)
    xs = np.arange(box[0], box[1] + 0.5 * step, step)
    ys = np.arange(box[2], box[3] + 0.5 * step, step)
    h, stats, crease = _heights(kind, shape, (axes, foot, flipped), (xs, ys), needed, at)
    return {
        "kind": kind,
        "origin": foot,
        "axes": axes,
        "distance_mm": dist,
        "flow_off_tangent_deg": off_deg,
        "outward_from": evidence,
        "closed": closed,
        "x": xs,
        "y": ys,
        "h": h,
        "crease_deg": crease[0],
        "crease_at": (float(xs[crease[1][0]]), float(ys[crease[1][1]])),
        **stats,
    }
