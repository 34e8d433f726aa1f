"""What the flow model needs from the inlet's shape, as plain numbers (mm, mm², deg).

The flow layer does not import the geometry: the caller (``ductgen.design.duct_shape``)
copies these numbers out of the built inlet. Keeping the flow model a function of a few
named numbers also lets ``size`` and tests state a shape directly.
"""

from __future__ import annotations

from dataclasses import dataclass

__all__ = ["DuctShape"]


@dataclass(frozen=True)
class DuctShape:
    """The inlet as the flow model sees it.

    Attributes:
        throat_width_mm: throat width W at the lip station (mm).
        throat_depth_mm: throat depth D, floor to lip underside (mm).
        throat_area_mm2: throat area (mm²).
        ramp_angle_deg: ramp angle of the straight floor (deg).
        ramp_length_mm: ramp length L (mm).
        max_wall_divergence_deg: largest wall angle to the centreline over the ramp (deg).
        standard_walls: True when the wall curve is the bundled standard table.
        transition_length_mm: length of the throat-to-outlet transition (mm); None = no
            internal duct.
        transition_inlet_area_mm2: flow area where the transition starts (mm²).
        transition_outlet_area_mm2: flow area of the outlet face (mm²).
        transition_cone_half_angle_deg: half-angle of the conical diffuser of the same area
            ratio and length (deg; Sovran & Klomp via Dixon).
        steepest_wall_angle_deg: the transition wall's steepest local angle to the duct
            axis (deg; the floor of a roof-aligned outlet).
        steepest_wall_included_deg: that wall's divergence from the facing wall, the 2θ of
            a two-dimensional diffuser (deg).
        steepest_wall_across_mm: the throat dimension across that plane, W1 (mm).
        steepest_wall_name: ``"floor"``, ``"roof"`` or ``"side"``.
        transition_length_under_stall_mm: the transition length (mm) that brings the wall
            under the two-dimensional diffuser's stall line, outlet unchanged; None when it
            is not found within 50 times the present length.
    """

    throat_width_mm: float
    throat_depth_mm: float
    throat_area_mm2: float
    ramp_angle_deg: float
    ramp_length_mm: float
    max_wall_divergence_deg: float
    standard_walls: bool
    transition_length_mm: float | None = None
    transition_inlet_area_mm2: float | None = None
    transition_outlet_area_mm2: float | None = None
    transition_cone_half_angle_deg: float | None = None
    steepest_wall_angle_deg: float | None = None
    steepest_wall_included_deg: float | None = None
    steepest_wall_across_mm: float | None = None
    steepest_wall_name: str | None = None
    transition_length_under_stall_mm: float | None = None

    @property
    def aspect_ratio(self) -> float:
        """Width-to-depth ratio W/D."""
        return self.throat_width_mm / self.throat_depth_mm

    @property
    def has_transition(self) -> bool:
        """True when an internal duct follows the throat."""
        return (
            self.transition_inlet_area_mm2 is not None
            and self.transition_outlet_area_mm2 is not None
            and self.transition_cone_half_angle_deg is not None
        )

    @property
    def transition_area_ratio(self) -> float | None:
        """Outlet over inlet area of the transition (None without one)."""
        if not self.has_transition:
            return None
        assert self.transition_inlet_area_mm2 and self.transition_outlet_area_mm2
        return self.transition_outlet_area_mm2 / self.transition_inlet_area_mm2
