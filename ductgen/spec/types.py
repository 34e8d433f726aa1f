"""Field types shared by the spec sections: floats in internal units, read with pint.

``Mm`` is a geometry length in mm (bare numbers are mm); ``Deg`` an angle in degrees.
Flow quantities (SI) refuse bare non-zero numbers, because ``speed = 50`` could be km/h,
mph or m/s (see :mod:`ductgen.units`).
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Annotated, TypeVar, cast

from pydantic import BaseModel, BeforeValidator, ConfigDict

from ductgen.units import convert

__all__ = [
    "MAX_LENGTH_MM",
    "Deg",
    "M",
    "MPerS",
    "Mm",
    "Section",
    "every_default",
    "si",
]


def _q(dimension: str, unit: str, default_unit: str | None) -> BeforeValidator:
    def _validate(value: object) -> object:
        if value is None:  # optional fields; the model says whether None is allowed
            return None
        return convert(value, dimension, unit, default_unit)

    _validate.unit = unit  # type: ignore[attr-defined]  # error messages state limits in it
    return BeforeValidator(_validate, json_schema_input_type=float | str)


def si(dimension: str, unit: str, default_unit: str | None = None) -> BeforeValidator:
    """A validator turning a spec value into a float in ``unit`` (bare numbers need
    ``default_unit``; without it only zero may be written bare)."""
    return _q(dimension, unit, default_unit)


#: Longest length of any one part of an inlet (mm): a ramp, an entry arc, a duct. 20 m is
#: beyond any vehicle panel (a throat is at most 3 m wide); it keeps a mistyped unit
#: ("1 km") from reaching the CAD kernel, whose fixed tolerances (1e-7 mm) and checks
#: (volumes to 0.5 %) were never meant for such sizes.
MAX_LENGTH_MM = 20_000

#: Geometry length in mm; a bare number is mm.
Mm = Annotated[float, _q("length", "mm", "mm")]
#: Angle in degrees; a bare number is degrees.
Deg = Annotated[float, _q("angle", "deg", "deg")]
#: Flow-path length in m; needs a unit (bare zero allowed).
M = Annotated[float, _q("length", "m", None)]
#: Speed in m/s; needs a unit.
MPerS = Annotated[float, _q("speed", "m/s", None)]


class Section(BaseModel):
    """Base of every spec section: unknown keys are errors, values are frozen.

    Defaults are written in internal units (mm, deg, SI) and are not re-validated.
    """

    model_config = ConfigDict(extra="forbid", frozen=True)


_S = TypeVar("_S", bound=Section)


def every_default(cls: type[_S]) -> Callable[[], _S]:
    """``cls`` as a no-argument factory (``Field(default_factory=every_default(RampSpec))``):
    every key of the section has a default, given inside ``Annotated`` where the type
    checker's pydantic plugin does not look."""
    return cast("Callable[[], _S]", cls)
