"""Where the inlet sits: the sheet's PLACEMENT block.

The frame is stated first. On the analytic skins (flat, cylinder, doubly curved) the model
coordinates (those of every STEP and STL file) are the datum's frame: the origin at the ramp
start on the centreline, on the outer skin, x along the flow, y across it, z along the
outward normal there. On the user's panel they are the panel file's own coordinates; the
datum's frame (x along the flow, z outward at the datum) is stated in them, and the sheet's
section is drawn in it.

Then the datum, the outlet face's centre and the straight spigot's axis in model
coordinates, and the axis's angles: below the datum frame's x axis (in its x-z plane) and
to the skin's tangent plane at the skin point above the outlet centre (the centreline at
the outlet station; negative: into the skin). Lengths mm, angles deg.
"""

from __future__ import annotations

import numpy as np

from ductgen.design import Design

__all__ = ["datum_label", "placement_lines"]


def _vec(v: np.ndarray, digits: int, unit: str = "") -> str:
    return "(" + ", ".join(f"{c:.{digits}f}" for c in np.asarray(v, float)) + ")" + unit


def datum_label(d: Design | None) -> str:
    """The datum marker's label: its model coordinates (mm) when the design is known."""
    if d is None:
        return "datum"
    frame = d.panel_frame
    p = frame.origin if frame is not None else d.skin.to_model(np.zeros((1, 3)))[0]
    return "datum " + _vec(p, 1)


def placement_lines(d: Design) -> tuple[tuple[str, str], ...]:
    """(name, value) lines of the PLACEMENT block (see the module text), on every skin."""
    frame = d.panel_frame
    if frame is None:
        lines = [
            ("coordinates", "model (STEP/STL files) = datum frame:"),
            ("", "x along the flow, y across, z outward"),
            ("datum", _vec(d.skin.to_model(np.zeros((1, 3)))[0], 1, " mm")),
        ]
        axes = np.eye(3)
    else:
        lines = [
            ("coordinates", "the panel file's (model, STEP/STL files)"),
            ("datum", _vec(frame.origin, 1, " mm")),
            ("datum frame x", _vec(frame.axes[0], 3) + " (flow)"),
            ("datum frame z", _vec(frame.axes[2], 3) + " (outward)"),
        ]
        axes = frame.axes
    lines.append(("", "(ramp start, centreline, outer skin)"))
    p, a = d.placement.outlet_point, d.placement.outlet_axis
    t = d.geometry.transition
    if p is None or a is None or t is None:
        return tuple(lines)
    axis = np.asarray(a, dtype=float)
    local = axes @ axis
    down = float(np.degrees(np.arctan2(-local[2], local[0])))
    n = d.skin.normal(np.array([[t.x_end_mm, 0.0]]))[0]
    off = round(float(np.degrees(np.arcsin(np.clip(axis @ n, -1.0, 1.0)))), 1) + 0.0  # no -0.0
    lines += [
        ("outlet face centre", _vec(np.asarray(p), 1, " mm")),
        ("outlet axis", _vec(axis, 3)),
        ("axis to datum x", f"{abs(down):.1f} deg {'down' if down >= 0 else 'up'} (x-z plane)"),
        ("axis to skin tangent", f"{off:+.1f} deg (skin above the outlet centre)"),
    ]
    return tuple(lines)
