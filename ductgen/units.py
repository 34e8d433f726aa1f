"""Quantities with units at the edge of the package: THE one quantity parser.

Spec files may write ``width = "4.5 in"`` or ``speed = "160 km/h"``; this module turns such
values into plain floats once, at load, in the package's internal units: mm for geometry
lengths, degrees for angles, SI for flow. Nothing inside the package sees a unit string.

A quantity is read by a small, bounded grammar and never evaluated as an expression::

    quantity := number [unit]          (at most MAX_QUANTITY_CHARS characters)
    number   := [+-] digits [. digits] [e [+-] d{1,3}]
    unit     := factor ((" " | "*" | "·" | "/") factor)*     (at most MAX_UNIT_FACTORS)
    factor   := name [("^" | "**") [+-] d]                   (exponent -9..9)
    name     := letters, digits, "_" (a pint unit name: mm, in, km, h, inH2O, delta_degC)

so ``"10**10**10 mm"`` or ``"__import__('os')"`` is refused in microseconds with a sentence.
pint is used only to look up single unit names and to convert. The units of
:data:`EXACT_UNITS` (defined by exact factors: SI prefixes, the 1959 international inch and
foot, the knot, the mile) are converted without it, so a spec written in them (every bundled
sample) loads without importing pint (~0.6 s of a command's start); the result is pint's,
which the tests check unit by unit.

Rule for bare numbers: a *geometry* length written without a unit is in mm. Quantities whose
bare number could be misread (speeds, flows, pressures, flow-path lengths) need a unit,
except zero, which is the same in every unit.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from functools import lru_cache
from typing import Any

from pydantic import BeforeValidator

__all__ = [
    "DIMENSIONS",
    "EXACT_UNITS",
    "FILE_UNITS",
    "MAX_QUANTITY_CHARS",
    "MAX_UNIT_FACTORS",
    "MM_PER_INCH",
    "FileUnit",
    "convert",
    "describe_dimension",
    "quantity",
    "rescale",
    "split_quantity",
    "ureg",
]

#: Longest quantity text read (characters); longer text is refused before any parsing.
MAX_QUANTITY_CHARS = 64
#: Most unit factors in one quantity (``kg/m^3`` has two).
MAX_UNIT_FACTORS = 4

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

#: Names for dimensionalities a user may write by mistake (for error messages only).
_OTHER_NAMES: dict[str, str] = {
    "[mass]": "mass",
    "[time]": "time",
    "[length] ** 3": "volume",
    "[mass] * [length] / [time] ** 2": "force",
    "[mass] * [length] ** 2 / [time] ** 2": "energy",
    "[mass] * [length] ** 2 / [time] ** 3": "power",
    "1 / [time]": "frequency",
    "[length] / [time] ** 2": "acceleration",
}

#: Unit text (as :func:`split_quantity` normalises it) → (dimension, SI value of one unit):
#: units defined by exact factors (SI; 1 in = 0.0254 m and 1 ft = 0.3048 m, international
#: yard and pound 1959; 1 mile = 1609.344 m; 1 knot = 1852 m/h; standard gravity 9.80665 m/s²
#: in the pound-force, BIPM SI Brochure 9th ed.). Everything else is read by pint.
EXACT_UNITS: dict[str, tuple[str, float]] = {
    "mm": ("length", 1e-3),
    "cm": ("length", 1e-2),
    "m": ("length", 1.0),
    "km": ("length", 1e3),
    "in": ("length", 0.0254),
    "inch": ("length", 0.0254),
    "ft": ("length", 0.3048),
    "foot": ("length", 0.3048),
    "deg": ("angle", math.pi / 180.0),
    "degree": ("angle", math.pi / 180.0),
    "rad": ("angle", 1.0),
    "m/s": ("speed", 1.0),
    "km/h": ("speed", 1e3 / 3600.0),
    "mph": ("speed", 1609.344 / 3600.0),
    "knot": ("speed", 1852.0 / 3600.0),
    "ft/s": ("speed", 0.3048),
    "m**3/s": ("volume_flow", 1.0),
    "m**3/h": ("volume_flow", 1.0 / 3600.0),
    "L/s": ("volume_flow", 1e-3),
    "l/s": ("volume_flow", 1e-3),
    "cfm": ("volume_flow", 0.3048**3 / 60.0),
    "kg/s": ("mass_flow", 1.0),
    "g/s": ("mass_flow", 1e-3),
    "Pa": ("pressure", 1.0),
    "hPa": ("pressure", 1e2),
    "kPa": ("pressure", 1e3),
    "mbar": ("pressure", 1e2),
    "bar": ("pressure", 1e5),
    "psi": ("pressure", 0.45359237 * 9.80665 / 0.0254**2),
    "kg/m**3": ("density", 1.0),
    "K": ("temperature", 1.0),
    "delta_degC": ("temperature", 1.0),
    "m**2": ("area", 1.0),
    "cm**2": ("area", 1e-4),
    "mm**2": ("area", 1e-6),
    "in**2": ("area", 0.0254**2),
}


def _plain(unit_text: str) -> str:
    """``unit_text`` without spaces, powers written ``**`` (``"m^3/s"`` → ``"m**3/s"``)."""
    return re.sub(r"\s+", "", unit_text).replace("^", "**")


def _exact(magnitude: float, unit_text: str, to_unit: str) -> float | None:
    """``magnitude`` in ``unit_text`` expressed in ``to_unit`` when both are
    :data:`EXACT_UNITS` of one dimension (else None: pint decides)."""
    a, b = EXACT_UNITS.get(_plain(unit_text)), EXACT_UNITS.get(_plain(to_unit))
    if a is None or b is None or a[0] != b[0]:
        return None
    return magnitude * a[1] / b[1]


_NUMBER = r"[-+]?(?:\d{1,30}(?:\.\d{0,30})?|\.\d{1,30})(?:[eE][-+]?\d{1,3})?"
_QUANTITY_RE = re.compile(rf"^\s*({_NUMBER})\s*(.*?)\s*$")
_FACTOR_RE = re.compile(
    r"\s*([*/·])?\s*([A-Za-z_µμ°][A-Za-z0-9_]{0,20})(?:\s*(?:\^|\*\*)\s*([-+]?\d))?"
)


@lru_cache(maxsize=1)
def ureg() -> Any:
    """The package's one pint registry (built on first use; importing pint costs ~0.3 s)."""
    import pint

    reg: pint.UnitRegistry[Any] = pint.UnitRegistry()
    reg.define("cfm = foot ** 3 / minute")
    return reg


def _a(word: str) -> str:
    """``word`` with its indefinite article (``"an area"``, ``"a length"``)."""
    return ("an " if word[:1].lower() in "aeiou" else "a ") + word


def _excerpt(text: str, limit: int = 40) -> str:
    return text if len(text) <= limit else text[: limit - 1] + "…"


def split_quantity(text: str) -> tuple[float, str]:
    """Split ``"4.5 in"`` into ``(4.5, "in")`` by the bounded grammar (``""`` for a bare
    number); the unit is normalised (``"m^3/s"`` → ``"m**3/s"``) and known to pint.

    Raises:
        ValueError: a sentence saying what could not be read and what is accepted.
    """
    t = text.strip()
    if len(t) > MAX_QUANTITY_CHARS:
        raise ValueError(
            f"{_excerpt(t)!r} is {len(t)} characters long; a quantity is a number and a "
            f"unit of at most {MAX_QUANTITY_CHARS} characters"
        )
    m = _QUANTITY_RE.match(t)
    if m is None:
        raise ValueError(f"cannot read {t!r}: a quantity is a number followed by a unit")
    magnitude = float(m.group(1))
    if not math.isfinite(magnitude):
        raise ValueError(f"{t!r}: the number is too large to be finite")
    rest = m.group(2)
    if rest[:1] in tuple("*^/+-(%"):
        raise ValueError(
            f"cannot read {_excerpt(t)!r}: a quantity is one number followed by a unit; "
            "arithmetic is not evaluated"
        )
    plain = _plain(rest)
    if plain in EXACT_UNITS:  # what the grammar gives it too: no need to ask pint
        return magnitude, plain
    unit = _parse_unit_text(rest, t) if rest else ""
    return magnitude, unit


def _parse_unit_text(text: str, whole: str) -> str:
    """Normalised unit text of ``text`` (checked factor by factor against pint)."""
    reg = ureg()
    pos = 0
    parts: list[str] = []
    while pos < len(text):
        m = _FACTOR_RE.match(text, pos)
        if m is None or m.end() == pos or (parts and m.group(1) is None and text[pos] != " "):
            raise ValueError(
                f"cannot read the unit in {whole!r}: write unit names joined by ' ', '*' or "
                "'/', with integer powers such as m^3"
            )
        op, name, power = m.group(1), m.group(2), m.group(3)
        if op and not parts:
            raise ValueError(f"cannot read the unit in {whole!r}: it starts with {op!r}")
        try:
            reg.Unit(name)
        except Exception:  # pint raises several unrelated classes for unknown names
            raise ValueError(f"unknown unit {name!r} in {whole!r}") from None
        parts.append(
            ("/" if op == "/" else "*" if parts else "") + name + (f"**{power}" if power else "")
        )
        pos = m.end()
    if len(parts) > MAX_UNIT_FACTORS:
        raise ValueError(f"{whole!r} has more than {MAX_UNIT_FACTORS} unit factors")
    return "".join(parts)


@lru_cache(maxsize=256)
def _unit(unit_text: str) -> Any:
    """pint Unit of a normalised unit text (names and small integer powers only); cached,
    pint units are immutable."""
    reg = ureg()
    out = reg.Unit("")
    for m in re.finditer(r"([*/]?)([^*/]+)(?:\*\*([-+]?\d))?", unit_text):
        u = reg.Unit(m.group(2)) ** int(m.group(3) or 1)
        out = out / u if m.group(1) == "/" else out * u
    return out


def _quantity_of(magnitude: float, unit_text: str) -> Any:
    reg = ureg()
    return reg.Quantity(magnitude, _unit(unit_text) if unit_text else reg.Unit(""))


def describe_dimension(unit_text: str) -> str:
    """Plain name of what ``unit_text`` measures (``"kg"`` → ``"mass"``), for messages."""
    reg = ureg()
    dims = _unit(unit_text).dimensionality if unit_text else reg.Unit("").dimensionality
    if not dims:
        return "plain number"
    for name, (dimstr, _) in DIMENSIONS.items():
        if dimstr and reg.get_dimensionality(dimstr) == dims:
            return name.replace("_", " ")
    for dimstr, name in _OTHER_NAMES.items():
        if reg.get_dimensionality(dimstr) == dims:
            return name
    return f"quantity of dimension {dims}"


@lru_cache(maxsize=4096)
def rescale(magnitude: float, unit_text: str, to_unit: str) -> float:
    """``magnitude`` in ``unit_text`` expressed in ``to_unit`` (both normalised texts).

    Cached: the design page reads the same values again on every edit, and pint takes about
    a millisecond per conversion.

    Raises:
        ValueError: the units measure different things.
    """
    exact = _exact(magnitude, unit_text, to_unit)
    if exact is not None:
        return exact
    q = _quantity_of(magnitude, unit_text)
    target = _unit(to_unit)
    if not q.check(target.dimensionality):
        raise ValueError(
            f"'{unit_text}' is a unit of {describe_dimension(unit_text)} and "
            f"'{to_unit}' of {describe_dimension(to_unit)}"
        )
    return float(q.to(target).magnitude)


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
    what = dimension.replace("_", " ")
    if isinstance(value, bool):
        raise ValueError(f"expected a {what} such as {example}, got a boolean")
    if isinstance(value, int | float):
        return _from_number(value, what, example, unit, default_unit)
    if not isinstance(value, str):
        raise ValueError(f"expected a {what} such as {example}, got {type(value).__name__}")
    text = value.strip()
    try:
        magnitude, unit_text = split_quantity(text)
    except ValueError as err:
        raise ValueError(f"{err}; write a {what} such as {example}") from None
    source = unit_text or default_unit or ""
    exact = _exact(magnitude, source, unit)  # a unit of EXACT_UNITS, of this dimension
    if exact is not None and EXACT_UNITS[_plain(source)][0] == dimension:
        return _finite(exact, what, repr(text))
    reg = ureg()
    if not unit_text or (not _unit(unit_text).dimensionality and dimension != "angle"):
        if default_unit is None:
            if magnitude == 0 and not unit_text:
                return 0.0
            raise ValueError(f"{text!r} has no unit: write the unit, e.g. {example}")
        unit_text = unit_text or default_unit
        if not _unit(unit_text).dimensionality and dimension != "angle":
            raise ValueError(f"{text!r} has no unit: write the unit, e.g. {example}")
    u = _unit(unit_text)
    if dimension == "temperature" and u in (reg.degC, reg.degF):
        raise ValueError(f"{text!r}: give a temperature difference in K or delta_degC")
    target_dims = reg.get_dimensionality(dim) if dim else _unit("").dimensionality
    if u.dimensionality != target_dims:
        raise ValueError(
            f"{text!r} is {_a(describe_dimension(unit_text))}, not {_a(what)}: write e.g. {example}"
        )
    try:
        out = rescale(magnitude, unit_text, unit)
    except Exception as err:  # offset units in products and the like
        raise ValueError(f"cannot convert {text!r} to {unit}: {err}") from None
    return _finite(out, what, repr(text))


def _from_number(
    value: float, what: str, example: str, unit: str, default_unit: str | None
) -> float:
    """A bare number (int or float, not bool) as a float in ``unit``: taken in
    ``default_unit``; with none, only zero is accepted (ValueError otherwise)."""
    if isinstance(value, int) and abs(value) > 10**30:
        raise ValueError(
            f"expected a {what} such as {example}, got a {len(str(value))}-digit number"
        )
    if not math.isfinite(value):
        raise ValueError(f"expected a finite {what}, got {value}")
    if default_unit is None:
        if value == 0:
            return 0.0
        raise ValueError(f"a bare number is ambiguous for a {what}: write the unit, e.g. {example}")
    return _finite(rescale(float(value), default_unit, unit), what, repr(value))


def _finite(value: float, what: str, shown: str) -> float:
    out = float(f"{value:.12g}")  # drop float noise of unit factors
    if not math.isfinite(out):
        raise ValueError(f"expected a finite {what}, got {shown}")
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
