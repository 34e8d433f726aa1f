"""Quantities with units at the edge of the package.

Spec files may write ``width = "4.5 in"`` or ``speed = "160 km/h"``; this module turns such
values into plain floats once, at load, in the package's internal units: mm for geometry
lengths, degrees for angles, SI for flow. Nothing inside the package sees a unit string.

Rule for bare numbers: a *geometry* length written without a unit is in mm. Quantities whose
bare number could be misread (speeds, flows, pressures, flow-path lengths) need a unit,
except zero, which is the same in every unit.

Pydantic field types are made with :func:`quantity`, for example::

    width: Annotated[float, quantity("length", "mm", default_unit="mm")]
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import lru_cache
from typing import Any

from pydantic import BeforeValidator

__all__ = [
    "DIMENSIONS",
    "FILE_UNITS",
    "MM_PER_INCH",
    "FileUnit",
    "convert",
    "quantity",
    "ureg",
]

#: Dimension name → (pint dimensionality string, an example written for error messages).
DIMENSIONS: dict[str, tuple[str, str]] = {
    "length": ("[length]", "'4.5 in' or '120 mm'"),
    "speed": ("[length] / [time]", "'160 km/h' or '45 m/s'"),
    "volume_flow": ("[length] ** 3 / [time]", "'0.06 m^3/s' or '120 cfm'"),
    "mass_flow": ("[mass] / [time]", "'0.1 kg/s'"),
    "pressure": ("[mass] / [length] / [time] ** 2", "'250 Pa' or '1 inH2O'"),
    "density": ("[mass] / [length] ** 3", "'1.2 kg/m^3'"),
    "temperature": ("[temperature]", "'10 K' (a difference)"),
    "area": ("[length] ** 2", "'150 cm^2'"),
    "angle": ("", "'7 deg'"),
}


@lru_cache(maxsize=1)
def ureg() -> Any:
    """The package's one pint registry (built on first use; importing pint costs ~0.3 s)."""
    import pint

    reg = pint.UnitRegistry()
    reg.define("cfm = foot ** 3 / minute")
    return reg


def convert(value: Any, dimension: str, unit: str, default_unit: str | None = None) -> float:
    """Convert a spec value to a float in ``unit``.

    Args:
        value: a number, or a string such as ``"3 in"``.
        dimension: a key of :data:`DIMENSIONS`.
        unit: the unit of the returned float (pint spelling, e.g. ``"mm"``, ``"m/s"``).
        default_unit: unit of a bare number; ``None`` means a bare number other than zero
            is refused because it could be misread.

    Raises:
        ValueError: with a message naming the expected kind of quantity (pydantic turns it
            into a validation error located at the spec key).
    """
    dim, example = DIMENSIONS[dimension]
    if isinstance(value, bool):
        raise ValueError(f"expected a {dimension} such as {example}, got a boolean")
    if isinstance(value, int | float):
        if not math.isfinite(value):
            raise ValueError(f"expected a finite {dimension}, got {value}")
        if default_unit is None:
            if value == 0:
                return 0.0
            raise ValueError(
                f"a bare number is ambiguous for a {dimension}: write the unit, e.g. {example}"
            )
        return float(f"{ureg().Quantity(value, default_unit).to(unit).magnitude:.12g}")
    if not isinstance(value, str):
        raise ValueError(f"expected a {dimension} such as {example}, got {type(value).__name__}")
    text = value.strip()
    reg = ureg()
    try:
        q = reg.Quantity(text)
    except Exception as err:  # pint raises several unrelated classes for bad strings
        raise ValueError(
            f"cannot read {text!r} as a {dimension}: {err}; write e.g. {example}"
        ) from err
    if not isinstance(q, reg.Quantity) or (q.dimensionless and dimension != "angle"):
        if default_unit is None:
            raise ValueError(f"{text!r} has no unit: write the unit, e.g. {example}")
        q = reg.Quantity(float(q), default_unit)
    if dimension == "angle" and q.dimensionless and not str(q.units):
        q = reg.Quantity(float(q.magnitude), "deg")
    if dimension == "temperature" and q.units in (reg.degC, reg.degF):
        raise ValueError(f"{text!r}: give a temperature difference in K or delta_degC")
    if not q.check(dim) and not (dimension == "angle" and q.dimensionless):
        raise ValueError(
            f"{text!r} is a {q.dimensionality}, not a {dimension}: write e.g. {example}"
        )
    out = float(f"{q.to(unit).magnitude:.12g}")  # drop float noise of unit factors
    if not math.isfinite(out):
        raise ValueError(f"expected a finite {dimension}, got {text!r}")
    return out


def quantity(dimension: str, unit: str, default_unit: str | None = None) -> BeforeValidator:
    """A pydantic ``BeforeValidator`` converting a spec value to a float in ``unit``."""

    def _validate(value: Any) -> Any:
        return convert(value, dimension, unit, default_unit)

    return BeforeValidator(_validate)


@dataclass(frozen=True)
class FileUnit:
    """How one drawing/file unit is written: millimetres per unit, the DXF ``$INSUNITS``
    code (DXF reference: 1 = inches, 4 = millimetres) and the STEP writer's unit name."""

    mm_per_unit: float
    insunits: int
    step: str


#: The one table of file units (1 in = 25.4 mm exactly, by the 1959 international inch).
FILE_UNITS: dict[str, FileUnit] = {
    "mm": FileUnit(1.0, 4, "MM"),
    "in": FileUnit(25.4, 1, "INCH"),
}
#: Millimetres per inch.
MM_PER_INCH = FILE_UNITS["in"].mm_per_unit
