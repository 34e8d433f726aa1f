"""The STEP file's text made reproducible (no CAD kernel): time stamp, product name, lines.

The STEP writer puts its own time and a per-process numbered product name into the file;
:func:`stamp_step` replaces both with the build date (:func:`ductgen.stamp.build_datetime`)
and the given name. It is the last step of encoding a solid and is also applied to a solid's
STEP bytes taken from the solid cache, so a cached solid written under another name or on
another day is byte for byte the file a fresh build would write.

:func:`reproducible_step` also writes rounding noise (numbers below 1e-12: mm, or
components of a unit vector) as zero, since it differs between runs of the shape fixing,
and a negative zero as ``0.`` (a unit vector's zero component read back from the kernel's
binary B-rep, as a solid handed between two workers is, came back ``0.`` where the solid
built in place wrote ``-0.``),
and :func:`one_statement_per_line` undoes the writer's line wrapping. Where the writer breaks a
line depends on how long it printed each number, and a coordinate that is rounding noise
(below 1e-12, written as zero afterwards) is printed at a different length from one run of
the shape fixing to the next; one statement per line makes the bytes independent of it.
ISO 10303-21 reads the file as one stream of tokens (line breaks between them carry no
meaning; how to print a file is left to its informative print guidelines), so a reader sees
the same entities.
"""

from __future__ import annotations

import re

from ductgen.stamp import build_datetime

__all__ = ["one_statement_per_line", "reproducible_step", "stamp_step"]

_FILE_NAME = re.compile(rb"FILE_NAME\('([^']*)','[^']*'")
#: The product entity (id, name, description, contexts) with the line breaks the writer put
#: in it (where it breaks depends on the name's length)
_PRODUCT = re.compile(
    rb"PRODUCT\(\s*'[^']*'\s*,\s*'[^']*'\s*,\s*'([^']*)'\s*,\s*\(([^)]*)\)\s*\)\s*;"
)


#: A line break (and the next line's indentation) that does not end a statement: the writer
#: ends every statement with ``;`` and a line; it breaks long ones between tokens. (Each
#: pattern here starts with a literal, which the regular-expression engine looks for
#: first: written with the look-behind first, they took ~10x the time, ~40 ms on a 0.8 MB
#: file for the three.)
_WRAP = re.compile(rb"\n(?<!;\n)[ ]*")


def one_statement_per_line(data: bytes) -> bytes:
    """``data`` (STEP text as the kernel's writer wraps it) with every statement on one line:
    the writer's continuation breaks and their indentation removed, ``\\n`` after each ``;``.
    """
    return _WRAP.sub(b"", data.replace(b"\r\n", b"\n"))


#: A number below 1e-12 in the writer's format (``-1.776356839400E-15``)
_NOISE = re.compile(rb"(?<![\w.#])-?\d\.\d*E-(?:1[3-9]|[2-9]\d|\d{3})(?![\w.])")
#: Where such a number can end: from its point on (the mantissa is one digit, maybe signed)
_NOISE_TAIL = re.compile(rb"\.\d*E-(?:1[3-9]|[2-9]\d|\d{3})(?![\w.])")


#: A negative zero in the writer's format (``-0.``), a whole number in a list
_NEGATIVE_ZERO = re.compile(rb"-(?<![\w.#]-)0\.(?=[,)])")


def _without_noise(data: bytes) -> bytes:
    """``data`` with every :data:`_NOISE` number written ``0.``, as ``_NOISE.sub(b"0.",
    data)`` would write it: each number's tail found first, then the whole pattern tried
    where it can start (at the sign, else at the digit)."""
    out, last = [], 0
    for m in _NOISE_TAIL.finditer(data):
        for start in (m.start() - 2, m.start() - 1):
            n = _NOISE.match(data, start) if start >= last else None
            if n is not None and n.end() == m.end():
                out += [data[last:start], b"0."]
                last = m.end()
                break
    out.append(data[last:])
    return b"".join(out)


def reproducible_step(data: bytes, name: str) -> bytes:
    """``data`` (the STEP writer's text) as ductgen writes it: one statement per line,
    stamped (:func:`stamp_step`), rounding noise and negative zeros written as ``0.``."""
    text = _without_noise(stamp_step(one_statement_per_line(data), name))
    return _NEGATIVE_ZERO.sub(b"0.", text)


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
