"""Numerical tolerances in one documented object, passed explicitly.

All lengths in mm; relative values are dimensionless.
"""

from __future__ import annotations

from dataclasses import dataclass

__all__ = ["DEFAULT_TOLERANCES", "STL_QUALITY", "Tolerances"]


@dataclass(frozen=True)
class Tolerances:
    """Tolerances used by geometry checks and exports.

    Attributes:
        length_mm: two points closer than this are the same point (mm).
        volume_rel: allowed relative gap between a solid's B-rep volume and the
            independent integral of the same shape (dimensionless). The cavity is
            integrated to much better than this; the allowance covers the lofted
            transition and edge rounds, which are integrated approximately.
        mesh_volume_rel: allowed relative gap between a solid's triangulated volume
            and its B-rep volume at ``normal`` STL quality.
        gprop_eps: relative accuracy asked of OCCT's adaptive volume integration.
    """

    length_mm: float = 1e-6
    volume_rel: float = 5e-3
    mesh_volume_rel: float = 5e-3
    gprop_eps: float = 1e-9


DEFAULT_TOLERANCES = Tolerances()

#: STL tessellation per quality: (linear deflection in mm, angular deflection in rad).
STL_QUALITY: dict[str, tuple[float, float]] = {
    "draft": (0.2, 0.5),
    "normal": (0.05, 0.2),
    "fine": (0.01, 0.1),
}
