"""What the page's form needs beyond the published JSON Schema: the unit each quantity key
is read in, and whether a bare number is allowed there.

The form itself is generated in the browser from ``ductgen/schema/spec.schema.json`` (the
same file users validate against), so it cannot drift from the spec; this module only adds
the unit hints the schema does not carry. Keys are dotted as in error messages, with ``[]``
for any list index (``flow.losses[].diameter``).
"""

from __future__ import annotations

import json
import typing
from typing import Any

from pydantic import BaseModel

from ductgen.spec.model import Spec

__all__ = ["schema_json", "unit_hints"]


def _converter(info: Any) -> Any:
    """The unit converter of a quantity field (``spec/types.py``), or None."""
    for meta in getattr(info, "metadata", None) or ():
        func = getattr(meta, "func", None)
        if getattr(func, "unit", None):
            return func
    return None


def _models(annotation: Any) -> list[type[BaseModel]]:
    """Every pydantic model inside a (possibly nested, optional, list or union) annotation."""
    if isinstance(annotation, type) and issubclass(annotation, BaseModel):
        return [annotation]
    out: list[type[BaseModel]] = []
    for arg in typing.get_args(annotation):
        out += _models(arg)
    return out


def _walk(model: type[BaseModel], prefix: str, out: dict[str, dict[str, Any]]) -> None:
    for name, info in model.model_fields.items():
        key = f"{prefix}{name}"
        func = _converter(info)
        if func is None:
            for arg in typing.get_args(info.annotation):  # Optional[Annotated[float, conv]]
                func = func or _converter(_Meta(typing.get_args(arg)[1:]))
        if func is not None:
            try:
                func(1.0)
                bare = True
            except ValueError:
                bare = False
            out[key] = {"unit": str(func.unit).replace("**", "^"), "bare_number": bare}
        sub = _models(info.annotation)
        is_list = typing.get_origin(info.annotation) is list or any(
            typing.get_origin(a) is list for a in typing.get_args(info.annotation)
        )
        for m in sub:
            _walk(m, f"{key}[]." if is_list else f"{key}.", out)


class _Meta:
    """Adapter so :func:`_converter` reads the metadata of an ``Annotated`` argument."""

    def __init__(self, metadata: tuple[Any, ...]) -> None:
        self.metadata = metadata


def unit_hints() -> dict[str, dict[str, Any]]:
    """``{dotted key: {"unit": "mm", "bare_number": True}}`` for every quantity key.

    ``bare_number`` is False where a bare number is refused (flow quantities such as
    ``flow.speed``, which need a unit: ``"140 km/h"``).
    """
    out: dict[str, dict[str, Any]] = {}
    _walk(Spec, "", out)
    return out


def schema_json() -> dict[str, Any]:
    """The published JSON Schema of the spec, as bundled with the package."""
    from importlib.resources import files

    text = (files("ductgen") / "schema" / "spec.schema.json").read_text(encoding="utf-8")
    return json.loads(text)
