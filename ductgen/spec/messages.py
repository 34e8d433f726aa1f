"""A pydantic validation error as the user reads it: every problem with its dotted spec key
(``flow.losses[0].diameter``: the union tags pydantic puts in the location left out), the
value, what is allowed (ranges in the key's own units) and why (the field's description)."""

from __future__ import annotations

import contextlib
import difflib
import typing
from typing import Any, Literal

from pydantic import BaseModel, ValidationError

from ductgen.errors import SpecError
from ductgen.spec.model import SKIN_SHAPES, Spec

__all__ = ["to_spec_error", "union_tags"]

_ALLOWED = {
    "greater_than": "> {gt}",
    "greater_than_equal": ">= {ge}",
    "less_than": "< {lt}",
    "less_than_equal": "<= {le}",
    "literal_error": "one of {expected}",
    "string_pattern_mismatch": "text matching {pattern}",
    "string_too_short": "at least {min_length} characters",
    "union_tag_invalid": "{discriminator} one of {expected_tags}",
    # strict types: a number or a boolean written as text is refused, not guessed at
    "int_type": "a whole number, written without quotes",
    "bool_type": "true or false, written without quotes",
    "float_type": "a number, written without quotes",
    "string_type": "text (not a number, and not YAML !!binary bytes)",
}


def union_tags(root: Any = Spec) -> frozenset[str]:
    """Every tag of the spec's tagged unions (outlet kinds, loss kinds, skin shapes), read
    off the models: a member's ``kind`` or ``shape`` key typed as one literal. Pydantic puts
    the tag in an error's location; error keys leave it out."""
    tags: set[str] = set()
    seen: set[Any] = set()

    def visit(tp: Any) -> None:
        for arg in typing.get_args(tp):
            visit(arg)
        if not (isinstance(tp, type) and issubclass(tp, BaseModel)) or tp in seen:
            return
        seen.add(tp)
        for name, f in tp.model_fields.items():
            literal = typing.get_args(f.annotation)
            if name in ("kind", "shape") and typing.get_origin(f.annotation) is Literal:
                tags.update(str(t) for t in literal if len(literal) == 1)
            visit(f.annotation)

    visit(root)
    return frozenset(tags)


#: Union tags pydantic puts in an error's location.
_TAGS = union_tags()

_LIMITS = ("greater_than", "greater_than_equal", "less_than", "less_than_equal")


def _unit_of(info: Any) -> tuple[str, Any]:
    """(internal unit, converter) of a quantity field (``spec/types.py``), else ("", None);
    an optional quantity (``Mm | None``) carries it inside the union."""
    import typing

    metas = list(getattr(info, "metadata", None) or ())
    for arg in typing.get_args(getattr(info, "annotation", None)):
        metas += list(getattr(arg, "__metadata__", ()))
    for meta in metas:
        func = getattr(meta, "func", None)
        unit = getattr(func, "unit", None)
        if unit:
            return str(unit).replace("**", "^"), func
    return "", None


def _field_info(model: type[BaseModel], loc: tuple[Any, ...]) -> tuple[Any, type[BaseModel] | None]:
    """Walk ``loc`` through nested models; return (FieldInfo of the last key, its model)."""
    current: Any = model
    info = None
    for part in loc:
        if not (isinstance(current, type) and issubclass(current, BaseModel)):
            return info, None
        fields = current.model_fields
        if part not in fields:
            # discriminated unions put the tag in loc; lists put an index
            continue
        info = fields[part]
        current = _unwrap(info.annotation, loc)
    return info, current if isinstance(current, type) else None


def _unwrap(annotation: Any, loc: tuple[Any, ...]) -> Any:
    import typing

    args = typing.get_args(annotation)
    if not args:
        return annotation
    models = [a for a in args if isinstance(a, type) and issubclass(a, BaseModel)]
    for m in models:  # pick the union member named by a tag in loc, if any
        for tag in ("kind", "shape"):
            field = m.model_fields.get(tag)
            if field is not None and field.default in loc:
                return m
    if models:
        return models[0]
    for a in args:
        inner = _unwrap(a, loc)
        if isinstance(inner, type) and issubclass(inner, BaseModel):
            return inner
    return annotation


def _models_for(loc: tuple[Any, ...]) -> type[BaseModel] | None:
    _, model = _field_info(Spec, loc)
    return model


def _dotted(loc: tuple[Any, ...]) -> str:
    parts: list[str] = []
    for p in loc:
        if isinstance(p, int):
            parts.append(f"[{p}]")
        elif p in _TAGS and parts:
            continue  # discriminator tag inserted by pydantic
        elif isinstance(p, str) and p.startswith("function-"):
            continue
        else:
            parts.append(("." if parts else "") + str(p))
    return "".join(parts) or "(top level)"


def _skin_shape(loc: tuple[Any, ...]) -> str | None:
    """The skin shape an error inside ``[skin]`` is about, or None."""
    if len(loc) >= 3 and loc[0] == "skin" and loc[1] in SKIN_SHAPES:
        return str(loc[1])
    return None


def to_spec_error(err: ValidationError, source: str | None) -> SpecError:
    """The :class:`SpecError` of a pydantic validation error: every problem with its dotted
    key (union tags left out), the value, what is allowed and why."""
    problems: list[tuple[str, Any, str, str]] = []
    for e in err.errors(include_url=False):
        loc = tuple(e["loc"])
        key = _dotted(loc)
        etype = e["type"]
        ctx = e.get("ctx", {}) or {}
        value = e.get("input")
        info, _ = _field_info(Spec, loc)
        reason = (info.description if info is not None else None) or ""
        msg = str(e["msg"]).removeprefix("Value error, ")
        if etype == "union_tag_invalid":  # "kind one of ...", "shape one of ..."
            ctx = {**ctx, "discriminator": str(ctx.get("discriminator", "kind")).strip("'")}
            value = ctx.get("tag", value)
        shape = _skin_shape(loc)
        if etype == "extra_forbidden" and shape is not None:
            known = sorted(SKIN_SHAPES[shape].model_fields)
            problems.append((key, None, "keys " + ", ".join(known), f"not a key of a {shape} skin"))
            continue
        if etype == "missing" and shape is not None:
            what = reason.split(": ", 1)[-1]
            problems.append((key, None, "", f"a {shape} skin needs it: {what}"))
            continue
        if etype == "extra_forbidden":
            parent = _models_for(loc[:-1]) or Spec
            known = sorted(parent.model_fields)
            close = difflib.get_close_matches(str(loc[-1]), known, n=1)
            hint = f"did you mean '{close[0]}'? " if close else ""
            problems.append(
                (
                    key,
                    None,
                    "keys " + ", ".join(known),
                    f"unknown key; {hint}a typo must not fall back to a default",
                )
            )
            continue
        if etype == "missing":
            problems.append(
                (key, None, "", f"required key is missing{': ' + reason if reason else ''}")
            )
            continue
        allowed = _ALLOWED.get(etype, "").format(**{k: v for k, v in ctx.items()})
        unit, validate = _unit_of(info)
        if allowed and unit and etype in _LIMITS:
            allowed += f" {unit}"
            if isinstance(value, str):
                with contextlib.suppress(ValueError):
                    allowed += f" (given {validate(value):.6g} {unit})"
        if isinstance(value, dict):
            value = None
        if etype in _ALLOWED:
            why = f"{reason}" if reason else msg
        else:
            why = f"{msg}{'; ' + reason if reason and reason not in msg else ''}"
        problems.append((key, value, allowed, why))
    return SpecError.many(problems, source=source)
