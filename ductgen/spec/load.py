"""Reading spec files (TOML, YAML or JSON) into a validated :class:`Spec`.

Every problem becomes one :class:`~ductgen.errors.SpecError` listing each bad key with
the value given, the allowed range and the reason.
"""

from __future__ import annotations

import difflib
import hashlib
import json
import sys
from pathlib import Path
from typing import Any

from pydantic import BaseModel, ValidationError

from ductgen.errors import SpecError
from ductgen.spec.model import Spec

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover
    import tomli as tomllib

__all__ = ["load_spec", "parse_spec", "read_spec_data", "spec_sha256"]

_SUFFIXES = {".toml": "toml", ".yaml": "yaml", ".yml": "yaml", ".json": "json"}


def read_spec_data(path: Path) -> dict[str, Any]:
    """Read a spec file into plain data, with syntax errors reported by line."""
    path = Path(path)
    kind = _SUFFIXES.get(path.suffix.lower())
    if kind is None:
        raise SpecError(
            "file",
            str(path),
            "a .toml, .yaml, .yml or .json file",
            "spec format is chosen by suffix",
        )
    try:
        text = path.read_text(encoding="utf-8")
    except OSError as err:
        raise SpecError("file", str(path), "a readable file", err.strerror or str(err)) from err
    try:
        if kind == "toml":
            data = tomllib.loads(text)
        elif kind == "yaml":
            import yaml

            data = yaml.safe_load(text)
        else:
            data = json.loads(text)
    except tomllib.TOMLDecodeError as err:
        raise SpecError("file", str(path), "valid TOML", f"syntax error: {err}") from err
    except json.JSONDecodeError as err:
        raise SpecError(
            "file", str(path), "valid JSON", f"syntax error at line {err.lineno}: {err.msg}"
        ) from err
    except Exception as err:  # yaml.YAMLError carries its own line marks
        raise SpecError("file", str(path), "valid YAML", f"syntax error: {err}") from err
    if not isinstance(data, dict):
        raise SpecError(
            "file", str(path), "a table of sections at the top level", "nothing to read"
        )
    return data


def _resolve_csv(
    data: dict[str, Any], section: str, key: str, base_dir: Path | None, must_exist: bool
) -> dict[str, Any]:
    """Make a relative ``section.key`` CSV path relative to the spec's folder. With
    ``must_exist`` the path is only rewritten when the file is there (so a bare name can
    still name a bundled table)."""
    sec = data.get(section)
    if base_dir is None or not isinstance(sec, dict):
        return data
    value = sec.get(key)
    if not (isinstance(value, str) and value.strip().lower().endswith(".csv")):
        return data
    p = Path(value.strip()).expanduser()
    if p.is_absolute() or (must_exist and not (base_dir / p).is_file()):
        return data
    return {**data, section: {**sec, key: str((base_dir / p).resolve())}}


def parse_spec(
    data: dict[str, Any], source: str | None = None, base_dir: Path | None = None
) -> Spec:
    """Validate plain data (a dict as read from a file) into a :class:`Spec`."""
    data = _resolve_csv(data, "planform", "profile", base_dir, must_exist=False)
    data = _resolve_csv(data, "flow", "recovery", base_dir, must_exist=True)
    try:
        return Spec.model_validate(data)
    except ValidationError as err:
        raise _to_spec_error(err, source) from None


def load_spec(path: str | Path) -> Spec:
    """Load and validate a spec file; raises :class:`SpecError` on any problem."""
    path = Path(path)
    return parse_spec(read_spec_data(path), source=str(path), base_dir=path.parent)


def spec_sha256(spec: Spec) -> str:
    """Hash of the normalised spec (units resolved), plus the bytes of every table it names
    (a custom wall profile, a recovery table), so editing a table changes the hash."""
    h = hashlib.sha256(json.dumps(spec.model_dump(mode="json"), sort_keys=True).encode())
    tables = [spec.planform.profile]
    if spec.flow is not None and isinstance(spec.flow.recovery, str):
        tables.append(spec.flow.recovery)
    for name in tables:
        p = Path(name)
        if p.suffix.lower() == ".csv" and p.is_file():
            h.update(p.read_bytes())
    return h.hexdigest()


# --- error formatting ------------------------------------------------------------------

_ALLOWED = {
    "greater_than": "> {gt}",
    "greater_than_equal": ">= {ge}",
    "less_than": "< {lt}",
    "less_than_equal": "<= {le}",
    "literal_error": "one of {expected}",
    "string_pattern_mismatch": "text matching {pattern}",
    "string_too_short": "at least {min_length} characters",
    "union_tag_invalid": "kind one of {expected_tags}",
}


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
        kind = m.model_fields.get("kind")
        if kind is not None and kind.default in loc:
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
        elif p in ("round", "rect", "none", "hose", "bend", "cooler", "diffuser") and parts:
            continue  # discriminator tag inserted by pydantic
        elif isinstance(p, str) and p.startswith("function-"):
            continue
        else:
            parts.append(("." if parts else "") + str(p))
    return "".join(parts) or "(top level)"


def _to_spec_error(err: ValidationError, source: str | None) -> SpecError:
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
        if isinstance(value, dict):
            value = None
        if etype in _ALLOWED:
            why = f"{reason}" if reason else msg
        else:
            why = f"{msg}{'; ' + reason if reason and reason not in msg else ''}"
        problems.append((key, value, allowed, why))
    return SpecError.many(problems, source=source)
