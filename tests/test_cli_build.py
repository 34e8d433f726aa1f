"""`ductgen build` / `init` / `profiles` from the command line: exit codes, messages,
nothing written on failure, no overwrite without --force."""

from __future__ import annotations

import json
import math
import os
import subprocess
import sys
from pathlib import Path

import pytest

from ductgen.cli.app import main
from tests.conftest import GOOD


def _run(args: list[str], capsys: pytest.CaptureFixture[str]) -> tuple[int, str, str]:
    code = main(args)
    out = capsys.readouterr()
    return code, out.out, out.err


def _spec(tmp_path: Path, text: str, name: str = "s.toml") -> Path:
    p = tmp_path / name
    p.write_text(text)
    return p


@pytest.mark.slow
def test_build_writes_cutter_and_report(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    spec = _spec(tmp_path, GOOD)
    out = tmp_path / "out"
    code, _, err = _run(["build", str(spec), "-o", str(out), "--only", "cutter", "--quiet"], capsys)
    assert code == 0, err
    names = sorted(p.name for p in out.iterdir())
    assert names == ["report.json", "t-cutter.step", "t-cutter.stl"]
    rep = json.loads((out / "report.json").read_text())
    assert rep["files"] == {"cutter_step": "t-cutter.step", "cutter_stl": "t-cutter.stl"}
    g = rep["geometry"]
    assert g["throat_area_mm2"] == 1600.0
    # flush lip of the default 4 mm: H = D + t = 24 mm; straight ramp L = H / tan 7° (derived)
    assert g["floor_drop_mm"] == 24.0
    assert g["ramp_length_mm"] == pytest.approx(24.0 / math.tan(math.radians(7.0)), rel=1e-12)
    assert len(g["offsets"]) == 11
    assert g["cutter_volume_mm3"] > g["ramp_cavity_volume_mm3"] > 0
    # no overwrite without --force; with it, fine
    code, _, err = _run(["build", str(spec), "-o", str(out), "--only", "cutter", "-q"], capsys)
    assert code == 2 and "--force" in err
    code, _, _ = _run(
        ["build", str(spec), "-o", str(out), "--only", "cutter", "-q", "--force"], capsys
    )
    assert code == 0


@pytest.mark.parametrize(
    ("text", "words"),
    [
        (GOOD.replace("width = 80", "width = -80"), ["throat.width", "-80", ">= 5 mm"]),
        (GOOD.replace("depth = 20", "depth = 0"), ["throat.depth", ">= 2 mm"]),
        (GOOD.replace("width = 80", "widht = 80"), ["throat.widht", "did you mean 'width'"]),
        (GOOD.replace("angle_deg = 7", "angle_deg = 7\nlength = 200"), ["ramp", "not both"]),
        (GOOD.replace("width = 80", 'width = "12 kg"'), ["throat.width", "12 kg", "not a length"]),
        (
            GOOD.replace("angle_deg = 7", "angle_deg = 7\nentry_radius = 9000"),
            ["ramp.entry_radius", "<="],
        ),
        (GOOD.replace("depth = 20", "depth = = 20"), ["line 4", "TOML"]),
        (GOOD.replace("diameter = 50", "diameter = 400"), ["outlet.transition_length", "30°"]),
    ],
)
def test_bad_input_exits_2_naming_the_key_and_writes_nothing(
    tmp_path: Path, capsys: pytest.CaptureFixture[str], text: str, words: list[str]
) -> None:
    spec = _spec(tmp_path, text)
    out = tmp_path / "out"
    code, _, err = _run(["build", str(spec), "-o", str(out)], capsys)
    assert code == 2
    flat = " ".join(err.split())
    for w in words:
        assert w in flat, f"{w!r} missing from: {flat}"
    assert not out.exists() or not any(out.iterdir())


def test_invalid_custom_profile_exits_2(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    (tmp_path / "w.csv").write_text("x,f\n0,0.1\n0.5,0.7\n0.7,0.6\n1,1\n")
    spec = _spec(tmp_path, GOOD + '[planform]\nprofile = "w.csv"\n')
    code, _, err = _run(["build", str(spec), "-o", str(tmp_path / "o")], capsys)
    assert code == 2
    assert "planform.profile" in err and "non-decreasing" in err
    assert not (tmp_path / "o").exists() or not any((tmp_path / "o").iterdir())


def test_unknown_only_kind_exits_2(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    code, _, err = _run(
        ["build", str(_spec(tmp_path, GOOD)), "-o", str(tmp_path / "o"), "--only", "wing"], capsys
    )
    assert code == 2 and "--only" in err and "cutter" in err


def _cli(args: list[str], env: dict[str, str]) -> subprocess.CompletedProcess[str]:
    return subprocess.run(
        [sys.executable, "-m", "ductgen", *args],
        capture_output=True,
        text=True,
        env={**os.environ, **env},
        timeout=300,
    )


def test_kernel_timeout_is_a_geometry_error_naming_the_stage(tmp_path: Path) -> None:
    out = tmp_path / "o"
    r = _cli(["build", str(_spec(tmp_path, GOOD)), "-o", str(out)], {"DUCTGEN_TIMEOUT_S": "0.2"})
    assert r.returncode == 1
    assert "geometry failed at stage" in r.stderr and "longer than" in r.stderr
    assert "Traceback" not in r.stderr
    assert not out.exists() or not any(out.iterdir())


@pytest.mark.slow
def test_kernel_out_of_memory_is_a_geometry_error(tmp_path: Path) -> None:
    """A kernel process capped below what it needs (300 MiB: less than DUCTGEN_MEMORY_MB
    accepts, so the cap is given to the worker directly) fails as a GeometryError naming the
    stage, and nothing is published."""
    from ductgen.errors import GeometryError
    from ductgen.pipeline import build
    from ductgen.spec import load_spec
    from ductgen.worker import KernelWorker, WorkerLimits

    out = tmp_path / "o"
    worker = KernelWorker(WorkerLimits(memory_mb=300))
    try:
        with pytest.raises(GeometryError, match="geometry failed at stage"):
            build(load_spec(_spec(tmp_path, GOOD)), out, worker=worker)
    finally:
        worker.close()
    assert not out.exists() or not any(out.iterdir())


def test_init_writes_a_buildable_commented_spec(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    from ductgen.spec import load_spec

    p = tmp_path / "new.toml"
    assert _run(["init", str(p)], capsys)[0] == 0
    assert "#" in p.read_text()
    assert load_spec(p).name == "my-inlet"
    assert _run(["init", str(p)], capsys)[0] == 2  # exists, no --force
    code, _, _ = _run(["init", str(tmp_path / "k.toml"), "--example", "ekart-battery-vent"], capsys)
    assert code == 0
    assert _run(["init", str(tmp_path / "z.toml"), "--example", "nope"], capsys)[0] == 2


def test_init_example_writes_the_panel_file_its_spec_names(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    from ductgen.spec import load_spec
    from tests.conftest import ROOT

    p = tmp_path / "pod" / "mine.toml"
    assert _run(["init", str(p), "--example", "kitcar-sidepod-cooler"], capsys)[0] == 0
    spec = load_spec(p)
    panel = Path(str(spec.skin.file))  # type: ignore[union-attr]
    panel = panel if panel.is_absolute() else p.parent / panel
    assert panel.read_bytes() == (ROOT / "samples" / "kitcar-sidepod-panel.step").read_bytes()
    # a second init into the same folder refuses before writing anything
    p.unlink()
    code, _, err = _run(["init", str(p), "--example", "kitcar-sidepod-cooler"], capsys)
    assert code == 2 and "kitcar-sidepod-panel.step" in err
    assert not p.exists()


def test_profiles_lists_sources(capsys: pytest.CaptureFixture[str]) -> None:
    code, out, _ = _run(["profiles", "--json"], capsys)
    assert code == 0
    rows = json.loads(out)
    assert any(r["name"] == "naca-standard" and "NACA" in r["source"] for r in rows)


@pytest.mark.slow
@pytest.mark.parametrize(
    ("lip", "wall"),
    [
        ('style = "flush"', 1.0),
        ("thickness = 3.5", 1.0),
        ("thickness = 1", 0.5),  # its plug's mesh closes T-junctions with zero-area slivers
        # raised: its flange's and plug plate's outlines are offsets of the wall by more than
        # the wall's concave radius (they fold over; the fold is cut out) and its floor lies
        # on the skin's inner face (no flange notch past the throat)
        ('style = "raised"', 1.0),
    ],
)
def test_the_smallest_throat_builds(tmp_path: Path, lip: str, wall: float) -> None:
    """The smallest throat the spec accepts (5 x 2 mm, README's limits table) builds every
    solid, each checked (closed, against its integrated volume)."""
    from ductgen.pipeline import build
    from ductgen.spec import load_spec

    text = f'name = "tiny"\n[throat]\nwidth = 5\ndepth = 2\n[lip]\n{lip}\n[insert]\nwall = {wall}\n'
    result = build(load_spec(_spec(tmp_path, text)), tmp_path / "o")
    g = result.report["geometry"]
    assert (g["throat_width_mm"], g["throat_depth_mm"]) == (5.0, 2.0)
    for kind in ("cutter", "insert", "plug"):
        assert g[f"{kind}_volume_mm3"] > 0.0
        assert (tmp_path / "o" / f"tiny-{kind}.stl").stat().st_size > 0


@pytest.mark.slow
def test_a_raised_lip_20_by_5_plug_builds(tmp_path: Path) -> None:
    """A raised lip on a 20 x 5 mm throat: its plug's plate outline (the wall offset by the
    25 mm trim margin, past the wall's concave radius) folded over itself and the plug's
    mesh came out open; the plug builds, closed and checked against its integrated volume."""
    from ductgen.pipeline import build
    from ductgen.spec import load_spec

    text = 'name = "t20"\n[throat]\nwidth = 20\ndepth = 5\n[lip]\nstyle = "raised"\n'
    result = build(load_spec(_spec(tmp_path, text)), tmp_path / "o", only=["plug"])
    solid = result.solids["plug"]
    assert solid.expected_volume_mm3 is not None
    assert solid.volume_mm3 == pytest.approx(solid.expected_volume_mm3, rel=1e-3)


def test_commands_preload_the_kernel_only_when_they_may_build_a_solid(
    monkeypatch: pytest.MonkeyPatch,
) -> None:
    """``build`` and ``cfd`` start the kernel worker's imports first thing when a solid may
    be built (the design page the side worker's too); a bad ``DUCTGEN_*`` value is left for
    the build to report (exit 2), not raised here."""
    import ductgen.worker as w
    from ductgen.cli.common import preload_kernel

    calls: list[tuple[str, str]] = []

    class Fake:
        limits = w.WorkerLimits()

        def __init__(self, name: str) -> None:
            self.name = name

        def preload(self, job: object) -> None:
            calls.append((self.name, getattr(job, "__name__", "")))

    monkeypatch.setattr(w, "default_worker", lambda: Fake("kernel"))
    monkeypatch.setattr(w, "side_worker", lambda _limits: Fake("side"))
    preload_kernel("template,sheet")
    assert calls == []
    preload_kernel("template, cutter")
    assert calls == [("kernel", "warm_up")]
    calls.clear()
    preload_kernel(None, beside=True)
    assert calls == [("kernel", "warm_up"), ("side", "warm_up")]
    calls.clear()
    monkeypatch.setenv("DUCTGEN_MEMORY_MB", "lots")
    preload_kernel(None)
    assert calls == []


def test_build_starts_the_kernel_before_the_command_table(monkeypatch: pytest.MonkeyPatch) -> None:
    """The console entry point reads ``build``'s ``--only`` off the command line and starts
    the kernel worker before importing typer and rich (the command asks again, which starts
    nothing twice); other commands and a request for help start nothing."""
    import ductgen.cli.preload as preload

    asked: list[str | None] = []
    monkeypatch.setattr(preload, "preload_kernel", asked.append)
    for args in (
        ["build", "a.toml"],
        ["build", "a.toml", "--only", "cutter,template"],
        ["build", "--only=template", "a.toml", "-o", "out"],
        ["build", "a.toml", "--help"],
        ["size", "--flow", "30"],
        [],
    ):
        preload.early_preload(args)
    assert asked == [None, "cutter,template", "template"]
