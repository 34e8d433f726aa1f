"""Same spec + same version → byte-identical files; the date from ``SOURCE_DATE_EPOCH``
(the Reproducible Builds convention).

Source: the reproducible-builds convention, https://reproducible-builds.org/specs/
source-date-epoch/ [published]: ``SOURCE_DATE_EPOCH`` is seconds since 1970-01-01 00:00 UTC;
1700000000 s is 2023-11-14 22:13:20 UTC (closed form: 19675 days + 80000 s). Readers: ezdxf
for the DXF header, pymupdf for the PDF metadata, the STEP header read as text (ISO 10303-21
``FILE_NAME`` time stamp).
"""

from __future__ import annotations

import datetime as dt
import io
import re

import ezdxf
import pymupdf
import pytest
from ezdxf.tools.juliandate import calendardate
from hypothesis import given, settings
from hypothesis import strategies as st

from ductgen.pipeline import build
from ductgen.spec import load_spec
from ductgen.worker import KernelWorker
from tests.conftest import ROOT

SAMPLE = ROOT / "samples" / "drone-avionics-vent.toml"


def _build(folder, env_epoch: str | None, monkeypatch) -> dict[str, bytes]:  # type: ignore[no-untyped-def]
    if env_epoch is None:
        monkeypatch.delenv("SOURCE_DATE_EPOCH", raising=False)
    else:
        monkeypatch.setenv("SOURCE_DATE_EPOCH", env_epoch)
    worker = KernelWorker()  # a fresh worker inherits the environment just set
    try:
        build(load_spec(SAMPLE), folder, worker=worker, cache=False)  # both from the kernel
    finally:
        worker.close()
    return {p.name: p.read_bytes() for p in sorted(folder.iterdir())}


@pytest.mark.slow
def test_two_builds_are_byte_identical(tmp_path, monkeypatch) -> None:  # type: ignore[no-untyped-def]
    a = _build(tmp_path / "a", None, monkeypatch)
    b = _build(tmp_path / "b", None, monkeypatch)
    assert sorted(a) == sorted(b)
    kinds = {name.rsplit(".", 1)[-1] for name in a}
    assert {"step", "stl", "dxf", "pdf", "png", "json"} <= kinds
    differ = [name for name in a if a[name] != b[name]]
    assert differ == []


@pytest.mark.slow
def test_source_date_epoch_is_the_stated_date(tmp_path, monkeypatch) -> None:  # type: ignore[no-untyped-def]
    files = _build(tmp_path / "e", "1700000000", monkeypatch)
    when = dt.datetime(2023, 11, 14, 22, 13, 20)
    steps = [v for k, v in files.items() if k.endswith(".step")]
    assert len(steps) == 3
    for data in steps:
        head = data[:600].decode("ascii")
        assert "FILE_NAME(" in head and "'2023-11-14T22:13:20'" in head
    dxf = next(v for k, v in files.items() if k.endswith(".dxf")).decode("utf-8")
    # the header as written (ezdxf re-stamps $TDCREATE when it loads a file, so read the
    # group-code pairs: name, then code 40 and the Julian date)
    for var in ("$TDCREATE", "$TDUPDATE"):
        value = re.search(re.escape(var) + r"\r?\n\s*40\r?\n([^\r\n]+)", dxf)
        assert value is not None
        assert abs(calendardate(float(value.group(1))) - when) < dt.timedelta(seconds=1)
    doc = ezdxf.read(io.StringIO(dxf))
    assert "2023-11-14" in " ".join(e.dxf.text for e in doc.modelspace().query("TEXT"))
    for name in (k for k in files if k.endswith(".pdf")):
        pdf = pymupdf.open(stream=files[name], filetype="pdf")
        assert pdf.metadata["creationDate"].startswith("D:20231114221320"), name
        assert "2023-11-14" in "".join(page.get_text() for page in pdf), name


def test_stl_bytes_do_not_keep_rounding_noise_at_zero() -> None:
    """A vertex on a coordinate plane reads 0.0, -0.0 or 6e-30 mm from one kernel run to the
    next; the file must not tell them apart (closed form: all three are zero to 1e-9 mm)."""
    import numpy as np

    from ductgen.solids.cad_io import stl_bytes

    faces = np.array([[0, 1, 2], [0, 3, 1], [1, 3, 2], [0, 2, 3]])
    files = set()
    for zero in (0.0, -0.0, 6.3e-30, -8.1e-31):
        verts = np.array([[zero, 0.0, 0.0], [10.0, zero, 0.0], [0.0, 10.0, 0.0], [0.0, 0.0, 10.0]])
        files.add(stl_bytes(verts, faces))
    assert len(files) == 1
    moved = np.array([[1e-3, 0.0, 0.0], [10.0, 0.0, 0.0], [0.0, 10.0, 0.0], [0.0, 0.0, 10.0]])
    assert stl_bytes(moved, faces) not in files  # a real micrometre still shows


def test_step_text_does_not_depend_on_where_the_writer_broke_a_line() -> None:
    """The same statements wrapped at other places, with a noise coordinate printed at two
    lengths or as an exact zero, positive or negative, give the same bytes (ISO 10303-21:
    line breaks between tokens carry no meaning; the kernel's writer wraps near 72
    characters, so a longer number moves its breaks)."""
    from ductgen.solids.step_text import reproducible_step

    head = (
        b"ISO-10303-21;\nHEADER;\nFILE_NAME('a','2020-01-01T00:00:00',('x'),(\n"
        b"    'y'),'z','w'\n  ,'v');\nENDSEC;\nDATA;\n"
    )
    tail = b"ENDSEC;\nEND-ISO-10303-21;\n"
    variants = [
        b"#1 = CARTESIAN_POINT('',(-1.776356839400E-15,-4.15,\n    0.));\n",
        b"#1 = CARTESIAN_POINT('',(2.1E-14,-4.15,0.));\n",
        b"#1 = CARTESIAN_POINT('',(0.,-4.15,0.));\n",
        b"#1 = CARTESIAN_POINT('',\n  (0.,\n    -4.15,0.)\n  );\r\n",
        b"#1 = CARTESIAN_POINT('',(-0.,-4.15,-0.));\n",  # negative zeros
    ]
    files = {reproducible_step(head + v + tail, "p") for v in variants}
    assert len(files) == 1
    (text,) = files
    assert b"#1 = CARTESIAN_POINT('',(0.,-4.15,0.));\n" in text
    assert text.count(b"\n") == text.count(b";\n") == 8  # one statement per line
    # a number at or above 1e-12 is not noise by the rule
    kept = reproducible_step(head + b"#1 = CARTESIAN_POINT('',(1.5E-11,-4.15,0.));\n" + tail, "p")
    assert b"(1.5E-11,-4.15,0.)" in kept
    kept = reproducible_step(head + b"#1 = CARTESIAN_POINT('',(-0.5,-0.05,-0.));\n" + tail, "p")
    assert b"(-0.5,-0.05,0.)" in kept  # only a zero loses its sign


#: STEP-like text: numbers with exponents near the noise bound, signs, points, separators,
#: statement ends, line breaks and indentation, names and entity references.
_STEP_BITS = st.lists(
    st.sampled_from(
        [
            b"-",
            b"0",
            b"1",
            b"5",
            b".",
            b"E-",
            b"E-1",
            b"E-13",
            b"E-12",
            b"E-145",
            b"E+02",
            b"-0.",
            b"0.",
            b"1.5E-14",
            b"-1.E-13",
            b"2.E-12",
            b",",
            b"(",
            b")",
            b";",
            b"\n",
            b"\r\n",
            b"  ",
            b"#",
            b"A",
            b"_",
            b"'",
        ]
    ),
    max_size=40,
).map(b"".join)


@settings(max_examples=400, deadline=None)
@given(_STEP_BITS)
def test_step_text_rules_are_their_plain_patterns(text: bytes) -> None:
    """The STEP text rules are written so the regular-expression engine can look for a
    literal first; on any text they change exactly what their plain statements do: a line
    break not after ``;`` (with the next line's indentation) removed, a number below 1e-12
    written ``0.``, a negative zero in a list written ``0.`` (each plain pattern below is
    the rule as stated, look-behind first)."""
    from ductgen.solids.step_text import _NEGATIVE_ZERO, _without_noise, one_statement_per_line

    wrap = re.compile(rb"(?<!;)\r?\n[ ]*")
    noise = re.compile(rb"(?<![\w.#])-?\d\.\d*E-(?:1[3-9]|[2-9]\d|\d{3})(?![\w.])")
    negative_zero = re.compile(rb"(?<![\w.#])-0\.(?=[,)])")
    plain = text.replace(b"\r\n", b"\n")
    assert one_statement_per_line(text) == wrap.sub(b"", plain)
    assert _without_noise(text) == noise.sub(b"0.", text)
    assert _NEGATIVE_ZERO.sub(b"0.", text) == negative_zero.sub(b"0.", text)


def test_stl_bytes_are_trimeshs_export_byte_for_byte() -> None:
    """Against trimesh's binary STL exporter (a reference library from the registry) on the
    same float32-rounded mesh: a sphere off the origin, plus a facet with a repeated
    vertex, one of three collinear points and one too small for a normal (zero normals)."""
    import numpy as np
    import trimesh

    from ductgen.solids.cad_io import stl_bytes

    sphere = trimesh.creation.icosphere(subdivisions=4, radius=37.3)
    offset = np.array([100.123, -3.3, 4e-10])
    verts = np.vstack([sphere.vertices + offset, np.eye(3) * [1.0, 2.0, 1e-8]])
    n = len(sphere.vertices)
    faces = np.vstack([sphere.faces, [[0, 0, 1], [n, n + 1, n + 1], [n, n + 1, n + 2]]])
    faces = np.vstack([faces, [[n, n + 1, n]], [[0, n, 1]]])
    rounded = verts.astype(np.float32).astype(np.float64)
    rounded[np.abs(rounded) < 1e-9] = 0.0
    mesh = trimesh.Trimesh(rounded, faces, process=False, validate=False)
    assert stl_bytes(verts, faces) == bytes(trimesh.exchange.stl.export_stl(mesh))
