"""The centreline section on the skin: design (u, w) → the drawn (x, z) of the datum's frame.

Shared by the drawing sheet and the design page (``page/draw.py``), so both draw the same
section. Every point of the section goes through the design's maps as the solids do: the
parts (floor, roof, lip, duct) through the placement's solid map (the duct straightens to
its outlet), the skin through the skin map; depths are along the skin's normal. The drawn
frame is the datum's: x along the flow, z outward, the origin at the ramp start on the
outer skin (the model frame of the analytic skins; on the user's panel its
:class:`~ductgen.geometry.panel_surface.PanelFrame`). mm throughout.
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np

from ductgen.design import Design

__all__ = ["XZ", "dense", "model_to_drawn", "section_maps"]

XZ = Callable[[np.ndarray], np.ndarray]


def dense(pts: list[tuple[float, float]] | np.ndarray, step: float) -> np.ndarray:
    """A polyline with extra points so no segment is longer than ``step`` (mm)."""
    p = np.asarray(pts, dtype=float)
    d = np.diff(p, axis=0)
    n = np.maximum(1, np.ceil(np.linalg.norm(d, axis=1) / step)).astype(int)
    seg = np.repeat(np.arange(len(d)), n)  # each new point's segment
    k = np.arange(len(seg)) - np.repeat(np.cumsum(n) - n, n) + 1  # 1..n within it
    t = (k / n[seg])[:, None]
    return np.vstack([p[:1], p[seg] + d[seg] * t])


def model_to_drawn(d: Design, p: np.ndarray) -> np.ndarray:
    """Model points (N, 3) mm → the datum's frame (N, 3) mm (the identity on analytic skins)."""
    frame = d.panel_frame
    q = np.asarray(p, dtype=float).reshape(-1, 3)
    return frame.to_local(q) if frame is not None else q


def section_maps(d: Design) -> tuple[XZ, XZ] | None:
    """Design (u, w) on the centreline → drawn (x, z), for the parts (the duct straightens
    to its outlet) and for the skin; None on a flat skin (the identity)."""
    if d.skin.is_flat:
        return None

    def make(f: Callable[[np.ndarray], np.ndarray]) -> XZ:
        def m(uw: np.ndarray) -> np.ndarray:
            uw = np.asarray(uw, dtype=float).reshape(-1, 2)
            p = f(np.column_stack([uw[:, 0], np.zeros(len(uw)), uw[:, 1]]))
            return model_to_drawn(d, p)[:, [0, 2]]

        return m

    return make(d.placement.solid_map), make(d.skin.to_model)
