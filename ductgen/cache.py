"""A content-addressed cache of kernel results, shared by every build of this user.

A solid is a pure function of the numbers it is made from, the solid kind, the STL quality
and the code that makes it; :func:`fingerprint` hashes such inputs canonically (floats
exactly, arrays by dtype, shape and bytes, dataclasses and objects field by field, sets
sorted), so equal inputs give equal keys in any process, and the spec's text, its name or its
``[flow]`` keys do not enter unless the caller passes them.

Where: ``DUCTGEN_CACHE_DIR``, else ``$XDG_CACHE_HOME/ductgen``, else ``~/.cache/ductgen``
(the XDG Base Directory Specification's user cache folder). How much: ``DUCTGEN_CACHE_MB``
(default 2048 MiB; 0 turns the cache off); after a store the least recently used entries
are removed until the folder is under the bound.

An entry is one file: a magic line, the SHA-256 of the rest, a JSON header and the blobs it
lists (bytes and numpy arrays). It is written to a temporary file in the same folder and
renamed into place, so two processes storing the same key at once both succeed and a reader
never sees half an entry; an entry whose checksum does not match (truncated, corrupted) is
deleted and reported as a miss, never used.
"""

from __future__ import annotations

import contextlib
import dataclasses
import enum
import functools
import hashlib
import json
import os
import struct
import tempfile
import types
from collections.abc import Callable, Mapping
from pathlib import Path
from typing import Any

import numpy as np

from ductgen.errors import SpecError

__all__ = [
    "DEFAULT_CACHE_MB",
    "Cache",
    "Entry",
    "cache_root",
    "cached_bytes",
    "fingerprint",
    "kernel_versions",
    "open_cache",
    "source_fingerprint",
]

#: Default bound of the cache folder (MiB).
DEFAULT_CACHE_MB = 2048
_MAGIC = b"DUCTGEN-CACHE-1\n"
_SUFFIX = ".entry"


class _Unhashable(TypeError):
    """An input the canonical hash cannot read (then nothing is cached)."""


def _feed(h: Any, obj: Any, seen: dict[int, int]) -> None:
    """Feed a canonical, type-tagged encoding of ``obj`` to the hash ``h``."""
    if obj is None or isinstance(obj, bool | int | str | bytes):
        h.update(f"<{type(obj).__name__}:{len(repr(obj))}>".encode() + repr(obj).encode())
        return
    if isinstance(obj, float):
        h.update(b"<f>" + obj.hex().encode())
        return
    if isinstance(obj, np.generic):
        _feed(h, obj.item(), seen)
        return
    if isinstance(obj, np.ndarray):
        if obj.dtype == object:
            _feed(h, ("ndarray-object", obj.shape, obj.tolist()), seen)
            return
        a = np.ascontiguousarray(obj)
        h.update(f"<a:{a.dtype.str}:{a.shape}>".encode())
        h.update(a.tobytes())
        return
    if isinstance(obj, enum.Enum):
        _feed(h, (type(obj).__qualname__, obj.value), seen)
        return
    if isinstance(obj, Path):
        _feed(h, ("Path", str(obj)), seen)
        return
    if id(obj) in seen:  # a cycle: refer back to the object being encoded
        h.update(f"<cycle:{seen[id(obj)]}>".encode())
        return
    seen[id(obj)] = len(seen)  # only while it is encoded: shared objects are encoded in full
    try:
        _feed_container(h, obj, seen)
    finally:
        del seen[id(obj)]


def _feed_container(h: Any, obj: Any, seen: dict[int, int]) -> None:
    if isinstance(obj, list | tuple):
        h.update(f"<{type(obj).__name__}:{len(obj)}>".encode())
        for x in obj:
            _feed(h, x, seen)
        return
    if isinstance(obj, set | frozenset):
        _feed(h, ("set", sorted(fingerprint(x) for x in obj)), seen)
        return
    if isinstance(obj, Mapping):
        items = sorted((fingerprint(k), v) for k, v in obj.items())
        h.update(f"<map:{len(items)}>".encode())
        for k, v in items:
            h.update(k.encode())
            _feed(h, v, seen)
        return
    name = f"{type(obj).__module__}.{type(obj).__qualname__}"
    if dataclasses.is_dataclass(obj) and not isinstance(obj, type):
        fields = {f.name: getattr(obj, f.name) for f in dataclasses.fields(obj)}
        _feed(h, ("dataclass", name, fields), seen)
        return
    if hasattr(obj, "model_dump"):  # a pydantic model
        _feed(h, ("model", name, obj.model_dump(mode="python")), seen)
        return
    if isinstance(obj, types.CodeType):
        _feed(h, ("code", obj.co_code, obj.co_consts, obj.co_names), seen)
        return
    if callable(obj) and hasattr(obj, "__code__"):  # a function: its code and what it closes over
        cells = [c.cell_contents for c in (obj.__closure__ or ())]
        code = obj.__code__
        _feed(h, ("fn", obj.__qualname__, code.co_code, code.co_consts, cells), seen)
        _feed(h, obj.__defaults__, seen)
        return
    if hasattr(obj, "__func__") and hasattr(obj, "__self__"):  # a bound method
        _feed(h, ("method", obj.__func__, obj.__self__), seen)
        return
    state: dict[str, Any] = {}
    if hasattr(obj, "__dict__"):  # values a cached_property filled in are not state
        cls = type(obj)
        state.update(
            (k, v)
            for k, v in vars(obj).items()
            if not isinstance(getattr(cls, k, None), functools.cached_property)
        )
    for cls in type(obj).__mro__:
        for slot in getattr(cls, "__slots__", ()):
            if slot not in ("__dict__", "__weakref__") and hasattr(obj, slot):
                state[slot] = getattr(obj, slot)
    if not state:  # nothing readable (state kept in C, say): no key rather than a wrong one
        raise _Unhashable(f"cannot fingerprint a {name}")
    _feed(h, ("object", name, state), seen)


def fingerprint(*parts: Any) -> str:
    """A hex SHA-256 of ``parts``, equal for equal contents in any process.

    Raises:
        TypeError: a part holds an object that has no readable state.
    """
    h = hashlib.sha256()
    _feed(h, parts, {})
    return h.hexdigest()


def kernel_versions(dists: tuple[str, ...] = ("ductgen", "cadquery", "cadquery-ocp")) -> dict:
    """Installed versions of ``dists`` (``"none"`` when one is not installed), read from the
    package metadata, so the kernel is not imported."""
    from importlib.metadata import PackageNotFoundError, version

    out = {}
    for name in dists:
        try:
            out[name] = version(name)
        except PackageNotFoundError:
            out[name] = "none"
    return out


def source_fingerprint(names: tuple[str, ...]) -> str:
    """A hash of the source of ductgen's modules and packages ``names`` (paths inside the
    package, e.g. ``"solids"``, ``"units.py"``), so a changed line of code is a new key even
    when the version number stays."""
    here = Path(__file__).resolve().parent
    h = hashlib.sha256()
    for name in names:
        p = here / name
        files = sorted(p.rglob("*.py")) if p.is_dir() else [p]
        for f in files:
            h.update(str(f.relative_to(here)).encode() + b"\0")
            h.update(f.read_bytes() if f.is_file() else b"<missing>")
    return h.hexdigest()


def cache_root() -> Path:
    """The cache folder: ``DUCTGEN_CACHE_DIR``, ``$XDG_CACHE_HOME/ductgen`` or
    ``~/.cache/ductgen``."""
    explicit = os.environ.get("DUCTGEN_CACHE_DIR", "").strip()
    if explicit:
        return Path(explicit).expanduser()
    xdg = os.environ.get("XDG_CACHE_HOME", "").strip()
    base = Path(xdg) if xdg and Path(xdg).is_absolute() else Path.home() / ".cache"
    return base / "ductgen"


def _limit_mb() -> float:
    raw = os.environ.get("DUCTGEN_CACHE_MB", "").strip()
    if not raw:
        return float(DEFAULT_CACHE_MB)
    try:
        value = float(raw)
    except ValueError:
        value = -1.0
    if not (value >= 0.0 and np.isfinite(value)):
        raise SpecError(
            "DUCTGEN_CACHE_MB",
            raw,
            ">= 0 (MiB; 0 turns the solid cache off)",
            "the size bound of the solid cache folder",
        )
    return value


@dataclasses.dataclass(frozen=True)
class Entry:
    """One cache entry: JSON-able numbers (``meta``) and named blobs (bytes or arrays)."""

    meta: dict[str, Any]
    blobs: dict[str, Any]


class Cache:
    """The cache folder ``root`` holding at most ``limit_bytes`` of entries."""

    def __init__(self, root: Path, limit_bytes: int) -> None:
        self.root = Path(root)
        self.limit_bytes = int(limit_bytes)

    def _path(self, key: str) -> Path:
        return self.root / key[:2] / f"{key}{_SUFFIX}"

    def get(self, key: str) -> Entry | None:
        """The entry stored under ``key``, or None (absent, unreadable or corrupt; a
        corrupt one is deleted)."""
        path = self._path(key)
        try:
            raw = path.read_bytes()
        except OSError:
            return None
        entry = _decode(raw)
        if entry is None:
            with contextlib.suppress(OSError):
                path.unlink()
            return None
        with contextlib.suppress(OSError):
            os.utime(path)  # recently used: evicted last
        return entry

    def has(self, key: str) -> bool:
        """Whether an entry is stored under ``key`` (not read: :meth:`get` may still find
        it corrupt)."""
        return self._path(key).is_file()

    def put(self, key: str, meta: dict[str, Any], blobs: dict[str, Any]) -> None:
        """Store an entry atomically, then evict the oldest entries beyond the bound. A
        failure to write (disk full, read-only folder) leaves the cache as it was."""
        data = _encode(meta, blobs)
        if len(data) > self.limit_bytes:
            return
        path = self._path(key)
        try:
            path.parent.mkdir(parents=True, exist_ok=True)
            fd, tmp = tempfile.mkstemp(prefix=".tmp-", dir=path.parent)
            try:
                with os.fdopen(fd, "wb") as f:
                    f.write(data)
                os.replace(tmp, path)
            except BaseException:
                Path(tmp).unlink(missing_ok=True)
                raise
        except OSError:
            return
        self.evict()

    def evict(self) -> None:
        """Remove the least recently used entries until the folder is under the bound, and
        temporary files an interrupted store left more than an hour ago."""
        import time

        for p in self.root.glob("*/.tmp-*"):
            with contextlib.suppress(OSError):
                if time.time() - p.stat().st_mtime > 3600.0:
                    p.unlink()
        entries = []
        for p in self.root.glob(f"*/*{_SUFFIX}"):
            try:
                st = p.stat()
            except OSError:
                continue
            entries.append((st.st_mtime, st.st_size, p))
        total = sum(e[1] for e in entries)
        for _, size, p in sorted(entries, key=lambda e: e[0]):
            if total <= self.limit_bytes:
                break
            try:
                p.unlink()
            except OSError:
                continue
            total -= size


def cached_bytes(cache: Cache | None, parts: tuple[Any, ...], make: Callable[[], bytes]) -> bytes:
    """``make()``, or the bytes it made before from the same ``parts`` (everything the
    result is made from, the code included: :func:`fingerprint`), from ``cache``; stored
    there once made. Without a cache, or with a part the hash cannot read, just ``make()``."""
    key = None
    if cache is not None:
        try:
            key = fingerprint(*parts)
        except TypeError:
            key = None
        entry = cache.get(key) if key is not None else None
        if entry is not None and "bytes" in entry.blobs:
            return bytes(entry.blobs["bytes"])
    data = make()
    if key is not None and cache is not None:
        cache.put(key, {}, {"bytes": data})
    return data


def open_cache(enabled: bool = True) -> Cache | None:
    """The user's cache, or None when ``enabled`` is false or ``DUCTGEN_CACHE_MB`` is 0.

    Raises:
        SpecError: ``DUCTGEN_CACHE_MB`` is not a number >= 0.
    """
    if not enabled:
        return None
    mb = _limit_mb()
    if mb == 0.0:
        return None
    return Cache(cache_root(), int(mb * 1024 * 1024))


def _encode(meta: dict[str, Any], blobs: dict[str, Any]) -> bytes:
    index, parts = [], []
    for name, value in blobs.items():
        if isinstance(value, np.ndarray):
            a = np.ascontiguousarray(value)
            if a.dtype == object:
                raise TypeError(f"cannot store an object array ({name})")
            index.append([name, a.dtype.str, list(a.shape), a.nbytes])
            parts.append(a.tobytes())
        else:
            b = bytes(value)
            index.append([name, None, None, len(b)])
            parts.append(b)
    head = json.dumps({"meta": meta, "blobs": index}, allow_nan=True).encode()
    body = struct.pack(">Q", len(head)) + head + b"".join(parts)
    return _MAGIC + hashlib.sha256(body).digest() + body


def _decode(raw: bytes) -> Entry | None:
    n = len(_MAGIC)
    if not raw.startswith(_MAGIC) or len(raw) < n + 40:
        return None
    digest, body = raw[n : n + 32], raw[n + 32 :]
    if hashlib.sha256(body).digest() != digest:
        return None
    try:
        (size,) = struct.unpack(">Q", body[:8])
        head = json.loads(body[8 : 8 + size])
        pos = 8 + size
        blobs: dict[str, Any] = {}
        for name, dtype, shape, nbytes in head["blobs"]:
            chunk = body[pos : pos + nbytes]
            pos += nbytes
            if len(chunk) != nbytes:
                return None
            blobs[name] = (
                chunk if dtype is None else np.frombuffer(chunk, dtype=dtype).reshape(shape).copy()
            )
        return Entry(meta=head["meta"], blobs=blobs)
    except (ValueError, KeyError, TypeError, struct.error):
        return None
