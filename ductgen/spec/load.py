"""Reading spec files (TOML, YAML or JSON) into a validated :class:`Spec`.

Every problem becomes one :class:`~ductgen.errors.SpecError` listing each bad key with
the value given, the allowed range and the reason.
"""

from __future__ import annotations

import hashlib
import json
import sys
from pathlib import Path
from typing import Any

from pydantic import ValidationError

from ductgen.errors import SpecError
from ductgen.spec.messages import to_spec_error, union_tags
from ductgen.spec.model import Spec

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover
    import tomli as tomllib

__all__ = [
    "FILE_KEYS",
    "MAX_SPEC_BYTES",
    "MAX_SPEC_DEPTH",
    "MAX_SPEC_VALUES",
    "load_spec",
    "parse_spec",
    "read_spec_data",
    "spec_sha256",
    "union_tags",
]

_SUFFIXES = {".toml": "toml", ".yaml": "yaml", ".yml": "yaml", ".json": "json"}


#: Largest spec file read (bytes); a spec is a few kB.
MAX_SPEC_BYTES = 1_000_000
#: Deepest nesting of tables and lists in a spec (the real specs use 3).
MAX_SPEC_DEPTH = 32
#: Most values (tables, lists, scalars) in a spec after YAML aliases are expanded.
MAX_SPEC_VALUES = 100_000


def _read_text(path: Path, what: str, key: str, max_bytes: int) -> str:
    """The UTF-8 text of a regular file of at most ``max_bytes``; everything else (a FIFO,
    a directory, a device, binary or UTF-16 data, a huge file) is a :class:`SpecError` on
    ``key`` — never a hang or a decoding traceback."""
    import os
    import stat

    try:
        st = os.stat(path)
    except OSError as err:
        raise SpecError(key, str(path), f"a readable {what}", err.strerror or str(err)) from err
    if stat.S_ISDIR(st.st_mode):
        raise SpecError(key, str(path), f"a {what}, not a folder", "the path is a directory")
    if not stat.S_ISREG(st.st_mode):
        raise SpecError(
            key,
            str(path),
            f"a regular {what}",
            "it is a pipe, socket or device, which may never end",
        )
    if st.st_size > max_bytes:
        raise SpecError(
            key, str(path), f"at most {max_bytes:,} bytes", f"the file has {st.st_size:,} bytes"
        )
    try:
        fd = os.open(path, os.O_RDONLY | getattr(os, "O_NONBLOCK", 0))
        with os.fdopen(fd, "rb") as fh:
            raw = fh.read(max_bytes + 1)
    except OSError as err:
        raise SpecError(key, str(path), f"a readable {what}", err.strerror or str(err)) from err
    if len(raw) > max_bytes:
        raise SpecError(key, str(path), f"at most {max_bytes:,} bytes", "the file grew while read")
    if raw[:2] in (b"\xff\xfe", b"\xfe\xff") or b"\x00" in raw:
        raise SpecError(
            key, str(path), "UTF-8 text", "the file is binary or UTF-16; save it as UTF-8"
        )
    try:
        return raw.decode("utf-8-sig")
    except UnicodeDecodeError as err:
        line = raw[: err.start].count(b"\n") + 1
        raise SpecError(
            key, str(path), "UTF-8 text", f"byte {err.start} (line {line}) is not UTF-8"
        ) from None


def _yaml_loader() -> type:
    """A safe YAML loader that refuses duplicate keys (TOML does too)."""
    import yaml

    class Loader(yaml.SafeLoader):
        def construct_mapping(self, node: Any, deep: bool = False) -> Any:
            seen: set[object] = set()
            for key_node, _ in node.value:
                if key_node.tag == "tag:yaml.org,2002:merge":
                    continue
                key = self.construct_object(key_node, deep=deep)
                try:
                    dup = key in seen
                except TypeError:
                    continue  # an unhashable key: the base class reports it
                if dup:
                    raise yaml.constructor.ConstructorError(
                        None, None, f"duplicate key {key!r}", key_node.start_mark
                    )
                seen.add(key)
            return super().construct_mapping(node, deep)

    return Loader


def _no_duplicates(pairs: list[tuple[str, Any]]) -> dict[str, Any]:
    out: dict[str, Any] = {}
    for k, v in pairs:
        if k in out:
            raise ValueError(f"duplicate key {k!r}")
        out[k] = v
    return out


def _check_size(data: Any, path: Path) -> None:
    """Refuse data nested deeper than :data:`MAX_SPEC_DEPTH` or holding more than
    :data:`MAX_SPEC_VALUES` values once YAML aliases are expanded (an alias bomb)."""
    count = 0
    stack: list[tuple[Any, int]] = [(data, 1)]
    while stack:
        node, depth = stack.pop()
        count += 1
        if count > MAX_SPEC_VALUES:
            raise SpecError(
                "file",
                str(path),
                f"at most {MAX_SPEC_VALUES:,} values",
                "the spec expands to more (YAML aliases repeat their whole value)",
            )
        if isinstance(node, dict | list):
            if depth > MAX_SPEC_DEPTH:
                raise SpecError(
                    "file", str(path), f"at most {MAX_SPEC_DEPTH} levels of nesting", "too deep"
                )
            children = node.values() if isinstance(node, dict) else node
            stack.extend((c, depth + 1) for c in children)


def read_spec_data(path: Path) -> dict[str, Any]:
    """Read a spec file into plain data, with syntax errors reported by line.

    Limits: a regular UTF-8 file of at most :data:`MAX_SPEC_BYTES`, nesting at most
    :data:`MAX_SPEC_DEPTH`, at most :data:`MAX_SPEC_VALUES` values, no duplicate keys.
    """
    path = Path(path)
    kind = _SUFFIXES.get(path.suffix.lower())
    if kind is None:
        raise SpecError(
            "file",
            str(path),
            "a .toml, .yaml, .yml or .json file",
            "spec format is chosen by suffix",
        )
    text = _read_text(path, "spec file", "file", MAX_SPEC_BYTES)
    label = {"toml": "TOML", "yaml": "YAML", "json": "JSON"}[kind]
    try:
        if kind == "toml":
            data = tomllib.loads(text)
        elif kind == "yaml":
            import yaml

            data = yaml.load(text, Loader=_yaml_loader())  # a SafeLoader subclass
        else:
            data = json.loads(text, object_pairs_hook=_no_duplicates)
    except RecursionError:
        raise SpecError(
            "file", str(path), f"at most {MAX_SPEC_DEPTH} levels of nesting", "too deep to read"
        ) from None
    except tomllib.TOMLDecodeError as err:
        raise SpecError("file", str(path), "valid TOML", f"syntax error: {err}") from err
    except json.JSONDecodeError as err:
        raise SpecError(
            "file", str(path), "valid JSON", f"syntax error at line {err.lineno}: {err.msg}"
        ) from err
    except Exception as err:  # yaml.YAMLError carries its own line marks; JSON duplicates
        raise SpecError("file", str(path), f"valid {label}", f"{err}") from err
    if not isinstance(data, dict):
        raise SpecError(
            "file", str(path), "a table of sections at the top level", "nothing to read"
        )
    _check_size(data, path)
    return data


#: Spec keys that may name a file, read relative to the spec's folder (:func:`parse_spec`
#: resolves them; the design page confines them to its work folder; ``init --example``
#: copies the files a sample names).
FILE_KEYS = (("planform", "profile"), ("flow", "recovery"), ("skin", "file"))


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
    if p.is_absolute() or (must_exist and not (base_dir / p).exists()):
        return data
    return {**data, section: {**sec, key: str((base_dir / p).resolve())}}


def _resolve_panel(data: dict[str, Any], base_dir: Path | None) -> dict[str, Any]:
    """Make a relative ``skin.file`` path relative to the spec's folder."""
    sec = data.get("skin")
    if base_dir is None or not isinstance(sec, dict) or not isinstance(sec.get("file"), str):
        return data
    p = Path(sec["file"].strip()).expanduser()
    if p.is_absolute() or not sec["file"].strip():
        return data
    return {**data, "skin": {**sec, "file": str((base_dir / p).resolve())}}


def parse_spec(
    data: dict[str, Any], source: str | None = None, base_dir: Path | None = None
) -> Spec:
    """Validate plain data (a dict as read from a file) into a :class:`Spec`."""
    data = _resolve_csv(data, "planform", "profile", base_dir, must_exist=False)
    data = _resolve_csv(data, "flow", "recovery", base_dir, must_exist=True)
    data = _resolve_panel(data, base_dir)
    try:
        return Spec.model_validate(data)
    except ValidationError as err:
        raise to_spec_error(err, source) from None


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
    panel = getattr(spec.skin, "file", None)
    if panel is not None and Path(panel).is_file():
        with open(panel, "rb") as fh:  # the panel may be large: hash in chunks
            for chunk in iter(lambda: fh.read(1 << 20), b""):
                h.update(chunk)
    return h.hexdigest()
