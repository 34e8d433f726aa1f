"""``--vary`` options: which spec keys a sweep changes, and to which values.

Two forms, each on one dotted spec key (``throat.width``, ``ramp.angle_deg``,
``flow.losses[0].length``):

* ``KEY=A:B:STEP`` — a range from A in steps of STEP; B is included when it falls on a
  step. Units are allowed and are read by the same rules as the spec file
  (``throat.width=100mm:140mm:10mm``, ``flow.speed=100km/h:160km/h:20km/h``); a part
  without a unit takes the unit of the others.
* ``KEY=v1,v2,v3`` — a list of values, each written as in a spec file (``5,6.5,7``,
  ``2in,3in``, ``flush,raised``).

Several ``--vary`` options make the full grid (every combination); ``zip_values=True`` pairs
them instead (all lists must have the same length). The values returned are *raw* spec
values (numbers or unit strings); the spec model resolves them, so a wrong unit for a key
is reported by the same validation as in a spec file.
"""

from __future__ import annotations

import itertools
import math
import re
from dataclasses import dataclass
from typing import Any

from ductgen.errors import SpecError

__all__ = [
    "MAX_VARIANTS",
    "Vary",
    "combinations",
    "get_dotted",
    "parse_vary",
    "set_dotted",
    "split_key",
]

#: Upper limit on the number of variants one sweep may define (a guard against typos
#: such as a step of 0.001 mm; a real study of this size belongs on a cluster anyway).
MAX_VARIANTS = 100_000

_KEY_RE = re.compile(r"^[A-Za-z_][A-Za-z0-9_]*(\[\d+\])*(\.[A-Za-z_][A-Za-z0-9_]*(\[\d+\])*)*$")


@dataclass(frozen=True)
class Vary:
    """One varied key and its raw values.

    Attributes:
        key: dotted spec key, e.g. ``"ramp.angle_deg"``.
        values: raw spec values in sweep order (float, int, bool or str such as ``"110 mm"``).
        text: the option as the user wrote it (for messages).
    """

    key: str
    values: tuple[Any, ...]
    text: str


def split_key(key: str) -> list[str | int]:
    """Split ``"flow.losses[0].length"`` into ``["flow", "losses", 0, "length"]``.

    Raises:
        SpecError: on ``--vary`` when the key is not a dotted name.
    """
    if not _KEY_RE.match(key):
        raise SpecError(
            "--vary",
            key,
            "a dotted spec key such as ramp.angle_deg or flow.losses[0].length",
            "cannot read the key",
        )
    parts: list[str | int] = []
    for name in key.split("."):
        head, *idx = name.split("[")
        parts.append(head)
        parts.extend(int(i.rstrip("]")) for i in idx)
    return parts


def set_dotted(data: dict[str, Any], key: str, value: Any) -> dict[str, Any]:
    """Return a deep copy of raw spec ``data`` with ``key`` set to ``value``.

    Missing sections are created (the spec validation then says what else they need).

    Raises:
        SpecError: on the key when a part of the path is not a table or list index.
    """
    import copy

    out = copy.deepcopy(data)
    parts = split_key(key)
    node: Any = out
    for i, part in enumerate(parts[:-1]):
        nxt = parts[i + 1]
        if isinstance(part, int):
            if not isinstance(node, list) or part >= len(node):
                raise SpecError(
                    key, value, "an index of an existing list entry", "no such list entry"
                )
            if not isinstance(node[part], dict | list):
                raise SpecError(key, value, "a key inside a table", f"{part} is not a table")
            node = node[part]
            continue
        if not isinstance(node, dict):
            raise SpecError(
                key, value, "a key inside a table", f"'{part}' is inside a value, not a table"
            )
        if part not in node:
            node[part] = [] if isinstance(nxt, int) else {}
        node = node[part]
    last = parts[-1]
    if isinstance(last, int):
        if not isinstance(node, list) or last >= len(node):
            raise SpecError(key, value, "an index of an existing list entry", "no such list entry")
        node[last] = value
    elif isinstance(node, dict):
        node[last] = value
    else:
        raise SpecError(key, value, "a key inside a table", "the parent of the key is not a table")
    return out


def get_dotted(obj: Any, key: str) -> Any:
    """Read ``key`` from a validated spec (attributes and list indices); None if absent."""
    node = obj
    for part in split_key(key):
        if node is None:
            return None
        if isinstance(part, int):
            node = node[part] if isinstance(node, list | tuple) and part < len(node) else None
        elif isinstance(node, dict):
            node = node.get(part)
        else:
            node = getattr(node, part, None)
    return node


def _scalar(text: str) -> Any:
    """A list item as a spec file would hold it: number, boolean or string."""
    t = text.strip()
    low = t.lower()
    if low in ("true", "false"):
        return low == "true"
    try:
        return int(t)
    except ValueError:
        pass
    try:
        f = float(t)
    except ValueError:
        return t
    return f if math.isfinite(f) else t


def _quantity(text: str, option: str) -> tuple[float, str]:
    """(magnitude, normalised unit) of one range part; unit '' for a bare number. Read by
    :func:`ductgen.units.split_quantity`, the package's one quantity parser."""
    from ductgen.units import split_quantity

    t = text.strip()
    if not t:
        raise SpecError("--vary", option, "KEY=A:B:STEP with three values", "a range part is empty")
    try:
        return split_quantity(t)
    except ValueError as err:
        raise SpecError(
            "--vary", option, "numbers with optional units, e.g. 100mm:140mm:10mm", str(err)
        ) from None


def _range(option: str, a_text: str, b_text: str, step_text: str) -> tuple[Any, ...]:
    parts = [_quantity(p, option) for p in (a_text, b_text, step_text)]
    units = [u for _, u in parts if u]
    if not units:
        a, b, step = (m for m, _ in parts)
        unit = ""
    else:
        from ductgen.units import rescale

        unit = units[0]
        mags = []
        for m, u in parts:
            try:
                mags.append(rescale(m, u or unit, unit))
            except ValueError as err:
                raise SpecError(
                    "--vary",
                    option,
                    f"all parts in units of the same kind as '{unit}'",
                    f"{err}: they measure different things",
                ) from None
        a, b, step = mags
    if not all(math.isfinite(v) for v in (a, b, step)):
        raise SpecError("--vary", option, "finite numbers", "a range part is not finite")
    if step == 0 or (b - a) * step < 0:
        raise SpecError(
            "--vary",
            option,
            "A:B:STEP with STEP ≠ 0 pointing from A towards B",
            "the range is empty",
        )
    n = math.floor((b - a) / step * (1 + 1e-12) + 1e-9) + 1
    if n > MAX_VARIANTS:
        raise SpecError(
            "--vary", option, f"at most {MAX_VARIANTS} values", f"the range has {n} values"
        )
    values: list[str | float] = []
    for i in range(n):
        v: float = float(f"{a + i * step:.12g}")  # drop float noise of repeated steps
        if v.is_integer() and all(float(m).is_integer() for m, _ in parts):
            v = int(v)
        if unit:
            text = str(int(v)) if float(v).is_integer() else repr(v)
            values.append(f"{text} {unit}")
        else:
            values.append(v)
    return tuple(values)


def parse_vary(option: str) -> Vary:
    """Parse one ``--vary`` option.

    Raises:
        SpecError: on ``--vary`` (exit 2) when the form, range or units are unreadable or
            the range is empty.
    """
    key, sep, rhs = option.partition("=")
    key = key.strip()
    if not sep or not key or not rhs.strip():
        raise SpecError("--vary", option, "KEY=A:B:STEP or KEY=v1,v2,...", "expected KEY=values")
    split_key(key)
    rhs = rhs.strip()
    if ":" in rhs and "," not in rhs:
        pieces = rhs.split(":")
        if len(pieces) != 3:
            raise SpecError(
                "--vary", option, "KEY=A:B:STEP (three parts)", f"got {len(pieces)} parts"
            )
        values = _range(option, *pieces)
    else:
        items = [p for p in rhs.split(",")]
        if any(not p.strip() for p in items):
            raise SpecError(
                "--vary", option, "KEY=v1,v2,... with no empty item", "an item is empty"
            )
        values = tuple(_scalar(p) for p in items)
    return Vary(key=key, values=values, text=option)


def combinations(varies: list[Vary], zip_values: bool = False) -> list[tuple[Any, ...]]:
    """Value tuples, one per variant, in the order of ``varies``: the full grid (first key
    slowest), or the element-wise pairs with ``zip_values``.

    Raises:
        SpecError: on ``--vary`` for duplicated keys, ``--zip`` lists of unequal length, or
            more than :data:`MAX_VARIANTS` variants.
    """
    if not varies:
        raise SpecError("--vary", None, "at least one --vary KEY=...", "a sweep needs a varied key")
    keys = [v.key for v in varies]
    dup = sorted({k for k in keys if keys.count(k) > 1})
    if dup:
        raise SpecError("--vary", ",".join(dup), "each key once", "a key is varied twice")
    if zip_values:
        lengths = {len(v.values) for v in varies}
        if len(lengths) > 1:
            raise SpecError(
                "--zip",
                " / ".join(f"{v.key}: {len(v.values)}" for v in varies),
                "lists of equal length",
                "--zip pairs the values one by one",
            )
        combos = list(zip(*(v.values for v in varies), strict=True))
    else:
        total = math.prod(len(v.values) for v in varies)
        if total > MAX_VARIANTS:
            raise SpecError(
                "--vary", total, f"at most {MAX_VARIANTS} variants", "the grid is too large"
            )
        combos = list(itertools.product(*(v.values for v in varies)))
    return combos
