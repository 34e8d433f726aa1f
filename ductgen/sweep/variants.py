"""Sweep variants: readable ids, validated specs and the content hash that lets a re-run
skip variants that are already built and unchanged.

Each variant is the base spec file's *raw* data with the varied keys set, validated by
:func:`ductgen.spec.parse_spec` exactly as a spec file is, and checked by
:func:`ductgen.design.build_design` for the cross-field rules; so every variant of a
sweep is known to be valid before anything is built, and its design is built only once.
"""

from __future__ import annotations

import hashlib
import json
import re
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from ductgen.design import Design, build_design
from ductgen.errors import SpecError
from ductgen.spec import Spec, parse_spec, read_spec_data, spec_sha256
from ductgen.sweep.vary import Vary, combinations, get_dotted, set_dotted

__all__ = [
    "STAMP_FILE",
    "Variant",
    "content_hash",
    "make_variants",
    "read_stamp",
    "variant_id",
]

#: File in each variant folder noting what was built there (hash, values, seconds).
STAMP_FILE = "sweep-variant.json"

_UNSAFE = re.compile(r"[^A-Za-z0-9._=+,\-]")


@dataclass(frozen=True)
class Variant:
    """One variant of a sweep.

    Attributes:
        id: readable folder name, e.g. ``"ramp.angle_deg=7"``.
        raw: varied key → raw value as given (number or unit string).
        resolved: varied key → value as resolved by the spec (mm, deg, SI; str for choices).
        spec: the validated spec.
        design: its design, built and checked once (the build and the page reuse it).
    """

    id: str
    raw: dict[str, Any]
    resolved: dict[str, Any]
    spec: Spec
    design: Design


def _value_text(value: Any) -> str:
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, float) and value.is_integer():
        return str(int(value))
    return str(value).replace(" ", "")


def variant_id(raw: dict[str, Any]) -> str:
    """Readable id of a variant: ``key=value`` pairs joined by ``,`` (file-name safe)."""
    text = ",".join(f"{k}={_value_text(v)}" for k, v in raw.items())
    text = _UNSAFE.sub("_", text)
    if len(text.encode()) > 200:  # keep folder names within file-system limits
        digest = hashlib.sha256(text.encode()).hexdigest()[:12]
        text = f"{text[:180]}~{digest}"
    return text


def _resolved(value: Any) -> Any:
    if isinstance(value, bool | int | float | str) or value is None:
        return value
    if hasattr(value, "model_dump"):
        return value.model_dump(mode="json")
    return str(value)


def make_variants(spec_path: Path, varies: list[Vary], zip_values: bool = False) -> list[Variant]:
    """Every variant of a sweep, each validated (spec model and pure geometry).

    Raises:
        SpecError: (exit 2) for a bad ``--vary`` or any variant whose spec is invalid; the
            message names the variant. Nothing is built or written.
    """
    spec_path = Path(spec_path)
    data = read_spec_data(spec_path)
    combos = combinations(varies, zip_values)
    keys = [v.key for v in varies]
    out: list[Variant] = []
    seen: dict[str, int] = {}
    for combo in combos:
        raw = dict(zip(keys, combo, strict=True))
        vid = variant_id(raw)
        if vid in seen:  # two spellings of one value, e.g. "2in" and "2 in"
            seen[vid] += 1
            vid = f"{vid}~{seen[vid]}"
        else:
            seen[vid] = 1
        d = data
        source = f"{spec_path} (variant {vid})"
        try:
            for k, v in raw.items():
                d = set_dotted(d, k, v)
            spec = parse_spec(d, source=source, base_dir=spec_path.parent)
            design = build_design(spec)
        except SpecError as err:
            raise SpecError.many(
                [(p.key, p.value, p.allowed, p.reason) for p in err.problems], source=source
            ) from None
        resolved = {k: _resolved(get_dotted(spec, k)) for k in keys}
        out.append(Variant(id=vid, raw=raw, resolved=resolved, spec=spec, design=design))
    return out


def content_hash(spec: Spec, kinds: list[str], quality: str, version: str) -> str:
    """Hash of everything a variant's files depend on: the normalised spec (and a custom
    profile's bytes), the ductgen version, the output kinds and the STL quality."""
    payload = json.dumps(
        {"spec": spec_sha256(spec), "version": version, "kinds": sorted(kinds), "quality": quality},
        sort_keys=True,
    )
    return hashlib.sha256(payload.encode()).hexdigest()


def read_stamp(folder: Path) -> dict[str, Any] | None:
    """The stamp of a variant folder, or None when missing or unreadable."""
    try:
        stamp = json.loads((Path(folder) / STAMP_FILE).read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return None
    return stamp if isinstance(stamp, dict) else None
