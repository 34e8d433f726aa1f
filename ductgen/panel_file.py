"""The user's panel file, in the kernel worker: read it, find the datum, sample the surface.
Below ``design/``, which asks for the samples; besides ``solids/`` the only module that
touches the CAD kernel (inside its jobs only). A CAD file (STEP) is read with the kernel;
its outer surface under the inlet is sampled by casting rays along the datum's normal. A
mesh scan (STL, OBJ, PLY; no units of its own) is read with trimesh and a smoothing bicubic
spline is fitted to its vertices by least squares, whose residual is reported. Both give
the same thing back: the datum frame and a grid of heights over the tangent plane
(:class:`ductgen.geometry.panel.HeightField`'s input), as plain arrays so the result
crosses the process boundary.
"""

from __future__ import annotations

import functools
import math
import os
import warnings
from pathlib import Path
from typing import Any

import numpy as np

from ductgen.errors import SpecError
from ductgen.geometry.panel_samples import crease_angle

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


def _face_normal(face: Any, p: Any) -> np.ndarray:
    """Oriented unit normal of ``face`` at its point nearest ``p`` (gp_Pnt)."""
    from OCP.BRep import BRep_Tool
    from OCP.BRepGProp import BRepGProp_Face
    from OCP.gp import gp_Pnt, gp_Vec
    from OCP.ShapeAnalysis import ShapeAnalysis_Surface

    uv = ShapeAnalysis_Surface(BRep_Tool.Surface_s(face)).ValueOfUV(p, 1e-7)
    pnt, vec = gp_Pnt(), gp_Vec()
    BRepGProp_Face(face).Normal(uv.X(), uv.Y(), pnt, vec)
    n = np.array([vec.X(), vec.Y(), vec.Z()])
    return n / max(float(np.linalg.norm(n)), 1e-300)


def _brep_foot(shape: Any, at: np.ndarray) -> tuple[np.ndarray, np.ndarray, float]:
    """The surface point nearest ``at``, the outward normal the file gives there (zero when
    the faces meeting there disagree) and the distance (mm)."""
    from OCP.BRepBuilderAPI import BRepBuilderAPI_MakeVertex
    from OCP.BRepExtrema import BRepExtrema_DistShapeShape, BRepExtrema_SupportType
    from OCP.gp import gp_Pnt
    from OCP.TopAbs import TopAbs_FACE
    from OCP.TopExp import TopExp
    from OCP.TopoDS import TopoDS
    from OCP.TopTools import TopTools_IndexedDataMapOfShapeListOfShape

    target = gp_Pnt(*at)
    ext = BRepExtrema_DistShapeShape(BRepBuilderAPI_MakeVertex(target).Vertex(), shape.wrapped)
    if not ext.IsDone() or ext.NbSolution() == 0:
        raise SpecError("skin.at", list(at), "a point near the panel", "no nearest point found")
    best = min(range(1, ext.NbSolution() + 1), key=lambda i: ext.PointOnShape2(i).Distance(target))
    p = ext.PointOnShape2(best)
    sup = ext.SupportOnShape2(best)
    if ext.SupportTypeShape2(best) == BRepExtrema_SupportType.BRepExtrema_IsInFace:
        faces = [TopoDS.Face_s(sup)]
    else:  # on an edge or a vertex (a seam, say): the faces that meet there
        ancestors = TopTools_IndexedDataMapOfShapeListOfShape()
        TopExp.MapShapesAndAncestors_s(shape.wrapped, sup.ShapeType(), TopAbs_FACE, ancestors)
        faces = [TopoDS.Face_s(f) for f in ancestors.FindFromKey(sup)]
    normals = [_face_normal(f, p) for f in faces]
    normal = normals[0]
    if any(float(n @ normal) < 0.999 for n in normals[1:]):
        normal = np.zeros(3)  # faces meet at an angle here: a crease
    return np.array([p.X(), p.Y(), p.Z()]), normal, float(ext.Value())


def _brep_heights(
    shape: Any, axes: np.ndarray, origin: np.ndarray, xs: np.ndarray, ys: np.ndarray, flip: bool
) -> tuple[np.ndarray, np.ndarray]:
    """Heights (nx, ny) of the outward-facing surface nearest the tangent plane along the
    frame normal at grid points, NaN where a ray misses; and the hit normals (nx, ny, 3)."""
    from OCP.BRepGProp import BRepGProp_Face
    from OCP.gp import gp_Dir, gp_Lin, gp_Pnt, gp_Vec
    from OCP.IntCurvesFace import IntCurvesFace_ShapeIntersector

    isec = IntCurvesFace_ShapeIntersector()
    isec.Load(shape.wrapped, 1e-7)
    reach = 2.0 * float(max(np.ptp(xs), np.ptp(ys), 50.0))
    ex, ey, n = axes
    down = gp_Dir(*(-n))
    h = np.full((len(xs), len(ys)), np.nan)
    normals = np.zeros((len(xs), len(ys), 3))
    pnt, vec = gp_Pnt(), gp_Vec()
    props: dict[int, Any] = {}
    for i, x in enumerate(xs):
        for j, y in enumerate(ys):
            top = origin + x * ex + y * ey + reach * n
            isec.Perform(gp_Lin(gp_Pnt(*top), down), 0.0, 2.0 * reach)
            best = None
            for k in range(1, isec.NbPnt() + 1):
                face = isec.Face(k)
                key = face.__hash__()
                gp = props.get(key)
                if gp is None:
                    gp = props[key] = BRepGProp_Face(face)
                gp.Normal(isec.UParameter(k), isec.VParameter(k), pnt, vec)
                nv = np.array([vec.X(), vec.Y(), vec.Z()])
                nv /= max(np.linalg.norm(nv), 1e-300)
                if flip:
                    nv = -nv
                if float(nv @ n) <= 0.0:
                    continue  # an inward-facing (inner) surface
                height = reach - isec.WParameter(k)
                if best is None or abs(height) < abs(best[0]):
                    best = (height, nv)
            if best is not None:
                h[i, j] = best[0]
                normals[i, j] = best[1] @ axes.T
    return h, normals


def _mesh_heights(
    mesh: Any, axes: np.ndarray, origin: np.ndarray, xs: np.ndarray, ys: np.ndarray, flip: bool
) -> tuple[np.ndarray, dict[str, float]]:
    """A least-squares bicubic spline through the mesh vertices of the outward-facing surface
    over the grid, evaluated on it (NaN where the mesh does not cover the grid); the fit's
    residual (mm) and how many vertices it used."""
    from scipy.interpolate import LSQBivariateSpline
    from scipy.spatial import cKDTree

    local = (np.asarray(mesh.vertices) - origin) @ axes.T
    vn = np.asarray(mesh.vertex_normals) @ axes.T
    if flip:
        vn = -vn
    span = float(max(np.ptp(xs), np.ptp(ys)))
    m = 10.0  # mm: vertices a little beyond the grid steady the fit and cover its border
    lo, hi = (xs[0] - m, ys[0] - m), (xs[-1] + m, ys[-1] + m)
    inside = (
        (local[:, 0] >= lo[0])
        & (local[:, 0] <= hi[0])
        & (local[:, 1] >= lo[1])
        & (local[:, 1] <= hi[1])
        & (vn[:, 2] > 0.2)
        & (np.abs(local[:, 2]) < span)
    )
    pts = local[inside]
    if len(pts) < 64:
        raise ValueError("too few vertices under the inlet")
    tree = cKDTree(pts[:, :2])
    dist: np.ndarray = np.asarray(tree.query(pts[:, :2], k=2)[0])
    spacing = float(np.median(dist[:, 1]))
    # knots about every 12 mm (and at least 3 vertex spacings): smooth enough to average a
    # scan's noise, fine enough for radii down to the wrap limits
    knot = max(12.0, 3.0 * spacing)
    tx = np.linspace(lo[0], hi[0], max(2, int((hi[0] - lo[0]) / knot)) + 1)[1:-1]
    ty = np.linspace(lo[1], hi[1], max(2, int((hi[1] - lo[1]) / knot)) + 1)[1:-1]
    with warnings.catch_warnings():  # knot cells without vertices: found below as off-edge
        warnings.simplefilter("ignore")
        fit = LSQBivariateSpline(
            pts[:, 0], pts[:, 1], pts[:, 2], tx, ty, bbox=[lo[0], hi[0], lo[1], hi[1]]
        )
    res = pts[:, 2] - fit.ev(pts[:, 0], pts[:, 1])
    gx, gy = np.meshgrid(xs, ys, indexing="ij")
    h = fit.ev(gx.ravel(), gy.ravel()).reshape(gx.shape)
    faces = np.asarray(mesh.faces)
    keep = inside[faces].all(axis=1)
    covered = _covered(local[:, :2], faces[keep], np.column_stack([gx.ravel(), gy.ravel()]))
    h[~covered.reshape(h.shape)] = np.nan
    stats = {
        "fit_rms_mm": float(np.sqrt(np.mean(res * res))),
        "fit_max_mm": float(np.max(np.abs(res))),
        "fit_vertices": len(pts),
        "fit_knot_spacing_mm": float(knot),
    }
    return h, stats


def _covered(xy: np.ndarray, faces: np.ndarray, q: np.ndarray, k: int = 12) -> np.ndarray:
    """Whether each point ``q`` (N, 2) lies in one of the triangles ``faces`` of the 2D
    points ``xy`` (tested against the ``k`` triangles with the nearest centroids)."""
    from scipy.spatial import cKDTree

    if len(faces) == 0:
        return np.zeros(len(q), dtype=bool)
    tri = xy[faces]
    _, idx = cKDTree(tri.mean(axis=1)).query(q, k=min(k, len(faces)))
    idx = idx.reshape(len(q), -1)
    a, b, c = tri[idx, 0], tri[idx, 1], tri[idx, 2]
    v0, v1, v2 = c - a, b - a, q[:, None, :] - a
    d00, d01, d11 = (v0 * v0).sum(-1), (v0 * v1).sum(-1), (v1 * v1).sum(-1)
    d20, d21 = (v2 * v0).sum(-1), (v2 * v1).sum(-1)
    den = d00 * d11 - d01 * d01
    den = np.where(np.abs(den) < 1e-300, 1e-300, den)
    s = (d11 * d20 - d01 * d21) / den
    t = (d00 * d21 - d01 * d20) / den
    eps = 1e-9
    return np.any((s >= -eps) & (t >= -eps) & (s + t <= 1 + eps), axis=1)


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
    at_v = np.asarray(at, dtype=float)
    out_v = None if outward is None else np.asarray(outward, dtype=float)
    if kind == "brep":
        foot, normal, dist = _brep_foot(shape, at_v)
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
    evidence = "skin.outward" if out_v is not None else "closed solid"
    if out_v is None and not closed:
        normal, evidence = _outward_evidence(kind, shape, foot, normal, at)
    axes, off_deg, flipped = _frame(foot, normal, np.asarray(flow, dtype=float), out_v)
    xs = np.arange(box[0], box[1] + 0.5 * step, step)
    ys = np.arange(box[2], box[3] + 0.5 * step, step)
    stats: dict[str, Any] = {}
    crease = (0.0, (0, 0))
    if kind == "brep":
        # the file's own face orientation, turned over once to match the datum's normal
        flip = flipped
        h, normals = _brep_heights(shape, axes, foot, xs, ys, flip)
        within = None
        if needed is not None:
            within = np.outer(
                (xs >= needed[0]) & (xs <= needed[1]), (ys >= needed[2]) & (ys <= needed[3])
            )
        crease = crease_angle(normals, h, within)
    else:
        try:
            h, stats = _mesh_heights(shape, axes, foot, xs, ys, flipped)
        except ValueError as err:
            raise SpecError(
                "skin.at", list(at), "a point with mesh all round it", f"the scan: {err}"
            ) from None
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
