"""The wetted surface of the CFD case from the cutter mesh (mm in, metres out).

The fluid is the air above the skin (a slab) united with the cutter, whose solid is the
air inside the inlet (ramp cavity, throat, transition). Of the union's triangles only those
on or below the skin plane are kept; they split into three regions:

- ``floor``: the skin (z = 0) with the opening cut out, wall;
- ``cavity``: every wall below the skin (ramp, divergent walls, lip underside, transition);
- ``outlet``: the duct's downstream end face (normal +x at the cutter's largest x).

The slab's outer faces are dropped: the background mesh's own boundary closes the domain.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["REGIONS", "WettedSurface", "wetted_surface"]

#: Region names in the STL, in this order; snappyHexMesh names the patches ``duct_<region>``.
REGIONS = ("floor", "cavity", "outlet")

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
    """

    triangles: dict[str, np.ndarray]
    outlet_x_m: float
    outlet_area_m2: float
    outlet_centre_m: tuple[float, float, float]
    cavity_bounds_m: tuple[tuple[float, float, float], tuple[float, float, float]]

    def stl_text(self, solid_prefix: str = "") -> str:
        """ASCII STL with one ``solid`` per region (metres, 9 significant digits)."""
        out: list[str] = []
        for name in REGIONS:
            tri = self.triangles[name]
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
    x_out = float(cutter.bounds[1][0])
    below = centre[:, 2] < _EPS_MM
    at_skin = np.all(np.abs(tri[:, :, 2]) < _EPS_MM, axis=1) & (normal[:, 2] < -0.999)
    outlet = (
        below
        & ~at_skin
        & (normal[:, 0] > 0.999)
        & np.all(np.abs(tri[:, :, 0] - x_out) < 1e-3, axis=1)
    )
    if not outlet.any():
        raise ValueError("the cutter has no outlet face at its downstream end")
    cavity = below & ~at_skin & ~outlet
    o_area = union.area_faces[outlet]
    o_centre = (centre[outlet] * o_area[:, None]).sum(axis=0) / o_area.sum()
    lo, hi = cutter.bounds * 1e-3
    floor = tri[at_skin].copy()
    floor[:, :, 2] = 0.0  # exactly in the skin plane, a grid plane of the background mesh
    return WettedSurface(
        triangles={
            "floor": floor * 1e-3,
            "cavity": tri[cavity] * 1e-3,
            "outlet": tri[outlet] * 1e-3,
        },
        outlet_x_m=x_out * 1e-3,
        outlet_area_m2=float(o_area.sum()) * 1e-6,
        outlet_centre_m=tuple(float(v) * 1e-3 for v in o_centre),  # type: ignore[arg-type]
        cavity_bounds_m=(tuple(map(float, lo)), tuple(map(float, hi))),  # type: ignore[arg-type]
    )
