"""Wall-curve tables (``ductgen/data/profiles/*.csv``): loading, validation and the registry.

A table gives the planform as ``2y/W`` against ``x/L``. Comment lines at the top
of the CSV (``# key: value``) carry its name, title, source and a note on how the values
were obtained.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np

from ductgen.errors import SpecError
from ductgen.resources import profiles_dir

__all__ = [
    "MAX_PROFILE_BYTES",
    "MAX_PROFILE_ROWS",
    "MAX_STATIONS",
    "RESAMPLE_TOL",
    "Profile",
    "available_profiles",
    "load_profile",
    "profiles_dir",
]

#: Largest profile CSV read (bytes) and most data rows in it.
MAX_PROFILE_BYTES = 5_000_000
MAX_PROFILE_ROWS = 100_000
#: Tables with more rows are thinned to at most this many stations before any geometry
#: (the kernel's wall spline gets one pole per station; 100,000 ran for minutes).
MAX_STATIONS = 200
#: Thinning keeps 2y/W within this of the full table's straight-line interpolation
#: (0.005 mm on a 100 mm throat).
RESAMPLE_TOL = 1e-4

#: Accepted header names (case-insensitive) of the two columns.
_HEADERS = ({"x_over_l", "x/l", "x"}, {"two_y_over_w", "2y/w", "f"})


@dataclass(frozen=True)
class Profile:
    """A validated wall-curve table.

    Attributes:
        name: table name (file stem for bundled tables, the path for a user's CSV).
        x: stations x/L, shape (N,), strictly increasing from 0 to 1.
        f: local width ratio 2y/W at each station, shape (N,), in (0, 1], f[-1] == 1.
        title, source, note: from the CSV header (empty when absent).
    """

    name: str
    x: np.ndarray
    f: np.ndarray
    title: str = ""
    source: str = ""
    note: str = ""


def _parse(path: Path, key: str) -> Profile:
    meta: dict[str, str] = {}
    rows: list[tuple[float, float]] = []
    lines = _read_lines(path, key or "planform.profile")
    header_seen = False
    for n, raw in enumerate(lines, start=1):
        line = raw.strip()
        if not line:
            continue
        if line.startswith("#"):
            body = line[1:].strip()
            if ":" in body:
                k, v = body.split(":", 1)
                meta[k.strip().lower()] = v.strip()
            continue
        cells = [c.strip() for c in line.split(",")]
        if len(cells) != 2:
            raise SpecError(
                key, str(path), "two columns x_over_L, two_y_over_W", f"line {n} has {len(cells)}"
            )
        try:
            rows.append((float(cells[0]), float(cells[1])))
        except ValueError:
            if header_seen or rows:
                raise SpecError(
                    key, str(path), "numbers", f"line {n} is not numeric: {line[:40]!r}"
                ) from None
            names = [c.lower() for c in cells]
            if names[0] not in _HEADERS[0] or names[1] not in _HEADERS[1]:
                raise SpecError(
                    key or "planform.profile",
                    str(path),
                    "a header x_over_L,two_y_over_W (or no header)",
                    f"line {n} names the columns {line[:40]!r}",
                ) from None
            header_seen = True
        if len(rows) > MAX_PROFILE_ROWS:
            raise SpecError(
                key or "planform.profile",
                str(path),
                f"at most {MAX_PROFILE_ROWS:,} rows",
                "the table is longer",
            )
    name = path.stem if key == "" else str(path)
    x = np.array([r[0] for r in rows], dtype=float)
    f = np.array([r[1] for r in rows], dtype=float)
    _validate(x, f, key or "planform.profile", str(path))
    if len(x) > MAX_STATIONS:
        x, f = _thin(x, f, key or "planform.profile", str(path))
    return Profile(
        name=meta.get("name", name),
        x=x,
        f=f,
        title=meta.get("title", ""),
        source=meta.get("source", ""),
        note=meta.get("note", ""),
    )


def _read_lines(path: Path, key: str) -> list[str]:
    """Lines of a regular UTF-8 file of at most :data:`MAX_PROFILE_BYTES`."""
    import os
    import stat

    try:
        st = os.stat(path)
        if stat.S_ISDIR(st.st_mode):
            raise SpecError(key, str(path), "a CSV file, not a folder", "the path is a folder")
        if not stat.S_ISREG(st.st_mode):
            raise SpecError(
                key,
                str(path),
                "a regular CSV file",
                "it is a pipe, socket or device, which may never end",
            )
        if st.st_size > MAX_PROFILE_BYTES:
            raise SpecError(
                key, str(path), f"at most {MAX_PROFILE_BYTES:,} bytes", f"{st.st_size:,} bytes"
            )
        raw = path.read_bytes()
    except OSError as err:
        raise SpecError(key, str(path), "a readable CSV file", err.strerror or str(err)) from err
    if b"\x00" in raw:
        raise SpecError(key, str(path), "UTF-8 text", "the file is binary or UTF-16")
    try:
        return raw.decode("utf-8-sig").splitlines()
    except UnicodeDecodeError as err:
        raise SpecError(key, str(path), "UTF-8 text", f"byte {err.start} is not UTF-8") from None


def _thin(x: np.ndarray, f: np.ndarray, key: str, where: str) -> tuple[np.ndarray, np.ndarray]:
    """Keep the fewest rows (first and last always) such that the straight-line
    interpolation through them stays within :data:`RESAMPLE_TOL` of every row (greedy
    Douglas–Peucker in 2y/W); a subset of a monotone table stays monotone."""
    keep = np.zeros(len(x), dtype=bool)
    keep[[0, -1]] = True
    stack = [(0, len(x) - 1)]
    while stack:
        i, j = stack.pop()
        if j - i < 2:
            continue
        xs, fs = x[i + 1 : j], f[i + 1 : j]
        line = f[i] + (f[j] - f[i]) * (xs - x[i]) / (x[j] - x[i])
        err = np.abs(fs - line)
        k = int(np.argmax(err))
        if err[k] > RESAMPLE_TOL:
            m = i + 1 + k
            keep[m] = True
            stack += [(i, m), (m, j)]
    if int(keep.sum()) > MAX_STATIONS:
        raise SpecError(
            key,
            where,
            f"a table that {MAX_STATIONS} stations describe within 2y/W ± {RESAMPLE_TOL:g}",
            f"it needs {int(keep.sum())}: the wall curve is too wiggly to build",
        )
    return x[keep], f[keep]


def _validate(x: np.ndarray, f: np.ndarray, key: str, where: str) -> None:
    def bad(allowed: str, reason: str) -> SpecError:
        return SpecError(key, where, allowed, reason)

    if len(x) < 4:
        raise bad("at least 4 rows", f"the table has {len(x)}")
    if not (np.all(np.isfinite(x)) and np.all(np.isfinite(f))):
        raise bad("finite numbers", "the table holds NaN or infinity")
    if abs(x[0]) > 1e-12 or abs(x[-1] - 1) > 1e-12:
        raise bad("x/L from 0 to 1", f"the table runs from {x[0]:g} to {x[-1]:g}")
    if np.any(np.diff(x) <= 0):
        i = int(np.argmax(np.diff(x) <= 0))
        raise bad("x/L strictly increasing", f"row {i + 2} (x/L = {x[i + 1]:g}) does not increase")
    if np.any(f <= 0) or np.any(f > 1):
        i = int(np.argmax((f <= 0) | (f > 1)))
        raise bad("0 < 2y/W <= 1", f"row {i + 1} has 2y/W = {f[i]:g}")
    if abs(f[-1] - 1) > 1e-12:
        raise bad("2y/W = 1 at x/L = 1", f"the last row has 2y/W = {f[-1]:g}")
    if np.any(np.diff(f) < 0):
        i = int(np.argmax(np.diff(f) < 0))
        raise bad("2y/W non-decreasing", f"the walls converge at row {i + 2} (x/L = {x[i + 1]:g})")


def load_profile(name_or_path: str) -> Profile:
    """Load a bundled table by name or a user's CSV by path; raises :class:`SpecError`."""
    candidate = Path(name_or_path)
    if candidate.suffix.lower() == ".csv":
        if not candidate.exists():  # a folder or a pipe is found, and refused as such
            raise SpecError(
                "planform.profile", name_or_path, "an existing CSV file", "file not found"
            )
        return _parse(candidate, "planform.profile")
    path = profiles_dir() / f"{name_or_path}.csv"
    if not path.is_file():
        names = ", ".join(p.name for p in available_profiles()) or "(none found)"
        raise SpecError(
            "planform.profile",
            name_or_path,
            f"one of {names}, or a path to a .csv table",
            "unknown profile",
        )
    return _parse(path, "")


def available_profiles() -> list[Profile]:
    """Every bundled table, sorted by name."""
    folder = profiles_dir()
    if not folder.is_dir():
        return []
    return sorted((_parse(p, "") for p in folder.glob("*.csv")), key=lambda p: p.name)
