"""The skin as the CFD domain's wall on a curved skin or the user's panel (mm).

The case is laid out in the *datum frame*: x along the flow in the tangent plane at the
ramp start, y across, z along the outward normal there (for the analytic skins these are
the model coordinates; on the user's panel the datum frame of ``skin.at``). The skin round
the inlet is a :class:`SkinSheet`: a triangulated height field z = h(x, y) over the
domain's footprint, whose corners lie exactly on the skin — the analytic skin's map
(``SkinMap.to_model`` at w = 0) or the panel's own surface sampled by the kernel worker.
Its triangles are small enough that a chord sags at most :data:`SAG_MM` below the skin.

What cannot be meshed is refused with a sentence (:class:`SkinWallError`): a skin that
turns past :data:`MAX_SLOPE_DEG` from the datum's tangent plane inside the domain (it is
no longer a height field over the domain's floor), or a panel file that does not reach
round the domain.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np

__all__ = [
    "MAX_SLOPE_DEG",
    "SAG_MM",
    "SkinSheet",
    "SkinWallError",
    "datum_frame",
    "skin_sheet",
    "slab_mesh",
]

#: Largest sag (mm) of a sheet triangle's chord below the curved skin.
SAG_MM = 0.02
#: Steepest skin slope (deg from the datum's tangent plane) the domain's floor may have.
MAX_SLOPE_DEG = 60.0
#: Largest sheet spacing (mm), also on a flat stretch.
MAX_STEP_MM = 20.0
#: Most sheet points (keeps the STL and the union small).
MAX_POINTS = 60_000


class SkinWallError(ValueError):
    """The skin round the inlet cannot be the domain's wall (the message says why)."""


@dataclass(frozen=True)
class SkinSheet:
    """The skin round the inlet as a triangulated height field (datum frame, mm).

    Attributes:
        points: (n, 3) corners, on the skin.
        triangles: (m, 3) corner indices (Delaunay of the plan positions), counter-
            clockwise seen from above (+z).
        step_mm: spacing of the corners.
        source: what the corners lie on (for cfd.json).
        grid: (nu, nv) when the corners are a grid whose rows of constant u run downstream.
        filled_mm: how far past the panel file's edge the floor was continued
            (:func:`~ductgen.cfd.floor_fill.continue_panel`; 0: not at all).
        faired_from_x_mm: the station from which the floor runs on along the skin's
            tangent (:func:`~ductgen.cfd.floor_fill.fair_downstream`; None: nowhere).
    """

    points: np.ndarray
    triangles: np.ndarray
    step_mm: float
    source: str
    grid: tuple[int, int] | None = None
    filled_mm: float = 0.0
    faired_from_x_mm: float | None = None
    _interp: Any = field(init=False, repr=False, compare=False)

    def __post_init__(self) -> None:
        from scipy.interpolate import LinearNDInterpolator
        from scipy.spatial import Delaunay

        tri = Delaunay(self.points[:, :2])
        object.__setattr__(self, "_interp", LinearNDInterpolator(tri, self.points[:, 2]))
        object.__setattr__(self, "triangles", _ccw(self.points, tri.simplices))

    def height(self, x: np.ndarray, y: np.ndarray) -> np.ndarray:
        """The sheet's height z (mm) over plan points; NaN outside the sheet."""
        out: np.ndarray = self._interp(np.asarray(x, float), np.asarray(y, float))
        return out

    @property
    def bounds_xy(self) -> tuple[float, float, float, float]:
        lo, hi = self.points[:, :2].min(axis=0), self.points[:, :2].max(axis=0)
        return float(lo[0]), float(hi[0]), float(lo[1]), float(hi[1])


def _ccw(points: np.ndarray, tri: np.ndarray) -> np.ndarray:
    a, b, c = (points[tri[:, i], :2] for i in range(3))
    cross = (b[:, 0] - a[:, 0]) * (c[:, 1] - a[:, 1]) - (b[:, 1] - a[:, 1]) * (c[:, 0] - a[:, 0])
    out = tri.copy()
    flip = cross < 0
    out[flip] = tri[flip][:, [0, 2, 1]]
    return out


def datum_frame(design: Any) -> tuple[np.ndarray, np.ndarray]:
    """(origin (3,), axes (3, 3) rows x, y, z) of the datum frame in model coordinates (mm):
    the panel's frame, else the identity (the analytic skins' model coordinates)."""
    frame = design.panel_frame
    if frame is None:
        return np.zeros(3), np.eye(3)
    return np.asarray(frame.origin, float), np.asarray(frame.axes, float)


def _step(curvature: float) -> float:
    """Spacing (mm) whose chords sag at most :data:`SAG_MM` on a curvature (1/mm)."""
    if curvature <= 0.0:
        return MAX_STEP_MM
    return min(MAX_STEP_MM, math.sqrt(8.0 * SAG_MM / curvature))


def skin_sheet(
    design: Any,
    spec: Any,
    box_xy: tuple[float, float, float, float],
    core_xy: tuple[float, float, float, float] | None = None,
) -> SkinSheet:
    """The skin over ``box_xy`` = (x0, x1, y0, y1) (datum frame, mm) and a margin round it.
    On the user's panel the file must cover ``core_xy`` (the inlet's own footprint, default
    the whole box); past its edge the floor continues it
    (:func:`~ductgen.cfd.floor_fill.continue_panel`).

    Raises:
        SkinWallError: the skin turns too steeply in the box, or the panel file does not
            cover the core.
    """
    from ductgen.geometry.panel import PanelSkin
    from ductgen.geometry.skin import CurvedSkin

    skin = design.skin
    if isinstance(skin, PanelSkin):
        return _panel_sheet(skin, spec, box_xy, box_xy if core_xy is None else core_xy)
    if isinstance(skin, CurvedSkin):
        return _analytic_sheet(skin, box_xy)
    raise SkinWallError(f"no skin sheet for a {getattr(skin, 'name', skin)!r} skin")


def _slope_check(points: np.ndarray, normals: np.ndarray, where: str) -> None:
    nz = normals[:, 2]
    worst = int(np.argmin(nz))
    slope = math.degrees(math.acos(max(-1.0, min(1.0, float(nz[worst])))))
    if slope > MAX_SLOPE_DEG:
        p = points[worst]
        raise SkinWallError(
            f"the {where} turns {slope:.0f}° from the tangent plane at the ramp start near "
            f"({p[0]:.0f}, {p[1]:.0f}, {p[2]:.0f}) mm, inside the CFD domain (at most "
            f"{MAX_SLOPE_DEG:g}° can be the domain's floor): the skin wraps too far round "
            "the inlet for a domain box above it"
        )


def _analytic_sheet(skin: Any, box: tuple[float, float, float, float]) -> SkinSheet:
    """The analytic skin mapped from a (u, v) grid whose plan covers ``box``: u and v are
    arc lengths, so the grid reaches past the box when it spans the box's lengths (the
    plan shrinks by at most the arc-to-chord ratio, made up by the margin)."""
    x0, x1, y0, y1 = box
    curvature = max(abs(skin.k_stream), abs(skin.k_span))
    step = _step(curvature)
    margin = 2.0 * step + 0.05 * max(x1 - x0, y1 - y0)
    for _ in range(6):
        nu = math.ceil((x1 - x0 + 2 * margin) / step) + 1
        nv = math.ceil((y1 - y0 + 2 * margin) / step) + 1
        if nu * nv > MAX_POINTS:
            step *= math.sqrt(nu * nv / MAX_POINTS)
            continue
        u = np.linspace(x0 - margin, x1 + margin, nu)
        v = np.linspace(y0 - margin, y1 + margin, nv)
        uu, vv = np.meshgrid(u, v, indexing="ij")
        uvw = np.column_stack([uu.ravel(), vv.ravel(), np.zeros(uu.size)])
        pts = skin.to_model(uvw)
        normals = skin.normal(uvw[:, :2])
        _slope_check(pts, normals, "skin")
        lo, hi = pts[:, :2].min(axis=0), pts[:, :2].max(axis=0)
        # the grid's edge rows must lie outside the box all round
        inner = pts.reshape(nu, nv, 3)
        if (
            inner[0, :, 0].max() < x0
            and inner[-1, :, 0].min() > x1
            and inner[:, 0, 1].max() < y0
            and inner[:, -1, 1].min() > y1
            and lo[0] < x0
            and hi[0] > x1
        ):
            source = f"analytic {skin.name} skin (its map at w = 0)"
            return SkinSheet(pts, np.zeros((0, 3), int), step, source, grid=(nu, nv))
        margin *= 1.6
    raise SkinWallError(
        "the skin does not reach round the CFD domain's floor from the ramp start (it curves "
        "away too far): the domain box cannot stand on it"
    )


def _panel_sheet(
    skin: Any,
    spec: Any,
    box: tuple[float, float, float, float],
    core: tuple[float, float, float, float],
) -> SkinSheet:
    """The user's panel sampled by the kernel worker over the box (its datum frame), which
    must cover ``core``; continued past the file's edge elsewhere."""
    from ductgen.cfd.floor_fill import continue_panel
    from ductgen.panel_file import sample_panel
    from ductgen.worker import default_worker

    s = spec.skin
    x0, x1, y0, y1 = box
    step = min(_step(max(skin.curvature, 1e-9)), 10.0)
    margin = 2.0 * step
    area = (x1 - x0 + 2 * margin) * (y1 - y0 + 2 * margin)
    step = max(step, math.sqrt(area / MAX_POINTS))
    sample_box = (x0 - margin, x1 + margin, y0 - margin, y1 + margin)
    got = default_worker().run(
        sample_panel,
        str(s.file),
        s.units,
        tuple(s.at),
        tuple(s.flow_direction),
        None if s.outward is None else tuple(s.outward),
        sample_box,
        round(step, 2),
    )
    x, y, h = np.asarray(got["x"]), np.asarray(got["y"]), np.asarray(got["h"])
    cx0, cx1, cy0, cy1 = core
    inside = ((x >= cx0) & (x <= cx1))[:, None] & ((y >= cy0) & (y <= cy1))[None, :] & np.isnan(h)
    if inside.any():
        i, j = np.argwhere(inside)[0]
        raise SkinWallError(
            f"the panel file has no surface at ({x[i]:.0f}, {y[j]:.0f}) mm in the datum's "
            f"frame, under the inlet's own footprint (x {cx0:.0f}…{cx1:.0f}, y "
            f"{cy0:.0f}…{cy1:.0f} mm): the case needs the file's surface there; give a "
            "larger panel"
        )
    h, filled = continue_panel(x, y, h)
    xx, yy = np.meshgrid(x, y, indexing="ij")
    pts = np.column_stack([xx.ravel(), yy.ravel(), h.ravel()])
    gx, gy = np.gradient(h, x, y)
    normals = np.column_stack([-gx.ravel(), -gy.ravel(), np.ones(h.size)])
    normals /= np.linalg.norm(normals, axis=1)[:, None]
    _slope_check(pts, normals, "panel")
    source = "the panel file"
    if filled > 0.0:
        source += (
            f", continued up to {filled:.0f} mm past its edge by its least-squares quadratic "
            "surface"
        )
    return SkinSheet(
        pts, np.zeros((0, 3), int), float(x[1] - x[0]), source, (len(x), len(y)), filled
    )


def slab_mesh(sheet: SkinSheet, z_top_mm: float) -> tuple[np.ndarray, np.ndarray]:
    """A closed solid (vertices mm, faces) between the sheet and the plane z = ``z_top_mm``:
    the air above the skin, to unite with the cutter. Its top and side faces all touch
    z = ``z_top_mm`` (so they can be dropped after the union)."""
    p = sheet.points
    n = len(p)
    top = p.copy()
    top[:, 2] = z_top_mm
    verts = np.vstack([p, top])
    bottom = sheet.triangles[:, [0, 2, 1]]  # facing down (out of the air)
    lid = sheet.triangles + n  # facing up
    a, b = _rim(sheet.triangles)  # the sheet's rim, the air on its left seen from above
    sides = np.vstack([np.column_stack([a, b, b + n]), np.column_stack([a, b + n, a + n])])
    faces = np.vstack([bottom, lid, sides]).astype(np.int64)
    return verts, faces


def _rim(tri: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Edges (a → b) used by one triangle only, as the triangle runs them."""
    edges = np.vstack([tri[:, [0, 1]], tri[:, [1, 2]], tri[:, [2, 0]]])
    key = np.sort(edges, axis=1)
    _, inverse, counts = np.unique(key, axis=0, return_inverse=True, return_counts=True)
    once = counts[inverse.ravel()] == 1
    return edges[once, 0], edges[once, 1]


@dataclass(frozen=True)
class SkinDomain:
    """The skin round the inlet and the maps the case needs on a curved skin (mm in the
    datum frame unless a name says metres).

    Attributes:
        sheet: the skin as a triangulated height field.
        skin: the design's skin map (design coordinates → model coordinates).
        origin, axes: the datum frame in model coordinates (rows x, y, z).
    """

    sheet: SkinSheet
    skin: Any
    origin: np.ndarray
    axes: np.ndarray

    def to_datum(self, model_mm: np.ndarray) -> np.ndarray:
        out: np.ndarray = (np.asarray(model_mm, float).reshape(-1, 3) - self.origin) @ self.axes.T
        return out

    def vector_to_datum(self, v: np.ndarray) -> np.ndarray:
        out: np.ndarray = self.axes @ np.asarray(v, float)
        return out

    def height_m(self, x_m: float, y_m: float) -> float:
        """The skin's height (m) over a plan point (m)."""
        return float(self.sheet.height(np.array([x_m * 1e3]), np.array([y_m * 1e3]))[0]) * 1e-3

    def section_plate(
        self, u_mm: float, half_mm: float, deep_mm: float, top_mm: float = -0.1
    ) -> np.ndarray:
        """Triangles (n, 3, 3), metres, of the design-coordinate section u = ``u_mm``,
        |v| ≤ ``half_mm``, w from −``deep_mm`` to ``top_mm`` (under the skin): a plane on
        the analytic skins (the section under the lip), following the skin at its top
        edge."""
        v = np.linspace(-half_mm, half_mm, max(3, math.ceil(2 * half_mm / 2.0) + 1))
        w = np.array([-deep_mm, top_mm])
        vv, ww = np.meshgrid(v, w, indexing="ij")
        uvw = np.column_stack([np.full(vv.size, u_mm), vv.ravel(), ww.ravel()])
        p = self.to_datum(self.skin.to_model(uvw)).reshape(len(v), 2, 3) * 1e-3
        a, b, c, d = p[:-1, 0], p[1:, 0], p[1:, 1], p[:-1, 1]
        tri: np.ndarray = np.concatenate([np.stack([a, b, c], 1), np.stack([a, c, d], 1)])
        return tri

    def exit_plate(self, outlet_tri_m: np.ndarray, axis: np.ndarray) -> np.ndarray:
        """Two triangles (metres) of the plane of the outlet face (normal ``axis``) covering
        the face with a margin of a quarter of its height into the solid round the duct,
        kept 0.1 mm under the skin.

        Raises:
            SkinWallError: the outlet face reaches the skin (no closed plane round it)."""
        a = np.asarray(axis, float)
        ey = np.array([0.0, 1.0, 0.0]) - a[1] * a
        ey /= np.linalg.norm(ey)
        en = np.cross(a, ey)
        pts = outlet_tri_m.reshape(-1, 3)
        c = pts.mean(axis=0)
        s, t = (pts - c) @ ey, (pts - c) @ en
        gap = 0.25 * float(t.max() - t.min())
        for _ in range(8):
            lo_s, hi_s = s.min() - gap, s.max() + gap
            lo_t, hi_t = t.min() - gap, t.max() + gap
            corners = np.array(
                [
                    c + p * ey + q * en
                    for p, q in ((lo_s, lo_t), (hi_s, lo_t), (hi_s, hi_t), (lo_s, hi_t))
                ]
            )
            top = self.sheet.height(corners[:, 0] * 1e3, corners[:, 1] * 1e3) * 1e-3
            if np.all(corners[:, 2] < top - 1e-4):
                return np.array([corners[[0, 1, 2]], corners[[0, 2, 3]]])
            gap *= 0.5
        raise SkinWallError(
            "the transition's exit lies too close under the skin to close a plane round it "
            "inside the body"
        )

    def fit_extension(self, surface: Any, length_m: float, clearance_m: float) -> float:
        """The longest straight run (m, up to ``length_m``) behind the outlet whose rim stays
        under the skin by ``clearance_m`` or half the outlet face's own clearance, the
        smaller (a convex skin falls away below a straight duct)."""
        rim = surface.triangles["outlet"].reshape(-1, 3)
        axis = np.asarray(surface.outlet_axis, float)
        top0 = self.sheet.height(rim[:, 0] * 1e3, rim[:, 1] * 1e3) * 1e-3
        clearance_m = min(clearance_m, 0.5 * float(np.nanmin(top0 - rim[:, 2])))
        ok = 0.0
        for s in np.linspace(0.0, length_m, 121)[1:]:
            p = rim + s * axis
            top = self.sheet.height(p[:, 0] * 1e3, p[:, 1] * 1e3) * 1e-3
            if np.isnan(top).any() or np.any(p[:, 2] > top - clearance_m):
                break
            ok = float(s)
        return ok
