"""Overlap audit of a PDF page read back with pymupdf (an independent PDF library).

Boxes are measured from the file itself: pymupdf's text span boxes (the font's ascender to
descender) and the drawn paths of the check squares. Drawn geometry is every stroked path
(cut lines, hole circles, marks, crosshairs, rulers), sampled every 0.5 pt along its lines
and Bézier curves; on tile pages only the part inside the dashed window frame is visible
(the drawing is clipped to it), so only that part counts.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pymupdf

__all__ = ["PageAudit", "audit_page", "text_overlaps"]

PT = 72.0 / 25.4
SQUARE_RGB = (0.0, 0.35, 0.75)
FRAME_RGB = (0.6, 0.6, 0.6)


def _near(c, rgb) -> bool:  # type: ignore[no-untyped-def]
    return c is not None and all(abs(a - b) < 0.02 for a, b in zip(c, rgb, strict=True))


def _sample_item(item, step: float = 0.5) -> np.ndarray:  # type: ignore[no-untyped-def]
    kind = item[0]
    if kind == "l":
        a, b = np.array(item[1]), np.array(item[2])
        n = max(2, int(np.hypot(*(b - a)) / step) + 2)
        return a + np.linspace(0, 1, n)[:, None] * (b - a)
    if kind == "c":
        p = np.array([tuple(q) for q in item[1:5]])
        n = max(4, int(sum(np.hypot(*(p[i + 1] - p[i])) for i in range(3)) / step) + 2)
        t = np.linspace(0, 1, n)[:, None]
        return (
            (1 - t) ** 3 * p[0]
            + 3 * (1 - t) ** 2 * t * p[1]
            + 3 * (1 - t) * t**2 * p[2]
            + t**3 * p[3]
        )
    if kind == "re":
        r = item[1]
        c = [(r.x0, r.y0), (r.x1, r.y0), (r.x1, r.y1), (r.x0, r.y1), (r.x0, r.y0)]
        return np.vstack([_sample_item(("l", c[i], c[i + 1]), step) for i in range(4)])
    if kind == "qu":
        q = item[1]
        c = [q.ul, q.ur, q.lr, q.ll, q.ul]
        return np.vstack([_sample_item(("l", c[i], c[i + 1]), step) for i in range(4)])
    return np.zeros((0, 2))


def _inside(p: np.ndarray, r, shrink: float = 0.3) -> np.ndarray:  # type: ignore[no-untyped-def]
    return (
        (p[:, 0] > r[0] + shrink)
        & (p[:, 0] < r[2] - shrink)
        & (p[:, 1] > r[1] + shrink)
        & (p[:, 1] < r[3] - shrink)
    )


@dataclass
class PageAudit:
    """Overlap figures of one page (points, pt).

    Attributes:
        square_hits: drawn geometry points (not the squares' own) inside the 4 in square.
        square_text: text spans other than the squares' own captions inside the square.
        text_hits: (text, number of drawn points inside its box) for every text that has any.
        off_page: texts whose box comes closer than ``edge_mm`` to the page edge.
        squares: the square boxes found.
    """

    square_hits: int = 0
    square_text: list[str] = field(default_factory=list)
    text_hits: list[tuple[str, int]] = field(default_factory=list)
    off_page: list[str] = field(default_factory=list)
    squares: list = field(default_factory=list)


def audit_page(page: pymupdf.Page, edge_mm: float = 6.0) -> PageAudit:
    """Measure what overlaps what on one page."""
    drawings = page.get_drawings()
    frames = [d["rect"] for d in drawings if _near(d.get("color"), FRAME_RGB)]
    clip = max(frames, key=lambda r: r.width * r.height) if frames else page.rect
    geom, square_geom, squares = [], [], []
    for d in drawings:
        if d.get("color") is None or _near(d.get("color"), FRAME_RGB):
            continue
        pts = [_sample_item(it) for it in d["items"]]
        p = np.vstack(pts) if pts else np.zeros((0, 2))
        if _near(d.get("color"), SQUARE_RGB):
            square_geom.append(p)
            squares.append(d["rect"])
        else:
            geom.append(p[_inside(p, clip, -0.5)])
    g = np.vstack(geom) if geom else np.zeros((0, 2))
    sq = np.vstack(square_geom) if square_geom else np.zeros((0, 2))
    out = PageAudit(squares=squares)
    big = max(squares, key=lambda r: r.width) if squares else None
    spans = [
        s
        for b in page.get_text("dict")["blocks"]
        for ln in b.get("lines", [])
        for s in ln["spans"]
        if s["text"].strip()
    ]
    if big is not None:
        out.square_hits = int(np.sum(_inside(g, big)))
    e = edge_mm * PT
    for s in spans:
        r = pymupdf.Rect(s["bbox"])
        colour = pymupdf.sRGB_to_pdf(s["color"])
        own_caption = big is not None and _near(colour, SQUARE_RGB)
        if big is not None and not own_caption and r.intersects(big):
            out.square_text.append(s["text"])
        n = int(np.sum(_inside(g, r, 0.0))) + int(np.sum(_inside(sq, r, 0.0)))
        if n:
            out.text_hits.append((s["text"], n))
        pr = page.rect
        if r.x0 < pr.x0 + e or r.y0 < pr.y0 + e or r.x1 > pr.x1 - e or r.y1 > pr.y1 - e:
            out.off_page.append(s["text"])
    return out


def text_overlaps(page: pymupdf.Page, tol_pt: float = 0.05) -> list[tuple[str, str, float]]:
    """Pairs of text spans whose boxes (pymupdf's: the font's ascender to descender) overlap
    by more than ``tol_pt`` both ways, with the smaller of the two overlaps (pt)."""
    spans = [
        (s["text"], pymupdf.Rect(s["bbox"]))
        for b in page.get_text("dict")["blocks"]
        for ln in b.get("lines", [])
        for s in ln["spans"]
        if s["text"].strip()
    ]
    out = []
    for i, (ta, a) in enumerate(spans):
        for tb, b in spans[i + 1 :]:
            dx = min(a.x1, b.x1) - max(a.x0, b.x0)
            dy = min(a.y1, b.y1) - max(a.y0, b.y0)
            if dx > tol_pt and dy > tol_pt:
                out.append((ta, tb, round(float(min(dx, dy)), 2)))
    return out
