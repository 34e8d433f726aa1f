"""Lip section: an elliptical nose spanning the throat at the lip station.

The nose is half an ellipse whose tip lies at x = L, with semi-axes a = nose_ratio·t/2
along the flow and b = t/2 across the lip thickness t. ``flush``: the lip top is the skin
(z = 0) and its underside the throat roof (z = −t), so the floor drop is H = D + t.
``raised``: the lip underside is level with the skin (z = 0) and the lip stands proud by t,
fairing back into the skin over ``fairing_length``; H = D. z is up, mm.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["Lip"]


@dataclass(frozen=True)
class Lip:
    """Lip of one inlet (mm).

    Attributes:
        style: ``"flush"`` or ``"raised"``.
        thickness_mm: lip thickness t.
        nose_ratio: major/minor semi-axis ratio of the elliptical nose.
        station_mm: x of the nose tip (the lip station L).
        fairing_length_mm: raised style only, fairing back into the skin.
    """

    style: str
    thickness_mm: float
    nose_ratio: float
    station_mm: float
    fairing_length_mm: float = 0.0

    @property
    def semi_major_mm(self) -> float:
        """Nose semi-axis along the flow, a (mm)."""
        return self.nose_ratio * self.thickness_mm / 2.0

    @property
    def semi_minor_mm(self) -> float:
        """Nose semi-axis across the lip, b = t/2 (mm)."""
        return self.thickness_mm / 2.0

    @property
    def centre_z_mm(self) -> float:
        """z of the nose ellipse centre (mm)."""
        return -self.semi_minor_mm if self.style == "flush" else self.semi_minor_mm

    @property
    def roof_z_mm(self) -> float:
        """z of the lip underside = throat roof (mm)."""
        return -self.thickness_mm if self.style == "flush" else 0.0

    @property
    def nose_end_mm(self) -> float:
        """x where the nose reaches full thickness and the throat becomes straight (mm)."""
        return self.station_mm + self.semi_major_mm

    def nose(self, n: int = 65) -> np.ndarray:
        """Nose outline, shape (n, 2) of (x, z) in mm: from the top of the lip at the nose end,
        around the tip, to the underside at the nose end."""
        a, b = self.semi_major_mm, self.semi_minor_mm
        phi = np.linspace(0.5 * np.pi, 1.5 * np.pi, n)
        return np.column_stack(
            [self.nose_end_mm + a * np.cos(phi), self.centre_z_mm + b * np.sin(phi)]
        )

    @property
    def nose_area_mm2(self) -> float:
        """Area of the half-ellipse nose in the centreline section (mm²)."""
        return 0.5 * np.pi * self.semi_major_mm * self.semi_minor_mm
