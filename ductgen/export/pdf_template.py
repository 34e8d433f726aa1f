"""Tiled, true-scale PDF of the marking template (matplotlib, path simplification off).

Pages, in order: an assembly map (page 1: the outline, the tile grid and instructions),
a calibration page (uncorrected 100 mm and 4 in squares and rulers), then one page per tile.
Every page carries a 100 mm and a 4 in (101.6 mm) check square and a "print at 100 % /
actual size" note; tile pages carry their row/column, "n of N", the drawing window they show
(in plan coordinates), and crosshair registration marks placed on the drawing inside the
overlap bands, so neighbouring sheets are aligned by the drawing itself, not the paper edge.

Scale: one drawing millimetre is exactly 72/25.4 pt, times the printer correction
``template.scale_x`` / ``scale_y`` on tile pages (1 = none). matplotlib's PDF output is
exactly 1:1 only with path simplification turned off (measured), so every page is drawn
inside an ``rc_context`` that disables it. Page orientation is the one needing fewer tiles.

Nothing is drawn under a label or a check square: the squares go where the tile's drawing is
empty (the layout with the fewest pages that allows it: the drawing pushed into a corner of
its window, or a strip beside every window kept for them), MARK labels are drawn whole on a
tile, and crosshairs under a square or label are left out on every tile.
"""

from __future__ import annotations

import io
from collections.abc import Callable
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from ductgen.export.pdf_pages import (
    INCH,
    PT,
    RC,
    calibration_page,
    cover_page,
    crosshair,
    draw,
    figure,
    header,
    squares,
)
from ductgen.export.placement import Box, Occupancy, boxes_overlap, text_box
from ductgen.export.template_layout import TemplateDrawing, Text
from ductgen.export.tiling import MARGIN as _MARGIN
from ductgen.export.tiling import PAPER_MM, Tile, TileLayout, registration, tile_layout
from ductgen.stamp import build_datetime

if TYPE_CHECKING:
    from matplotlib.backends.backend_pdf import PdfPages

__all__ = ["PAPER_MM", "Tile", "TileLayout", "pdf_bytes", "tile_layout"]


@dataclass(frozen=True)
class _TilePlan:
    """What goes on one tile page besides the drawing (paper mm): the check squares' corner
    and the MARK labels (text, paper anchor), each drawn whole inside the window."""

    square: tuple[float, float]
    labels: list[tuple[Text, tuple[float, float]]]


def _to_page(lay: TileLayout, t: Tile) -> Callable[[np.ndarray], np.ndarray]:
    """Drawing mm → paper mm for tile ``t``."""
    sx, sy = lay.scale
    wx, wy = lay.window_mm[:2]

    def f(p: np.ndarray) -> np.ndarray:
        p = np.atleast_2d(np.asarray(p, dtype=float))
        return np.column_stack([wx + (p[:, 0] - t.x0) * sx, wy + (p[:, 1] - t.y0) * sy])

    return f


def _window_box(lay: TileLayout, inset: float = 0.0) -> Box:
    wx, wy, ww, wh = lay.window_mm
    return (wx + inset, wy + inset, wx + ww - inset, wy + wh - inset)


def _square_box(lay: TileLayout, corner: tuple[float, float]) -> Box:
    """Paper box of the 4 in square (the larger one) drawn at ``corner``."""
    sx, sy = lay.scale
    return (corner[0], corner[1], corner[0] + 4 * INCH * sx, corner[1] + 4 * INCH * sy)


def _label_em(t: Text) -> float:
    """Em size (paper mm) of a MARK label: its cap height is ``t.height``."""
    return t.height / 0.72


def _tile_labels(
    d: TemplateDrawing, lay: TileLayout
) -> list[list[tuple[Text, tuple[float, float]]]]:
    """MARK labels per tile: on every tile whose window holds the whole label; a label no
    window holds whole goes on the tile showing most of it, moved just inside its window."""
    win = _window_box(lay, 0.5)
    out: list[list[tuple[Text, tuple[float, float]]]] = [[] for _ in lay.tiles]
    for text in (t for t in d.texts if t.layer == "MARK"):
        best, placed = (-1.0, 0), False
        for k, tile in enumerate(lay.tiles):
            at = _to_page(lay, tile)(np.array([text.at]))[0]
            b = text_box(at[0], at[1], text.text, _label_em(text))
            if b[0] >= win[0] and b[1] >= win[1] and b[2] <= win[2] and b[3] <= win[3]:
                out[k].append((text, (float(at[0]), float(at[1]))))
                placed = True
            ov = max(0.0, min(b[2], win[2]) - max(b[0], win[0])) * max(
                0.0, min(b[3], win[3]) - max(b[1], win[1])
            )
            best = max(best, (ov, -k))
        if not placed and best[0] > 0:
            k = -best[1]
            at = _to_page(lay, lay.tiles[k])(np.array([text.at]))[0]
            b = text_box(at[0], at[1], text.text, _label_em(text))
            dx = max(win[0] - b[0], 0.0) - max(b[2] - win[2], 0.0)
            dy = max(win[1] - b[1], 0.0) - max(b[3] - win[3], 0.0)
            out[k].append((text, (float(at[0] + dx), float(at[1] + dy))))
    return out


def _occupancy(
    d: TemplateDrawing,
    lay: TileLayout,
    tile: Tile,
    labels: list[tuple[Text, tuple[float, float]]],
) -> Occupancy:
    """Cells of the tile's window that its drawing (cut, hole, mark lines, labels) occupies."""
    to_page = _to_page(lay, tile)
    occ = Occupancy(_window_box(lay), 0.5)
    for _, c in d.cuts:
        occ.add_polyline(to_page(c.sample(0.5)), closed=True)
    for ln in d.lines:
        occ.add_polyline(to_page(np.array([ln.a, ln.b])))
    for circ in d.circles:
        p = to_page(np.array([circ.centre]))[0]
        occ.add_circle((float(p[0]), float(p[1])), circ.radius * max(lay.scale))
    for text, at in labels:
        occ.add_box(text_box(at[0], at[1], text.text, _label_em(text)))
    return occ


def _plan_tiles(d: TemplateDrawing, lay: TileLayout) -> list[_TilePlan] | None:
    """Check squares on each tile's empty part, nearest a window corner; None when some tile
    has no empty place big enough (the caller then reserves a strip beside the window)."""
    labels = _tile_labels(d, lay)
    side = (4 * INCH * lay.scale[0], 4 * INCH * lay.scale[1])
    x0, y0, x1, y1 = _window_box(lay)
    plans = []
    for k, tile in enumerate(lay.tiles):
        if lay.slot_mm is not None:
            plans.append(_TilePlan(lay.slot_mm, labels[k]))
            continue
        occ = _occupancy(d, lay, tile, labels[k])
        best = None
        for anchor in ((x0, y0), (x1, y0), (x0, y1), (x1, y1)):
            at = occ.place(side, anchor, clearance=2.0)
            if at is not None:
                b = _square_box(lay, at)
                dist = np.hypot(
                    max(b[0] - anchor[0], anchor[0] - b[2], 0.0),
                    max(b[1] - anchor[1], anchor[1] - b[3], 0.0),
                )
                if best is None or dist < best[0]:
                    best = (dist, at)
        if best is None:
            return None
        plans.append(_TilePlan(best[1], labels[k]))
    return plans


def _layout(
    d: TemplateDrawing, paper: str, overlap_mm: float, scale: tuple[float, float]
) -> tuple[TileLayout, list[_TilePlan]]:
    """The layout with the fewest pages whose every tile shows its check squares on empty
    paper: the drawing tiled tight, or with a strip beside each window kept for the squares,
    or with empty paper added on one side of the drawing (room in the corners)."""
    x0, y0, x1, y1 = d.cut_extent()
    best = None
    side = 4 * INCH * max(scale) + 4.0
    tight = tile_layout((x0, y0, x1, y1), paper, overlap_mm, scale)
    t0, ov = tight.tiles[0], overlap_mm
    # the empty paper the tight layout leaves round the drawing (drawing mm, pad 5 mm kept)
    slack_x = tight.cols * (t0.x1 - t0.x0 - ov) + ov - (x1 - x0) - 10.0 - 0.01
    slack_y = tight.rows * (t0.y1 - t0.y0 - ov) + ov - (y1 - y0) - 10.0 - 0.01
    tries = [((x0, y0, x1, y1), 0.0)]
    for gx0, gy0 in ((slack_x, slack_y), (side, side)):  # the drawing pushed into a corner
        for gx, gy in ((1, 1), (-1, 1), (1, -1), (-1, -1), (1, 0), (-1, 0), (0, 1), (0, -1)):
            tries.append(
                (
                    (
                        x0 - gx0 * (gx > 0),
                        y0 - gy0 * (gy > 0),
                        x1 + gx0 * (gx < 0),
                        y1 + gy0 * (gy < 0),
                    ),
                    0.0,
                )
            )
        if gx0 == slack_x:
            tries.append(((x0, y0, x1, y1), side))
    for extent, res in tries:
        lay = tile_layout(extent, paper, overlap_mm, scale, reserve_mm=res)
        if best is not None and len(lay.tiles) >= len(best[0].tiles):
            continue
        plans = _plan_tiles(d, lay)
        if plans is not None:
            best = (lay, plans)
    assert best is not None  # the reserved strip always holds the squares
    return best


def _free_marks(lay: TileLayout, plans: list[_TilePlan]) -> list[tuple[float, float]]:
    """Registration crosshairs (drawing mm) that stay clear of every tile's squares and
    labels: a crosshair covered on one tile is left out on all, so pairs stay matched."""
    keep = []
    for m in registration(lay):
        ok = True
        for tile, plan in zip(lay.tiles, plans, strict=True):
            p = _to_page(lay, tile)(np.array([m]))[0]
            box = (p[0] - 6.0, p[1] - 6.0, p[0] + 6.0, p[1] + 6.0)
            busy = [_square_box(lay, plan.square)] + [
                text_box(at[0], at[1], t.text, _label_em(t)) for t, at in plan.labels
            ]
            if any(boxes_overlap(box, b, 1.0) for b in busy):
                ok = False
                break
        if ok:
            keep.append(m)
    return keep


def _tile_page(
    pdf: PdfPages,
    d: TemplateDrawing,
    lay: TileLayout,
    k: int,
    plan: _TilePlan,
    marks: list[tuple[float, float]],
    title: str,
) -> None:
    from matplotlib.patches import Rectangle

    t = lay.tiles[k]
    sx, sy = lay.scale
    wx, wy, ww, wh = lay.window_mm
    fig, ax = figure(lay.page_mm)
    to_page = _to_page(lay, t)
    frame = Rectangle(
        (wx, wy), ww, wh, fill=False, ec=(0.6, 0.6, 0.6), lw=0.15 * PT, ls=(0, (4, 3))
    )
    ax.add_patch(frame)
    squares(ax, plan.square[0], plan.square[1], sx, sy)
    draw(ax, d, to_page, frame)
    for text, at in plan.labels:
        ax.text(at[0], at[1], text.text, fontsize=_label_em(text) * PT, color=(0.0, 0.5, 0.0))
    for m in marks:
        p = to_page(np.array([m]))[0]
        crosshair(ax, p[0], p[1], frame)
    n = len(lay.tiles)
    header(
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
        title: page heading (name); info: lines for the assembly page; cautions: the cautions text.

    Returns:
        The PDF file.
    """
    import logging

    from matplotlib import rc_context
    from matplotlib.backends.backend_pdf import PdfPages

    # the core-font metrics name their weight "Medium": silence matplotlib's fallback notice
    logging.getLogger("matplotlib.font_manager").setLevel(logging.ERROR)

    lay, plans = _layout(d, paper, overlap_mm, scale)
    marks = _free_marks(lay, plans)
    meta = {
        "Title": f"{title} marking template",
        "Creator": "ductgen",
        "Producer": "ductgen (matplotlib)",
        "CreationDate": build_datetime(),
    }
    buf = io.BytesIO()
    with rc_context(RC), PdfPages(buf, metadata=meta) as pdf:
        cover_page(pdf, d, lay, title, info, cautions)
        calibration_page(pdf, lay, title)
        for k in range(len(lay.tiles)):
            _tile_page(pdf, d, lay, k, plans[k], marks, title)
    return buf.getvalue()
