"""Printability of a triangle mesh: closure, wall thickness, overhangs, mass, heat limit.

Pure numpy + trimesh (no CAD kernel), so it runs in the parent process on the mesh the
kernel worker returned, and in ``ductgen check`` on any STL.

* ``min_wall_mm`` — rays cast from points on the surface along the inward normal; the
  distance to the first surface hit is the local wall thickness (trimesh's pure-python
  ray intersector; no embree needed).
* Overhang — area of faces whose normal points down by more than 45° from the horizontal
  (unsupported overhang ≤ 45° is FDM common practice, no source), for each of the six axis
  directions as "up"; faces on the build plate do not count. The orientation with the
  least overhang area is suggested.
* Mass — volume × density from ``ductgen/data/materials.csv`` (values recalled from
  typical data sheets, marked so in the table).
"""

from __future__ import annotations

import csv
import math
from dataclasses import dataclass
from functools import cache
from pathlib import Path
from typing import TYPE_CHECKING, Any

import numpy as np

from ductgen.errors import DesignWarning
from ductgen.meshstats import mesh_stats
from ductgen.resources import materials_path

if TYPE_CHECKING:
    import trimesh
from ductgen.worker import KernelWorker

__all__ = [
    "FDM_MIN_WALL_MM",
    "Material",
    "check_file",
    "load_materials",
    "mesh_closure",
    "mesh_health",
    "min_wall_mm",
    "overhang_by_orientation",
    "plug_section",
    "print_section",
]

#: FDM: walls ≥ 2 mm by default, warn below 1.2 mm (common practice, no source).
FDM_MIN_WALL_MM = 1.2
OVERHANG_DEG = 45.0


@dataclass(frozen=True)
class Material:
    """A print material: density (g/cm³) and heat-deflection temperature (°C, 0.45 MPa)."""

    name: str
    density_g_cm3: float
    hdt_c: float
    note: str


@cache
def load_materials(path: str | None = None) -> dict[str, Material]:
    """Material name → :class:`Material` from the CSV table (``#`` lines are sources)."""
    p = Path(path) if path else materials_path()
    rows = [ln for ln in p.read_text().splitlines() if ln.strip() and not ln.startswith("#")]
    out = {}
    for r in csv.DictReader(rows):
        out[r["material"]] = Material(
            r["material"], float(r["density_g_cm3"]), float(r["hdt_c"]), r["note"]
        )
    return out


def _trimesh(vertices: np.ndarray, faces: np.ndarray) -> trimesh.Trimesh:
    import trimesh

    return trimesh.Trimesh(
        np.asarray(vertices, dtype=float), np.asarray(faces, dtype=np.int64), process=True
    )


def mesh_closure(vertices: np.ndarray, faces: np.ndarray) -> tuple[bool, bool, float, float]:
    """(closed, winding consistent, signed volume mm³, area mm²); see
    :func:`ductgen.meshstats.mesh_stats`."""
    return mesh_stats(vertices, faces)


def mesh_health(vertices: np.ndarray, faces: np.ndarray) -> dict[str, Any]:
    """Closed, winding-consistent, volume (mm³), area (mm²) and bounding box (mm)."""
    closed, winding, volume, area = mesh_closure(vertices, faces)
    v = np.asarray(vertices, dtype=float)
    lo, hi = (v.min(axis=0), v.max(axis=0)) if len(v) else (np.zeros(3), np.zeros(3))
    return {
        "watertight": closed,
        "winding_consistent": winding,
        "volume_mm3": volume,
        "area_mm2": area,
        "bbox_min_mm": lo.tolist(),
        "bbox_max_mm": hi.tolist(),
        "bbox_size_mm": (hi - lo).tolist(),
        "triangles": len(faces),
    }


#: Smallest height (mm) of a triangle over its longest edge for a wall ray to start on it:
#: far below any printable wall (a 0.4 mm nozzle's line), far above float32 rounding.
MIN_RAY_FACE_HEIGHT_MM = 0.05


def min_wall_mm(
    vertices: np.ndarray,
    faces: np.ndarray,
    max_rays: int = 8000,
    seed: int = 0,
    starts_within: np.ndarray | None = None,
) -> dict[str, Any]:
    """Thinnest wall found by inward ray casting (mm) and where it is.

    Rays start at every triangle centroid (or, on larger meshes, an area-weighted random
    choice of ``max_rays`` plus ``max_rays // 4`` uniform ones), nudged 1e-4 mm inside.
    Hits on triangles sharing a vertex with the ray's own triangle are ignored: at a
    convex edge a chord triangle's tilted normal would otherwise "see" the neighbouring
    face a few hundredths of a millimetre away. Only hits leaving the material through a
    face turned towards the ray (cos > 0.25) count, so rays grazing a rounded nose tip
    do not read as thin walls. No ray starts on a sliver (a triangle less than
    :data:`MIN_RAY_FACE_HEIGHT_MM` high over its longest edge): on a mesh carried onto a
    curved skin, slivers along an edge have their three corners on a bent curve and a normal
    pointing anywhere across it, and their rays found walls of 0.001 mm that are not there
    (the faces beside them sample the same wall); nor does a hit on a sliver count. With
    ``starts_within`` (a closed plan polygon, (N, 2) mm in the mesh's x, y), rays start only
    on faces whose centroid lies inside it: where a part is thin by design outside it (a
    feathered edge), that taper is not a wall to judge.
    """
    m = _trimesh(vertices, faces)
    height = _face_heights(m)
    idx = _ray_starts(m, height, max_rays, seed, starts_within)
    if len(idx) == 0:
        return {"min_wall_mm": None, "at_mm": None, "rays": 0}
    best = _wall_along_rays(m, height, idx)
    finite = np.isfinite(best)
    if not finite.any():
        return {"min_wall_mm": None, "at_mm": None, "rays": len(idx)}
    k = int(np.argmin(np.where(finite, best, np.inf)))
    return {
        "min_wall_mm": float(best[k]),
        "at_mm": m.triangles_center[idx[k]].round(3).tolist(),
        "p01_wall_mm": float(np.percentile(best[finite], 1)),
        "rays": len(idx),
    }


def _face_heights(m: trimesh.Trimesh) -> np.ndarray:
    """Each triangle's height over its longest edge (mm)."""
    corners = m.vertices[m.faces]
    longest = np.linalg.norm(corners[:, [1, 2, 0]] - corners, axis=2).max(axis=1)
    return np.asarray(2.0 * m.area_faces / np.maximum(longest, 1e-12))


def _ray_starts(
    m: trimesh.Trimesh,
    height: np.ndarray,
    max_rays: int,
    seed: int,
    starts_within: np.ndarray | None,
) -> np.ndarray:
    """Indices of the faces rays start on (:func:`min_wall_mm`'s rules)."""
    # rays start only on faces whose normal means something at this scale
    usable = height >= MIN_RAY_FACE_HEIGHT_MM
    if starts_within is not None:
        from matplotlib.path import Path as PlanPath

        usable &= PlanPath(np.asarray(starts_within)).contains_points(m.triangles_center[:, :2])
    idx = np.flatnonzero(usable)
    if len(idx) > max_rays:
        area = m.area_faces
        rng = np.random.default_rng(seed)
        pick = rng.choice(idx, size=max_rays, replace=False, p=area[idx] / area[idx].sum())
        idx = np.union1d(pick, rng.choice(idx, size=max_rays // 4, replace=False))
    return idx


def _wall_along_rays(m: trimesh.Trimesh, height: np.ndarray, idx: np.ndarray) -> np.ndarray:
    """The wall (mm) each ray from the faces ``idx`` crosses before it leaves the material
    (inf where no hit counts; :func:`min_wall_mm`'s rules)."""
    intersector: Any  # one of two classes of the same interface
    try:  # Intel Embree through embreex: ~70x faster than trimesh's numpy intersector
        from trimesh.ray.ray_pyembree import RayMeshIntersector as intersector
    except ImportError:  # pragma: no cover - platforms without an embreex wheel
        from trimesh.ray.ray_triangle import RayMeshIntersector as intersector

    nrm = m.face_normals
    origins = m.triangles_center[idx] - 1e-4 * nrm[idx]
    dirs = -nrm[idx]
    best = np.full(len(idx), np.inf)
    locs, ray_idx, tri = intersector(m).intersects_location(origins, dirs, multiple_hits=True)
    if len(ray_idx) == 0:
        return best
    dist = np.linalg.norm(locs - origins[ray_idx], axis=1) + 1e-4  # from the surface itself
    fa, fb = m.faces[idx[ray_idx]], m.faces[tri]
    touching = (fa[:, :, None] == fb[:, None, :]).any(axis=(1, 2))
    exits = np.einsum("ij,ij->i", nrm[tri], dirs[ray_idx]) > 0.25  # not grazing
    # nor do hits on slivers: the same meaningless normals, and a sliver strip along a
    # curved seam lies within hundredths of a millimetre of its neighbours
    ok = (dist > 1e-3) & ~touching & exits & (height[tri] >= MIN_RAY_FACE_HEIGHT_MM)
    np.minimum.at(best, ray_idx[ok], dist[ok])
    return best


def overhang_by_orientation(vertices: np.ndarray, faces: np.ndarray) -> dict[str, float]:
    """Overhang area (mm²) beyond 45° for each axis direction used as "up"."""
    v = np.asarray(vertices, dtype=float)[np.asarray(faces)]
    cross = np.cross(v[:, 1] - v[:, 0], v[:, 2] - v[:, 0])
    area = 0.5 * np.linalg.norm(cross, axis=1)
    n = cross / np.where(area > 0, 2.0 * area, 1.0)[:, None]
    lim = math.sin(math.radians(OVERHANG_DEG))  # downward component beyond 45° from vertical wall
    out = {}
    for name, axis, sign in [
        ("+z", 2, 1),
        ("-z", 2, -1),
        ("+x", 0, 1),
        ("-x", 0, -1),
        ("+y", 1, 1),
        ("-y", 1, -1),
    ]:
        h = sign * v[:, :, axis]
        down = -sign * n[:, axis]
        on_plate = np.all(h < h.min() + 1e-2, axis=1)
        mask = (down > lim + 1e-9) & ~on_plate
        out[name] = float(area[mask].sum())
    return out


def print_section(
    vertices: np.ndarray,
    faces: np.ndarray,
    material: str = "PETG",
    near_heat: bool = False,
    service_temperature_c: float | None = None,
    by_design_thin: tuple[np.ndarray, str] | None = None,
) -> tuple[dict[str, Any], list[DesignWarning]]:
    """The ``print`` report section and its warnings for one printed part.
    ``by_design_thin``: (plan polygon, words) — the wall is judged only inside the polygon
    (:func:`min_wall_mm`'s ``starts_within``), and the words say what lies outside it."""
    health = mesh_health(vertices, faces)
    inside = None if by_design_thin is None else by_design_thin[0]
    wall = min_wall_mm(vertices, faces, starts_within=inside)
    over = overhang_by_orientation(vertices, faces)
    up = min(over, key=over.__getitem__)
    mat = load_materials()[material]
    volume = health["volume_mm3"]
    sec: dict[str, Any] = {
        "watertight": health["watertight"],
        "manifold": health["watertight"] and health["winding_consistent"],
        "min_wall_mm": wall["min_wall_mm"],
        "min_wall_at_mm": wall["at_mm"],
        "volume_mm3": volume,
        "material": mat.name,
        "density_g_cm3": mat.density_g_cm3,
        "mass_g": volume * 1e-3 * mat.density_g_cm3,
        "heat_deflection_c": mat.hdt_c,
        "orientation_up": up,
        "overhang_area_mm2": over[up],
        "overhang_area_by_up_mm2": over,
        "bbox_size_mm": health["bbox_size_mm"],
        **({} if by_design_thin is None else {"min_wall_excludes": by_design_thin[1]}),
        "sources": "walls, overhang: FDM common practice, no source; "
        "material values recalled from typical data sheets",
    }
    return sec, _print_warnings(sec, wall, mat, near_heat, service_temperature_c)


def _print_warnings(
    sec: dict[str, Any],
    wall: dict[str, Any],
    mat: Any,
    near_heat: bool,
    service_temperature_c: float | None,
) -> list[DesignWarning]:
    """The warnings of one printed part's ``print`` section (°C, mm)."""
    warns: list[DesignWarning] = []
    mw = wall["min_wall_mm"]
    if not sec["manifold"]:
        warns.append(
            DesignWarning(
                "print_not_manifold", "the printed part's mesh is not closed and manifold"
            )
        )
    if mw is not None and mw < FDM_MIN_WALL_MM:
        warns.append(
            DesignWarning(
                "print_thin_wall",
                f"thinnest wall {mw:.2f} mm at {wall['at_mm']} is under "
                f"{FDM_MIN_WALL_MM} mm (FDM, common practice)",
            )
        )
    if near_heat:
        warns.append(
            DesignWarning(
                "print_near_heat",
                f"{mat.name} deflects at about {mat.hdt_c:.0f} °C; printed "
                "parts do not belong next to brake rotors, exhausts or engines (common practice)",
            )
        )
    if service_temperature_c is not None and service_temperature_c > mat.hdt_c - 10.0:
        warns.append(
            DesignWarning(
                "print_heat_limit",
                f"service temperature {service_temperature_c:.0f} °C is within "
                "10 °C of (or above) the heat-deflection temperature of "
                f"{mat.name} ({mat.hdt_c:.0f} °C)",
            )
        )
    return warns


def plug_section(plug: Any, edge_radius_mm: float) -> tuple[dict[str, Any], list[DesignWarning]]:
    """The plug's layup facts for the ``print`` section, and its warnings (inside radius,
    draft; common practice, no source). ``plug`` has ``draft_deg`` and ``trim_margin``."""
    section = {
        "draft_deg": plug.draft_deg,
        "trim_margin_mm": plug.trim_margin,
        "inside_radius_wall_to_plate_mm": 0.0,
        "laminate_edge_round_mm": edge_radius_mm,
    }
    warns = [
        DesignWarning(
            "layup_inside_radius",
            "the plug's walls meet its plate with a sharp "
            "inside corner: radius it ≥ ~3 mm for carbon (common practice)",
        )
    ]
    if plug.draft_deg < 2.0:
        warns.append(
            DesignWarning(
                "layup_draft",
                f"plug draft {plug.draft_deg:g}° is under 2° "
                "(2°–5° is common practice for release)",
            )
        )
    return section, warns


# --- `ductgen check`: the health decision for one user file --------------------------------


def check_file(
    path: str | Path, min_wall: float = 0.0, worker: KernelWorker | None = None
) -> dict[str, Any]:
    """Health report of one STL or STEP file (mm): ``healthy`` means closed, consistently
    wound, positive volume and (when ``min_wall`` > 0 mm) no wall thinner than ``min_wall``.

    STL is read with numpy (:func:`ductgen.solids.read.read_stl`); STEP in the kernel
    worker ``worker`` (default: the process-wide one; memory cap, timeout).

    Raises:
        SpecError: on ``FILE`` when the file is missing, a folder, empty, truncated, garbage
            or holds NaN vertices; on ``--min-wall`` when it is negative or not finite.
    """
    from ductgen.errors import SpecError
    from ductgen.solids.read import check_readable, read_stl, step_mesh

    if not (math.isfinite(min_wall) and min_wall >= 0):
        raise SpecError(
            "--min-wall", min_wall, "a finite thickness >= 0 mm", "0 reports the wall only"
        )
    p = Path(path)
    suffix = p.suffix.lower()
    check_readable(p)  # missing, a folder, empty, a pipe, too large
    if suffix == ".stl":
        verts, faces = read_stl(p)
    elif suffix in (".step", ".stp"):
        from ductgen.worker import default_worker

        verts, faces = (worker or default_worker()).run(step_mesh, str(p))
    else:
        raise SpecError("FILE", str(p), "a .stl, .step or .stp file", "unknown file type")
    health = mesh_health(verts, faces)
    report: dict[str, Any] = {"file": str(path), **health}
    report["manifold"] = bool(health["watertight"] and health["winding_consistent"])
    problems = []
    if not health["watertight"]:
        problems.append("not closed: some edges are not shared by exactly two triangles")
    elif not health["winding_consistent"]:
        problems.append("inconsistent triangle orientation")
    if health["volume_mm3"] <= 0:
        problems.append("non-positive volume (inverted or open)")
    if report["manifold"] and len(faces):
        wall = min_wall_mm(verts, faces)
        report["min_wall_mm"] = wall["min_wall_mm"]
        report["min_wall_at_mm"] = wall["at_mm"]
        thin = wall["min_wall_mm"]
        if min_wall > 0 and thin is not None and thin < min_wall:
            problems.append(f"thin wall {thin:.2f} mm < {min_wall:g} mm at {wall['at_mm']}")
    report["problems"] = problems
    report["healthy"] = not problems
    return report
