"""The wetted surface of the CFD case from the cutter mesh (mm in, metres out).

The fluid is the air above the skin (a slab) united with the cutter, whose solid is the
air inside the inlet (ramp cavity, throat, transition). Of the union's triangles only those
on or below the skin plane are kept; they split into three regions:

- ``floor``: the skin (z = 0) with the opening cut out, wall;
- ``cavity``: every wall below the skin (ramp, divergent walls, lip underside, transition);
- ``hose``: the straight extension behind the duct outlet (:func:`extend_outlet`), wall;
- ``outlet``: the downstream end face (normal +x): the cutter's outlet face, or the end of
  the extension once it is added.

The slab's outer faces are dropped: the background mesh's own boundary closes the domain.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from ductgen.cfd.skin_wall import SkinSheet, slab_mesh

__all__ = [
    "REGIONS",
    "WettedSurface",
    "extend_outlet",
    "wetted_surface",
    "wetted_surface_on_skin",
]

#: Region names in the STL, in this order; snappyHexMesh names the patches ``duct_<region>``.
REGIONS = ("floor", "cavity", "hose", "outlet")

_EPS_MM = 1e-4


@dataclass(frozen=True)
class WettedSurface:
    """Triangles of each region (metres) and the outlet's measured facts.

    Attributes:
        triangles: region name → (n, 3, 3) corner coordinates (m).
        outlet_x_m: x of the duct outlet plane (m).
        outlet_area_m2: area of the outlet face (m²).
        outlet_centre_m: centroid of the outlet face (m).
        cavity_bounds_m: ((xmin, ymin, zmin), (xmax, ymax, zmax)) of the cutter (m).
        transition_exit_x_m: x of the cutter's own outlet face, where the internal
            transition ends (m); equal to ``outlet_x_m`` until the outlet is extended.
        outlet_hydraulic_diameter_m: 4 A / P of the outlet face (m).
        extension_m: length of the straight extension behind the cutter's outlet (m).
        outlet_axis: unit normal of the outlet face, where the extension runs (+x on a
            flat skin; the duct's straight outlet direction on a curved one).
    """

    triangles: dict[str, np.ndarray]
    outlet_x_m: float
    outlet_area_m2: float
    outlet_centre_m: tuple[float, float, float]
    cavity_bounds_m: tuple[tuple[float, float, float], tuple[float, float, float]]
    transition_exit_x_m: float = 0.0
    outlet_hydraulic_diameter_m: float = 0.0
    extension_m: float = 0.0
    outlet_axis: tuple[float, float, float] = (1.0, 0.0, 0.0)

    def stl_text(self, solid_prefix: str = "") -> str:
        """ASCII STL with one ``solid`` per region (metres, 9 significant digits)."""
        out: list[str] = []
        for name in REGIONS:
            tri = self.triangles.get(name)
            if tri is None or len(tri) == 0:
                continue
            out.append(f"solid {solid_prefix}{name}")
            n = np.cross(tri[:, 1] - tri[:, 0], tri[:, 2] - tri[:, 0])
            n /= np.maximum(np.linalg.norm(n, axis=1), 1e-300)[:, None]
            for t, nn in zip(tri, n, strict=True):
                out.append(f"  facet normal {nn[0]:.6g} {nn[1]:.6g} {nn[2]:.6g}")
                out.append("    outer loop")
                for v in t:
                    out.append(f"      vertex {v[0]:.9g} {v[1]:.9g} {v[2]:.9g}")
                out.append("    endloop")
                out.append("  endfacet")
            out.append(f"endsolid {solid_prefix}{name}")
        return "\n".join(out) + "\n"


def wetted_surface(
    vertices_mm: np.ndarray,
    faces: np.ndarray,
    slab_min_mm: tuple[float, float],
    slab_max_mm: tuple[float, float, float],
) -> WettedSurface:
    """Unite the cutter (closed mesh, mm) with the slab ``[xmin, xmax] × [ymin, ymax] ×
    [0, zmax]`` (mm; must reach past the background mesh) and split the result.

    Raises:
        ValueError: the union is not a closed volume or has no outlet face.
    """
    import trimesh

    cutter = trimesh.Trimesh(np.asarray(vertices_mm, float), np.asarray(faces), process=True)
    (x0, y0), (x1, y1, z1) = slab_min_mm, slab_max_mm
    slab = trimesh.creation.box(bounds=[[x0, y0, 0.0], [x1, y1, z1]])
    union = trimesh.boolean.union([cutter, slab], engine="manifold")
    if not union.is_watertight:
        raise ValueError("the union of the cutter and the air slab is not closed")
    tri = union.triangles
    normal = union.face_normals
    centre = tri.mean(axis=1)
    below = centre[:, 2] < _EPS_MM
    at_skin = np.all(np.abs(tri[:, :, 2]) < _EPS_MM, axis=1) & (normal[:, 2] < -0.999)
    floor = tri[at_skin].copy()
    floor[:, :, 2] = 0.0  # exactly in the skin plane, a grid plane of the background mesh
    return _split(cutter, tri, normal, below & ~at_skin, floor, (1.0, 0.0, 0.0))


def wetted_surface_on_skin(
    vertices_mm: np.ndarray,
    faces: np.ndarray,
    sheet: SkinSheet,
    z_top_mm: float,
    outlet_axis: tuple[float, float, float],
) -> WettedSurface:
    """As :func:`wetted_surface` on a curved skin or the user's panel: the cutter (closed
    mesh, datum frame, mm) united with the air between ``sheet`` (the skin round the
    inlet, reaching past the background mesh) and the plane z = ``z_top_mm``; the outlet
    face is the cutter's face farthest along ``outlet_axis`` (its unit normal).

    Raises:
        ValueError: the union is not a closed volume or has no outlet face.
    """
    import trimesh

    cutter = trimesh.Trimesh(np.asarray(vertices_mm, float), np.asarray(faces), process=True)
    sv, sf = slab_mesh(sheet, z_top_mm)
    slab = trimesh.Trimesh(sv, sf, process=True)
    union = trimesh.boolean.union([cutter, slab], engine="manifold")
    if not union.is_watertight:
        raise ValueError("the union of the cutter and the air above the skin is not closed")
    tri = union.triangles
    normal = union.face_normals
    outer = np.any(tri[:, :, 2] > z_top_mm - _EPS_MM, axis=1)  # the slab's top and sides
    depth = sheet.height(tri[:, :, 0].ravel(), tri[:, :, 1].ravel()).reshape(-1, 3)
    on_sheet = np.all(np.abs(depth - tri[:, :, 2]) < 20 * _EPS_MM, axis=1) & ~outer
    return _split(cutter, tri, normal, ~outer & ~on_sheet, tri[on_sheet], outlet_axis)


def _split(
    cutter: Any,
    tri: np.ndarray,
    normal: np.ndarray,
    inside: np.ndarray,
    floor: np.ndarray,
    axis_t: tuple[float, float, float],
) -> WettedSurface:
    """Split the faces below the skin (``inside``) into outlet and cavity (mm in, m out)."""
    axis = np.asarray(axis_t, float)
    reach = float(np.max(cutter.vertices @ axis))
    outlet = inside & (normal @ axis > 0.999) & np.all(np.abs(tri @ axis - reach) < 1e-3, axis=1)
    if not outlet.any():
        raise ValueError("the cutter has no outlet face at its downstream end")
    cavity = inside & ~outlet
    area = 0.5 * np.linalg.norm(np.cross(tri[:, 1] - tri[:, 0], tri[:, 2] - tri[:, 0]), axis=1)
    o_area = area[outlet]
    o_centre = (tri[outlet].mean(axis=1) * o_area[:, None]).sum(axis=0) / o_area.sum()
    lo, hi = cutter.bounds * 1e-3
    out_tri = tri[outlet] * 1e-3
    perimeter = float(sum(np.linalg.norm(b - a) for a, b in _boundary_edges(out_tri)))
    x_out = float(o_centre[0])
    return WettedSurface(
        triangles={"floor": floor * 1e-3, "cavity": tri[cavity] * 1e-3, "outlet": out_tri},
        outlet_x_m=x_out * 1e-3,
        outlet_area_m2=float(o_area.sum()) * 1e-6,
        outlet_centre_m=tuple(float(v) * 1e-3 for v in o_centre),  # type: ignore[arg-type]
        cavity_bounds_m=(tuple(map(float, lo)), tuple(map(float, hi))),  # type: ignore[arg-type]
        transition_exit_x_m=x_out * 1e-3,
        outlet_hydraulic_diameter_m=4.0 * float(o_area.sum()) * 1e-6 / perimeter,
        outlet_axis=(float(axis[0]), float(axis[1]), float(axis[2])),
    )


def _boundary_edges(tri: np.ndarray) -> list[tuple[np.ndarray, np.ndarray]]:
    """Edges used by one triangle only (the face's rim), each oriented as its triangle
    runs (counter-clockwise seen along the face normal); corners merged at 1 nm."""
    keys = np.round(tri.reshape(-1, 3) * 1e9).astype(np.int64).reshape(-1, 3, 3)
    count: dict[tuple[tuple[int, ...], tuple[int, ...]], int] = {}
    oriented: list[tuple[tuple[int, ...], tuple[int, ...], int, int, int]] = []
    for t, k in enumerate(keys):
        for i in range(3):
            a, b = tuple(k[i]), tuple(k[(i + 1) % 3])
            und = (a, b) if a < b else (b, a)
            count[und] = count.get(und, 0) + 1
            oriented.append((a, b, t, i, (i + 1) % 3))
    out = []
    for a, b, t, i, j in oriented:
        if count[(a, b) if a < b else (b, a)] == 1:
            out.append((tri[t, i], tri[t, j]))
    return out


def extend_outlet(surface: WettedSurface, length_m: float) -> WettedSurface:
    """The surface with a straight extension of the outlet face along +x (its normal):
    the outlet face moves ``length_m`` (m) downstream and the rim of the old face sweeps
    the ``hose`` wall. The extension keeps the outlet's exact cross-section, so the
    transition's end meets it without a step.

    Raises:
        ValueError: ``length_m`` is not positive.
    """
    if length_m <= 0.0:
        raise ValueError(f"the extension must be longer than 0 m: {length_m}")
    out = surface.triangles["outlet"]
    shift = length_m * np.asarray(surface.outlet_axis, float)
    walls = []
    for a, b in _boundary_edges(out):
        # rim edge a→b runs counter-clockwise about +x, so (a, b, b+L) faces outward
        walls.append((a, b, b + shift))
        walls.append((a, b + shift, a + shift))
    tris = dict(surface.triangles)
    tris["hose"] = np.array(walls, dtype=float)
    tris["outlet"] = out + shift
    centre = np.asarray(surface.outlet_centre_m) + shift
    (lo, hi) = surface.cavity_bounds_m
    moved = tris["outlet"].reshape(-1, 3)
    lo2 = np.minimum(lo, moved.min(axis=0))
    hi2 = np.maximum(hi, moved.max(axis=0))
    return WettedSurface(
        triangles=tris,
        outlet_x_m=float(centre[0]),
        outlet_area_m2=surface.outlet_area_m2,
        outlet_centre_m=(float(centre[0]), float(centre[1]), float(centre[2])),
        cavity_bounds_m=(tuple(map(float, lo2)), tuple(map(float, hi2))),  # type: ignore[arg-type]
        transition_exit_x_m=surface.transition_exit_x_m,
        outlet_hydraulic_diameter_m=surface.outlet_hydraulic_diameter_m,
        extension_m=surface.extension_m + length_m,
        outlet_axis=surface.outlet_axis,
    )
