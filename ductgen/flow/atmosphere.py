"""Air properties: the standard atmosphere of the ``fluids`` package.

``fluids.atmosphere.ATMOSPHERE_1976`` is the US Standard Atmosphere 1976, identical to the
ISO 2533 / ICAO standard atmosphere below 32 km. It takes a *geometric* altitude and
converts it to geopotential height itself; ductgen passes the spec's ``flow.altitude`` as
geometric altitude. All values SI.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from fluids.atmosphere import ATMOSPHERE_1976

from ductgen.errors import SpecError

__all__ = ["ALTITUDE_RANGE_M", "Air", "standard_air"]

#: Altitudes (geometric, m) the 1976 model is defined for (its documented range).
ALTITUDE_RANGE_M: tuple[float, float] = (-610.0, 86000.0)


@dataclass(frozen=True)
class Air:
    """The free stream's air.

    Attributes:
        altitude_m: geometric altitude (m).
        temperature_k: static temperature (K), offset included.
        pressure_pa: static pressure (Pa).
        density_kg_m3: density (kg/m³), the model's or the one the spec gave.
        viscosity_pa_s: dynamic viscosity (Pa·s), Sutherland's law of the model.
        speed_of_sound_m_s: speed of sound (m/s).
        density_source: ``"ISA"`` or ``"spec"``.
    """

    altitude_m: float
    temperature_k: float
    pressure_pa: float
    density_kg_m3: float
    viscosity_pa_s: float
    speed_of_sound_m_s: float
    density_source: str = "ISA"

    @property
    def kinematic_viscosity_m2_s(self) -> float:
        """ν = μ/ρ (m²/s)."""
        return self.viscosity_pa_s / self.density_kg_m3

    def dynamic_pressure_pa(self, speed_m_s: float) -> float:
        """q = ½ρV² (Pa) at ``speed_m_s``."""
        return 0.5 * self.density_kg_m3 * speed_m_s**2

    def mach(self, speed_m_s: float) -> float:
        """Mach number V/a (dimensionless)."""
        return speed_m_s / self.speed_of_sound_m_s


def standard_air(
    altitude_m: float = 0.0, temperature_offset_k: float = 0.0, density_kg_m3: float | None = None
) -> Air:
    """Air of the standard atmosphere at a geometric altitude.

    Args:
        altitude_m: geometric altitude (m), within :data:`ALTITUDE_RANGE_M`.
        temperature_offset_k: temperature above standard (K); pressure stays standard, so
            density falls as the temperature rises (fluids' ``dT``).
        density_kg_m3: if given, replaces the model's density (viscosity and speed of sound
            stay the model's at that altitude and temperature).

    Raises:
        SpecError: the altitude is outside the model's range (key ``flow.altitude``).
    """
    lo, hi = ALTITUDE_RANGE_M
    if not (math.isfinite(altitude_m) and lo <= altitude_m <= hi):
        raise SpecError(
            "flow.altitude",
            altitude_m,
            f"{lo:g} m to {hi:g} m",
            "outside the US Standard Atmosphere 1976 model's range",
        )
    atm = ATMOSPHERE_1976(altitude_m, dT=temperature_offset_k)
    rho = float(atm.rho) if density_kg_m3 is None else float(density_kg_m3)
    return Air(
        altitude_m=float(altitude_m),
        temperature_k=float(atm.T),
        pressure_pa=float(atm.P),
        density_kg_m3=rho,
        viscosity_pa_s=float(atm.mu),
        speed_of_sound_m_s=float(atm.v_sonic),
        density_source="ISA" if density_kg_m3 is None else "spec",
    )
