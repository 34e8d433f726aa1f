"""`ductgen sweep`: variants through the build pipeline, comparison files, re-runs,
failures, bad input, and the comparison page in a real (headless) browser."""

from __future__ import annotations

import csv
import json
import math
import re
import shutil
from pathlib import Path

import numpy as np
import pytest

from ductgen.cli.app import main
from ductgen.errors import GeometryError
from ductgen.sweep import parse_vary, run_sweep
from ductgen.sweep.compare import compare_meshes
from tests.browser import chromium_path, run_chromium

pytestmark = pytest.mark.slow

# W/D = 4 and 5°-7° ramps: inside the recommended design range (NACA RM A7I30, abstract)
SPEC = """
name = "sweep-test"
throat = { width = 100, depth = 25 }
ramp = { angle_deg = 7.0, entry_radius = 40 }
lip = { style = "flush", thickness = 4 }
outlet = { kind = "none" }
"""
ANGLES = (5.0, 6.0, 7.0)
ONLY = ["cutter"]


def _spec(folder: Path, text: str = SPEC) -> Path:
    folder.mkdir(parents=True, exist_ok=True)
    p = folder / "s.toml"
    p.write_text(text)
    return p


@pytest.fixture(scope="module")
def sweep(tmp_path_factory: pytest.TempPathFactory):  # type: ignore[no-untyped-def]
    base = tmp_path_factory.mktemp("sweep")
    spec = _spec(base)
    out = base / "out"
    result = run_sweep(spec, [parse_vary("ramp.angle_deg=5:7:1")], out, jobs=1, only=ONLY)
    return spec, out, result


def ramp_length(drop: float, angle_deg: float, radius: float) -> float:
    """L = R sin θ + (H − R(1 − cos θ))/tan θ (tangent-arc geometry [derived])."""
    t = math.radians(angle_deg)
    return radius * math.sin(t) + (drop - radius * (1.0 - math.cos(t))) / math.tan(t)


def _reports(out: Path, ids: list[str]) -> dict[str, dict]:
    return {i: json.loads((out / i / "report.json").read_text()) for i in ids}


def test_ramp_lengths_follow_the_tangent_arc_formula(sweep) -> None:  # type: ignore[no-untyped-def]
    _, _, result = sweep
    assert [r.status for r in result.results] == ["built"] * 3
    lengths = [row["ramp_length_mm"] for row in result.rows]
    # floor drop H = D + lip thickness for a flush lip (DEVELOPERS.md, Conventions);
    # L = R sin θ + (H − R(1 − cos θ))/tan θ (tangent-arc geometry [derived])
    expected = [ramp_length(25.0 + 4.0, a, 40.0) for a in ANGLES]
    assert lengths == pytest.approx(expected, rel=1e-9)
    assert lengths[0] > lengths[1] > lengths[2]  # a steeper ramp is shorter
    assert [row["ramp.angle_deg"] for row in result.rows] == list(ANGLES)


def test_csv_json_html_agree_with_each_report(sweep) -> None:  # type: ignore[no-untyped-def]
    _, out, result = sweep
    ids = [v.id for v in result.variants]
    assert ids == ["ramp.angle_deg=5", "ramp.angle_deg=6", "ramp.angle_deg=7"]
    reports = _reports(out, ids)
    doc = json.loads((out / "comparison.json").read_text())
    with (out / "comparison.csv").open() as fh:
        rows = list(csv.DictReader(fh))
    page = (out / "comparison.html").read_text()
    embedded = json.loads(
        re.search(
            r'<script type="application/json" id="sweep-data">(.*?)</script>', page, re.S
        ).group(1)
    )
    assert doc["varied"] == ["ramp.angle_deg"]
    assert doc["columns"][:2] == ["variant", "ramp.angle_deg"]
    for i, vid in enumerate(ids):
        g = reports[vid]["geometry"]
        j, c, e = doc["variants"][i], rows[i], embedded["rows"][i]
        assert j["variant"] == c["variant"] == e["variant"] == vid
        for key in (
            "ramp_length_mm",
            "throat_area_mm2",
            "ramp_cavity_volume_mm3",
            "cutter_volume_mm3",
            "wetted_area_mm2",
            "max_wall_divergence_deg",
        ):
            assert j[key] == g[key] == e[key]
            assert float(c[key]) == g[key]  # the CSV keeps full precision
            cell = re.search(
                rf'data-variant="{re.escape(vid)}">.*?data-col="{key}" data-value="([^"]*)"',
                page,
                re.S,
            ).group(1)
            assert float(cell) == g[key]  # the exact value beside the rounded text shown
        assert j["warnings_count"] == len(reports[vid]["warnings"])
        # no flow section in the spec: the flow columns are empty, not invented
        assert j["volume_flow_m3_s"] is None and c["volume_flow_m3_s"] == ""
        assert j["build_s"] > 0


def test_symmetric_difference(sweep) -> None:  # type: ignore[no-untyped-def]
    import trimesh

    _, out, result = sweep
    by = {row["variant"]: row for row in result.rows}
    # the baseline (first variant) compared with itself, computed like the others: no
    # difference beyond round-off
    base = trimesh.load(out / "ramp.angle_deg=5" / "sweep-test-cutter.stl")
    assert by["ramp.angle_deg=5"]["sym_diff_volume_mm3"] < 1e-6 * base.volume
    assert by["ramp.angle_deg=5"]["hausdorff_mm"] < 1e-6
    a = trimesh.load(out / "ramp.angle_deg=7" / "sweep-test-cutter.stl")
    same = compare_meshes(a, a.copy())
    assert same["sym_diff_volume_mm3"] < 1e-6 * a.volume and same["hausdorff_mm"] < 1e-6
    # grows with the angle difference from the baseline
    d6, d7 = (
        by["ramp.angle_deg=6"]["sym_diff_volume_mm3"],
        by["ramp.angle_deg=7"]["sym_diff_volume_mm3"],
    )
    assert 0 < d6 < d7
    assert 0 < by["ramp.angle_deg=6"]["hausdorff_mm"] < by["ramp.angle_deg=7"]["hausdorff_mm"]
    # bounds: |V_A − V_B| ≤ vol(A Δ B) ≤ V_A + V_B (set algebra)
    va, vb = (
        by["ramp.angle_deg=5"]["cutter_volume_mm3"],
        by["ramp.angle_deg=7"]["cutter_volume_mm3"],
    )
    assert abs(va - vb) <= d7 <= va + vb


def test_rerun_rebuilds_nothing_and_one_change_rebuilds_one(sweep, tmp_path: Path) -> None:  # type: ignore[no-untyped-def]
    spec, out0, _ = sweep
    out = tmp_path / "copy"
    shutil.copytree(out0, out)
    stl = {
        i: (out / i / "sweep-test-cutter.stl").stat().st_mtime_ns
        for i in ("ramp.angle_deg=5", "ramp.angle_deg=6")
    }
    again = run_sweep(spec, [parse_vary("ramp.angle_deg=5:7:1")], out, jobs=1, only=ONLY)
    assert [r.status for r in again.results] == ["cached"] * 3
    changed = run_sweep(spec, [parse_vary("ramp.angle_deg=5,6,6.5")], out, jobs=1, only=ONLY)
    assert [r.status for r in changed.results] == ["cached", "cached", "built"]
    for i, t in stl.items():
        assert (out / i / "sweep-test-cutter.stl").stat().st_mtime_ns == t
    row = changed.rows[2]
    assert row["ramp_length_mm"] == pytest.approx(ramp_length(29.0, 6.5, 40.0), rel=1e-9)
    # a changed base spec changes every hash: everything is rebuilt
    spec.write_text(SPEC.replace("entry_radius = 40", "entry_radius = 30"))
    try:
        third = run_sweep(spec, [parse_vary("ramp.angle_deg=5,6")], out, jobs=1, only=ONLY)
    finally:
        spec.write_text(SPEC)
    assert [r.status for r in third.results] == ["built", "built"]


def test_one_failing_variant_does_not_stop_the_rest(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    import ductgen.pipeline.builder as pb

    real = pb.build

    def flaky(spec, out_dir, **kw):  # type: ignore[no-untyped-def]  # a kernel failure on one variant
        if spec.ramp.angle_deg == 6.0:
            raise GeometryError("cutter", "simulated kernel failure")
        return real(spec, out_dir, **kw)

    monkeypatch.setattr(pb, "build", flaky)
    spec = _spec(tmp_path)
    res = run_sweep(spec, [parse_vary("ramp.angle_deg=5,6,7")], tmp_path / "o", jobs=1, only=ONLY)
    assert [r.status for r in res.results] == ["built", "failed", "built"]
    assert "simulated kernel failure" in res.results[1].error
    doc = json.loads((tmp_path / "o" / "comparison.json").read_text())
    assert doc["variants"][1]["status"] == "failed" and doc["variants"][1]["ramp_length_mm"] is None
    assert doc["variants"][2]["sym_diff_volume_mm3"] > 0


@pytest.mark.parametrize(
    "vary",
    [
        "ramp.angel_deg=5:7:1",  # unknown key
        "ramp.angle_deg=7:5:1",  # empty range
        "throat.width=5s:7s:1s",  # wrong unit for a length
        "throat.width=100mm:4s:10mm",  # parts of different kinds
    ],
)
def test_bad_vary_exits_2_before_building(tmp_path: Path, vary: str) -> None:
    spec = _spec(tmp_path)
    out = tmp_path / "o"
    assert main(["sweep", str(spec), "--vary", vary, "-o", str(out), "--quiet"]) == 2
    assert not out.exists()


def test_cli_sweep_zip_two_jobs(tmp_path: Path) -> None:
    spec = _spec(tmp_path)
    out = tmp_path / "o"
    argv = [
        "sweep",
        str(spec),
        "--vary",
        "ramp.angle_deg=6,7",
        "--vary",
        "throat.width=100mm,4in",
        "--zip",
        "-o",
        str(out),
        "-j",
        "2",
        "--only",
        "cutter",
        "--quiet",
        "--baseline",
        "ramp.angle_deg=7,throat.width=4in",
    ]
    assert main(argv) == 0
    doc = json.loads((out / "comparison.json").read_text())
    assert [r["variant"] for r in doc["variants"]] == [
        "ramp.angle_deg=6,throat.width=100mm",
        "ramp.angle_deg=7,throat.width=4in",
    ]
    assert [r["throat.width"] for r in doc["variants"]] == pytest.approx(
        [100, 101.6]
    )  # 1 in = 25.4 mm
    assert doc["baseline"] == "ramp.angle_deg=7,throat.width=4in"
    assert doc["variants"][1]["sym_diff_volume_mm3"] < 1e-3  # the baseline itself (mm³)
    assert doc["variants"][0]["sym_diff_volume_mm3"] > 1.0
    # throat area W·D
    assert [r["throat_area_mm2"] for r in doc["variants"]] == pytest.approx([2500, 2540])
    # an unknown baseline id is bad input
    argv[-1] = "ramp.angle_deg=9"
    assert main(argv) == 2


# --- the comparison page in a real browser ------------------------------------------------


def test_comparison_page_renders_in_headless_chromium(sweep, tmp_path: Path) -> None:  # type: ignore[no-untyped-def]
    import matplotlib.image as mpimg

    exe = chromium_path()
    _, out, result = sweep
    url = (out / "comparison.html").resolve().as_uri()
    dom = run_chromium(exe, tmp_path, "--dump-dom", url)
    assert dom.returncode == 0, dom.stderr[-2000:]
    # the rendered DOM holds one table row per variant, with its ramp length
    for row in result.rows:
        assert f'data-variant="{row["variant"]}"' in dom.stdout
        assert f">{row['ramp_length_mm']:.2f}<" in dom.stdout  # shown in mm, 0.01 mm
    assert dom.stdout.count("data:image/png;base64,") >= 2  # overlays and metric plots inline
    png = tmp_path / "shot.png"
    shot = run_chromium(exe, tmp_path, f"--screenshot={png}", "--window-size=1400,2000", url)
    assert shot.returncode == 0 and png.is_file(), shot.stderr[-2000:]
    img = mpimg.imread(png)[..., :3]
    assert img.shape[:2] == (2000, 1400)
    ink = np.any(np.abs(img - 1.0) > 0.1, axis=2)  # background is white
    assert ink.mean() > 0.02  # not blank
    # the table sits under the title, in the top ~250 px: the header row's tint and the
    # text of the rows show there
    band = img[90:250, :900]
    header_blue = np.all(np.abs(band - np.array([0xE8, 0xEE, 0xF6]) / 255) < 0.02, axis=2)
    assert header_blue.sum() > 2000
    assert np.any(np.abs(band - 1.0) > 0.5, axis=2).sum() > 1000
