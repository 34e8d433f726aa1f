"""Validity checks for every solid: B-rep check, watertight triangulation, volume.

``BRepCheck`` alone passes solids with the wrong volume, inverted or non-manifold ones
(seen on this stack), so each stage is also triangulated, merged and tested for closure and
consistent winding, and its triangulated volume is compared with an independent integral.
The kernel's own ``Volume()`` is biased by up to ~1e-3 on these curves; the fine
triangulation is used as the measured volume.
"""

from __future__ import annotations

from dataclasses import dataclass

import cadquery as cq
import numpy as np

from ductgen.errors import GeometryError
from ductgen.meshstats import mesh_stats
from ductgen.solids.mesh import triangulate
from ductgen.tolerances import Tolerances

__all__ = [
    "CHECK_MESH",
    "CHECK_MESH_CURVED",
    "EXACT_VOLUME_EPS",
    "SolidCheck",
    "check_solid",
    "exact_volume_mm3",
    "mesh_stats",
]

#: Triangulation used for measuring (mm, rad): ~3e-4 relative volume on these shapes at
#: ~0.25 s; 0.001 mm reaches ~1e-5 but takes 30-60 s with a lofted transition.
CHECK_MESH = (0.05, 0.2)
#: On a curved skin the kernel's mesher was measured to leave chords sagging up to 0.25 mm
#: on the mapped spline faces whatever deflection is asked, so there the closure check uses
#: this mesh and the volume is the kernel's exact mass property (on these smooth mapped
#: splines it agreed with a closed-form cylinder volume to 1e-5).
CHECK_MESH_CURVED = (0.05, 0.2)
#: Relative tolerance asked of the kernel's adaptive volume integral on a mapped solid. Its
#: cost grows with the knot spans of the mapped splines; on the fitted splines of
#: :mod:`ductgen.solids.deform` (the round cowling sample's insert) 1e-3 took 0.15 CPU s and
#: came within 3.8e-6 of a 1e-9 integral, 1e-4 took 1.1 s for 2.5e-7: both inside the mapped
#: B-rep's own departure from the exactly mapped solid (up to area × MAP_TOL_MM / volume, see
#: :mod:`ductgen.solids.deform` and tests/test_solids_check.py).
EXACT_VOLUME_EPS = 1e-3


@dataclass(frozen=True)
class SolidCheck:
    """What was measured on one solid (mm, mm², mm³)."""

    stage: str
    valid: bool
    watertight: bool
    winding_consistent: bool
    volume_mm3: float
    expected_volume_mm3: float | None
    area_mm2: float
    faces: int
    mesh: tuple[np.ndarray, np.ndarray] | None = None


def check_solid(
    solid: cq.Shape,
    stage: str,
    expected_mm3: float | None,
    tol: Tolerances,
    volume_rel: float | None = None,
    mesh: tuple[float, float] = CHECK_MESH,
    exact_volume: bool = False,
) -> SolidCheck:
    """Check one solid; raise :class:`GeometryError` naming ``stage`` if it is unsound.

    ``exact_volume``: measure the volume by the kernel's mass properties instead of the
    triangulation (solids on a curved skin; see :data:`CHECK_MESH_CURVED`)."""
    solids = solid.Solids()
    if len(solids) != 1:
        raise GeometryError(stage, f"expected one solid, got {len(solids)}")
    valid = bool(solid.isValid())
    if not valid:
        raise GeometryError(stage, "the kernel's B-rep check failed (invalid topology or geometry)")
    verts, faces = triangulate(solid, *mesh)
    watertight, winding, volume, area = mesh_stats(verts, faces)
    if not watertight:
        raise GeometryError(stage, "the triangulated solid is not closed (cracked or non-manifold)")
    if not winding:
        raise GeometryError(stage, "the triangulated solid has inconsistent face orientation")
    if volume <= 0:
        raise GeometryError(stage, f"the solid is inverted (volume {volume:.1f} mm³)")
    if exact_volume:
        volume = exact_volume_mm3(solid)
    if expected_mm3 is not None:
        rel = abs(volume / expected_mm3 - 1.0)
        allowed = tol.volume_rel if volume_rel is None else volume_rel
        if rel > allowed:
            raise GeometryError(
                stage,
                f"volume {volume:.1f} mm³ differs from the integrated {expected_mm3:.1f} mm³ "
                f"by {rel:.2%} (allowed {allowed:.2%})",
            )
    return SolidCheck(
        stage=stage,
        valid=valid,
        watertight=watertight,
        winding_consistent=winding,
        volume_mm3=volume,
        expected_volume_mm3=expected_mm3,
        area_mm2=area,
        faces=len(solid.Faces()),
        mesh=(verts, faces),
    )


def exact_volume_mm3(solid: cq.Shape, eps: float = EXACT_VOLUME_EPS) -> float:
    """Volume (mm³) of ``solid`` by the kernel's adaptive mass properties, relative
    tolerance ``eps`` (see :data:`EXACT_VOLUME_EPS`)."""
    from OCP.BRepGProp import BRepGProp
    from OCP.GProp import GProp_GProps

    props = GProp_GProps()
    BRepGProp.VolumeProperties_s(solid.wrapped, props, eps, False)
    return float(props.Mass())
