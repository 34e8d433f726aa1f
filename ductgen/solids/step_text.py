"""The STEP header's time stamp and product name, set on the file's text (no CAD kernel).

The STEP writer puts its own time and a per-process numbered product name into the file;
:func:`stamp_step` replaces both with the build date (:func:`ductgen.stamp.build_datetime`)
and the given name. It is the last step of encoding a solid and is also applied to a solid's
STEP bytes taken from the solid cache, so a cached solid written under another name or on
another day is byte for byte the file a fresh build would write.
"""

from __future__ import annotations

import re

from ductgen.stamp import build_datetime

__all__ = ["stamp_step"]

_FILE_NAME = re.compile(rb"FILE_NAME\('([^']*)','[^']*'")
#: The product entity (id, name, description, contexts) with the line breaks the writer put
#: in it (where it breaks depends on the name's length)
_PRODUCT = re.compile(
    rb"PRODUCT\(\s*'[^']*'\s*,\s*'[^']*'\s*,\s*'([^']*)'\s*,\s*\(([^)]*)\)\s*\)\s*;"
)


def stamp_step(data: bytes, name: str) -> bytes:
    """``data`` (STEP AP214 text) with the ``FILE_NAME`` time stamp set to the build date
    and the first ``PRODUCT``'s id and name set to ``name``, written on one line whatever
    the name's length (so the bytes do not depend on the name the writer was given)."""
    stamp = build_datetime().strftime("%Y-%m-%dT%H:%M:%S").encode()
    data = _FILE_NAME.sub(lambda m: b"FILE_NAME('" + m.group(1) + b"','" + stamp + b"'", data, 1)
    # the writer numbers products per process ("name 1", "name 2", ...): keep the name
    plain = name.encode("ascii", "replace").replace(b"'", b"''")
    return _PRODUCT.sub(
        lambda m: (
            b"PRODUCT('%s','%s','%s',(%s));"
            % (plain, plain, m.group(1), re.sub(rb"\s+", b"", m.group(2)))
        ),
        data,
        1,
    )
