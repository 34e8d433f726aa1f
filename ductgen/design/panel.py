"""``skin.shape = "panel"``: the user's own panel as the design's skin map, with its checks.

The panel file is read and sampled in the caller's kernel worker (the job
:func:`ductgen.panel_file.sample_panel`, a layer below; it loads the kernel only inside the
worker); here the samples become a height field and
the geodesic parallel coordinates of :mod:`ductgen.geometry.panel`, and the design is held to
the analytic skins' limits using the panel's own curvatures under the parts
(:mod:`ductgen.design.panel_limits`). A crease, a region the file does not cover and a flow
direction off the surface are refused by name.
"""

from __future__ import annotations

import math
from pathlib import Path
from typing import Any

import numpy as np

from ductgen.design.limits import MAX_DEPTH_FRACTION, MAX_WRAP_DEG
from ductgen.design.panel_limits import (
    PANEL_MARGIN_MM,
    PICTURE_BAND_MM,
    PanelRegion,
    check_limits,
    crease_limit,
    wrap_at_datum,
)
from ductgen.errors import DesignWarning, SpecError
from ductgen.geometry.panel import PanelSkin, make_panel_skin
from ductgen.geometry.panel_samples import continue_surface
from ductgen.geometry.panel_surface import HeightField, PanelFrame
from ductgen.panel_file import sample_panel
from ductgen.spec.model import PanelSkinSpec
from ductgen.worker import KernelWorker

__all__ = [
    "MAX_FLOW_OFF_DEG",
    "PANEL_MARGIN_MM",
    "PICTURE_BAND_MM",
    "WARN_FLOW_OFF_DEG",
    "PanelRegion",
    "panel_skin",
]

#: Flow direction angle off the panel's tangent plane (deg) above which a warning is given:
#: the ramp follows the surface, so the given direction is then not the one the inlet sees
#: (common practice, no source).
WARN_FLOW_OFF_DEG = 3.0
#: Above this angle (deg) the flow direction is taken as a mistake (it points into or out
#: of the panel rather than along it).
MAX_FLOW_OFF_DEG = 45.0
#: Largest number of rays cast to sample a CAD panel (sets the grid step).
MAX_SAMPLES = 9000
_CACHE: dict[tuple[Any, ...], dict[str, Any]] = {}


def _xyz(v: Any) -> tuple[float, float, float]:
    """A point or direction (three numbers, checked by the spec) as a typed triple."""
    return (float(v[0]), float(v[1]), float(v[2]))


def _sample(
    skin: PanelSkinSpec, region: PanelRegion, worker: KernelWorker | None
) -> dict[str, Any]:
    """The samples of the panel round the datum, taken in ``worker`` (default: the
    process-wide one; cached per file version)."""
    from ductgen.worker import default_worker

    u_lo, u_hi, v_max = region.table()
    # the grid is in the datum's tangent plane: the geodesic net over the table projects
    # inside the same box, but a centreline that bends in plan drifts sideways by a few
    # percent of its length
    drift = 2.0 + 0.03 * (u_hi - u_lo)
    box = (u_lo - drift, u_hi + drift, -v_max - drift, v_max + drift)
    area = (box[1] - box[0]) * (box[3] - box[2])
    step = round(max(2.0, math.sqrt(area / MAX_SAMPLES)), 1)
    path = str(Path(skin.file))
    try:
        st = Path(path).stat()
        version: tuple[int, int] = (st.st_mtime_ns, st.st_size)
    except OSError:
        version = (0, 0)
    key = (path, version, skin.units, skin.at, skin.flow_direction, skin.outward, box, step)
    if key not in _CACHE:
        _CACHE.clear()
        _CACHE[key] = (worker or default_worker()).run(
            sample_panel,
            path,
            skin.units,
            _xyz(skin.at),
            _xyz(skin.flow_direction),
            None if skin.outward is None else _xyz(skin.outward),
            box,
            step,
            region.needed(),
        )
    return _CACHE[key]


def _where(frame: PanelFrame, x: float, y: float, hf: HeightField | None = None) -> str:
    z = 0.0 if hf is None else float(hf.ev(np.array([x]), np.array([y]))[0])
    p = frame.to_model(np.array([[x, y, z]]))[0]
    return f"({p[0]:.1f}, {p[1]:.1f}, {p[2]:.1f}) mm"


def _off_edge(frame: PanelFrame, x: float, y: float) -> SpecError:
    return SpecError(
        "skin.at",
        None,
        "a place where the panel extends under every part",
        f"the inlet runs off the panel's edge near {_where(frame, x, y)}: the file has no "
        "surface there; move skin.at or give a larger panel",
    )


def panel_skin(
    skin: PanelSkinSpec,
    region: PanelRegion,
    deep_mm: float,
    outlet_need: Any,
    worker: KernelWorker | None = None,
) -> tuple[PanelSkin, dict[str, Any], list[DesignWarning]]:
    """The skin map of a panel, its report entries and warnings.

    Args:
        skin: ``[skin]`` with ``shape = "panel"``.
        region: where the parts reach in design coordinates.
        deep_mm: how deep the parts reach below the skin (mm).
        outlet_need: ``() -> (radius mm, why)``: the smallest radius along the flow that
            keeps the straight spigot inside a convex skin, or None without a duct.
        worker: the kernel worker that samples the file (default: the process-wide one).

    Raises:
        SpecError: bad file or units, ``skin.at`` off the surface, a flow direction off the
            surface, an inlet over the panel's edge or a crease, a radius below a limit.
    """
    s = _sample(skin, region, worker)
    warnings = _sample_warnings(skin, s)
    frame = PanelFrame(np.asarray(s["origin"]), np.asarray(s["axes"]))
    x = np.asarray(s["x"])
    hf = _height_field(skin, s, region, frame)
    t_lo, t_hi, t_v = region.table()
    try:
        ps = make_panel_skin(frame, hf, (t_lo, t_hi), t_v)
    except ValueError:
        edge_x = float(x[0] if abs(region.u_lo) > region.u_hi else x[-1])
        raise _off_edge(frame, edge_x, 0.0) from None
    radii = check_limits(ps, region, deep_mm, outlet_need, MAX_WRAP_DEG, MAX_DEPTH_FRACTION)
    summary = _summary(skin, s, ps, radii)
    return ps, summary, warnings


def _sample_warnings(skin: PanelSkinSpec, s: dict[str, Any]) -> list[DesignWarning]:
    """Refuse a flow direction too far off the panel; warn of one a little off, and of an
    outside taken from the file's faces alone."""
    warnings: list[DesignWarning] = []
    off = float(s["flow_off_tangent_deg"])
    if off > MAX_FLOW_OFF_DEG:
        raise SpecError(
            "skin.flow_direction",
            list(skin.flow_direction),
            f"within {MAX_FLOW_OFF_DEG:g}° of the panel's tangent plane at skin.at",
            f"it is {off:.1f}° off the surface: the flow runs along the panel, not into it",
        )
    if off > WARN_FLOW_OFF_DEG:
        warnings.append(
            DesignWarning(
                "flow_direction_off_surface",
                f"skin.flow_direction is {off:.1f}° off the panel's tangent plane at the "
                "datum; the inlet is laid along its projection onto the surface",
            )
        )
    if s["outward_from"] == "file faces only":
        warnings.append(
            DesignWarning(
                "outward_unconfirmed",
                "the panel is an open surface whose shape does not show which side is "
                "outside; the file's face orientation was taken: check the inlet opens on "
                "the outside in the preview, or give skin.outward",
            )
        )
    return warnings


def _height_field(
    skin: PanelSkinSpec, s: dict[str, Any], region: PanelRegion, frame: PanelFrame
) -> HeightField:
    """The samples' height field (mm), continued past the file's edge for the pictures;
    refused where the parts need surface the file does not have, or run over a crease."""
    x, y, h = np.asarray(s["x"]), np.asarray(s["y"]), np.asarray(s["h"])
    u_lo, u_hi, v_lo, v_hi = region.needed()
    inside = np.outer((x >= u_lo) & (x <= u_hi), (y >= v_lo) & (y <= v_hi))
    missing = np.isnan(h) & inside
    if missing.any():
        # a panel that curves away too fast is not seen from the datum's tangent plane
        # either: say so by its radius before blaming the panel's edge
        wrap_at_datum(x, y, h, region, MAX_WRAP_DEG)
        i, j = np.argwhere(missing)[0]
        raise _off_edge(frame, float(x[i]), float(y[j]))
    hf = HeightField(x, y, continue_surface(x, y, h))
    if float(s.get("crease_deg", 0.0)) > crease_limit(float(x[1] - x[0])):
        cx, cy = s["crease_at"]
        raise SpecError(
            "skin.at",
            list(skin.at),
            "a place where the panel is smooth under every part",
            f"the inlet runs over a crease near {_where(frame, cx, cy, hf)}: the surface turns "
            f"{s['crease_deg']:.1f}° between samples {x[1] - x[0]:.1f} mm apart",
        )
    return hf


def _summary(
    skin: PanelSkinSpec, s: dict[str, Any], ps: PanelSkin, radii: dict[str, Any]
) -> dict[str, Any]:
    """The panel's entries in ``report.json`` (mm, deg)."""
    axes = ps.frame.axes
    out: dict[str, Any] = {
        "shape": "panel",
        "thickness_mm": skin.thickness,
        "file": Path(skin.file).name,
        "file_kind": "CAD (STEP)" if s["kind"] == "brep" else "mesh scan",
        "at_mm": [float(c) for c in skin.at],
        "datum_mm": [float(c) for c in ps.frame.origin],
        "at_distance_mm": float(s["distance_mm"]),
        "flow_direction": [float(c) for c in axes[0]],
        "flow_off_tangent_deg": float(s["flow_off_tangent_deg"]),
        "outward": [float(c) for c in axes[2]],
        "outward_from": s["outward_from"],
        "radius_streamwise_at_datum_mm": _radius(ps.k_stream),
        "radius_spanwise_at_datum_mm": _radius(ps.k_span),
        **radii,
        "sample_step_mm": float(s["x"][1] - s["x"][0]),
        "closed_solid": bool(s["closed"]),
    }
    if skin.units is not None:
        out["units"] = skin.units
    for key in ("fit_rms_mm", "fit_max_mm", "fit_vertices", "fit_knot_spacing_mm"):
        if key in s:
            out[key] = s[key]
    return out


def _radius(k: float) -> float | None:
    """Signed radius (mm, convex positive) of a curvature, None when practically flat."""
    return None if abs(k) < 1e-7 else 1.0 / k
