"""Page pieces of the template PDF (matplotlib): figure, check squares, drawing, crosshairs,
header, the assembly map page and the calibration page. Paper mm from the page's lower-left
corner; one drawing mm is 72/25.4 pt.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import TYPE_CHECKING, Any

import numpy as np

from ductgen.export.placement import TEXT_ASCENT, Occupancy, text_box, text_width_em
from ductgen.export.template_layout import TemplateDrawing
from ductgen.export.tiling import MARGIN as _MARGIN
from ductgen.export.tiling import Tile, TileLayout

if TYPE_CHECKING:
    from matplotlib.artist import Artist
    from matplotlib.axes import Axes
    from matplotlib.backends.backend_pdf import PdfPages
    from matplotlib.figure import Figure
    from matplotlib.patches import Patch
    from matplotlib.typing import RcKeyType

__all__ = [
    "CUT_RGB",
    "INCH",
    "PT",
    "RC",
    "SQUARE_RGB",
    "calibration_page",
    "cover_page",
    "crosshair",
    "draw",
    "figure",
    "header",
    "squares",
]

PT = 72.0 / 25.4  # points per mm
INCH = 25.4
CUT_RGB = (0.85, 0.0, 0.0)
SQUARE_RGB = (0.0, 0.35, 0.75)
#: No path simplification (exact 1:1); the PDF core fonts (Helvetica: fast, no embedding).
RC: dict[RcKeyType, Any] = {
    "path.simplify": False,
    "pdf.use14corefonts": True,
    "font.family": "sans-serif",
    "font.sans-serif": ["Helvetica"],
}


def figure(page_mm: tuple[float, float]) -> tuple[Figure, Axes]:
    from matplotlib.figure import Figure

    fig = Figure(figsize=(page_mm[0] / INCH, page_mm[1] / INCH))
    ax = fig.add_axes((0.0, 0.0, 1.0, 1.0))
    ax.set_xlim(0.0, page_mm[0])
    ax.set_ylim(0.0, page_mm[1])
    ax.set_axis_off()
    return fig, ax


def squares(ax: Axes, x: float, y: float, sx: float = 1.0, sy: float = 1.0) -> None:
    """100 mm and 4 in check squares sharing their lower-left corner at paper (x, y) mm."""
    from matplotlib.patches import Rectangle

    for side, ls in ((100.0, "-"), (4 * INCH, "--")):
        ax.add_patch(
            Rectangle(
                (x, y),
                side * sx,
                side * sy,
                fill=False,
                lw=0.25 * PT,
                ec=SQUARE_RGB,
                ls=ls,
                zorder=1,
            )
        )
    ax.text(x + 3, y + 100 * sy - 6, "CHECK: 100 mm square", fontsize=7, color=SQUARE_RGB)
    ax.text(x + 3, y + 100 * sy - 10, "dashed: 4 in square", fontsize=7, color=SQUARE_RGB)
    ax.text(x + 3, y + 100 * sy - 14, "not cut lines", fontsize=7, color=SQUARE_RGB)


def draw(
    ax: Axes, d: TemplateDrawing, to_page: Callable[[np.ndarray], np.ndarray], clip: Patch
) -> None:
    """CUT, HOLES and MARK entities through ``to_page`` (drawing mm → paper mm)."""
    from matplotlib.patches import Circle as MplCircle

    arts: list[Artist] = []
    for _role, c in d.cuts:
        p = to_page(np.vstack([c.sample(0.2), c.points[:1]]))
        arts += ax.plot(p[:, 0], p[:, 1], color=CUT_RGB, lw=0.3 * PT, solid_joinstyle="miter")
    for ln in d.lines:
        p = to_page(np.array([ln.a, ln.b]))
        arts += ax.plot(p[:, 0], p[:, 1], color=(0.0, 0.5, 0.0), lw=0.18 * PT)
    for circ in d.circles:
        p = to_page(
            np.array([circ.centre, (circ.centre[0] + circ.radius, circ.centre[1] + circ.radius)])
        )
        e = MplCircle(tuple(p[0]), 1.0, fill=False, ec=(0.0, 0.0, 0.8), lw=0.25 * PT)
        e.set_radius(float(p[1, 0] - p[0, 0]))  # x radius; circles stay round when sx == sy
        arts.append(ax.add_patch(e))
    for a in arts:
        a.set_clip_path(clip)


def crosshair(ax: Axes, x: float, y: float, clip: Patch) -> None:
    from matplotlib.patches import Circle as MplCircle

    lw = 0.18 * PT
    for a in ax.plot([x - 6, x + 6], [y, y], color="k", lw=lw) + ax.plot(
        [x, x], [y - 6, y + 6], color="k", lw=lw
    ):
        a.set_clip_path(clip)
    ax.add_patch(MplCircle((x, y), 3.0, fill=False, ec="k", lw=lw)).set_clip_path(clip)


def _note(ax: Axes, page_mm: tuple[float, float], text: str) -> None:
    ax.text(_MARGIN, page_mm[1] - _MARGIN - 9.5, text, fontsize=7.5, weight="bold")


_PRINT_NOTE = (
    "PRINT AT 100 % / ACTUAL SIZE - no 'fit to page'. Check squares: 100 mm and 4 in (101.6 mm)."
)


def header(ax: Axes, lay: TileLayout, text: str, size: float = 10) -> None:
    """Bold page title at the top left and the print-at-100 % note."""
    ax.text(_MARGIN, lay.page_mm[1] - _MARGIN - 4, text, fontsize=size, weight="bold")
    _note(ax, lay.page_mm, _PRINT_NOTE)


def _wrap(text: str, width_mm: float, em_mm: float, indent: str = "") -> list[str]:
    """Greedy word wrap to a measured width (mm) in Helvetica of em size ``em_mm``."""
    lines: list[str] = []
    cur = ""
    for word in text.split():
        trial = f"{cur} {word}" if cur else word
        if cur and text_width_em(trial) * em_mm > width_mm:
            lines.append(cur)
            cur = indent + word
        else:
            cur = trial
    return [*lines, cur] if cur else lines


def _map_label(
    ax: Axes,
    occ: Occupancy,
    lay: TileLayout,
    t: Tile,
    k: int,
    map_xform: tuple[float, float, float],
) -> None:
    """Tile label on the assembly map, where the map is empty, inside the part of the tile
    no neighbour shows (nearest its centre); one line when two do not fit."""
    ox, oy, s = map_xform
    ov = s * lay.overlap_mm
    own = (
        ox + s * t.x0 + (ov if t.col > 0 else 0.0),
        oy + s * t.y0 + (ov if t.row < lay.rows - 1 else 0.0),
        ox + s * t.x1,
        oy + s * t.y1,
    )
    centre = (0.5 * (own[0] + own[2]), 0.5 * (own[1] + own[3]))
    em = 8.0 / PT
    at = None
    for text in (f"R{t.row + 1} C{t.col + 1}\np. {k + 3}", f"R{t.row + 1} C{t.col + 1} p. {k + 3}"):
        b = text_box(0.0, 0.0, text, em, va="bottom")
        at = occ.place((b[2] - b[0], b[3] - b[1]), centre, 0.8, own)
        if at is not None:
            break
    if at is None:  # no empty place at all: the tile's centre
        at = (centre[0] - 0.5 * (b[2] - b[0]), centre[1] - 0.5 * (b[3] - b[1]))
    occ.add_box((at[0], at[1], at[0] + b[2] - b[0], at[1] + b[3] - b[1]))
    # text_box(va="bottom") puts the box bottom at y: the first baseline is an ascent below
    # its top, the next ones 1.2 em lower each
    for i, line in enumerate(text.split("\n")):
        y = at[1] + b[3] - b[1] - (TEXT_ASCENT + 1.2 * i) * em
        ax.text(at[0], y, line, fontsize=8, color=(0.3, 0.3, 0.3))


def cover_page(
    pdf: PdfPages, d: TemplateDrawing, lay: TileLayout, title: str, info: list[str], cautions: str
) -> None:
    from matplotlib.patches import Rectangle

    pw, ph = lay.page_mm
    fig, ax = figure(lay.page_mm)
    header(ax, lay, f"{title}   ASSEMBLY MAP   page 1 of {len(lay.tiles) + 2}")
    # map box: upper part of the page
    by = _MARGIN + 4 * INCH + 8
    bx, bw, bh = _MARGIN, pw - 2 * _MARGIN, ph - by - _MARGIN - 16
    xs = [t.x0 for t in lay.tiles] + [t.x1 for t in lay.tiles]
    ys = [t.y0 for t in lay.tiles] + [t.y1 for t in lay.tiles]
    s = min(bw / (max(xs) - min(xs)), bh / (max(ys) - min(ys)))
    ox = bx + 0.5 * (bw - s * (max(xs) - min(xs))) - s * min(xs)
    oy = by + 0.5 * (bh - s * (max(ys) - min(ys))) - s * min(ys)
    occ = Occupancy((bx, by, bx + bw, by + bh), 0.25)
    for t in lay.tiles:
        r = (ox + s * t.x0, oy + s * t.y0, ox + s * t.x1, oy + s * t.y1)
        ax.add_patch(
            Rectangle(r[:2], r[2] - r[0], r[3] - r[1], fill=False, ec=(0.4, 0.4, 0.4), lw=0.6)
        )
        occ.add_polyline(np.array([r[:2], (r[2], r[1]), r[2:], (r[0], r[3])]), closed=True)
    for _role, c in d.cuts:
        p = np.vstack([c.sample(1.0), c.points[:1]])
        ax.plot(ox + s * p[:, 0], oy + s * p[:, 1], color=CUT_RGB, lw=0.8)
        occ.add_polyline(np.column_stack([ox + s * p[:, 0], oy + s * p[:, 1]]))
    cl = np.array([[ox + s * (-40.0), oy], [ox + s * (d.cuts[0][1].points[:, 0].max() + 15), oy]])
    ax.plot(cl[:, 0], cl[:, 1], color="g", lw=0.4)
    occ.add_polyline(cl)
    for k, t in enumerate(lay.tiles):
        _map_label(ax, occ, lay, t, k, (ox, oy, s))
    squares(ax, _MARGIN + 1, _MARGIN + 1)
    tx = _MARGIN + 4 * INCH + 6
    width_mm = pw - tx - _MARGIN
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
        lines += _wrap(st, width_mm, 6.8 / PT, "   ")
    lines += ["", "CAUTIONS:", *_wrap(cautions, width_mm, 6.8 / PT)]
    y = by - 6
    for ln in lines:
        ax.text(tx, y, ln, fontsize=6.8)
        y -= 3.4
    pdf.savefig(fig)


def calibration_page(pdf: PdfPages, lay: TileLayout, title: str) -> None:
    from matplotlib.collections import LineCollection

    fig, ax = figure(lay.page_mm)
    header(ax, lay, f"{title}   CALIBRATION   page 2 of {len(lay.tiles) + 2}")
    x0, y0 = _MARGIN + 8, _MARGIN + 30
    squares(ax, x0, y0)
    # rulers: 100 mm along x above the squares, 100 mm along y beside them, mm ticks
    ry = y0 + 4 * INCH + 10
    ax.plot([x0, x0 + 100], [ry, ry], color="k", lw=0.5)
    rx = x0 + 4 * INCH + 10
    ax.plot([rx, rx], [y0, y0 + 100], color="k", lw=0.5)
    ticks = []  # one collection: 202 separate lines took a third of the template's time
    for i in range(101):
        h = 4.0 if i % 10 == 0 else (2.5 if i % 5 == 0 else 1.5)
        ticks += [[(x0 + i, ry), (x0 + i, ry + h)], [(rx, y0 + i), (rx + h, y0 + i)]]
    ax.add_collection(LineCollection(ticks, colors="k", linewidths=0.2))
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
