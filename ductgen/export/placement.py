"""Free-space search for labels and check squares on drawings, and text extents (pure numpy).

A drawing is rasterised onto an occupancy grid (cell ``cell_mm``): every line, contour and
circle is sampled finer than a cell and marks the cells it passes, every text box fills its
cells. A summed-area table then tells, for every candidate lower-left corner at once, whether
a box of a given size (plus a clearance) is empty; the free corner nearest a preferred anchor
wins. Deterministic: the same drawing gives the same placement.

Text extents use the Adobe font metrics (AFM) of the PDF core font Helvetica shipped with
matplotlib (advance widths in 1/1000 em), so a box is the true width of the string as the PDF
prints it; the height spans the font's descender (-0.207 em) to its ascender (0.718 em) with a
margin (``TEXT_ASCENT`` / ``TEXT_DESCENT``). All lengths in mm unless a name says ``pt``.
"""

from __future__ import annotations

import functools
import re
from pathlib import Path

import numpy as np

__all__ = [
    "TEXT_ASCENT",
    "TEXT_DESCENT",
    "Box",
    "Occupancy",
    "boxes_overlap",
    "densify",
    "text_box",
    "text_width_em",
]

#: (xmin, ymin, xmax, ymax) in mm.
Box = tuple[float, float, float, float]

#: Box above the baseline and below it, in em; Helvetica's AFM ascender 0.718 and descender
#: -0.207, widened so the box holds every glyph of the font (FontBBox -0.225 to 0.931 em).
TEXT_ASCENT = 0.95
TEXT_DESCENT = 0.25
_FALLBACK_EM = 0.72  # width of an unknown glyph (em): wider than any Helvetica letter but W, M


@functools.cache
def _afm_widths(bold: bool) -> dict[int, float]:
    """Character code → advance width (em) from matplotlib's Helvetica AFM file."""
    import matplotlib

    name = "Helvetica-Bold.afm" if bold else "Helvetica.afm"
    path = Path(matplotlib.get_data_path()) / "fonts" / "pdfcorefonts" / name
    out: dict[int, float] = {}
    pat = re.compile(r"^C (-?\d+) ; WX (\d+) ;")
    for line in path.read_text(encoding="latin-1").splitlines():
        m = pat.match(line)
        if m and int(m.group(1)) >= 0:
            out[int(m.group(1))] = int(m.group(2)) / 1000.0
    return out


def text_width_em(text: str, bold: bool = False) -> float:
    """Advance width of ``text`` in Helvetica, in em (multiply by the font size)."""
    w = _afm_widths(bold)
    return float(sum(w.get(ord(ch), _FALLBACK_EM) for ch in text))


def text_box(
    x: float,
    y: float,
    text: str,
    em_mm: float,
    bold: bool = False,
    ha: str = "left",
    va: str = "baseline",
) -> Box:
    """Box (mm) of one line of text anchored at (x, y), em size ``em_mm`` (mm).

    ``ha`` is ``left``/``center``/``right``; ``va`` is ``baseline``/``center``/``top``/``bottom``
    as matplotlib places it; multi-line text (``\\n``) stacks lines 1.2 em apart.
    """
    lines = text.split("\n")
    w = max(text_width_em(s, bold) for s in lines) * em_mm
    h = (TEXT_ASCENT + TEXT_DESCENT + 1.2 * (len(lines) - 1)) * em_mm
    x0 = {"left": x, "center": x - 0.5 * w, "right": x - w}[ha]
    if va == "baseline":
        y1 = y + TEXT_ASCENT * em_mm
    else:
        y1 = {"center": y + 0.5 * h, "top": y, "bottom": y + h}[va]
    return (x0, y1 - h, x0 + w, y1)


def boxes_overlap(a: Box, b: Box, gap: float = 0.0) -> bool:
    """True when boxes ``a`` and ``b`` come closer than ``gap`` (mm)."""
    return not (
        a[2] + gap <= b[0] or b[2] + gap <= a[0] or a[3] + gap <= b[1] or b[3] + gap <= a[1]
    )


def densify(points: np.ndarray, step: float, closed: bool = False) -> np.ndarray:
    """Points along a polyline (shape (N, 2), mm) no further apart than ``step`` (mm)."""
    p = np.asarray(points, dtype=float).reshape(-1, 2)
    if closed and len(p) > 1:
        p = np.vstack([p, p[:1]])
    if len(p) < 2:
        return p
    # every segment at once (the same arithmetic as segment by segment: a + k/n · (b − a))
    d = p[1:] - p[:-1]
    n = np.maximum(1, np.ceil(np.hypot(d[:, 0], d[:, 1]) / step).astype(np.int64))
    seg = np.repeat(np.arange(len(d)), n)
    k = np.arange(1, int(n.sum()) + 1) - np.repeat(np.cumsum(n) - n, n)
    t = (k / n[seg])[:, None]
    return np.vstack([p[:1], p[:-1][seg] + t * d[seg]])


class Occupancy:
    """Cells of a rectangular region that drawn geometry or text occupies.

    Args:
        region: the box searched (mm); geometry outside it is ignored.
        cell_mm: cell size (mm).
    """

    def __init__(self, region: Box, cell_mm: float = 0.5) -> None:
        self.region = region
        self.cell = cell_mm
        nx = max(1, int(np.ceil((region[2] - region[0]) / cell_mm)))
        ny = max(1, int(np.ceil((region[3] - region[1]) / cell_mm)))
        self.grid = np.zeros((ny, nx), dtype=bool)

    def add_points(self, points: np.ndarray) -> None:
        """Mark the cells holding any of ``points`` (shape (N, 2), mm)."""
        p = np.asarray(points, dtype=float).reshape(-1, 2)
        i = np.floor((p[:, 1] - self.region[1]) / self.cell).astype(int)
        j = np.floor((p[:, 0] - self.region[0]) / self.cell).astype(int)
        ok = (i >= 0) & (i < self.grid.shape[0]) & (j >= 0) & (j < self.grid.shape[1])
        self.grid[i[ok], j[ok]] = True

    def add_polyline(self, points: np.ndarray, closed: bool = False) -> None:
        """Mark the cells a polyline passes through (sampled at a third of a cell)."""
        self.add_points(densify(points, self.cell / 3.0, closed))

    def add_circle(self, centre: tuple[float, float], radius: float) -> None:
        """Mark the cells a circle's outline passes through."""
        n = max(16, int(np.ceil(2 * np.pi * radius / (self.cell / 3.0))))
        t = np.linspace(0.0, 2 * np.pi, n + 1)
        self.add_points(
            np.column_stack([centre[0] + radius * np.cos(t), centre[1] + radius * np.sin(t)])
        )

    def add_box(self, box: Box) -> None:
        """Mark every cell a box covers."""
        r, c = self.region, self.cell
        j0, j1 = int(np.floor((box[0] - r[0]) / c)), int(np.ceil((box[2] - r[0]) / c))
        i0, i1 = int(np.floor((box[1] - r[1]) / c)), int(np.ceil((box[3] - r[1]) / c))
        self.grid[max(i0, 0) : max(i1, 0), max(j0, 0) : max(j1, 0)] = True

    def is_free(self, box: Box, clearance: float = 0.0) -> bool:
        """True when no occupied cell lies within ``clearance`` of ``box`` and the box is in
        the region."""
        r = self.region
        if box[0] < r[0] or box[1] < r[1] or box[2] > r[2] or box[3] > r[3]:
            return False
        c = self.cell
        j0 = max(int(np.floor((box[0] - clearance - r[0]) / c)), 0)
        j1 = int(np.ceil((box[2] + clearance - r[0]) / c))
        i0 = max(int(np.floor((box[1] - clearance - r[1]) / c)), 0)
        i1 = int(np.ceil((box[3] + clearance - r[1]) / c))
        return not bool(self.grid[i0:i1, j0:j1].any())

    def place(
        self,
        size: tuple[float, float],
        anchor: tuple[float, float],
        clearance: float = 1.0,
        within: Box | None = None,
    ) -> tuple[float, float] | None:
        """Lower-left corner (mm) of the free ``size`` box (w, h) nearest ``anchor``.

        The box keeps ``clearance`` from every occupied cell and lies inside ``within``
        (default: the region). Distance is measured from the anchor to the box's nearest
        point, so a box touching the anchor is as good as one centred on it. None when no
        place is free.
        """
        r, c = self.region, self.cell
        lim = within or r
        lim = (max(lim[0], r[0]), max(lim[1], r[1]), min(lim[2], r[2]), min(lim[3], r[3]))
        w, h = size
        pad = int(np.ceil(clearance / c))
        bw, bh = int(np.ceil(w / c)) + 2 * pad, int(np.ceil(h / c)) + 2 * pad
        ny, nx = self.grid.shape
        if bw > nx or bh > ny:
            return None
        # search a window of cells round the anchor, widened until the nearest free place in
        # it is nearer than any place outside it could be (then it is the nearest of all,
        # ties included); the same answer as searching the whole grid, on far fewer cells
        aj, ai = (anchor[0] - r[0]) / c, (anchor[1] - r[1]) / c
        reach = 16 + max(bw, bh)  # cells beyond the anchor's box
        while True:
            j0 = max(0, int(np.floor(aj - w / c)) - pad - reach)
            j1 = min(nx, int(np.ceil(aj)) - pad + bw + reach)
            i0 = max(0, int(np.floor(ai - h / c)) - pad - reach)
            i1 = min(ny, int(np.ceil(ai)) - pad + bh + reach)
            whole = (i0, j0, i1, j1) == (0, 0, ny, nx)
            got = self._nearest_free(i0, i1, j0, j1, bh, bw, pad, size, anchor, lim)
            # a place outside the window lies at least this far from the anchor (mm)
            sure = (
                min(
                    reach * c if j0 > 0 else np.inf,
                    reach * c if j1 < nx else np.inf,
                    reach * c if i0 > 0 else np.inf,
                    reach * c if i1 < ny else np.inf,
                )
                - 2.0 * c
            )
            if whole or (got is not None and got[0] < sure):
                return None if got is None else got[1]
            reach *= 2

    def _nearest_free(
        self,
        i0: int,
        i1: int,
        j0: int,
        j1: int,
        bh: int,
        bw: int,
        pad: int,
        size: tuple[float, float],
        anchor: tuple[float, float],
        lim: Box,
    ) -> tuple[float, tuple[float, float]] | None:
        """(distance mm, lower-left corner mm) of the free box nearest ``anchor`` among those
        whose cells lie in rows i0:i1 and columns j0:j1; None when none is free."""
        r, c = self.region, self.cell
        w, h = size
        g = self.grid[i0:i1, j0:j1]
        ny, nx = g.shape
        if bw > nx or bh > ny:
            return None
        s = np.zeros((ny + 1, nx + 1), dtype=np.int32)
        s[1:, 1:] = np.cumsum(np.cumsum(g, axis=0, dtype=np.int32), axis=1, dtype=np.int32)
        total = s[bh:, bw:] - s[:-bh, bw:] - s[bh:, :-bw] + s[:-bh, :-bw]
        ii, jj = np.nonzero(total == 0)
        x0 = r[0] + (jj + j0 + pad) * c
        y0 = r[1] + (ii + i0 + pad) * c
        ok = (x0 >= lim[0]) & (y0 >= lim[1]) & (x0 + w <= lim[2]) & (y0 + h <= lim[3])
        x0, y0 = x0[ok], y0[ok]
        if len(x0) == 0:
            return None
        dx = np.maximum(np.maximum(x0 - anchor[0], anchor[0] - (x0 + w)), 0.0)
        dy = np.maximum(np.maximum(y0 - anchor[1], anchor[1] - (y0 + h)), 0.0)
        dist = np.hypot(dx, dy)
        k = int(np.lexsort((x0, y0, dist))[0])
        return float(dist[k]), (float(x0[k]), float(y0[k]))
