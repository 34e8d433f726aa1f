"""How each number people read is shown: one table, report key → label, unit, scale, digits.

The CLI's build summary, the drawing sheet's KEY DIMENSIONS, the design page's number and
airflow blocks and the sweep's comparison table all take their labels, units and rounding
from :data:`SHOWN`, so a number reads the same everywhere. Keys are ``report.json``'s
(their stored unit in the name); a few are the sweep's own columns (``build_s``,
``hausdorff_mm``...).
"""

from __future__ import annotations

from dataclasses import dataclass

__all__ = ["SHOWN", "Shown", "ascii_text", "shown"]


@dataclass(frozen=True)
class Shown:
    """How one number is shown: ``label``, the ``unit`` shown, ``scale`` from the stored
    unit to it (e.g. 1e-3 for mm³ → cm³), and ``digits`` after the decimal point."""

    label: str
    unit: str
    scale: float
    digits: int

    def value(self, stored: float) -> float:
        """The number in the shown unit."""
        return stored * self.scale

    def text(self, stored: float) -> str:
        """The number as shown, with its unit (``"1268.8 cm³"``)."""
        sep = "" if self.unit in ("", "°") else " "
        return f"{self.value(stored):.{self.digits}f}{sep}{self.unit}"

    @property
    def ascii_label(self) -> str:
        """The label in ASCII (the drawing sheet's PDF core fonts): ``W·D`` → ``W x D``."""
        return ascii_text(self.label)

    def ascii_text(self, stored: float) -> str:
        """The number as the drawing sheet prints it: ASCII unit after a space
        (``"7.00 deg"``, ``"1250 mm2"``)."""
        unit = ascii_text(self.unit)
        return f"{self.value(stored):.{self.digits}f}" + (f" {unit}" if unit else "")


#: Characters the sheet's PDF core fonts are not trusted with, and what they become.
_ASCII = {"·": " x ", "°": "deg", "²": "2", "³": "3", "½": "1/2", "δ": "delta", "±": "+/-"}


def ascii_text(text: str) -> str:
    """``text`` with :data:`_ASCII`'s characters spelled in ASCII."""
    return "".join(_ASCII.get(c, c) for c in text)


_CM3 = ("cm³", 1e-3, 1)
_LPS = ("L/s", 1e3, 1)

#: Report key → how it is shown.
SHOWN: dict[str, Shown] = {
    # geometry (mm, deg, mm², mm³)
    "throat_width_mm": Shown("throat width W", "mm", 1.0, 2),
    "throat_depth_mm": Shown("throat depth D", "mm", 1.0, 2),
    # lengths the drawing sheet dimensions are shown to 0.01 mm everywhere
    "ramp_length_mm": Shown("ramp length L", "mm", 1.0, 2),
    "ramp_entry_radius_mm": Shown("entry radius", "mm", 1.0, 2),
    "floor_drop_mm": Shown("floor drop H", "mm", 1.0, 2),
    "ramp_angle_deg": Shown("ramp angle", "°", 1.0, 2),
    "throat_area_mm2": Shown("throat area W·D", "mm²", 1.0, 0),
    "max_wall_divergence_deg": Shown("max wall divergence", "°", 1.0, 1),
    "apex_width_mm": Shown("apex width", "mm", 1.0, 2),
    "ramp_cavity_volume_mm3": Shown("ramp cavity volume", *_CM3),
    "transition_area_ratio": Shown("transition area ratio", "", 1.0, 2),
    "cutter_volume_mm3": Shown("cutter volume", *_CM3),
    "insert_volume_mm3": Shown("insert volume", *_CM3),
    "plug_volume_mm3": Shown("plug volume", *_CM3),
    "wetted_area_mm2": Shown("wetted area", "cm²", 1e-2, 1),
    "steepest_wall_angle_deg": Shown("transition steepest wall", "°", 1.0, 1),
    "length_under_stall_line_mm": Shown("transition length under stall line", "mm", 1.0, 0),
    "stall_line_included_deg": Shown("stall line (2-D diffuser, recalled)", "°", 1.0, 1),
    # print
    "min_wall_mm": Shown("insert min wall", "mm", 1.0, 2),
    "mass_g": Shown("insert mass", "g", 1.0, 0),
    # flow (SI)
    "speed_m_s": Shown("speed", "km/h", 3.6, 1),
    "volume_flow_m3_s": Shown("flow", *_LPS),
    "volume_flow_low_m3_s": Shown("band low", *_LPS),
    "volume_flow_high_m3_s": Shown("band high", *_LPS),
    "required_flow_m3_s": Shown("required flow", *_LPS),
    "inlet_velocity_ratio": Shown("inlet velocity ratio", "", 1.0, 3),
    "ram_recovery": Shown("ram recovery", "", 1.0, 3),
    "recovery_uncertainty": Shown("recovery ±", "", 1.0, 3),
    "recovery_source": Shown("recovery source", "", 1.0, 0),
    "mass_flow_kg_s": Shown("mass flow", "kg/s", 1.0, 4),
    "delta_over_depth": Shown("δ / D", "", 1.0, 2),
    "delta_over_depth_max": Shown("boundary layer δ / D", "", 1.0, 2),
    "momentum_drag_n": Shown("momentum drag", "N", 1.0, 2),
    "mach": Shown("Mach number", "", 1.0, 3),
    "external_drag_n": Shown("external drag (given coefficient)", "N", 1.0, 2),
    "dynamic_pressure_pa": Shown("dynamic pressure ½ρV²", "Pa", 1.0, 0),
    "impact_pressure_pa": Shown("impact pressure (isentropic)", "Pa", 1.0, 0),
    "recovery_head_pa": Shown("head the recovery applies to", "Pa", 1.0, 0),
    "inlet_cp": Shown("surface pressure coefficient at the inlet", "", 1.0, 3),
    "yaw_factor": Shown("flow-angle factor cos²ψ", "", 1.0, 4),
    "kinetic_energy_factor_plenum": Shown("outflow α, dumped into a plenum", "", 1.0, 2),
    "kinetic_energy_factor_hose": Shown("outflow α, mixed out in the hose", "", 1.0, 2),
    "momentum_factor": Shown("outflow momentum factor β", "", 1.0, 3),
    "shape_factor": Shown("boundary layer shape factor H (Head's method)", "", 1.0, 2),
    # the sweep's own columns
    "warnings_count": Shown("warnings", "", 1.0, 0),
    "build_s": Shown("build time", "s", 1.0, 1),
    "sym_diff_volume_mm3": Shown("sym. diff. volume vs baseline", "cm³", 1e-3, 2),
    "hausdorff_mm": Shown("Hausdorff distance vs baseline", "mm", 1.0, 2),
}


def shown(key: str) -> Shown:
    """How ``key`` is shown; an unlisted key is shown as itself, unscaled, 4 digits."""
    return SHOWN.get(key, Shown(key, "", 1.0, 4))
