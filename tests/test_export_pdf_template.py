"""The tiled 1:1 template PDF, read back with pymupdf.

Sources: ISO 216 A4 = 210 × 297 mm and ANSI Letter = 8.5 × 11 in [published]; 1 pt = 1/72 in
(PDF reference) [published], so 100 mm = 283.465 pt; 100 mm and 4 in squares on every page,
crosshairs on the drawing, 10-20 mm overlap and a "print at 100 %" note are shop practice
(common practice, no source).
"""

from __future__ import annotations

import re
from itertools import pairwise

import numpy as np
import pymupdf
import pytest

from ductgen.design import build_design
from ductgen.export.template import template_files
from ductgen.spec import parse_spec

PT = 72.0 / 25.4
PAPER_PT = {"A4": (210 * PT, 297 * PT), "Letter": (612.0, 792.0)}
WINDOW = re.compile(r"window x (-?[\d.]+) to (-?[\d.]+) mm, y (-?[\d.]+) to (-?[\d.]+) mm")
CUT_RGB = (0.85, 0.0, 0.0)
SQUARE_RGB = (0.0, 0.35, 0.75)


def _pdf(width: float, depth: float, **template):  # type: ignore[no-untyped-def]
    spec = parse_spec(
        {"name": "p", "throat": {"width": width, "depth": depth}, "template": template}
    )
    d = build_design(spec)
    g = d.geometry
    data = template_files(d, spec)["template.pdf"]
    return g, spec, pymupdf.open(stream=data, filetype="pdf")


@pytest.fixture(scope="module")
def big():  # type: ignore[no-untyped-def]
    """W 200 × D 50 mm: about 450 mm long, several tiles."""
    return _pdf(200, 50)


@pytest.fixture(scope="module")
def small():  # type: ignore[no-untyped-def]
    """W 40 × D 8 mm: fits one tile; flange off the drawing is still there."""
    return _pdf(40, 8)


def _near(c, rgb) -> bool:  # type: ignore[no-untyped-def]
    return c is not None and all(abs(a - b) < 0.02 for a, b in zip(c, rgb, strict=True))


def _squares(page) -> list:  # type: ignore[no-untyped-def]
    return [d["rect"] for d in page.get_drawings() if _near(d.get("color"), SQUARE_RGB)]


@pytest.mark.parametrize("paper", ["A4", "Letter"])
def test_page_size_is_exact(paper: str) -> None:
    _, _, doc = _pdf(100, 25, paper=paper)
    w, h = PAPER_PT[paper]
    for page in doc:
        r = page.rect
        assert sorted((r.width, r.height)) == [
            pytest.approx(w, abs=0.01),
            pytest.approx(h, abs=0.01),
        ]


def test_squares_on_every_page_measure_true(big) -> None:  # type: ignore[no-untyped-def]
    _, _, doc = big
    for page in doc:
        sides = [(r.width, r.height) for r in _squares(page)]
        assert any(abs(w - 283.46) <= 0.05 and abs(h - 283.46) <= 0.05 for w, h in sides), (
            page.number
        )
        assert any(abs(w - 4 * 72) <= 0.05 and abs(h - 4 * 72) <= 0.05 for w, h in sides), (
            page.number
        )
        text = page.get_text()
        assert "PRINT AT 100 % / ACTUAL SIZE" in text


def _windows(doc) -> list[tuple[float, float, float, float]]:  # type: ignore[no-untyped-def]
    out = []
    for page in doc:
        m = WINDOW.search(page.get_text().replace("\n", " "))
        if m:
            out.append(tuple(float(v) for v in m.groups()))
    return out


def test_tiles_cover_outline_with_overlap(big) -> None:  # type: ignore[no-untyped-def]
    g, spec, doc = big
    wins = _windows(doc)
    assert len(wins) > 1
    # every point of the opening and the flange lies inside some tile window
    from ductgen.export.template import flange_contours
    from ductgen.export.template_layout import template_drawing

    d = template_drawing(g, spec, "0" * 64, *flange_contours(build_design(spec), spec))
    pts = np.vstack([c.sample(1.0) for _, c in d.cuts])
    for p in pts:
        assert any(x0 <= p[0] <= x1 and y0 <= p[1] <= y1 for x0, x1, y0, y1 in wins)
    # neighbours overlap by the stated 15 mm
    xs = sorted({(w[0], w[1]) for w in wins})
    ys = sorted({(w[2], w[3]) for w in wins})
    for (_a0, a1), (b0, _b1) in pairwise(xs):
        assert a1 - b0 == pytest.approx(15.0, abs=0.11)
    for (_a0, a1), (b0, _b1) in pairwise(ys):
        assert a1 - b0 == pytest.approx(15.0, abs=0.11)
    # page count: assembly map + calibration + one page per tile
    assert len(doc) == len(xs) * len(ys) + 2 == len(wins) + 2
    first = doc[0].get_text()
    assert "ASSEMBLY MAP" in first and all(
        f"R{r} C{c}" in first.replace("\n", " ")
        for r in range(1, len(ys) + 1)
        for c in range(1, len(xs) + 1)
    )
    assert "CALIBRATION" in doc[1].get_text()


def test_window_frame_is_drawn_at_true_scale(big) -> None:  # type: ignore[no-untyped-def]
    """The stated window (plan mm) equals the printed frame (pt) at 72/25.4 pt per mm."""
    _, _, doc = big
    page = doc[2]
    x0, x1, y0, y1 = _windows([page])[0]
    frames = [d["rect"] for d in page.get_drawings() if _near(d.get("color"), (0.6, 0.6, 0.6))]
    assert any(
        abs(r.width - (x1 - x0) * PT) < 0.3 and abs(r.height - (y1 - y0) * PT) < 0.3 for r in frames
    )


def _cut_extent_pt(page) -> float:  # type: ignore[no-untyped-def]
    rects = [d["rect"] for d in page.get_drawings() if _near(d.get("color"), CUT_RGB)]
    return (
        min(r.x0 for r in rects),
        max(r.x1 for r in rects),
        min(r.y0 for r in rects),
        max(r.y1 for r in rects),
    )


def test_opening_drawn_one_to_one(small) -> None:  # type: ignore[no-untyped-def]
    g, _, doc = small
    assert len(doc) == 3  # one tile
    page = doc[2]
    rects = sorted(
        (d["rect"] for d in page.get_drawings() if _near(d.get("color"), CUT_RGB)),
        key=lambda r: r.width,
    )
    opening = rects[0]  # the smaller red path: the opening; the larger is the flange
    assert opening.width == pytest.approx(g.length_mm * PT, abs=0.05)
    assert opening.height == pytest.approx(g.width_mm * PT, abs=0.05)


def test_scale_x_correction_grows_x_extent() -> None:
    _, _, doc0 = _pdf(40, 8)
    _, _, doc1 = _pdf(40, 8, scale_x=1.02)
    a, b = _cut_extent_pt(doc0[2]), _cut_extent_pt(doc1[2])
    assert (b[1] - b[0]) / (a[1] - a[0]) == pytest.approx(1.02, rel=2e-4)
    assert (b[3] - b[2]) / (a[3] - a[2]) == pytest.approx(1.0, rel=2e-4)
    # the calibration page is never corrected
    assert any(abs(r.width - 283.46) <= 0.05 for r in _squares(doc1[1]))


def test_the_calibration_rulers_have_a_tick_every_millimetre(small) -> None:  # type: ignore[no-untyped-def]
    """The calibration page's two 100 mm rulers, read back as drawn segments: 101 ticks
    each, 1 mm = 72/25.4 pt apart (PDF reference: 1 pt = 1/72 in), 10 mm ticks the longest
    and 5 mm ticks longer than the rest (common practice, no source), over a 100 mm base
    line; the page is never corrected, so this holds for any scale."""
    segments = []
    for d in small[2][1].get_drawings():
        if d.get("color") is None or any(abs(c) > 0.02 for c in d["color"]):
            continue  # black lines only
        for item in d["items"]:
            if item[0] == "l":
                segments.append((item[1].x, item[1].y, item[2].x, item[2].y))
    seg = np.array(segments)
    vertical = np.abs(seg[:, 0] - seg[:, 2]) < 1e-3
    horizontal = np.abs(seg[:, 1] - seg[:, 3]) < 1e-3
    for ticks, along, across in ((vertical, 0, (1, 3)), (horizontal, 1, (0, 2))):
        lengths = np.abs(seg[ticks][:, across[0]] - seg[ticks][:, across[1]])
        short = seg[ticks][lengths < 5.0 * PT]  # the ticks, not a square's side
        at = np.sort(short[:, along])
        assert len(at) == 101
        assert np.diff(at) == pytest.approx(PT, abs=2e-3)
        size = np.abs(short[:, across[0]] - short[:, across[1]])[np.argsort(short[:, along])]
        assert size[::10] == pytest.approx(4.0 * PT, abs=2e-3)
        assert size[5::10] == pytest.approx(2.5 * PT, abs=2e-3)
        assert size[1::5] == pytest.approx(1.5 * PT, abs=2e-3)
    base = np.abs(seg[:, 0] - seg[:, 2]) + np.abs(seg[:, 1] - seg[:, 3])
    assert np.sum(np.abs(base - 100.0 * PT) < 2e-3) >= 2
