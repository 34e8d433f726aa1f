"""Spec data written back to a file: TOML (via ``tomli_w``) or JSON, chosen by suffix.

Used by ``ductgen size --write-spec``. The data must be plain (str, float, int, bool, lists,
dicts); ``None`` values are dropped, since TOML has no null. A header becomes ``#`` comment
lines at the top of a TOML file (JSON has no comments, so it is left out there).
"""

from __future__ import annotations

import json
import math
from pathlib import Path
from typing import Any

import tomli_w

__all__ = ["SPEC_SUFFIXES", "spec_text"]

#: File suffixes a spec can be written as.
SPEC_SUFFIXES = (".toml", ".json")


def _drop_none(v: Any) -> Any:
    if isinstance(v, float) and not math.isfinite(v):
        raise ValueError(f"cannot write {v} to a spec file")
    if isinstance(v, dict):
        return {k: _drop_none(x) for k, x in v.items() if x is not None}
    if isinstance(v, list | tuple):
        return [_drop_none(x) for x in v if x is not None]
    return v


def spec_text(data: dict[str, Any], path: str | Path, header: str = "") -> str:
    """Spec ``data`` as the text of a ``.toml`` or ``.json`` file named ``path``.

    Raises:
        ValueError: another suffix, or a value TOML/JSON cannot hold (NaN, infinity).
    """
    suffix = Path(path).suffix.lower()
    clean = _drop_none(data)
    if suffix == ".json":
        return json.dumps(clean, indent=2, allow_nan=False) + "\n"
    if suffix != ".toml":
        raise ValueError(f"a spec is written as {' or '.join(SPEC_SUFFIXES)}, not {suffix!r}")
    comments = "".join(f"# {ln}\n" for ln in header.splitlines())
    return comments + tomli_w.dumps(clean)
