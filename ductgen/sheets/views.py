"""One view of the drawing sheet: true-scale axes, lines, dimensions, markers and labels
placed where nothing else is drawn.

A :class:`View` draws in data millimetres at a standard scale (paper mm per data mm) inside
a box of the paper and keeps an occupancy grid of the paper (``export/placement.py``): every
line it draws marks its cells, and the labels, queued while the view is drawn, are placed at
the end, each in the free spot nearest its anchor (clear of every line and of the labels
placed before it). A label's box is the width of the string in Helvetica and 1.5 em high
(a PDF reader measures the core font's text boxes 1.374 em high: ascender to descender),
with a 0.6 mm clearance (common drafting practice, no source).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

import numpy as np

from ductgen.export.placement import Occupancy, text_width_em

if TYPE_CHECKING:
    from matplotlib.axes import Axes
    from matplotlib.figure import Figure
    from numpy.typing import ArrayLike

    Size = tuple[float, float]  # paper (width, height), mm
    PaperBox = tuple[float, float, float, float]  # x, y, width, height on the paper, mm

__all__ = ["PT_PER_MM", "SCALES", "View", "scale_for", "scale_text"]

PT_PER_MM = 72.0 / 25.4
#: Standard drawing scales (paper : true), largest first.
SCALES = (5.0, 2.0, 1.0, 0.5, 0.2, 0.1, 0.05, 0.02, 0.01)
#: A text box's height (em) and its clearance from lines and other labels (paper mm).
BOX_EM = 1.5
CLEARANCE_MM = 0.6
#: Height of the view's title strip at the top of its box (paper mm), kept free.
TITLE_MM = 6.0
_DIM_GREY, _INK = "0.45", "0.2"


def scale_for(extent: tuple[float, float], box: tuple[float, float]) -> float:
    """The largest standard scale at which ``extent`` (w, h true mm) fits ``box`` (paper mm)."""
    k = min(box[0] / extent[0], box[1] / extent[1])
    return next((s for s in SCALES if s <= k), SCALES[-1])


def scale_text(s: float) -> str:
    return f"{s:g}:1" if s >= 1 else f"1:{1 / s:g}"


@dataclass
class _Label:
    text: str
    anchor: tuple[float, float]  # data mm
    fs: float
    rotation: float
    colour: str
    bold: bool


@dataclass
class View:
    """A view of the sheet (see the module text): ``box`` on ``page`` (paper mm), data in
    true mm at ``scale`` round ``centre``; the top :data:`TITLE_MM` of the box stays free."""

    fig: Figure
    page: Size
    box: PaperBox
    centre: tuple[float, float]
    scale: float
    ax: Axes = field(init=False)
    occ: Occupancy = field(init=False)
    labels: list[_Label] = field(default_factory=list)

    def __post_init__(self) -> None:
        x, y, w, h = self.box
        pw, ph = self.page
        self.ax = self.fig.add_axes((x / pw, y / ph, w / pw, h / ph))
        cx, cy = self.centre
        self.ax.set_xlim(cx - 0.5 * w / self.scale, cx + 0.5 * w / self.scale)
        self.ax.set_ylim(cy - 0.5 * h / self.scale, cy + 0.5 * h / self.scale)
        self.ax.set_axis_off()
        self.occ = Occupancy((x, y, x + w, y + h), cell_mm=0.4)
        self.occ.add_box((x, y + h - TITLE_MM, x + w, y + h))

    # --- coordinates ---------------------------------------------------------------------
    def paper(self, xy: ArrayLike) -> np.ndarray:
        """Data mm (N, 2) → paper mm."""
        p = np.asarray(xy, dtype=float).reshape(-1, 2)
        x, y, w, h = self.box
        return np.column_stack(
            [
                x + 0.5 * w + (p[:, 0] - self.centre[0]) * self.scale,
                y + 0.5 * h + (p[:, 1] - self.centre[1]) * self.scale,
            ]
        )

    def data(self, paper: tuple[float, float]) -> tuple[float, float]:
        """Paper mm → data mm."""
        x, y, w, h = self.box
        return (
            self.centre[0] + (paper[0] - x - 0.5 * w) / self.scale,
            self.centre[1] + (paper[1] - y - 0.5 * h) / self.scale,
        )

    # --- ink ---------------------------------------------------------------------------------
    def line(self, xy: ArrayLike, colour: str = "k", lw: float = 0.7, **kw: Any) -> None:
        """A polyline (N, 2) data mm."""
        p = np.asarray(xy, dtype=float).reshape(-1, 2)
        self.ax.plot(p[:, 0], p[:, 1], color=colour, lw=lw, **kw)
        self.occ.add_polyline(self.paper(p))

    def fill(self, xy: ArrayLike, face: str = "0.85", lw: float = 0.6) -> None:
        """A filled closed outline (N, 2) data mm, stroked black."""
        p = np.asarray(xy, dtype=float).reshape(-1, 2)
        self.ax.fill(p[:, 0], p[:, 1], color=face, ec="k", lw=lw)
        self.occ.add_polyline(self.paper(p), closed=True)

    def arrow(self, a: ArrayLike, b: ArrayLike, style: str = "->", lw: float = 0.6) -> None:
        """An arrow from a to b (data mm)."""
        pa, pb = np.asarray(a, dtype=float), np.asarray(b, dtype=float)
        self.ax.annotate(
            "",
            (float(pb[0]), float(pb[1])),
            (float(pa[0]), float(pa[1])),
            arrowprops={"arrowstyle": style, "lw": lw, "color": _INK, "shrinkA": 0, "shrinkB": 0},
        )
        self.occ.add_polyline(self.paper(np.vstack([pa, pb])))
        # the head: a few paper mm round its tip
        tip = self.paper(pb)[0]
        self.occ.add_circle((float(tip[0]), float(tip[1])), 1.2)

    def datum(self, at: ArrayLike, colour: str = "#b00020") -> None:
        """The installation datum's marker: a circle with a cross (3 mm paper across)."""
        c = np.asarray(at, dtype=float)
        r = 1.5 / self.scale
        t = np.linspace(0.0, 2.0 * np.pi, 49)
        circle = c + r * np.column_stack([np.cos(t), np.sin(t)])
        self.ax.plot(circle[:, 0], circle[:, 1], color=colour, lw=0.6)
        for d in ((1.0, 0.0), (0.0, 1.0)):
            e = 1.6 * r * np.array(d)
            self.ax.plot(
                [c[0] - e[0], c[0] + e[0]], [c[1] - e[1], c[1] + e[1]], color=colour, lw=0.4
            )
        p = self.paper(c)[0]
        self.occ.add_box((p[0] - 2.6, p[1] - 2.6, p[0] + 2.6, p[1] + 2.6))

    def dim(
        self,
        a: ArrayLike,
        b: ArrayLike,
        offset: ArrayLike,
        text: str,
        fs: float = 6.5,
    ) -> None:
        """Linear dimension between a and b (data mm), its line moved by ``offset`` (a data
        vector), extension lines from the points; the value beside the line, never on it."""
        a, b, o = (np.asarray(v, dtype=float) for v in (a, b, offset))
        pa, pb = a + o, b + o
        if np.hypot(*o) > 0:
            for p, q in ((a, pa), (b, pb)):
                self.line(np.vstack([p, q]), colour=_DIM_GREY, lw=0.3)
        self.arrow(pa, pb, style="<->", lw=0.5)
        self.occ.add_circle(tuple(self.paper(pa)[0]), 1.2)
        d = pb - pa
        rotation = 0.0 if abs(d[0]) >= abs(d[1]) else 90.0
        self.label(text, 0.5 * (pa + pb), fs, rotation)

    def label(
        self,
        text: str,
        anchor: ArrayLike,
        fs: float = 6.5,
        rotation: float = 0.0,
        colour: str = "k",
        bold: bool = False,
    ) -> None:
        """Queue a label for the free spot nearest ``anchor`` (data mm); see :meth:`finish`."""
        x, y = (float(c) for c in np.asarray(anchor, dtype=float).reshape(2))
        self.labels.append(_Label(text, (x, y), fs, rotation, colour, bold))

    def finish(self) -> None:
        """Place the queued labels in order, each clear of every line and earlier label."""
        for lab in self.labels:
            em = lab.fs / PT_PER_MM
            w, h = text_width_em(lab.text, lab.bold) * em, BOX_EM * em
            if lab.rotation:
                w, h = h, w
            p = self.paper(lab.anchor)[0]
            corner = self.occ.place((w, h), (float(p[0]), float(p[1])), CLEARANCE_MM)
            if corner is None:  # nowhere free: at the anchor (the sheet's test then fails)
                corner = (float(p[0]) - 0.5 * w, float(p[1]) - 0.5 * h)
            box = (corner[0], corner[1], corner[0] + w, corner[1] + h)
            self.occ.add_box(box)
            cx, cy = self.data((0.5 * (box[0] + box[2]), 0.5 * (box[1] + box[3])))
            self.ax.text(
                cx,
                cy,
                lab.text,
                fontsize=lab.fs,
                ha="center",
                va="center",
                rotation=lab.rotation,
                color=lab.colour,
                weight="bold" if lab.bold else "normal",
            )
        self.labels.clear()
