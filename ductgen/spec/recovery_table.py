"""A user's recovery table (``flow.recovery = "table.csv"``): found and validated at load.

The CSV has columns ``ivr,recovery`` (a header row and ``#`` comment lines allowed): inlet
velocity ratio IVR ≥ 0, strictly increasing, and ram recovery in [0, 1]. Reading lives in
the spec layer so that a bad table is a :class:`~ductgen.errors.SpecError` at load time; the
flow model receives plain arrays.
"""

from __future__ import annotations

import csv
import math
from pathlib import Path

__all__ = ["MAX_TABLE_BYTES", "MAX_TABLE_ROWS", "find_recovery_table", "read_recovery_table"]


def find_recovery_table(text: str) -> Path:
    """Resolve a recovery-table path: as given (the loader makes it relative to the spec's
    folder), else among the bundled data (``ductgen/data/``, its ``profiles/``).

    Raises:
        ValueError: no such file.
    """
    from ductgen.resources import data_path, profiles_dir

    p = Path(text).expanduser()
    candidates = [p] if p.is_absolute() else [p, data_path() / p, profiles_dir() / p]
    for c in candidates:
        if c.exists():  # a folder or a pipe is found here and refused when read
            return c.resolve()
    raise ValueError(
        f"recovery table {text!r} not found (looked in the spec's folder and the bundled data)"
    )


#: Largest recovery table read (bytes): a measured curve has tens of rows.
MAX_TABLE_BYTES = 1_000_000
#: Most rows in a recovery table.
MAX_TABLE_ROWS = 10_000


def read_recovery_table(path: str | Path) -> tuple[tuple[float, ...], tuple[float, ...]]:
    """Read and validate a recovery table; returns (IVR values, recovery values).

    Raises:
        ValueError: a row that breaks a rule, named by line number.
    """
    path = Path(path)
    try:
        if path.is_dir():
            raise ValueError(f"recovery table {path} is a folder, not a CSV file")
        if not path.is_file():
            raise ValueError(
                f"recovery table {path} is a pipe, socket or device (which may never end), "
                "not a regular CSV file"
            )
        size = path.stat().st_size
        if size > MAX_TABLE_BYTES:
            raise ValueError(
                f"recovery table {path.name} is {size:,} bytes; at most {MAX_TABLE_BYTES:,}"
            )
        raw = path.read_bytes()
        if b"\x00" in raw:
            raise ValueError(f"recovery table {path.name} is binary or UTF-16, not UTF-8 text")
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError as err:
        raise ValueError(f"recovery table {path.name}: byte {err.start} is not UTF-8") from None
    except OSError as err:
        raise ValueError(f"cannot read recovery table {path}: {err.strerror or err}") from err
    rows: list[tuple[float, float]] = []
    lines = [
        (n, ln)
        for n, ln in enumerate(text.splitlines(), 1)
        if ln.strip() and not ln.lstrip().startswith("#")
    ]
    for n, cells in ((n, next(csv.reader([ln]))) for n, ln in lines):
        if len(cells) != 2:
            raise ValueError(f"{path.name} line {n}: expected two columns 'ivr,recovery'")
        try:
            a, b = float(cells[0]), float(cells[1])
        except ValueError:
            if not rows and n == lines[0][0]:
                continue  # header row
            raise ValueError(f"{path.name} line {n}: not numbers: {','.join(cells)}") from None
        if not (math.isfinite(a) and math.isfinite(b)):
            raise ValueError(f"{path.name} line {n}: values must be finite")
        if a < 0:
            raise ValueError(f"{path.name} line {n}: IVR {a:g} is negative")
        if not 0.0 <= b <= 1.0:
            raise ValueError(f"{path.name} line {n}: recovery {b:g} outside [0, 1]")
        if rows and a <= rows[-1][0]:
            raise ValueError(
                f"{path.name} line {n}: IVR must increase strictly ({a:g} after {rows[-1][0]:g})"
            )
        rows.append((a, b))
        if len(rows) > MAX_TABLE_ROWS:
            raise ValueError(f"{path.name}: more than {MAX_TABLE_ROWS:,} rows")
    if len(rows) < 2:
        raise ValueError(f"{path.name}: a recovery table needs at least two rows")
    return tuple(r[0] for r in rows), tuple(r[1] for r in rows)
