"""Reading a user's mesh or CAD file for ``ductgen check``: strict, bounded, and every
unreadable input a :class:`~ductgen.errors.SpecError` on ``FILE`` (exit 2), never a
traceback or a misleading "not closed".

STL (binary or ASCII) is read here with numpy only; STEP needs the CAD kernel and is read
by :func:`step_mesh`, which the caller runs in the kernel worker (memory cap, timeout).
"""

from __future__ import annotations

import os
import re
import stat
from pathlib import Path

import numpy as np

from ductgen.errors import SpecError

__all__ = ["MAX_CHECK_BYTES", "check_readable", "read_stl", "step_mesh"]

#: Largest file ``ductgen check`` reads (bytes): about 4 million binary STL triangles.
MAX_CHECK_BYTES = 200_000_000

_KEY = "FILE"
_ALLOWED = "an existing .stl, .step or .stp file"


def check_readable(path: Path) -> int:
    """Size (bytes) of ``path`` after checking it is a non-empty regular file within
    :data:`MAX_CHECK_BYTES`."""
    try:
        st = os.stat(path)
    except OSError as err:
        raise SpecError(_KEY, str(path), _ALLOWED, err.strerror or "cannot read it") from None
    if stat.S_ISDIR(st.st_mode):
        raise SpecError(_KEY, str(path), _ALLOWED, "the path is a folder, not a file")
    if not stat.S_ISREG(st.st_mode):
        raise SpecError(_KEY, str(path), _ALLOWED, "it is a pipe, socket or device")
    if st.st_size == 0:
        raise SpecError(_KEY, str(path), _ALLOWED, "the file is empty")
    if st.st_size > MAX_CHECK_BYTES:
        raise SpecError(
            _KEY,
            str(path),
            f"at most {MAX_CHECK_BYTES:,} bytes",
            f"the file has {st.st_size:,} bytes",
        )
    return st.st_size


def _unreadable(path: Path, why: str) -> SpecError:
    return SpecError(_KEY, str(path), "a complete STL or STEP file", f"unreadable: {why}")


def read_stl(path: Path) -> tuple[np.ndarray, np.ndarray]:
    """Vertices (3N, 3) mm and faces (N, 3) of a binary or ASCII STL.

    Raises:
        SpecError: empty, truncated, garbage, or non-finite vertices.
    """
    size = check_readable(path)
    raw = Path(path).read_bytes()
    count = int.from_bytes(raw[80:84], "little") if size >= 84 else -1
    if count >= 0 and size == 84 + 50 * count:
        rec = np.frombuffer(
            raw, dtype=[("n", "<f4", 3), ("v", "<f4", (3, 3)), ("a", "<u2")], offset=84
        )
        tris = rec["v"].astype(float)
    elif raw.lstrip()[:5].lower() == b"solid":
        tris = _ascii_triangles(raw, path)
    elif count >= 0:
        raise _unreadable(
            path,
            f"truncated or not an STL: a binary STL of {count:,} triangles has "
            f"{84 + 50 * count:,} bytes, this file {size:,}",
        )
    else:
        raise _unreadable(path, f"truncated: {size} bytes is shorter than an STL header")
    if len(tris) == 0:
        raise _unreadable(path, "the file holds no triangles")
    if not np.all(np.isfinite(tris)):
        bad = int(np.argmax(~np.all(np.isfinite(tris), axis=(1, 2))))
        raise _unreadable(path, f"triangle {bad + 1} has a NaN or infinite coordinate")
    return tris.reshape(-1, 3), np.arange(3 * len(tris), dtype=np.int64).reshape(-1, 3)


_VERTEX = re.compile(rb"^\s*vertex\s+(\S+)\s+(\S+)\s+(\S+)\s*$")
_KEYWORDS = (b"solid", b"facet", b"outer", b"endloop", b"endfacet", b"endsolid")


def _ascii_triangles(raw: bytes, path: Path) -> np.ndarray:
    pts: list[tuple[float, float, float]] = []
    facets = 0
    ended = False
    for n, line in enumerate(raw.splitlines(), start=1):
        s = line.strip()
        if not s:
            continue
        m = _VERTEX.match(s)
        if m:
            try:
                pts.append((float(m.group(1)), float(m.group(2)), float(m.group(3))))
            except ValueError:
                raise _unreadable(path, f"line {n}: a vertex needs three numbers") from None
            continue
        word = s.split()[0].lower()
        if word not in _KEYWORDS:
            raise _unreadable(path, f"line {n} is not ASCII STL: {s[:40]!r}")
        facets += word == b"endfacet"
        ended = ended or word == b"endsolid"
    if not ended:
        raise _unreadable(path, "truncated: no 'endsolid' line")
    if len(pts) != 3 * facets:
        raise _unreadable(path, f"{facets} facets but {len(pts)} vertices (3 per facet)")
    return np.asarray(pts, dtype=float).reshape(-1, 3, 3)


def step_mesh(path: str) -> tuple[np.ndarray, np.ndarray]:  # pragma: no cover - in the worker
    """Triangulated STEP solid (vertices mm, faces); run it in the kernel worker.

    Raises:
        SpecError: not a STEP file, truncated, or holding no solid faces.
    """
    p = Path(path)
    check_readable(p)
    with open(p, "rb") as fh:
        head = fh.read(64).lstrip()
    if not head.startswith(b"ISO-10303-21"):
        raise _unreadable(p, "not a STEP file (no 'ISO-10303-21;' header)")
    import cadquery as cq

    from ductgen.solids.mesh import triangulate

    try:
        shape = cq.importers.importStep(str(p)).val()
        if not isinstance(shape, cq.Shape):  # nothing transferred: the workplane's origin
            raise _unreadable(p, "no surfaces could be read (truncated or empty STEP)")
        verts, faces = triangulate(shape, 0.05, 0.2)
    except SpecError:
        raise
    except Exception as err:  # the kernel's reader raises several unrelated classes
        raise _unreadable(p, f"the STEP reader failed ({type(err).__name__})") from None
    if len(faces) == 0:
        raise _unreadable(p, "no surfaces could be read (truncated or empty STEP)")
    return np.asarray(verts, dtype=float), np.asarray(faces, dtype=np.int64)
