"""Turbulent flat-plate boundary layer ahead of the ramp.

The body's surface ahead of the ramp start is taken as a flat plate wetted over
``run_length`` x, turbulent from its leading edge, with the 1/7-power velocity profile
u/V = (y/δ)^(1/7) (Prandtl/Schlichting, *Boundary-Layer Theory*):

* δ/x = 0.37 Re_x^(−1/5)
* displacement thickness δ* = ∫(1 − u/V) dy = δ/8
* momentum thickness θ = ∫(u/V)(1 − u/V) dy = 7δ/72

White (*Fluid Mechanics*) gives δ/x ≈ 0.16 Re_x^(−1/7) for the same layer; the two agree
within a few per cent, but a warning threshold can fall between them, so both are reported
(``thickness_white_m``). The recovery model uses the 0.37 Re^(−1/5) value.
"""

from __future__ import annotations

from dataclasses import dataclass

__all__ = ["BoundaryLayer", "turbulent_flat_plate"]


@dataclass(frozen=True)
class BoundaryLayer:
    """A 1/7-power turbulent boundary layer (SI).

    Attributes:
        run_length_m: wetted run x (m).
        reynolds: Re_x = V·x/ν.
        thickness_m: δ (m).
    """

    run_length_m: float
    reynolds: float
    thickness_m: float

    @property
    def displacement_thickness_m(self) -> float:
        """δ* = δ/8 (m)."""
        return self.thickness_m / 8.0

    @property
    def momentum_thickness_m(self) -> float:
        """θ = 7δ/72 (m)."""
        return 7.0 * self.thickness_m / 72.0

    @property
    def thickness_white_m(self) -> float:
        """δ by White's 0.16 Re_x^(−1/7) (m)."""
        return 0.16 * self.run_length_m * float(self.reynolds ** (-1.0 / 7.0))


def turbulent_flat_plate(
    speed_m_s: float, run_length_m: float, kinematic_viscosity_m2_s: float
) -> BoundaryLayer:
    """Boundary layer after ``run_length_m`` of turbulent flat plate at ``speed_m_s``.

    Args:
        speed_m_s: free-stream speed V (m/s), > 0.
        run_length_m: wetted run x (m), > 0.
        kinematic_viscosity_m2_s: ν (m²/s).
    """
    re = speed_m_s * run_length_m / kinematic_viscosity_m2_s
    delta = 0.37 * run_length_m * re ** (-0.2)
    return BoundaryLayer(run_length_m=run_length_m, reynolds=re, thickness_m=delta)
