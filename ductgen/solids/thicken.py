"""A panel's open surface thickened into a solid, its offset face in B-spline form (mm).

The kernel thickens a face into a solid whose far face is an offset surface. Booleans
against an offset surface are slow and its adaptive volume unsteady, so that face is put in
the kernel's B-spline form (:func:`offsets_as_splines`), checked against the exact offset.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from ductgen.errors import GeometryError

__all__ = ["OFFSET_SPLINE_MM", "offsets_as_splines", "thicken"]

#: Largest departure (mm) of a thickened panel's far face in B-spline form from its exact
#: offset surface (the kernel's conversion was measured within 4.2e-8 mm, 3.6e-7 mm with
#: its knots smoothed).
OFFSET_SPLINE_MM = 1e-6


def thicken(shape: Any, outward: np.ndarray, t: float) -> Any:
    """The panel's surface thickened by ``t`` mm away from ``outward`` (into the body)."""
    import cadquery as cq
    from OCP.BRepOffset import BRepOffset_MakeOffset, BRepOffset_Skin
    from OCP.GeomAbs import GeomAbs_Intersection

    faces = shape.Faces()
    n0 = faces[0].normalAt()
    sign = -1.0 if float(np.dot([n0.x, n0.y, n0.z], outward)) > 0 else 1.0
    src = faces[0].wrapped if len(faces) == 1 else cq.Shell.makeShell(faces).wrapped
    try:
        builder = BRepOffset_MakeOffset()
        builder.Initialize(
            src, sign * t, 1.0e-6, BRepOffset_Skin, False, False, GeomAbs_Intersection, True
        )
        builder.MakeOffsetShape()
        solid = cq.Shape.cast(builder.Shape())
    except Exception as err:  # kernel exceptions share no base class
        raise GeometryError("panel", f"thickening the panel surface failed: {err}") from err
    sols = solid.Solids()
    if len(sols) != 1 or not sols[0].isValid():
        raise GeometryError("panel", "the thickened panel is not one valid solid")
    return offsets_as_splines(sols[0])


def offsets_as_splines(solid: Any) -> Any:
    """``solid`` with its offset-surface faces in the kernel's B-spline form, when each lies
    within :data:`OFFSET_SPLINE_MM` of the exact offset at 60 × 60 points of its parameter
    box (the forms share their parameters); else ``solid`` as it is. On the offset surface
    the Booleans were slow (an S-shaped panel's common with its cutter 3.5 s, 1.1 s on the
    B-spline form) and the adaptive volume was off and unsteady (0.16 % low at tolerance
    1e-7, 0.04 % high at 1e-9; the B-spline form's agrees with t·(A_outer + A_inner)/2 to
    2e-7 at both)."""
    import cadquery as cq
    from OCP.BRep import BRep_Tool
    from OCP.BRepTools import BRepTools
    from OCP.Geom import Geom_OffsetSurface
    from OCP.ShapeCustom import ShapeCustom

    try:
        out = cq.Shape.cast(
            ShapeCustom.ConvertToBSpline_s(solid.wrapped, False, False, True, False)
        )
    except Exception:  # kernel exceptions share no base class: keep the exact solid
        return solid
    pairs = list(zip(solid.Faces(), out.Faces(), strict=False))
    if len(out.Solids()) != 1 or len(pairs) != len(solid.Faces()):
        return solid
    for exact, spline in pairs:
        s0 = BRep_Tool.Surface_s(exact.wrapped)
        if not isinstance(s0, Geom_OffsetSurface):
            continue
        s1 = BRep_Tool.Surface_s(spline.wrapped)
        _smooth_knots(s1, 0.5 * OFFSET_SPLINE_MM)
        u0, u1, v0, v1 = BRepTools.UVBounds_s(exact.wrapped)
        for u in np.linspace(u0, u1, 60):
            for v in np.linspace(v0, v1, 60):
                if s0.Value(u, v).Distance(s1.Value(u, v)) > OFFSET_SPLINE_MM:
                    return solid
    return out.Solids()[0] if out.isValid() else solid


def _smooth_knots(bs: Any, tol_mm: float) -> None:
    """Each inner knot of the B-spline surface ``bs`` brought, in place, to the lowest
    multiplicity (the most continuity) the kernel can remove it to within ``tol_mm``: the
    kernel's form of an offset surface is patches joined C0 by their knots, which a second
    program's geometry check reports though the surface is smooth."""
    for i in range(2, bs.NbUKnots()):
        any(bs.RemoveUKnot(i, m, tol_mm) for m in range(1, bs.UMultiplicity(i)))
    for i in range(2, bs.NbVKnots()):
        any(bs.RemoveVKnot(i, m, tol_mm) for m in range(1, bs.VMultiplicity(i)))
