"""``skin.shape = "panel"``: the user's own panel as the design's skin map, with its checks.

The panel file is read and sampled in the caller's kernel worker (the job
:func:`ductgen.panel_file.sample_panel`, a layer below; it loads the kernel only inside the
worker); here the samples become a height field and
the geodesic parallel coordinates of :mod:`ductgen.geometry.panel`, and the design is held to
the analytic skins' limits using the panel's own curvatures under the parts: the wrap angle
(the normal's turn along and across the flow, each side of the datum), the depth inside a
convex region, the straight outlet in a convex run along the flow. A crease, a region the
file does not cover and a flow direction off the surface are refused by name.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from ductgen.design.limits import MAX_DEPTH_FRACTION, MAX_WRAP_DEG
from ductgen.errors import DesignWarning, SpecError
from ductgen.geometry.panel import PanelSkin, make_panel_skin
from ductgen.geometry.panel_samples import continue_surface
from ductgen.geometry.panel_surface import HeightField, PanelFrame, convex_curvatures
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
#: Margin (mm) round the parts' footprint where the panel file must have surface: the
#: jig's fit is measured on the skin up to 5 mm beyond its outer edge (``solids/jig.py``).
PANEL_MARGIN_MM = 5.0
#: Band (mm) round the parts that the map is tabulated over for pictures: the preview
#: draws the skin 20 mm round the plug's plate (``sheets/preview.py``). Where the file
#: ends inside it the surface is continued along its own tangent planes, for pictures
#: only: no part lies there.
PICTURE_BAND_MM = 20.0

_CACHE: dict[tuple[Any, ...], dict[str, Any]] = {}


@dataclass(frozen=True)
class PanelRegion:
    """Where the parts reach in design coordinates (mm), without margins: u from ``u_lo``
    to ``u_hi`` (the duct's straightening end included) and |v| ≤ ``v_max``; ``u_parts``
    the largest u of the parts that lie on the skin (flange, plug plate, cut-out, jig)."""

    u_lo: float
    u_hi: float
    v_max: float
    u_parts: float

    def needed(self) -> tuple[float, float, float, float]:
        """(u_lo, u_hi, −v, v) mm where the panel must have surface: the parts plus
        :data:`PANEL_MARGIN_MM`."""
        m = PANEL_MARGIN_MM
        return (self.u_lo - m, self.u_hi + m, -self.v_max - m, self.v_max + m)

    def table(self) -> tuple[float, float, float]:
        """(u_lo, u_hi, v) mm the map is tabulated over: the needed box, and the pictures'
        band (:data:`PICTURE_BAND_MM`) round the parts on the skin."""
        u_lo, u_hi, _, v = self.needed()
        b = PICTURE_BAND_MM
        return (
            min(u_lo, self.u_lo - b),
            max(u_hi, self.u_parts + b),
            max(v, self.v_max + b),
        )


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
    frame = PanelFrame(np.asarray(s["origin"]), np.asarray(s["axes"]))
    x, y, h = np.asarray(s["x"]), np.asarray(s["y"]), np.asarray(s["h"])
    u_lo, u_hi, v_lo, v_hi = region.needed()
    inside = np.outer((x >= u_lo) & (x <= u_hi), (y >= v_lo) & (y <= v_hi))
    missing = np.isnan(h) & inside
    if missing.any():
        # a panel that curves away too fast is not seen from the datum's tangent plane
        # either: say so by its radius before blaming the panel's edge
        _wrap_at_datum(x, y, h, region, MAX_WRAP_DEG)
        i, j = np.argwhere(missing)[0]
        raise _off_edge(frame, float(x[i]), float(y[j]))
    hf = HeightField(x, y, continue_surface(x, y, h))
    if float(s.get("crease_deg", 0.0)) > _crease_limit(float(x[1] - x[0])):
        cx, cy = s["crease_at"]
        raise SpecError(
            "skin.at",
            list(skin.at),
            "a place where the panel is smooth under every part",
            f"the inlet runs over a crease near {_where(frame, cx, cy, hf)}: the surface turns "
            f"{s['crease_deg']:.1f}° between samples {x[1] - x[0]:.1f} mm apart",
        )
    t_lo, t_hi, t_v = region.table()
    try:
        ps = make_panel_skin(frame, hf, (t_lo, t_hi), t_v)
    except ValueError:
        edge_x = float(x[0] if abs(region.u_lo) > region.u_hi else x[-1])
        raise _off_edge(frame, edge_x, 0.0) from None
    radii = _limits(ps, region, deep_mm, outlet_need, MAX_WRAP_DEG, MAX_DEPTH_FRACTION)
    summary = _summary(skin, s, ps, radii)
    return ps, summary, warnings


def _wrap_at_datum(
    x: np.ndarray, y: np.ndarray, h: np.ndarray, region: PanelRegion, wrap_deg: float
) -> None:
    """Refuse, by the wrap limit, a panel whose radii at the datum (second differences of
    the samples there) are too small for the parts' reach."""
    i, j = int(np.argmin(np.abs(x))), int(np.argmin(np.abs(y)))
    dx, dy = float(x[1] - x[0]), float(y[1] - y[0])
    for k, reach, along in (
        (
            (h[i + 1, j] - 2 * h[i, j] + h[i - 1, j]) / dx**2,
            max(-region.u_lo, region.u_parts),
            "along",
        ),
        ((h[i, j + 1] - 2 * h[i, j] + h[i, j - 1]) / dy**2, region.v_max, "across"),
    ):
        if not np.isfinite(k) or abs(k) < 1e-9:
            continue
        radius = 1.0 / abs(float(k))
        need = math.ceil(reach / math.radians(wrap_deg))
        if radius < need:
            raise SpecError(
                "skin.at",
                None,
                f"a radius {along} the flow of at least {need} mm",
                f"the panel's smallest radius under the parts is {radius:.0f} mm ({along} the "
                f"flow, at the datum): the parts reach {reach:.0f} mm and would wrap more "
                f"than {wrap_deg:.0f}° of it",
            )


def _crease_limit(step: float) -> float:
    """Normal turn (deg) between samples ``step`` mm apart taken as a crease: 4° on a 2 mm
    grid (a 29 mm radius), scaled with the step so the radius stays the same."""
    return 4.0 * step / 2.0


def _turn(ps: PanelSkin, uv_a: np.ndarray, uv_b: np.ndarray) -> np.ndarray:
    """Angles (rad) between the panel normals at paired design points."""
    na, nb = ps.normal(uv_a), ps.normal(uv_b)
    return np.arccos(np.clip(np.sum(na * nb, axis=1), -1.0, 1.0))


def _limits(
    ps: PanelSkin,
    region: PanelRegion,
    deep: float,
    outlet_need: Any,
    wrap_deg: float,
    depth_fraction: float,
) -> dict[str, Any]:
    """Hold the panel under the parts to the analytic skins' limits; the radii found."""
    us = np.linspace(region.u_lo, region.u_parts, 41)
    vs = np.linspace(-region.v_max, region.v_max, 41)
    uu, vv = np.meshgrid(us, vs, indexing="ij")
    pts, _ = ps.surface_local(np.column_stack([uu.ravel(), vv.ravel()]))
    k = convex_curvatures(ps.surface, pts[:, 0], pts[:, 1])
    worst = int(np.argmax(np.max(np.abs(k), axis=1)))
    k_worst = k[worst][np.argmax(np.abs(k[worst]))]
    smallest = 1.0 / max(abs(float(k_worst)), 1e-12)
    where = ps.frame.to_model(pts[worst : worst + 1])[0]
    radii: dict[str, Any] = {
        "smallest_radius_mm": smallest if smallest < 1e7 else None,
        "smallest_radius_at_mm": [float(c) for c in where],
        "smallest_radius_side": "convex" if k_worst > 0 else "concave",
    }
    here = f"the panel's smallest radius under the parts is {smallest:.0f} mm, at " + (
        f"({where[0]:.1f}, {where[1]:.1f}, {where[2]:.1f}) mm"
    )
    wrap = math.radians(wrap_deg)
    along = max(
        float(_turn(ps, np.array([[0.0, 0.0]]), np.array([[u, 0.0]]))[0])
        for u in (region.u_lo, region.u_parts)
    )
    centre_uv = np.column_stack([us, np.zeros(len(us))])
    across = max(
        float(np.max(_turn(ps, centre_uv, np.column_stack([us, np.full(len(us), sv)]))))
        for sv in (-region.v_max, region.v_max)
    )
    for turn, direction in ((along, "along the flow"), (across, "across the flow")):
        if turn > wrap:
            raise SpecError(
                "skin.at",
                None,
                f"a place where the parts wrap at most {wrap_deg:.0f}° of the panel",
                f"the panel turns {math.degrees(turn):.0f}° {direction} under the parts; {here}",
            )
    k_max = float(np.max(k))
    if k_max > 0 and deep > depth_fraction / k_max:
        raise SpecError(
            "skin.at",
            None,
            f"a convex radius of at least {math.ceil(deep / depth_fraction)} mm under the parts",
            f"the floor and duct reach {deep:.0f} mm deep and the panel's smallest convex "
            f"radius under them is {1.0 / k_max:.0f} mm: inside a convex skin the walls "
            f"converge toward its centre, and deeper than {depth_fraction:.0%} of the radius "
            "the flat design no longer holds",
        )
    if outlet_need is not None:
        need, why = outlet_need()
        u_line = np.linspace(0.0, region.u_hi, 41)
        _, t, _, n = ps.centre_frame(u_line)
        # the centreline's normal curvature along the flow: dT/du · N (convex positive)
        dt = np.gradient(t, u_line, axis=0)
        k_line = float(np.max(-np.sum(dt * n, axis=1)))
        if k_line > 0 and 1.0 / k_line < need:
            raise SpecError(
                "skin.at",
                None,
                f"a radius along the flow of at least {math.ceil(need)} mm over the duct",
                f"the panel's radius along the centreline falls to {1.0 / k_line:.0f} mm: {why}",
            )
    return radii


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
