"""Tiled, true-scale PDF of the marking template (matplotlib, path simplification off).

Pages, in order: an assembly map (page 1: the outline, the tile grid and instructions),
a calibration page (uncorrected 100 mm and 4 in squares and rulers), then one page per tile.
Every page carries a 100 mm and a 4 in (101.6 mm) check square and a "print at 100 % /
actual size" note; tile pages carry their row/column, "n of N", the drawing window they show
(in plan coordinates), and crosshair registration marks placed on the drawing inside the
overlap bands, so neighbouring sheets are aligned by the drawing itself, not the paper edge.

Scale: one drawing millimetre is exactly 72/25.4 pt, times the printer correction
``template.scale_x`` / ``scale_y`` on tile pages (1 = none). matplotlib's PDF output is
exactly 1:1 only with path simplification turned off (brief §9), so every page is drawn
inside an ``rc_context`` that disables it. Page orientation is the one needing fewer tiles.
"""

from __future__ import annotations

import io
import math
import textwrap
from dataclasses import dataclass

import numpy as np

from ductgen.export.template_layout import TemplateDrawing
from ductgen.units import MM_PER_INCH

__all__ = ["PAPER_MM", "Tile", "TileLayout", "pdf_bytes", "tile_layout"]

#: Paper name → (width, height) in mm, portrait.
PAPER_MM: dict[str, tuple[float, float]] = {"A4": (210.0, 297.0), "Letter": (215.9, 279.4)}
_MARGIN = 10.0  # paper edge to printed content (mm); shop practice: keep >= 6 mm
_TOP = 13.0  # label strip above the window (mm)
_BOTTOM = 9.0  # note strip below the window (mm)
_PT = 72.0 / 25.4  # points per mm
_INCH = MM_PER_INCH
_CUT_RGB = (0.85, 0.0, 0.0)
_SQUARE_RGB = (0.0, 0.35, 0.75)
#: No path simplification (exact 1:1); the PDF core fonts (Helvetica: fast, no embedding).
_RC = {
    "path.simplify": False,
    "pdf.use14corefonts": True,
    "font.family": "sans-serif",
    "font.sans-serif": ["Helvetica"],
}


@dataclass(frozen=True)
class Tile:
    """One tile: grid row (0 = top) and column (0 = left), drawing window in plan mm."""

    row: int
    col: int
    x0: float
    y0: float
    x1: float
    y1: float


@dataclass(frozen=True)
class TileLayout:
    """Pages of a tiled template.

    Attributes:
        page_mm: page (width, height) in mm for the chosen orientation.
        landscape: orientation.
        window_mm: paper rectangle of the drawing window (x, y, w, h) in mm from the page's
            lower-left corner.
        rows, cols: grid size; tiles: row-major from the top-left.
        overlap_mm: overlap of neighbouring windows (drawing mm).
        scale: (scale_x, scale_y) printer correction.
    """

    page_mm: tuple[float, float]
    landscape: bool
    window_mm: tuple[float, float, float, float]
    rows: int
    cols: int
    tiles: list[Tile]
    overlap_mm: float
    scale: tuple[float, float]


def _grid(lo: float, hi: float, win: float, ov: float) -> tuple[int, float]:
    n = max(1, math.ceil((hi - lo - ov) / (win - ov) - 1e-9))
    total = n * (win - ov) + ov
    return n, lo - 0.5 * (total - (hi - lo))


def tile_layout(
    extent: tuple[float, float, float, float],
    paper: str,
    overlap_mm: float,
    scale: tuple[float, float] = (1.0, 1.0),
    pad_mm: float = 5.0,
) -> TileLayout:
    """Tile the drawing extent (xmin, ymin, xmax, ymax in mm) onto the fewest pages."""
    x0, y0, x1, y1 = extent[0] - pad_mm, extent[1] - pad_mm, extent[2] + pad_mm, extent[3] + pad_mm
    best = None
    for landscape in (False, True):
        pw, ph = PAPER_MM[paper][::-1] if landscape else PAPER_MM[paper]
        wx, wy = pw - 2 * _MARGIN, ph - 2 * _MARGIN - _TOP - _BOTTOM
        dw, dh = wx / scale[0], wy / scale[1]  # window in drawing mm
        cols, cx0 = _grid(x0, x1, dw, overlap_mm)
        rows, cy0 = _grid(y0, y1, dh, overlap_mm)
        # fewest pages; on a tie, the orientation whose long side runs along the drawing's
        fit = (rows * cols, (pw > ph) != (x1 - x0 > y1 - y0))
        if best is None or fit < best[0]:
            top = cy0 + rows * (dh - overlap_mm) + overlap_mm
            tiles = [
                Tile(
                    r,
                    c,
                    cx0 + c * (dw - overlap_mm),
                    top - r * (dh - overlap_mm) - dh,
                    cx0 + c * (dw - overlap_mm) + dw,
                    top - r * (dh - overlap_mm),
                )
                for r in range(rows)
                for c in range(cols)
            ]
            best = (
                fit,
                TileLayout(
                    (pw, ph),
                    landscape,
                    (_MARGIN, _MARGIN + _BOTTOM, wx, wy),
                    rows,
                    cols,
                    tiles,
                    overlap_mm,
                    scale,
                ),
            )
    assert best is not None
    return best[1]


def _registration(lay: TileLayout) -> list[tuple[float, float]]:
    """Crosshair centres (drawing mm): window centres and overlap-band centres, kept where
    they fall inside at least two windows."""
    t0 = lay.tiles[0]
    dw, dh, ov = t0.x1 - t0.x0, t0.y1 - t0.y0, lay.overlap_mm
    fr = (0.2, 0.5, 0.8)
    xs = {t.x0 + f * dw for t in lay.tiles for f in fr} | {
        t.x0 + 0.5 * ov for t in lay.tiles if t.col > 0
    }
    ys = {t.y0 + f * dh for t in lay.tiles for f in fr} | {
        t.y1 - 0.5 * ov for t in lay.tiles if t.row > 0
    }
    marks = []
    for x in sorted(xs):
        for y in sorted(ys):
            inside = sum(t.x0 + 3 < x < t.x1 - 3 and t.y0 + 3 < y < t.y1 - 3 for t in lay.tiles)
            if inside >= 2:
                marks.append((x, y))
    return marks


def _figure(page_mm: tuple[float, float]):  # type: ignore[no-untyped-def]
    from matplotlib.figure import Figure

    fig = Figure(figsize=(page_mm[0] / _INCH, page_mm[1] / _INCH))
    ax = fig.add_axes((0.0, 0.0, 1.0, 1.0))
    ax.set_xlim(0.0, page_mm[0])
    ax.set_ylim(0.0, page_mm[1])
    ax.set_axis_off()
    return fig, ax


def _squares(ax, x: float, y: float, sx: float = 1.0, sy: float = 1.0) -> None:  # type: ignore[no-untyped-def]
    """100 mm and 4 in check squares sharing their lower-left corner at paper (x, y) mm."""
    from matplotlib.patches import Rectangle

    for side, ls in ((100.0, "-"), (4 * _INCH, "--")):
        ax.add_patch(
            Rectangle(
                (x, y),
                side * sx,
                side * sy,
                fill=False,
                lw=0.25 * _PT,
                ec=_SQUARE_RGB,
                ls=ls,
                zorder=1,
            )
        )
    ax.text(x + 3, y + 100 * sy - 6, "CHECK: 100 mm square", fontsize=7, color=_SQUARE_RGB)
    ax.text(x + 3, y + 100 * sy - 10, "dashed: 4 in square", fontsize=7, color=_SQUARE_RGB)
    ax.text(x + 3, y + 100 * sy - 14, "not cut lines", fontsize=7, color=_SQUARE_RGB)


def _draw(ax, d: TemplateDrawing, to_page, clip) -> None:  # type: ignore[no-untyped-def]
    """CUT, HOLES and MARK entities through ``to_page`` (drawing mm → paper mm)."""
    from matplotlib.patches import Circle as MplCircle

    arts = []
    for _role, c in d.cuts:
        p = to_page(np.vstack([c.sample(0.2), c.points[:1]]))
        arts += ax.plot(p[:, 0], p[:, 1], color=_CUT_RGB, lw=0.3 * _PT, solid_joinstyle="miter")
    for ln in d.lines:
        p = to_page(np.array([ln.a, ln.b]))
        arts += ax.plot(p[:, 0], p[:, 1], color=(0.0, 0.5, 0.0), lw=0.18 * _PT)
    for circ in d.circles:
        p = to_page(
            np.array([circ.centre, (circ.centre[0] + circ.radius, circ.centre[1] + circ.radius)])
        )
        e = MplCircle(tuple(p[0]), 1.0, fill=False, ec=(0.0, 0.0, 0.8), lw=0.25 * _PT)
        e.set_radius(float(p[1, 0] - p[0, 0]))  # x radius; circles stay round when sx == sy
        arts.append(ax.add_patch(e))
    for t in d.texts:
        if t.layer == "MARK":
            p = to_page(np.array([t.at]))[0]
            arts.append(
                ax.text(p[0], p[1], t.text, fontsize=t.height * _PT / 0.72, color=(0.0, 0.5, 0.0))
            )
    for a in arts:
        a.set_clip_path(clip)


def _crosshair(ax, x: float, y: float, clip) -> None:  # type: ignore[no-untyped-def]
    from matplotlib.patches import Circle as MplCircle

    lw = 0.18 * _PT
    for a in ax.plot([x - 6, x + 6], [y, y], color="k", lw=lw) + ax.plot(
        [x, x], [y - 6, y + 6], color="k", lw=lw
    ):
        a.set_clip_path(clip)
    ax.add_patch(MplCircle((x, y), 3.0, fill=False, ec="k", lw=lw)).set_clip_path(clip)


def _note(ax, page_mm, text: str) -> None:  # type: ignore[no-untyped-def]
    ax.text(_MARGIN, page_mm[1] - _MARGIN - 9.5, text, fontsize=7.5, weight="bold")


_PRINT_NOTE = (
    "PRINT AT 100 % / ACTUAL SIZE - no 'fit to page'. Check squares: 100 mm and 4 in (101.6 mm)."
)


def _best_corner(
    points: np.ndarray, win: tuple[float, float, float, float], s: float
) -> tuple[float, float]:
    """Lower-left corner (paper mm) of the window corner box (side ``s``) hiding least drawing."""
    wx, wy, ww, wh = win
    best = None
    for cx, cy in (
        (wx + 1, wy + 1),
        (wx + ww - s - 1, wy + 1),
        (wx + 1, wy + wh - s - 1),
        (wx + ww - s - 1, wy + wh - s - 1),
    ):
        inside = int(
            np.sum(
                (points[:, 0] > cx)
                & (points[:, 0] < cx + s)
                & (points[:, 1] > cy)
                & (points[:, 1] < cy + s)
            )
        )
        if best is None or inside < best[0]:
            best = (inside, (cx, cy))
    assert best is not None
    return best[1]


def _tile_page(pdf, d, lay: TileLayout, k: int, marks, title: str) -> None:  # type: ignore[no-untyped-def]
    from matplotlib.patches import Rectangle

    t = lay.tiles[k]
    sx, sy = lay.scale
    wx, wy, ww, wh = lay.window_mm
    fig, ax = _figure(lay.page_mm)

    def to_page(p: np.ndarray) -> np.ndarray:
        p = np.atleast_2d(np.asarray(p, dtype=float))
        return np.column_stack([wx + (p[:, 0] - t.x0) * sx, wy + (p[:, 1] - t.y0) * sy])

    frame = Rectangle(
        (wx, wy), ww, wh, fill=False, ec=(0.6, 0.6, 0.6), lw=0.15 * _PT, ls=(0, (4, 3))
    )
    ax.add_patch(frame)
    content = to_page(
        np.vstack([c.sample(2.0) for _, c in d.cuts] + [np.array([ln.a, ln.b]) for ln in d.lines])
    )
    cx, cy = _best_corner(content, lay.window_mm, 4 * _INCH * max(sx, sy) + 2)
    _squares(ax, cx, cy, sx, sy)
    _draw(ax, d, to_page, frame)
    for m in marks:
        p = to_page(np.array([m]))[0]
        _crosshair(ax, p[0], p[1], frame)
    n = len(lay.tiles)
    _header(
        ax,
        lay,
        f"{title}   TILE R{t.row + 1} C{t.col + 1}  ({k + 1} of {n})   page {k + 3} of {n + 2}",
        9,
    )
    nb = [
        f"{s} R{r + 1} C{c + 1}"
        for s, r, c in (
            ("left:", t.row, t.col - 1),
            ("right:", t.row, t.col + 1),
            ("above:", t.row - 1, t.col),
            ("below:", t.row + 1, t.col),
        )
        if 0 <= r < lay.rows and 0 <= c < lay.cols
    ]
    ax.text(
        _MARGIN,
        _MARGIN + 4.5,
        f"window x {t.x0:.1f} to {t.x1:.1f} mm, y {t.y0:.1f} to {t.y1:.1f} mm"
        f" (plan coordinates); overlap {lay.overlap_mm:.0f} mm; correction x {sx:.4f} y {sy:.4f}",
        fontsize=6.5,
    )
    ax.text(
        _MARGIN,
        _MARGIN + 0.5,
        "Align the crosshairs with the neighbouring tiles"
        + (f" ({', '.join(nb)})" if nb else "")
        + ". Cut on the red line; green = marks.",
        fontsize=6.5,
    )
    pdf.savefig(fig)


def _header(ax, lay: TileLayout, text: str, size: float = 10) -> None:  # type: ignore[no-untyped-def]
    """Bold page title at the top left and the print-at-100 % note."""
    ax.text(_MARGIN, lay.page_mm[1] - _MARGIN - 4, text, fontsize=size, weight="bold")
    _note(ax, lay.page_mm, _PRINT_NOTE)


def _cover_page(pdf, d, lay: TileLayout, title: str, info: list[str], cautions: str) -> None:  # type: ignore[no-untyped-def]
    from matplotlib.patches import Rectangle

    pw, ph = lay.page_mm
    fig, ax = _figure(lay.page_mm)
    _header(ax, lay, f"{title}   ASSEMBLY MAP   page 1 of {len(lay.tiles) + 2}")
    # map box: upper part of the page
    by = _MARGIN + 4 * _INCH + 8
    bx, bw, bh = _MARGIN, pw - 2 * _MARGIN, ph - by - _MARGIN - 16
    xs = [t.x0 for t in lay.tiles] + [t.x1 for t in lay.tiles]
    ys = [t.y0 for t in lay.tiles] + [t.y1 for t in lay.tiles]
    s = min(bw / (max(xs) - min(xs)), bh / (max(ys) - min(ys)))
    ox = bx + 0.5 * (bw - s * (max(xs) - min(xs))) - s * min(xs)
    oy = by + 0.5 * (bh - s * (max(ys) - min(ys))) - s * min(ys)
    for k, t in enumerate(lay.tiles):
        ax.add_patch(
            Rectangle(
                (ox + s * t.x0, oy + s * t.y0),
                s * (t.x1 - t.x0),
                s * (t.y1 - t.y0),
                fill=False,
                ec=(0.4, 0.4, 0.4),
                lw=0.6,
            )
        )
        ax.text(
            ox + s * (t.x0 + 0.5 * (t.x1 - t.x0)),
            oy + s * (t.y0 + 0.5 * (t.y1 - t.y0)),
            f"R{t.row + 1} C{t.col + 1}\np. {k + 3}",
            ha="center",
            va="center",
            fontsize=8,
            color=(0.3, 0.3, 0.3),
        )
    for _role, c in d.cuts:
        p = np.vstack([c.sample(1.0), c.points[:1]])
        ax.plot(ox + s * p[:, 0], oy + s * p[:, 1], color=_CUT_RGB, lw=0.8)
    ax.plot(
        [ox + s * (-40.0), ox + s * (d.cuts[0][1].points[:, 0].max() + 15)],
        [oy, oy],
        color="g",
        lw=0.4,
    )
    _squares(ax, _MARGIN + 1, _MARGIN + 1)
    tx = _MARGIN + 4 * _INCH + 6
    width_chars = int((pw - tx - _MARGIN) / 1.45)
    lines = [*info, "", "How to use:"]
    steps = [
        "1. Print every page at 100 % / actual size (no 'fit to page', no scaling).",
        "2. Measure the 100 mm square on the calibration page (page 2). If it is off, set "
        "template.scale_x = 100 / measured width and scale_y = 100 / measured height and rebuild.",
        "3. Trim one edge of each tile along its dashed frame, lay it over its neighbour and align "
        "the crosshairs; tape. The map above shows where each tile goes.",
        "4. Check the squares on every tile, then mark and cut on the red line.",
    ]
    for st in steps:
        lines += textwrap.wrap(st, width_chars, subsequent_indent="   ")
    lines += ["", "CAUTIONS:", *textwrap.wrap(cautions, width_chars)]
    y = by - 6
    for ln in lines:
        ax.text(tx, y, ln, fontsize=6.8)
        y -= 3.4
    pdf.savefig(fig)


def _calibration_page(pdf, lay: TileLayout, title: str) -> None:  # type: ignore[no-untyped-def]
    fig, ax = _figure(lay.page_mm)
    _header(ax, lay, f"{title}   CALIBRATION   page 2 of {len(lay.tiles) + 2}")
    x0, y0 = _MARGIN + 8, _MARGIN + 30
    _squares(ax, x0, y0)
    # rulers: 100 mm along x above the squares, 100 mm along y beside them, mm ticks
    ry = y0 + 4 * _INCH + 10
    ax.plot([x0, x0 + 100], [ry, ry], color="k", lw=0.5)
    rx = x0 + 4 * _INCH + 10
    ax.plot([rx, rx], [y0, y0 + 100], color="k", lw=0.5)
    for i in range(101):
        h = 4.0 if i % 10 == 0 else (2.5 if i % 5 == 0 else 1.5)
        ax.plot([x0 + i, x0 + i], [ry, ry + h], color="k", lw=0.2)
        ax.plot([rx, rx + h], [y0 + i, y0 + i], color="k", lw=0.2)
    ax.text(x0, ry + 6, "0 to 100 mm", fontsize=7)
    ax.text(rx + 6, y0 + 50, "0 to 100 mm", fontsize=7, rotation=90, va="center")
    text = [
        "This page is never corrected: it measures your printer.",
        "Measure the solid square: width a mm, height b mm.",
        "If a or b is not 100.0 mm, set in the spec [template]:",
        "  scale_x = 100 / a    scale_y = 100 / b",
        "and rebuild; the tile pages are then pre-scaled so that",
        "they print true. Printers are often 1-3 % off, and",
        "differently along and across the paper.",
        f"This file: scale_x = {lay.scale[0]:.4f}, scale_y = {lay.scale[1]:.4f}.",
    ]
    tx, y = (rx + 15, y0 + 95) if lay.landscape else (x0, ry + 12 + 4.5 * len(text))
    for ln in text:
        ax.text(tx, y, ln, fontsize=8)
        y -= 4.5
    pdf.savefig(fig)


def pdf_bytes(
    d: TemplateDrawing,
    paper: str,
    overlap_mm: float,
    scale: tuple[float, float],
    title: str,
    info: list[str],
    cautions: str,
) -> bytes:
    """Encode the tiled template PDF.

    Args:
        d: the template drawing (mm).
        paper: ``"A4"`` or ``"Letter"``.
        overlap_mm: tile overlap (drawing mm).
        scale: (scale_x, scale_y) printer correction for the tile pages.
        title: page heading (name); info: lines for the assembly page; cautions: brief §7.

    Returns:
        The PDF file.
    """
    import logging

    from matplotlib import rc_context
    from matplotlib.backends.backend_pdf import PdfPages

    # the core-font metrics name their weight "Medium": silence matplotlib's fallback notice
    logging.getLogger("matplotlib.font_manager").setLevel(logging.ERROR)

    lay = tile_layout(d.cut_extent(), paper, overlap_mm, scale)
    marks = _registration(lay)
    buf = io.BytesIO()
    with (
        rc_context(_RC),
        PdfPages(buf, metadata={"Title": f"{title} marking template", "Creator": "ductgen"}) as pdf,
    ):
        _cover_page(pdf, d, lay, title, info, cautions)
        _calibration_page(pdf, lay, title)
        for k in range(len(lay.tiles)):
            _tile_page(pdf, d, lay, k, marks, title)
    return buf.getvalue()
