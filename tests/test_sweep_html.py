"""The sweep table at a 1400 px window: fits without scrolling, numbers with units and
sensible digits (no exponents), failures shown with their errors.

Layout is measured by headless Chromium (an independent renderer) on a table of every
column with large values and one failed variant; the page's width is 1400 px, a laptop screen.
Number formats are checked against plain arithmetic (1 cm³ = 1000 mm³, 1 L/s = 1e-3 m³/s).
"""

from __future__ import annotations

import re
from pathlib import Path

import pytest

from ductgen.sweep.compare import EXTRA, METRICS
from ductgen.sweep.html import CSS, failures_html, number, table_html
from tests.browser import chromium_path, run_chromium


def _rows() -> list[dict]:
    rows = []
    for i, (angle, width) in enumerate([(5.5, 120.0), (6.25, 250.0), (7.0, 400.0)]):
        row = {"variant": f"ramp.angle_deg={angle},throat.width={width:g}"}
        row |= {"ramp.angle_deg": angle, "throat.width": width}
        # magnitudes of the samples' reports (club-racer-brake: volumes ~1.27e6 mm³)
        row |= {m: 1268780.4 * (i + 1) for m in METRICS if m.endswith("volume_mm3")}
        row |= {"ramp_length_mm": 284.25 + i, "throat_area_mm2": 3080.0 * (i + 1)}
        row |= {"wetted_area_mm2": 45678.9, "max_wall_divergence_deg": 17.71}
        row |= {"momentum_drag_n": 12.345}
        row |= {"volume_flow_m3_s": 0.0612345, "ram_recovery": 0.81234, "delta_over_depth": 0.4}
        row |= {"warnings_count": 2, "build_s": 3.21, "sym_diff_volume_mm3": 45678.9}
        row |= {"hausdorff_mm": 12.3456, "status": "built", "error": None}
        rows.append(row)
    rows[2] |= {m: None for m in METRICS} | {
        "status": "failed",
        "error": "GeometryError: insert boolean failed at stage 'insert cut' after retries "
        "with fuzzy tolerance 1e-4 mm; the walls are thinner than the fillet radius",
    }
    assert set(rows[0]) >= set(EXTRA)
    return rows


def test_numbers_have_units_and_no_exponents() -> None:
    rows = _rows()
    page = table_html(rows, rows[0]["variant"])
    shown = re.findall(r'data-col="([^"]+)" data-value="[^"]*"[^>]*>([^<]*)<', page)
    assert shown
    assert not [t for c, t in shown if c != "error" and re.search(r"\de[+-]?\d", t)]
    cells = dict(shown[: len(rows[0])])
    assert cells["cutter_volume_mm3"] == "1\u2009268.8"  # 1 268 780.4 mm³ = 1 268.8 cm³
    assert cells["volume_flow_m3_s"] == "61.2"  # 0.0612345 m³/s = 61.2 L/s
    assert cells["ram_recovery"] == "0.812"
    assert cells["ramp.angle_deg"] == "5.500"
    for unit in ("cm³", "cm²", "mm²", "L/s", "°", ">s<", ">mm<"):
        assert unit in page
    assert number(1268780.4) == "1\u2009268\u2009780"  # four significant digits at least


def test_failures_are_listed_with_their_errors() -> None:
    rows = _rows()
    table = table_html(rows, rows[0]["variant"])
    assert 'data-col="error"' in table and "thinner than the fillet radius" in table
    listing = failures_html(rows)
    assert "Failures (1)" in listing and rows[2]["variant"] in listing
    assert failures_html(rows[:2]) == ""


def test_table_fits_a_1400_px_window(tmp_path: Path) -> None:
    exe = chromium_path()
    rows = _rows()
    probe = (
        "<script>const t=document.getElementById('comparison');"
        "const w=document.querySelector('.wrap');"
        "document.body.setAttribute('data-fit', [t.scrollWidth, w.clientWidth,"
        " Math.round(t.getBoundingClientRect().right), window.innerWidth].join(','));</script>"
    )
    page = tmp_path / "t.html"
    page.write_text(
        f"<!DOCTYPE html><html><head><meta charset='utf-8'><style>{CSS}</style></head><body>"
        f"<h1>t</h1>{table_html(rows, rows[0]['variant'])}{failures_html(rows)}{probe}"
        "</body></html>",
        encoding="utf-8",
    )
    dom = run_chromium(exe, tmp_path, "--window-size=1400,1000", "--dump-dom", page.as_uri())
    assert dom.returncode == 0, dom.stderr[-2000:]
    m = re.search(r'data-fit="(\d+),(\d+),(\d+),(\d+)"', dom.stdout)
    assert m, dom.stdout[-2000:]
    table_w, box_w, right, window_w = map(int, m.groups())
    assert window_w == pytest.approx(1400, abs=20)
    assert table_w <= box_w  # no horizontal scrolling box
    assert right <= window_w  # the right-hand columns are on screen
