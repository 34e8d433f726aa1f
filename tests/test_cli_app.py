"""Catalogue of bad inputs: every one exits 2 with a message naming the key or
option and what is allowed, prints no traceback and changes nothing on disk.

The expected words come from the allowed ranges the spec reference (README) states; none
of these cases reaches the CAD kernel except the truncated STEP (read in the worker).
"""

# ruff: noqa: E501  (the catalogue is a table: one bad input per line)

from __future__ import annotations

import json
import os
import signal
import struct
from collections.abc import Callable
from pathlib import Path

import pytest

from ductgen.cli.app import main
from tests.conftest import GOOD
from tests.helpers import tree_digest


@pytest.fixture(autouse=True)
def _keep_signal_handlers():  # type: ignore[no-untyped-def]
    """main() installs SIGTERM/SIGHUP handlers; give pytest its own back."""
    saved = {s: signal.getsignal(s) for s in (signal.SIGTERM, signal.SIGHUP)}
    yield
    for s, h in saved.items():
        signal.signal(s, h)


def _spec(tmp: Path, text: str, name: str = "s.toml") -> Path:
    p = tmp / name
    p.write_text(text, encoding="utf-8")
    return p


def _replace(old: str, new: str) -> Callable[[Path], list[str]]:
    def make(tmp: Path) -> list[str]:
        spec = _spec(tmp, GOOD.replace(old, new))
        return ["build", str(spec), "-o", str(tmp / "out")]

    return make


def _append(extra: str) -> Callable[[Path], list[str]]:
    def make(tmp: Path) -> list[str]:
        spec = _spec(tmp, GOOD + extra)
        return ["build", str(spec), "-o", str(tmp / "out")]

    return make


def _raw(name: str, data: bytes) -> Callable[[Path], list[str]]:
    def make(tmp: Path) -> list[str]:
        (tmp / name).write_bytes(data)
        return ["build", str(tmp / name), "-o", str(tmp / "out")]

    return make


def _profile(data: bytes) -> Callable[[Path], list[str]]:
    def make(tmp: Path) -> list[str]:
        (tmp / "w.csv").write_bytes(data)
        spec = _spec(tmp, GOOD + '[planform]\nprofile = "w.csv"\n')
        return ["build", str(spec), "-o", str(tmp / "out")]

    return make


def _cli(*args: str) -> Callable[[Path], list[str]]:
    """Arguments with ``{spec}`` (a good spec), ``{tmp}`` and ``{file}`` (an existing file)."""

    def make(tmp: Path) -> list[str]:
        spec = _spec(tmp, GOOD)
        (tmp / "afile").write_text("x")
        return [a.format(spec=spec, tmp=tmp, file=tmp / "afile") for a in args]

    return make


def _check(name: str, data: bytes | None, *extra: str) -> Callable[[Path], list[str]]:
    def make(tmp: Path) -> list[str]:
        if data is not None:
            (tmp / name).write_bytes(data)
        return ["check", str(tmp / name), *extra]

    return make


def _stl(tris: list[list[list[float]]], count: int | None = None) -> bytes:
    rec = b"".join(
        struct.pack("<3f", 0, 0, 1) + b"".join(struct.pack("<3f", *v) for v in t) + b"\0\0"
        for t in tris
    )
    return b" " * 80 + struct.pack("<I", len(tris) if count is None else count) + rec


_TRI = [[0.0, 0.0, 0.0], [1.0, 0.0, 0.0], [0.0, 1.0, 0.0]]
_NAN_TRI = [[float("nan"), 0.0, 0.0], [1.0, 0.0, 0.0], [0.0, 1.0, 0.0]]


def _alias_bomb() -> bytes:
    lines = ['name: "t"', 'a0: &a0 ["x", "x", "x", "x", "x", "x", "x", "x", "x"]']
    for i in range(1, 9):
        lines.append(f"a{i}: &a{i} [" + ", ".join([f"*a{i - 1}"] * 9) + "]")
    lines.append("throat: {width: 80, depth: 20, extra: *a8}")
    return ("\n".join(lines) + "\n").encode()


def _csv_rows(n: int) -> bytes:
    rows = [f"{i / (n - 1):.9f},{0.2 + 0.8 * (i / (n - 1)) ** 2:.9f}" for i in range(n)]
    return ("x_over_L,two_y_over_W\n" + "\n".join(rows) + "\n").encode()


def _staircase(n: int) -> bytes:
    """A non-decreasing table with a step every row: no 200 stations describe it."""
    rows = [
        f"{i / (n - 1):.9f},{min(1.0, 0.2 + 0.8 * ((i + i % 2) / (n - 1))):.9f}" for i in range(n)
    ]
    rows[-1] = "1,1"
    return ("x_over_L,two_y_over_W\n" + "\n".join(rows) + "\n").encode()


def _special(name: str, kind: str, extra: str) -> Callable[[Path], list[str]]:
    """A spec whose table ``name`` is a folder or a named pipe (a FIFO never ends)."""

    def make(tmp: Path) -> list[str]:
        if kind == "folder":
            (tmp / name).mkdir()
        else:
            os.mkfifo(tmp / name)
        spec = _spec(tmp, GOOD + extra)
        return ["build", str(spec), "-o", str(tmp / "out"), "--only", "template"]

    return make


_RECOVERY = '[flow]\nspeed = "40 m/s"\nrun_length = "1 m"\nrecovery = "r.csv"\n'


def _nan_panel(tmp: Path) -> list[str]:
    """A flat scan of 200 x 200 mm (two triangles) plus one triangle with a NaN vertex."""
    plate = [
        [[-100.0, -100.0, 0.0], [100.0, -100.0, 0.0], [100.0, 100.0, 0.0]],
        [[-100.0, -100.0, 0.0], [100.0, 100.0, 0.0], [-100.0, 100.0, 0.0]],
    ]
    (tmp / "scan.stl").write_bytes(_stl([*plate, _NAN_TRI]))
    skin = (
        '[skin]\nshape = "panel"\nfile = "scan.stl"\nunits = "mm"\n'
        "at = [-50, 0, 0]\nflow_direction = [1, 0, 0]\noutward = [0, 0, 1]\n"
    )
    spec = _spec(
        tmp,
        GOOD.replace('kind = "round"\ndiameter = 50\ntransition_length = 100', 'kind = "none"')
        + skin,
    )
    return ["build", str(spec), "-o", str(tmp / "out"), "--only", "cutter"]


# (id, make args, option/key named, words that say what is allowed or why)
CASES: list[tuple[str, Callable[[Path], list[str]], str, list[str]]] = [
    # --- quantities: bounded grammar, real sentences ---------------------------------
    ("power-tower", _replace("depth = 20", 'depth = "10**10**10 mm"'), "throat.depth", ["arithmetic is not evaluated"]),
    ("python-code", _replace("depth = 20", "depth = \"__import__('os').system('x')\""), "throat.depth", ["cannot read", "number followed by a unit"]),
    ("mass-for-length", _replace("depth = 20", 'depth = "12 kg"'), "throat.depth", ["is a mass, not a length"]),
    ("area-for-length", _replace("depth = 20", 'depth = "110 mm mm"'), "throat.depth", ["is an area, not a length"]),
    ("furlongs", _replace("depth = 20", 'depth = "3 furlongs"'), "throat.depth", ["<= 1000 mm", "given 603505 mm"]),
    ("tiny-depth", _replace("depth = 20", "depth = 1e-9"), "throat.depth", [">= 2 mm"]),
    ("tiny-width", _replace("width = 80", "width = 1e-9"), "throat.width", [">= 5 mm"]),
    ("negative-width", _replace("width = 80", "width = -80"), "throat.width", [">= 5 mm"]),
    ("infinite-number", _replace("depth = 20", 'depth = "1e999 mm"'), "throat.depth", ["finite"]),
    ("huge-int", _replace("depth = 20", "depth = " + "9" * 60), "throat.depth", ["digit number"]),
    ("long-quantity", _replace("depth = 20", 'depth = "' + "1" * 200 + ' mm"'), "throat.depth", ["at most 64 characters"]),
    ("unknown-unit", _replace("depth = 20", 'depth = "20 smoots"'), "throat.depth", ["unknown unit 'smoots'"]),
    ("dangling-slash", _replace("depth = 20", 'depth = "20 mm/"'), "throat.depth", ["cannot read the unit"]),
    ("boolean-length", _replace("depth = 20", "depth = true"), "throat.depth", ["boolean"]),
    ("bare-speed", _append('[flow]\nspeed = 45\n'), "flow.speed", ["bare number is ambiguous"]),
    ("temperature-offset", _replace("angle_deg = 7", 'angle_deg = "7 degC"'), "ramp.angle_deg", ["not an angle"]),
    # --- spec structure -------------------------------------------------------------
    ("typo-key", _replace("width = 80", "widht = 80"), "throat.widht", ["did you mean 'width'"]),
    ("unknown-section", _append("[colour]\nred = 1\n"), "colour", ["unknown key"]),
    ("angle-and-length", _replace("angle_deg = 7", "angle_deg = 7\nlength = 200"), "ramp", ["not both"]),
    ("steep-ramp", _replace("angle_deg = 7", "angle_deg = 45"), "ramp.angle_deg", ["< 30"]),
    ("lip-style", _append('[lip]\nstyle = "proud"\n'), "lip.style", ["'flush'"]),
    ("holes-negative", _append("[insert]\nholes = { count = -1 }\n"), "insert.holes.count", [">= 0"]),
    ("holes-many", _append("[insert]\nholes = { count = 1000 }\n"), "insert.holes.count", ["<= 200"]),
    ("outlet-kind", _replace('kind = "round"', 'kind = "hex"'), "outlet", ["kind one of"]),
    ("long-name-echo-cut", _replace('name = "t"', 'name = "' + "n" * 200_000 + '"'), "name", ["characters)"]),
    # --- spec files -----------------------------------------------------------------
    ("toml-syntax", _replace("depth = 20", "depth = = 20"), "file", ["valid TOML"]),
    ("json-syntax", _raw("s.json", b'{"name": "t",'), "file", ["valid JSON"]),
    ("yaml-syntax", _raw("s.yaml", b"name: [t\n"), "file", ["valid YAML"]),
    ("json-duplicate", _raw("s.json", b'{"name": "t", "name": "u"}'), "file", ["duplicate key 'name'"]),
    ("yaml-duplicate", _raw("s.yaml", b"name: t\nname: u\n"), "file", ["duplicate key 'name'"]),
    ("yaml-alias-bomb", _raw("s.yaml", _alias_bomb()), "file", ["at most 100,000 values"]),
    ("json-deep", _raw("s.json", b'{"a":' + b"[" * 100_000 + b"]" * 100_000 + b"}"), "file", ["levels of nesting"]),
    ("yaml-deep", _raw("s.yaml", ("a: " + "[" * 40 + "]" * 40 + "\n").encode()), "file", ["at most 32 levels"]),
    ("binary-toml", _raw("s.toml", bytes(range(256)) * 4), "file", ["UTF-8", "binary or UTF-16"]),
    ("utf16-toml", _raw("s.toml", GOOD.encode("utf-16")), "file", ["UTF-16"]),
    ("latin1-yaml", _raw("s.yaml", "name: caf\xe9\n".encode("latin-1")), "file", ["is not UTF-8"]),
    ("huge-spec", _raw("s.toml", b"# " + b"x" * 1_100_000 + b"\n"), "file", ["at most 1,000,000 bytes"]),
    ("top-level-list", _raw("s.json", b"[1, 2]"), "file", ["table of sections"]),
    ("empty-yaml", _raw("s.yaml", b""), "file", ["table of sections"]),
    ("txt-suffix", _raw("s.txt", GOOD.encode()), "file", [".toml, .yaml"]),
    ("missing-spec", lambda t: ["build", str(t / "nope.toml")], "file", ["No such file"]),
    # --- wall-profile tables --------------------------------------------------------
    ("csv-header-ab", _profile(b"a,b\n0,0.2\n0.5,0.6\n0.8,0.9\n1,1\n"), "planform.profile", ["header x_over_L,two_y_over_W"]),
    ("csv-binary", _profile(b"\x00\x01\x02" * 100), "planform.profile", ["UTF-8"]),
    ("csv-utf16", _profile("x,f\n0,0.2\n0.5,0.6\n1,1\n".encode("utf-16")), "planform.profile", ["UTF-16"]),
    ("csv-rows", _profile(_csv_rows(100_001)), "planform.profile", ["at most 100,000 rows"]),
    ("csv-wiggly", _profile(_staircase(1001)), "planform.profile", ["200 stations"]),
    ("csv-short", _profile(b"x,f\n0,0.2\n1,1\n"), "planform.profile", ["at least 4 rows"]),
    ("csv-nan", _profile(b"x,f\n0,0.2\n0.5,nan\n0.8,0.9\n1,1\n"), "planform.profile", ["finite numbers"]),
    ("csv-three-columns", _profile(b"x,f\n0,0.2,1\n"), "planform.profile", ["two columns"]),
    ("csv-not-numeric", _profile(b"x,f\n0,0.2\n0.5,abc\n"), "planform.profile", ["numbers"]),
    ("profile-unknown", _append('[planform]\nprofile = "nope"\n'), "planform.profile", ["unknown profile"]),
    ("profile-missing-csv", _append('[planform]\nprofile = "nope.csv"\n'), "planform.profile", ["file not found"]),
    # --- build options --------------------------------------------------------------
    ("only-empty", _cli("build", "{spec}", "-o", "{tmp}/o", "--only", ""), "--only", ["the list is empty", "cutter"]),
    ("only-unknown", _cli("build", "{spec}", "-o", "{tmp}/o", "--only", "wing"), "--only", ["cutter"]),
    ("out-empty", _cli("build", "{spec}", "-o", ""), "-o/--out", ["a folder path", "empty"]),
    ("out-is-file", _cli("build", "{spec}", "-o", "{file}"), "-o/--out", ["a folder", "is a file"]),
    ("out-under-file", _cli("build", "{spec}", "-o", "{file}/sub"), "-o/--out", ["which is a file"]),
    ("quality", _cli("build", "{spec}", "-o", "{tmp}/o", "--quality", "ultra"), "--quality", ["draft"]),
    ("kerf", _cli("build", "{spec}", "-o", "{tmp}/o", "--kerf", "-1"), "--kerf", ["kerf"]),
    ("paper", _cli("build", "{spec}", "-o", "{tmp}/o", "--paper", "A0"), "--paper", ["A4"]),
    # --- init -----------------------------------------------------------------------
    ("init-folder", _cli("init", "--force", "{tmp}"), "PATH", ["a file name", "folder"]),
    ("init-suffix", _cli("init", "{tmp}/new.txt"), "PATH", [".toml, .yaml"]),
    ("init-example", _cli("init", "{tmp}/n.toml", "--example", "nope"), "--example", ["unknown sample"]),
    ("init-exists", _cli("init", "{spec}"), "--force", ["refusing to overwrite"]),
    # --- check ----------------------------------------------------------------------
    ("check-min-wall-negative", _check("a.stl", _stl([_TRI] * 4), "--min-wall", "-1"), "--min-wall", [">= 0 mm"]),
    ("check-min-wall-nan", _check("a.stl", _stl([_TRI] * 4), "--min-wall", "nan"), "--min-wall", ["finite"]),
    ("check-folder", lambda t: ["check", str(t)], "FILE", ["folder"]),
    ("check-missing", _check("nope.stl", None), "FILE", ["No such file"]),
    ("check-empty-stl", _check("e.stl", b""), "FILE", ["empty"]),
    ("check-empty-step", _check("e.step", b""), "FILE", ["empty"]),
    ("check-truncated-stl", _check("t.stl", _stl([_TRI] * 10)[:400]), "FILE", ["truncated"]),
    ("check-count-mismatch", _check("t.stl", _stl([_TRI] * 10, count=11)), "FILE", ["truncated"]),
    ("check-garbage-stl", _check("g.stl", bytes(range(256)) * 20), "FILE", ["unreadable"]),
    ("check-ascii-garbage", _check("g.stl", b"solid x\nhello world\n"), "FILE", ["not ASCII STL"]),
    ("check-ascii-truncated", _check("g.stl", b"solid x\nfacet normal 0 0 1\nouter loop\nvertex 0 0 0\n"), "FILE", ["truncated"]),
    ("check-nan-vertex", _check("n.stl", _stl([_TRI, _NAN_TRI])), "FILE", ["NaN"]),
    ("check-garbage-step", _check("g.step", b"\x89PNG garbage " * 50), "FILE", ["not a STEP file"]),
    ("check-obj", _check("a.obj", b"v 0 0 0\n"), "FILE", ["unknown file type"]),
    ("check-min-wall-text", _check("a.stl", _stl([_TRI] * 4), "--min-wall", "abc"), "--min-wall", ["a valid number"]),
    # --- sweeps ---------------------------------------------------------------------
    ("vary-empty-range", _cli("sweep", "{spec}", "-o", "{tmp}/sw", "--vary", "throat.width=120:100:10"), "--vary", ["120:100:10", "pointing from A towards B"]),
    ("vary-10000", _cli("sweep", "{spec}", "-o", "{tmp}/sw", "--vary", "throat.width=100:199.99:0.01"), "--yes", ["10000 variants", "more than 50"]),
    ("vary-max-variants", _cli("sweep", "{spec}", "-o", "{tmp}/sw", "--max-variants", "5", "--vary", "throat.width=60:100:4"), "--max-variants", ["11 variants"]),
    ("vary-max-variants-zero", _cli("sweep", "{spec}", "-o", "{tmp}/sw", "--max-variants", "0", "--vary", "throat.width=60,70"), "--max-variants", [">= 1"]),
    ("vary-units-mixed", _cli("sweep", "{spec}", "-o", "{tmp}/sw", "--vary", "throat.width=60mm:2kg:1mm"), "--vary", ["measure different things"]),
    ("vary-expression", _cli("sweep", "{spec}", "-o", "{tmp}/sw", "--vary", "throat.width=10**10**10:2:1"), "--vary", ["arithmetic is not evaluated"]),
    ("vary-bad-key", _cli("sweep", "{spec}", "-o", "{tmp}/sw", "--vary", "throat..width=1,2"), "--vary", ["dotted spec key"]),
    ("vary-no-equals", _cli("sweep", "{spec}", "-o", "{tmp}/sw", "--vary", "throat.width"), "--vary", ["KEY=A:B:STEP"]),
    ("vary-twice", _cli("sweep", "{spec}", "-o", "{tmp}/sw", "--vary", "throat.width=60,70", "--vary", "throat.width=80,90"), "--vary", ["each key once"]),
    ("zip-unequal", _cli("sweep", "{spec}", "-o", "{tmp}/sw", "--zip", "--vary", "throat.width=60,70", "--vary", "throat.depth=10,12,14"), "--zip", ["equal length"]),
    ("vary-zero-step", _cli("sweep", "{spec}", "-o", "{tmp}/sw", "--vary", "throat.width=60:70:0"), "--vary", ["STEP"]),
    ("vary-bad-value", _cli("sweep", "{spec}", "-o", "{tmp}/sw", "--vary", "throat.width=60,1e-9"), "throat.width", [">= 5 mm"]),
    ("sweep-jobs-zero", _cli("sweep", "{spec}", "-o", "{tmp}/sw", "-j", "0", "--vary", "throat.width=60,70"), "-j", [">= 1"]),
    ("sweep-only-empty", _cli("sweep", "{spec}", "-o", "{tmp}/sw", "--only", "", "--vary", "throat.width=60,70"), "--only", ["the list is empty"]),
    ("sweep-out-empty", _cli("sweep", "{spec}", "-o", "", "--vary", "throat.width=60,70"), "-o/--out", ["empty"]),
    ("sweep-quality", _cli("sweep", "{spec}", "-o", "{tmp}/sw", "--quality", "x", "--vary", "throat.width=60,70"), "--quality", ["draft"]),
    ("sweep-baseline", _cli("sweep", "{spec}", "-o", "{tmp}/sw", "--baseline", "zzz", "--vary", "throat.width=60,70"), "--baseline", ["one of the variant ids"]),
    # --- second round: sizes beyond any vehicle ----------------------------------------
    ("transition-1e300", _replace("transition_length = 100", "transition_length = 1e300"), "outlet.transition_length", ["<= 10000 mm", "a longer run is a hose"]),
    ("spigot-1e300", _replace("transition_length = 100", "transition_length = 100\nspigot_length = 1e300"), "outlet.spigot_length", ["<= 1000 mm"]),
    ("entry-radius-1e300", _replace("angle_deg = 7", "angle_deg = 7\nentry_radius = 1e300"), "ramp.entry_radius", ["<= 20000 mm", "beyond any vehicle panel"]),
    ("fairing-1e300", _append('[lip]\nstyle = "raised"\nfairing_length = 1e300\n'), "lip.fairing_length", ["<= 2000 mm"]),
    ("edge-distance-1e300", _append("[insert]\nholes = { edge_distance = 1e300 }\n"), "insert.holes.edge_distance", ["<= 200 mm", "the widest flange"]),
    ("ramp-length-1km", _replace("angle_deg = 7", 'length = "1 km"'), "ramp.length", ["<= 20000 mm", "given 1e+06 mm"]),
    ("ramp-angle-tiny", _replace("angle_deg = 7", "angle_deg = 0.001"), "ramp.angle_deg", ["at most 20000 mm long", "beyond any vehicle panel"]),
    ("hose-1e300-m", _append('[flow]\nspeed = "40 m/s"\nrun_length = "1 m"\nlosses = [{kind = "hose", length = "1e300 m", diameter = "3 in"}]\n'), "flow.losses[0].length", ["<= 100 m"]),
    ("exit-area-huge", _append('[flow]\nspeed = "40 m/s"\nrun_length = "1 m"\nexit_area = "1e300 m^2"\n'), "flow.exit_area", ["<= 10 m^2"]),
    ("required-flow-huge", _append('[flow]\nspeed = "40 m/s"\nrun_length = "1 m"\nrequired_flow = "1e300 m^3/s"\n'), "flow.required_flow", ["<= 1000 m^3/s"]),
    ("throat-1km", _replace("width = 80", 'width = "1 km"'), "throat.width", ["<= 3000 mm"]),
    ("size-tiny-flow", _cli("size", "--flow", "1e-9 L/s", "--speed", "100 km/h"), "--flow", ["the smallest throat ductgen builds", "needs no sizing"]),
    ("out-in-proc", _cli("build", "{spec}", "-o", "/proc/ductgen-x", "--only", "template"), "-o/--out", ["cannot create a file in /proc"]),
    # --- second round: strict types for non-quantity keys -----------------------------
    ("holes-count-text", _append('[insert]\nholes = { count = "8" }\n'), "insert.holes.count", ["a whole number, written without quotes"]),
    ("holes-count-float", _append("[insert]\nholes = { count = 8.5 }\n"), "insert.holes.count", ["a whole number"]),
    ("holes-count-bool", _append("[insert]\nholes = { count = true }\n"), "insert.holes.count", ["a whole number"]),
    ("near-heat-yes", _append('[insert]\nnear_heat = "yes"\n'), "insert.near_heat", ["true or false, written without quotes"]),
    ("near-heat-one", _append("[insert]\nnear_heat = 1\n"), "insert.near_heat", ["true or false"]),
    ("nose-ratio-text", _append('[lip]\nnose_ratio = "2"\n'), "lip.nose_ratio", ["a number, written without quotes"]),
    ("yaml-binary-name", _raw("s.yaml", b"name: !!binary dGVzdA==\nthroat: {width: 80, depth: 20}\n"), "name", ["not YAML !!binary"]),
    ("json-number-name", _raw("s.json", b'{"name": 5, "throat": {"width": 80, "depth": 20}}'), "name", ["text"]),
    # --- second round: tables that are not files ---------------------------------------
    ("csv-folder", _special("w.csv", "folder", '[planform]\nprofile = "w.csv"\n'), "planform.profile", ["the path is a folder"]),
    ("csv-fifo", _special("w.csv", "fifo", '[planform]\nprofile = "w.csv"\n'), "planform.profile", ["pipe", "may never end"]),
    ("recovery-folder", _special("r.csv", "folder", _RECOVERY), "flow.recovery", ["is a folder"]),
    ("recovery-fifo", _special("r.csv", "fifo", _RECOVERY), "flow.recovery", ["pipe", "may never end"]),
    ("panel-nan-vertex", _nan_panel, "skin.file", ["NaN"]),
]  # fmt: skip


#: Cases whose file the kernel worker reads (a STEP file, a panel scan): slow.
_KERNEL = ("check-garbage-step", "panel-nan-vertex")


@pytest.mark.parametrize(
    ("make", "key", "words"),
    [pytest.param(*c[1:], marks=[pytest.mark.slow] if c[0] in _KERNEL else []) for c in CASES],
    ids=[c[0] for c in CASES],
)
def test_bad_input_exits_2_names_key_and_changes_nothing(
    tmp_path: Path,
    capsys: pytest.CaptureFixture[str],
    make: Callable[[Path], list[str]],
    key: str,
    words: list[str],
) -> None:
    args = make(tmp_path)
    before = tree_digest(tmp_path)
    code = main(args)
    out = capsys.readouterr()
    err = " ".join(out.err.split())
    assert code == 2, f"exit {code}: {err[:500]}"
    assert key in err, f"{key!r} not named in: {err[:500]}"
    for w in words:
        assert w in err, f"{w!r} missing from: {err[:500]}"
    assert "Traceback" not in out.err + out.out
    assert len(out.err) < 4000, "messages echo an excerpt, never the whole value"
    assert tree_digest(tmp_path) == before


def test_fifo_spec_is_refused_without_blocking(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    fifo = tmp_path / "s.toml"
    os.mkfifo(fifo)
    before = tree_digest(tmp_path)
    assert main(["build", str(fifo), "-o", str(tmp_path / "o")]) == 2
    err = capsys.readouterr().err
    assert "file" in err and "pipe" in err and "Traceback" not in err
    assert tree_digest(tmp_path) == before


def test_fifo_stl_is_refused_without_blocking(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    fifo = tmp_path / "a.stl"
    os.mkfifo(fifo)
    assert main(["check", str(fifo)]) == 2
    err = capsys.readouterr().err
    assert "FILE" in err and "pipe" in err


@pytest.mark.slow
def test_truncated_step_is_unreadable_not_unhealthy(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    """A STEP cut off mid-file (header present): exit 2 'unreadable', read in the worker."""
    text = (
        "ISO-10303-21;\nHEADER;\nFILE_DESCRIPTION((''),'2;1');\nENDSEC;\nDATA;\n"
        "#1 = CARTESIAN_POINT('',(0.,0.,0.));\n#2 = DIRECTION('',(0.,0.,1."
    )
    (tmp_path / "t.step").write_text(text)
    before = tree_digest(tmp_path)
    assert main(["check", str(tmp_path / "t.step")]) == 2
    err = " ".join(capsys.readouterr().err.split())
    assert "FILE" in err and "unreadable" in err and "Traceback" not in err
    assert tree_digest(tmp_path) == before


def test_init_writes_the_format_its_suffix_names(tmp_path: Path) -> None:
    """`init new.yaml` writes YAML and `init new.json` JSON (not TOML), both loadable."""
    import yaml

    from ductgen.spec import load_spec

    assert main(["init", str(tmp_path / "n.yaml")]) == 0
    assert main(["init", str(tmp_path / "n.json")]) == 0
    assert isinstance(yaml.safe_load((tmp_path / "n.yaml").read_text()), dict)
    assert isinstance(json.loads((tmp_path / "n.json").read_text()), dict)
    assert load_spec(tmp_path / "n.yaml") == load_spec(tmp_path / "n.json")


def test_help_is_printed_literally(capsys: pytest.CaptureFixture[str]) -> None:
    """':b:' in KEY=A:B:STEP is not turned into an emoji."""
    assert main(["sweep", "--help"]) == 0
    out = capsys.readouterr().out
    assert "KEY=A:B:STEP" in " ".join(out.split())
    assert "\U0001f171" not in out and "\U0001f4af" not in out


def test_bonded_flange_with_no_holes_is_valid() -> None:
    """Decision: holes.count = 0 is a flange without holes (bonded), not an error."""
    import tomllib

    from ductgen.spec import parse_spec

    data = tomllib.loads(GOOD + "[insert]\nholes = { count = 0 }\n")
    assert parse_spec(data).insert.holes.count == 0


def test_speed_beyond_the_model_is_refused_before_any_kernel_work(tmp_path: Path, capsys) -> None:  # type: ignore[no-untyped-def]
    # 400 m/s at sea level is Mach 1.18 (ISA speed of sound 340.3 m/s, ISO 2533): refused
    # above Mach 0.6, with the fastest speed allowed (0.6 × 340.3 = 204 m/s)
    spec = tmp_path / "fast.toml"
    spec.write_text(GOOD + '[flow]\nspeed = "400 m/s"\nrun_length = "1 m"\n', encoding="utf-8")
    before = sorted(p.name for p in tmp_path.iterdir())
    code = main(["build", str(spec), "-o", str(tmp_path / "out")])
    err = capsys.readouterr().err
    assert code == 2
    assert "flow.speed" in err and "<= 204 m/s" in err and "Traceback" not in err
    assert sorted(p.name for p in tmp_path.iterdir()) == before


def test_recovery_table_too_large_is_refused(tmp_path: Path, capsys) -> None:  # type: ignore[no-untyped-def]
    table = tmp_path / "big.csv"
    table.write_bytes(b"ivr,recovery\n" + b"0.5,0.5\n" * 200_000)  # 1.6 MB > 1 MB limit
    spec = tmp_path / "t.toml"
    spec.write_text(
        GOOD + f'[flow]\nspeed = "40 m/s"\nrun_length = "1 m"\nrecovery = "{table}"\n',
        encoding="utf-8",
    )
    code = main(["build", str(spec), "--only", "template", "-o", str(tmp_path / "out")])
    err = capsys.readouterr().err
    assert code == 2 and "flow.recovery" in err and "1,000,000" in err


@pytest.mark.parametrize(
    ("name", "value", "words"),
    [
        ("DUCTGEN_MEMORY_MB", "lots", ["not a number", "from 3,072 to"]),
        ("DUCTGEN_MEMORY_MB", "50", ["too little memory", "from 3,072 to"]),
        ("DUCTGEN_MEMORY_MB", "4096.5", ["a whole number"]),
        ("DUCTGEN_MEMORY_MB", "1e30", ["to 1,048,576 MiB"]),
        ("DUCTGEN_TIMEOUT_S", "soon", ["not a number", "from 0.1 to 86,400 s"]),
        ("DUCTGEN_TIMEOUT_S", "nan", ["from 0.1 to 86,400 s"]),
        ("DUCTGEN_TIMEOUT_S", "-5", ["too short"]),
        ("DUCTGEN_TIMEOUT_S", "inf", ["from 0.1 to 86,400 s"]),
    ],
)
@pytest.mark.parametrize("command", ["build", "sweep"])
def test_bad_kernel_limits_in_the_environment_exit_2(
    tmp_path: Path,
    capsys: pytest.CaptureFixture[str],
    monkeypatch: pytest.MonkeyPatch,
    command: str,
    name: str,
    value: str,
    words: list[str],
) -> None:
    """The worker's limits from the environment: a bad value names the variable, its range
    and why, before any kernel work or file."""
    monkeypatch.setenv(name, value)
    spec = _spec(tmp_path, GOOD)
    args = ["build", str(spec), "-o", str(tmp_path / "out"), "--only", "cutter"]
    if command == "sweep":
        args = ["sweep", str(spec), "-o", str(tmp_path / "sw"), "--vary", "throat.width=70,90"]
    before = tree_digest(tmp_path)
    code = main(args)
    err = " ".join(capsys.readouterr().err.split())
    assert code == 2, err
    assert name in err and "Traceback" not in err and "internal error" not in err
    for w in words:
        assert w in err, f"{w!r} missing from: {err[:500]}"
    assert tree_digest(tmp_path) == before
