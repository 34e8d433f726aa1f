"""Tiling a 1:1 drawing onto pages: the tile grid, the drawing windows and registration marks.

Lengths in mm. Paper coordinates run from the page's lower-left corner; drawing ("plan")
coordinates are the template's. Every page keeps ``MARGIN`` mm of paper edge clear (office
printers cannot print the outer ~4-6 mm; common practice, no source), a title strip above the
window and a note strip below it. When a tile's drawing leaves no empty place for the check
squares, the layout can reserve a strip beside the window for them (``reserve_mm``).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

__all__ = [
    "BOTTOM",
    "MARGIN",
    "PAPER_MM",
    "TOP",
    "Tile",
    "TileLayout",
    "registration",
    "tile_layout",
]

#: Paper name → (width, height) in mm, portrait.
PAPER_MM: dict[str, tuple[float, float]] = {"A4": (210.0, 297.0), "Letter": (215.9, 279.4)}
MARGIN = 10.0  # paper edge to printed content (mm); shop practice: keep >= 6 mm
TOP = 13.0  # label strip above the window (mm)
BOTTOM = 9.0  # note strip below the window (mm)


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
        slot_mm: paper lower-left corner (mm) of the reserved check-square place beside the
            window, or None when the squares go on the drawing's empty parts.
    """

    page_mm: tuple[float, float]
    landscape: bool
    window_mm: tuple[float, float, float, float]
    rows: int
    cols: int
    tiles: list[Tile]
    overlap_mm: float
    scale: tuple[float, float]
    slot_mm: tuple[float, float] | None = None


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
    reserve_mm: float = 0.0,
) -> TileLayout:
    """Tile the drawing extent (xmin, ymin, xmax, ymax in mm) onto the fewest pages.

    With ``reserve_mm`` > 0 a strip that wide (paper mm) is kept free left of the window or
    below it, whichever needs fewer pages; ``slot_mm`` then names its lower-left corner.
    """
    x0, y0, x1, y1 = extent[0] - pad_mm, extent[1] - pad_mm, extent[2] + pad_mm, extent[3] + pad_mm
    best = None
    strips = ("left", "bottom") if reserve_mm > 0 else ("none",)
    for landscape in (False, True):
        pw, ph = PAPER_MM[paper][::-1] if landscape else PAPER_MM[paper]
        for strip in strips:
            wx, wy = pw - 2 * MARGIN, ph - 2 * MARGIN - TOP - BOTTOM
            ox, oy, slot = MARGIN, MARGIN + BOTTOM, None
            if strip == "left":
                wx -= reserve_mm
                slot, ox = (MARGIN, MARGIN + BOTTOM + 1.0), MARGIN + reserve_mm
            elif strip == "bottom":
                wy -= reserve_mm
                slot, oy = (MARGIN + 1.0, MARGIN + BOTTOM), MARGIN + BOTTOM + reserve_mm
            if wx <= overlap_mm + 10 or wy <= overlap_mm + 10:
                continue
            dw, dh = wx / scale[0], wy / scale[1]  # window in drawing mm
            cols, cx0 = _grid(x0, x1, dw, overlap_mm)
            rows, cy0 = _grid(y0, y1, dh, overlap_mm)
            # fewest pages; on a tie, the orientation whose long side runs along the drawing's
            fit = (rows * cols, (pw > ph) != (x1 - x0 > y1 - y0))
            if best is not None and fit >= best[0]:
                continue
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
            lay = TileLayout(
                (pw, ph), landscape, (ox, oy, wx, wy), rows, cols, tiles, overlap_mm, scale, slot
            )
            best = (fit, lay)
    assert best is not None
    return best[1]


def registration(lay: TileLayout) -> list[tuple[float, float]]:
    """Crosshair centres (drawing mm): window fractions and overlap-band centres, kept where
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
