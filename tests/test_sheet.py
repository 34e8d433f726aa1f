"""The drawing sheet and the preview picture of a real build (cutter + sheet).

Sources: the offsets table must equal ``report.json`` ``geometry.offsets`` (the
project's own contract); the 5 % steps are the sheet's own, the cautions the README's; the
NACA ACR 5I20 stations x/L = 0, 0.1 … 1 (recalled) are the profile's stations.
"""

from __future__ import annotations

import io
import json
from pathlib import Path

import numpy as np
import pymupdf
import pytest
from PIL import Image

from ductgen.pipeline import build
from ductgen.spec import parse_spec


@pytest.fixture(scope="module")
def built(tmp_path_factory):  # type: ignore[no-untyped-def]
    out = tmp_path_factory.mktemp("sheet")
    spec = parse_spec(
        {
            "name": "sh",
            "throat": {"width": 100, "depth": 25},
            "outlet": {"kind": "round", "diameter": 50, "transition_length": 120},
        }
    )
    res = build(spec, out, only=["cutter", "sheet"])
    return res, out


def _rows(page) -> list[list[str]]:  # type: ignore[no-untyped-def]
    """Table rows: words grouped by baseline, right of the table's 'x/L' header."""
    words = page.get_text("words")
    head = next(w for w in words if w[4] == "x/L")
    rows: dict[float, list] = {}
    for w in words:
        if w[0] >= head[0] - 1 and w[1] > head[3]:
            rows.setdefault(round(w[3], 0), []).append(w)
    out = []
    for _, ws in sorted(rows.items()):
        cells = [w[4] for w in sorted(ws, key=lambda w: w[0])]
        if len(cells) == 4 and cells[0].rstrip("*").replace(".", "").isdigit():
            out.append(cells)
    return out


@pytest.mark.slow
def test_offsets_table_equals_report(built) -> None:  # type: ignore[no-untyped-def]
    _, out = built
    report = json.loads((out / "report.json").read_text())
    assert (
        report["files"]["sheet_pdf"] == "sh-sheet.pdf"
        and report["files"]["preview_png"] == "sh-preview.png"
    )
    offsets = report["geometry"]["offsets"]
    doc = pymupdf.open(out / "sh-sheet.pdf")
    assert len(doc) == 1
    rows = _rows(doc[0])
    stations = [r for r in rows if r[0].endswith("*")]
    assert len(stations) == len(offsets) == 11  # NACA ACR 5I20 table: x/L = 0, 0.1 ... 1 (recalled)
    for r, o in zip(stations, offsets, strict=True):
        assert float(r[1]) == pytest.approx(o["x_mm"], abs=0.0051)
        assert float(r[2]) == pytest.approx(o["half_width_mm"], abs=0.00051)
        assert float(r[3]) == pytest.approx(o["floor_depth_mm"], abs=0.00051)
    # 5 % steps: x/L = 0, 0.05 ... 1 all present (union with the stations: 21 rows)
    xl = sorted(float(r[0].rstrip("*")) for r in rows)
    assert np.allclose(xl, np.linspace(0, 1, 21), atol=5e-4)


@pytest.mark.slow
def test_sheet_has_views_dimensions_title_block_and_cautions(built) -> None:  # type: ignore[no-untyped-def]
    res, out = built
    g = res.report["geometry"]
    text = " ".join(pymupdf.open(out / "sh-sheet.pdf")[0].get_text().split())
    for s in (
        "PLAN VIEW",
        "CENTRELINE SECTION",
        "LIP DETAIL",
        "KEY DIMENSIONS",
        "TABLE OF OFFSETS",
        f"W {g['throat_width_mm']:.2f}",
        f"L {g['ramp_length_mm']:.2f}",
        f"D {g['throat_depth_mm']:.2f}",
        f"{g['ramp_angle_deg']:.2f} deg",
        f"spec sha256 {res.report['spec_sha256'][:16]}",
        f"design sha256 {res.report['design_sha256'][:16]}",  # as the template prints it
        res.report["ductgen_version"],
        "units mm",
        "aviation authority",
        "not a certification",
        "Verify the printed template",
    ):
        assert s in text, s
    page = pymupdf.open(out / "sh-sheet.pdf")[0]
    w, h = sorted((page.rect.width, page.rect.height))
    assert (w, h) == (
        pytest.approx(297 * 72 / 25.4, abs=0.01),
        pytest.approx(420 * 72 / 25.4, abs=0.01),
    )  # A3


@pytest.mark.slow
def test_preview_is_a_shaded_picture(built) -> None:  # type: ignore[no-untyped-def]
    _, out = built
    img = np.asarray(
        Image.open(io.BytesIO((out / "sh-preview.png").read_bytes())).convert("RGB")
    ).astype(float)
    assert img.shape[0] >= 600 and img.shape[1] >= 900
    # shaded, not blank: many distinct grey levels and a warm-coloured part in the frame
    grey = img.mean(axis=2)
    assert len(np.unique(grey.round())) > 50
    warm = (img[..., 0] - img[..., 2]) > 25
    assert 0.01 < warm.mean() < 0.8


def test_sheet_without_opengl_still_builds_and_warns(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    """No offscreen GL (a bare server): the sheet is made without its picture, the build goes
    on, and a warning says how to get the picture."""
    import ductgen.sheets.preview as preview
    from ductgen.errors import ExportError

    def no_gl(ctx, worker=None):  # type: ignore[no-untyped-def]
        raise ExportError("preview.png: offscreen OpenGL rendering failed (test)")

    monkeypatch.setattr(preview, "preview_png", no_gl)
    spec = parse_spec({"name": "nogl", "throat": {"width": 80, "depth": 20}})
    res = build(spec, tmp_path, only=["sheet"])
    assert (tmp_path / "nogl-sheet.pdf").stat().st_size > 0
    assert not (tmp_path / "nogl-preview.png").exists()
    assert "preview_unavailable" in [w["code"] for w in res.report["warnings"]]


@pytest.mark.slow
def test_preview_shows_datum_pin_and_flow_arrow(built) -> None:  # type: ignore[no-untyped-def]
    """The datum pin (red #b00020, shaded) and the flow arrow (blue #1f5fa0, shaded) are in
    the picture, counted by colour: neither colour is anywhere else in the scene (sand part,
    grey skin, blue-grey sky gradient whose blue leads its red by under 20 levels)."""
    _, out = built
    img = np.asarray(Image.open(out / "sh-preview.png").convert("RGB")).astype(int)
    r, g, b = img[..., 0], img[..., 1], img[..., 2]
    red = (r > 90) & (r > 2.5 * g) & (r > 1.8 * b)
    blue = (b > 90) & (b - r > 50) & (b > 1.3 * g)
    assert red.sum() > 200, red.sum()
    assert blue.sum() > 500, blue.sum()
    # the pin stands left of the arrow's head (the datum is upstream, the arrow downstream)
    assert np.nonzero(red)[1].mean() < np.nonzero(blue)[1].max()
