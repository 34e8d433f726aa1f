"""A small 3D view of the user's panel round the datum, as SVG (mm): the patch of the panel's
outer surface the inlet sits on (a wire grid of its height field, true shape, no
exaggeration), the opening on it, the datum (``skin.at`` moved onto the surface) and arrows
for the flow direction and the outward normal, seen obliquely from above and upstream.

Drawn in the panel's frame at the datum (x along the flow, y across, z outward), so the view
is the same whichever way the panel lies in its file; the caption gives the datum and the
directions in the file's coordinates.
"""

from __future__ import annotations

from html import escape

import numpy as np

from ductgen.design import Design
from ductgen.geometry.panel import PanelSkin

__all__ = ["panel_svg"]

_INK = "#1d2b36"
_SURFACE = "#c9ced3"
_OPENING = "#2f6f73"
_ARROW = "#8a3b12"

#: View direction: turned about the normal, then tilted toward the viewer (deg).
_YAW_DEG, _PITCH_DEG = -35.0, 30.0

#: Grid lines of the patch each way.
_LINES = 11


def _project(p: np.ndarray) -> np.ndarray:
    """Local (x, y, z) mm → SVG (right, down) mm of the oblique view."""
    a, b = np.radians(_YAW_DEG), np.radians(_PITCH_DEG)
    x, y, z = p[:, 0], p[:, 1], p[:, 2]
    right = np.cos(a) * x - np.sin(a) * y
    depth = np.sin(a) * x + np.cos(a) * y
    up = np.cos(b) * z + np.sin(b) * depth
    return np.column_stack([right, -up])


def _path(p: np.ndarray) -> str:
    q = np.round(_project(p), 2)
    return " ".join(map("{:.2f},{:.2f}".format, q[:, 0].tolist(), q[:, 1].tolist()))


def _vec(v: np.ndarray, digits: int) -> str:
    return "(" + ", ".join(f"{c + 0.0:.{digits}f}" for c in np.round(v, digits)) + ")"


def panel_svg(d: Design) -> str | None:
    """The panel patch with the datum, the flow arrow and the normal; None off a panel."""
    skin = d.skin
    if not isinstance(skin, PanelSkin):
        return None
    hf, frame = skin.surface, skin.frame
    xs = np.linspace(float(skin.xy[..., 0].min()), float(skin.xy[..., 0].max()), _LINES)
    ys = np.linspace(float(skin.xy[..., 1].min()), float(skin.xy[..., 1].max()), _LINES)
    fine_x = np.linspace(xs[0], xs[-1], 60)
    fine_y = np.linspace(ys[0], ys[-1], 60)

    def surface(x: np.ndarray, y: np.ndarray) -> np.ndarray:
        return np.column_stack([x, y, hf.ev(x, y)])

    lines = [surface(fine_x, np.full_like(fine_x, y)) for y in ys]
    lines += [surface(np.full_like(fine_y, x), fine_y) for x in xs]
    uv = d.layout.opening_xy
    opening = frame.to_local(skin.to_model(np.column_stack([uv, np.zeros(len(uv))])))
    span = max(xs[-1] - xs[0], ys[-1] - ys[0])
    flow = np.array([[0.0, 0.0, 0.0], [0.55 * span, 0.0, 0.0]])
    normal = np.array([[0.0, 0.0, 0.0], [0.0, 0.0, 0.2 * span]])
    every = np.vstack([*lines, opening, flow, normal])
    q = _project(every)
    (x0, y0), (x1, y1) = q.min(axis=0), q.max(axis=0)
    pad = 0.08 * span
    fs = 0.038 * span
    tip_f, tip_n = _project(flow[1:])[0], _project(normal[1:])[0]
    parts = [
        *(f'<polyline points="{_path(p)}" class="grid"/>' for p in lines),
        f'<polygon id="panel-opening" points="{_path(opening)}" fill="{_OPENING}" class="ln"/>',
        f'<polyline id="panel-flow" points="{_path(flow)}" class="arrow" '
        'marker-end="url(#panel-head)"/>',
        f'<polyline id="panel-normal" points="{_path(normal)}" class="arrow" '
        'marker-end="url(#panel-head)"/>',
        f'<circle id="panel-datum" cx="0" cy="0" r="{0.012 * span:.2f}" fill="{_ARROW}"/>',
        f'<text x="{tip_f[0]:.2f}" y="{tip_f[1] + 1.5 * fs:.2f}" font-size="{fs:.2f}" '
        f'text-anchor="middle">flow {escape(_vec(frame.axes[0], 2))}</text>',
        f'<text x="{tip_n[0] + 0.5 * fs:.2f}" y="{tip_n[1]:.2f}" font-size="{fs:.2f}">'
        f"outward {escape(_vec(frame.axes[2], 2))}</text>",
        f'<text x="{x0:.2f}" y="{y1 + pad + 1.2 * fs:.2f}" font-size="{fs:.2f}">'
        f"datum (dot) {escape(_vec(frame.origin, 1))} mm in the file</text>",
    ]
    w, h = x1 - x0 + 2 * pad, y1 - y0 + 2 * pad + 2 * fs
    return _svg((x0 - pad, y0 - pad, w, h), "".join(parts))


def _svg(box: tuple[float, float, float, float], body: str) -> str:
    """The SVG document round ``body``: the view box (x, y, width, height, mm), the arrow
    head, the styles and the patch's backdrop."""
    x, y, w, h = box
    return (
        f'<svg xmlns="http://www.w3.org/2000/svg" id="panel-svg" class="drawing" role="img" '
        f'viewBox="{x:.2f} {y:.2f} {w:.2f} {h:.2f}" '
        'preserveAspectRatio="xMidYMid meet">'
        f"<title>your panel round the datum, flow direction and outward normal</title>"
        '<defs><marker id="panel-head" viewBox="0 0 10 10" refX="8" refY="5" markerWidth="6" '
        'markerHeight="6" orient="auto"><path d="M0,1 L10,5 L0,9 z" '
        f'fill="{_ARROW}"/></marker></defs>'
        "<style>"
        f".grid{{stroke:{_INK};stroke-width:0.5;fill:none;opacity:.45;"
        "vector-effect:non-scaling-stroke}"
        f".ln{{stroke:{_INK};stroke-width:1;vector-effect:non-scaling-stroke}}"
        f".arrow{{stroke:{_ARROW};stroke-width:2;fill:none;vector-effect:non-scaling-stroke}}"
        f"text{{fill:{_INK};font-family:sans-serif}}"
        "</style>"
        f'<rect x="{x:.2f}" y="{y:.2f}" width="{w:.2f}" height="{h:.2f}" '
        f'fill="{_SURFACE}" opacity=".25"/>'
        f"{body}</svg>"
    )
