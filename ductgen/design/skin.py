"""The skin a design sits on: its map, the maps its solids are placed with, and the limits.

``[skin]`` becomes a :class:`~ductgen.geometry.skin.CurvedSkin` (or the flat identity) here,
after the check only the geometry can make: the smallest radius the inlet can wrap (see
:func:`skin_from_spec`). Which keys each shape takes is the spec's own tagged union.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import numpy as np

from ductgen.design.limits import MAX_DEPTH_FRACTION, MAX_DISTORTION_PCT, MAX_WRAP_DEG
from ductgen.design.panel import PanelRegion, panel_skin
from ductgen.errors import DesignWarning, SpecError
from ductgen.geometry.fabrication import FlangeLayout, Spigot
from ductgen.geometry.flatten import Development
from ductgen.geometry.inlet import InletGeometry
from ductgen.geometry.jig import jig_layout
from ductgen.geometry.panel import PanelSkin, PanelTurnedOver
from ductgen.geometry.skin import FLAT, CurvedSkin, FlatSkin, TurnedOver
from ductgen.spec.model import (
    CylinderSkinSpec,
    DoublySkinSpec,
    FlatSkinSpec,
    PanelSkinSpec,
    SkinSpec,
)
from ductgen.worker import KernelWorker

__all__ = [
    "MAX_DISTORTION_PCT",
    "MAX_WRAP_DEG",
    "Placement",
    "distortion_warnings",
    "placement",
    "skin_from_spec",
]

PointMap = Callable[[np.ndarray], np.ndarray]


def distortion_warnings(dev: Development) -> list[DesignWarning]:
    """A warning when the flattened template stretches lengths by more than
    :data:`MAX_DISTORTION_PCT`."""
    if dev.exact or dev.max_length_distortion_pct <= MAX_DISTORTION_PCT:
        return []
    return [
        DesignWarning(
            "template_distortion",
            f"the flat template of this doubly curved skin stretches lengths by up to "
            f"{dev.max_length_distortion_pct:.2f} % (over {MAX_DISTORTION_PCT:g} %, about what "
            "hand marking absorbs): mark from the cutter solid or a template formed on the panel",
        )
    ]


def _extent(g: InletGeometry, layout: FlangeLayout, trim_xy: np.ndarray) -> tuple[float, float]:
    """Largest |v| and u (mm) any part reaches on the skin: flange, plug plate, opening."""
    pts = np.vstack([layout.outline_xy, trim_xy, layout.opening_xy])
    return float(np.max(np.abs(pts[:, 1]))), float(np.max(np.abs(pts[:, 0])))


def _deepest(g: InletGeometry, spigot: Spigot | None, wall: float) -> float:
    """Deepest point of any part below the skin (mm, positive)."""
    depth = g.drop_mm + wall
    t = g.transition
    if t is not None:
        depth = max(depth, -(t.outlet_top_z_mm - t.outlet_height_mm) + 2.0 * wall)
    if spigot is not None:
        depth = max(depth, -(spigot.centre_z_mm - spigot.shoulder_radius_mm))
    return depth


def skin_from_spec(
    skin: SkinSpec,
    g: InletGeometry,
    layout: FlangeLayout,
    trim_xy: np.ndarray,
    spigot: Spigot | None,
    wall: float,
    worker: KernelWorker | None = None,
) -> tuple[CurvedSkin | FlatSkin | PanelSkin, dict[str, Any], list[DesignWarning]]:
    """The skin map of ``[skin]``, checked against the design; the skin as the report states
    it (shape, side, radii in mm, axis; a panel's file, datum and radii); warnings.
    ``worker``: the kernel worker that samples a panel file (default: the process-wide one).

    Raises:
        SpecError: a radius is below the smallest the inlet can wrap — the message gives that radius
            and the reason (depth inside a convex skin, wrap angle, the straight outlet
            breaking out of the skin); a panel's file, datum or flow direction is unusable.
    """
    summary = _summary(skin)
    if isinstance(skin, FlatSkinSpec):
        return FLAT, summary, []
    if isinstance(skin, PanelSkinSpec):
        return _panel(skin, g, layout, trim_xy, spigot, wall, worker)
    sign = 1.0 if skin.side == "convex" else -1.0
    if isinstance(skin, CylinderSkinSpec):
        keys = {"stream": "skin.radius", "span": "skin.radius"}
        k_stream = sign / skin.radius if skin.axis == "spanwise" else 0.0
        k_span = sign / skin.radius if skin.axis == "streamwise" else 0.0
    else:
        keys = {"stream": "skin.radius_streamwise", "span": "skin.radius_spanwise"}
        k_stream, k_span = sign / skin.radius_streamwise, sign / skin.radius_spanwise
    v_max, u_max = _extent(g, layout, trim_xy)
    deep = _deepest(g, spigot, wall)
    for k, reach, key, along in (
        (k_stream, u_max, keys["stream"], True),
        (k_span, v_max, keys["span"], False),
    ):
        if k == 0.0:
            continue
        need, why = _smallest_radius(g, spigot, wall, k > 0, along, reach, deep)
        if 1.0 / abs(k) < need:
            raise SpecError(key, 1.0 / abs(k), f">= {math.ceil(need)} mm for this inlet", why)
    return CurvedSkin(k_stream, k_span, skin.shape), summary, []


def _smallest_radius(
    g: InletGeometry,
    spigot: Spigot | None,
    wall: float,
    convex: bool,
    along: bool,
    reach: float,
    deep: float,
) -> tuple[float, str]:
    """The smallest radius (mm) the skin may have in one direction, and why: the parts
    reach ``reach`` mm along the skin that way (``along``: along the flow) and the floor and
    duct ``deep`` mm under it; inside a ``convex`` skin the depth and the straight outlet
    limit it too."""
    wrap = math.radians(MAX_WRAP_DEG)
    limits = [
        (
            reach / wrap,
            f"the parts reach {reach:.0f} mm along the skin in this direction and would "
            f"wrap more than {MAX_WRAP_DEG:.0f}° of it",
        )
    ]
    if convex:
        limits.append(
            (
                deep / MAX_DEPTH_FRACTION,
                f"the floor and duct reach {deep:.0f} mm deep: inside a convex skin the "
                f"walls converge toward its centre, and deeper than "
                f"{MAX_DEPTH_FRACTION:.0%} of the radius the flat design no longer holds",
            )
        )
    if convex and along and g.transition is not None:
        limits.append(_straight_outlet_limit(g, spigot, wall))
    return max(limits, key=lambda item: item[0])


def _summary(skin: SkinSpec) -> dict[str, Any]:
    """``[skin]`` as the report and the sheet state it (mm)."""
    out: dict[str, Any] = {"shape": skin.shape, "thickness_mm": skin.thickness}
    if isinstance(skin, CylinderSkinSpec):
        out |= {"side": skin.side, "radius_mm": skin.radius, "axis": skin.axis}
    elif isinstance(skin, DoublySkinSpec):
        out["side"] = skin.side
        out |= {"radius_streamwise_mm": skin.radius_streamwise}
        out |= {"radius_spanwise_mm": skin.radius_spanwise}
    return out


def _panel(
    skin: PanelSkinSpec,
    g: InletGeometry,
    layout: FlangeLayout,
    trim_xy: np.ndarray,
    spigot: Spigot | None,
    wall: float,
    worker: KernelWorker | None,
) -> tuple[PanelSkin, dict[str, Any], list[DesignWarning]]:
    """The user's panel as the skin: its region is what the parts cover (the flange, the
    plug's plate, the cut-out, the opening, the marking jig's frame, the duct to its outlet
    face); ``design/panel.py`` adds its stated margins."""
    pts = np.vstack(
        [
            layout.outline_xy,
            trim_xy,
            layout.opening_xy,
            layout.cutout_xy,
            jig_layout(g.planform).outer_xy,
        ]
    )
    v_max = float(np.max(np.abs(pts[:, 1])))
    u_parts = float(np.max(pts[:, 0]))
    u_hi = u_parts
    t = g.transition
    if t is not None:
        u_hi = max(u_hi, t.x_end_mm)
        v_max = max(v_max, 0.5 * t.outlet_width_mm + 2.0 * wall)
    if spigot is not None:
        v_max = max(v_max, 0.5 * spigot.od_mm + spigot.bead_height_mm + wall)
    region = PanelRegion(float(np.min(pts[:, 0])), u_hi, v_max, u_parts)
    outlet = None
    if t is not None:
        outlet = lambda: _straight_outlet_limit(g, spigot, wall)  # noqa: E731
    return panel_skin(skin, region, _deepest(g, spigot, wall), outlet, worker)


def _straight_outlet_limit(
    g: InletGeometry, spigot: Spigot | None, wall: float
) -> tuple[float, str]:
    """Smallest radius (mm) along the flow at which the straight spigot's top stays inside a
    convex skin, which falls away below it, and the reason."""
    t = g.transition
    assert t is not None
    top = t.outlet_top_z_mm + wall
    length = g.spigot_length_mm + wall
    if spigot is not None:
        top = spigot.centre_z_mm + spigot.od_mm / 2.0 + spigot.bead_height_mm
        length = spigot.x_end_mm - spigot.x0_mm
    skin_t = g.skin_thickness_mm
    w = -top  # depth of the spigot's top below the outer skin (positive)
    # the straight line at depth w leaves the circle of radius R - t after arc s when
    # (R - w)^2 + s^2 > (R - t)^2, i.e. R < (w^2 + s^2 - t^2) / (2 (w - t))
    gap = w - skin_t
    need = (w * w + length * length - skin_t * skin_t) / (2.0 * gap) if gap > 0 else math.inf
    why = (
        f"the skin falls away below the straight {length:.0f} mm spigot, whose top would "
        "break out through the skin; lower the outlet, shorten the spigot or choose a larger "
        "radius"
    )
    return need, why


@dataclass(frozen=True)
class Placement:
    """How the solids are carried from design to model coordinates.

    Attributes:
        solid_map: for the cutter and the insert: the skin map, with the duct's across-flow
            curvature faded to 0 at the outlet face and a rigid continuation beyond it.
        plug_map: for the plug (built upside down: design w = −z), the skin map, turned over.
        curvature: the largest skin curvature (1/mm; sets how finely mapped meshes are cut).
        fade_start_mm: station where the duct starts to straighten (None without a duct).
        outlet_point, outlet_axis: where the outlet face's centreline point sits and where
            the spigot points (model coordinates), or None.
    """

    solid_map: PointMap
    plug_map: PointMap
    curvature: float
    fade_start_mm: float | None
    outlet_point: tuple[float, float, float] | None
    outlet_axis: tuple[float, float, float] | None


def placement(
    skin: CurvedSkin | FlatSkin | PanelSkin, g: InletGeometry, flange_end_mm: float
) -> tuple[Placement, list[DesignWarning]]:
    """The maps the solids are placed with, and a warning when part of the flange lies where
    the duct already straightens (it then departs from the skin by the stated amount)."""
    warnings: list[DesignWarning] = []
    if isinstance(skin, PanelSkin):
        plug_map: PointMap = PanelTurnedOver(skin)
        curvature = max(skin.curvature, 1e-9)  # never the flat short cut: the frame moves
    else:
        plug_map = TurnedOver(skin)
        curvature = max(abs(skin.k_stream), abs(skin.k_span))
    t = g.transition
    if isinstance(skin, PanelSkin) and t is None:
        return Placement(skin.to_model, plug_map, curvature, None, None, None), warnings
    if t is None or not isinstance(skin, CurvedSkin | PanelSkin):
        point = axis = None
        if t is not None:
            point = (t.x_end_mm, 0.0, t.outlet_centre_z_mm)
            axis = (1.0, 0.0, 0.0)
        return Placement(skin.to_model, plug_map, curvature, None, point, axis), warnings
    start = min(max(flange_end_mm, t.x_start_mm), t.x_end_mm - 0.5 * t.length_mm)
    duct = skin.duct_map(start, t.x_end_mm)
    if flange_end_mm > start + 1e-9:
        probe = np.array([[flange_end_mm, v, 0.0] for v in np.linspace(-g.width_mm, g.width_mm, 9)])
        off = float(np.max(np.linalg.norm(duct.to_model(probe) - skin.to_model(probe), axis=1)))
        if off > 0.05:
            warnings.append(
                DesignWarning(
                    "flange_off_skin",
                    f"the flange reaches x = {flange_end_mm:.0f} mm, where the duct already "
                    f"straightens toward its outlet: there it stands up to {off:.2f} mm off "
                    "the skin (a longer transition avoids this)",
                )
            )
    m0, axis_t = duct.outlet_frame()
    outlet = m0 + duct.outlet_normal() * t.outlet_centre_z_mm
    return (
        Placement(
            duct.to_model,
            plug_map,
            curvature,
            start,
            tuple(float(c) for c in outlet),  # type: ignore[arg-type]
            tuple(float(c) for c in axis_t),  # type: ignore[arg-type]
        ),
        warnings,
    )
