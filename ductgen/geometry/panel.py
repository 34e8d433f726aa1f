"""The user's own panel as a skin map: geodesic parallel coordinates on a fitted surface.

The panel region under the inlet is held as a height field h(x, y) over the tangent plane at
the datum (the point where the ramp starts, on the centreline): a local frame with origin
at the datum, x along the flow direction projected onto the tangent plane, z along the
outward normal and y = z × x. The field is a bicubic spline through samples of the real
surface (a CAD file: rays cast along the normal; a scan: a least-squares spline fitted to the
mesh vertices).

Design coordinates are laid onto the surface as *geodesic parallel coordinates* (Fermi
coordinates of the centreline): ``u`` is arc length along the geodesic leaving the datum in
the flow direction (the centreline), ``v`` arc length along the geodesic leaving the centreline
point at right angles to it, and ``w`` the distance along the surface normal. Why geodesics:
both the centreline and every across-flow section keep their true length on the panel, the
construction depends on nothing but the surface (no projection direction to choose), and on
a cylinder it reproduces the analytic cylinder map exactly — the centreline along a
generator or round a circle, the sections circles or generators — so the template of a
developable panel develops with no distortion. On a doubly curved panel the u-lines off the
centreline are shortened or stretched by the Gaussian curvature, as on the analytic torus.

The frame, the height field and the geodesics themselves are
:mod:`ductgen.geometry.panel_surface`'s.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np
from scipy.interpolate import CubicSpline, RectBivariateSpline

from ductgen.geometry.panel_surface import (
    HeightField,
    PanelFrame,
    both_ways,
    convex_curvatures,
    tangent3,
)

__all__ = ["PanelDuctMap", "PanelSkin", "PanelTurnedOver", "make_panel_skin"]

#: Arc-length step (mm) of the geodesic integration and of the (u, v) table.
GEODESIC_STEP_MM = 2.0


@dataclass(frozen=True)
class PanelSkin:
    """A :class:`~ductgen.geometry.skin.SkinMap` on the user's panel (see the module text).

    Attributes:
        frame: the local frame at the datum.
        surface: the height field.
        u, v: the table's parameters (mm).
        xy: (len(u), len(v), 2) local x, y of the surface point (u, v).
        centre: (len(u), 4, 3) centreline point, tangent T, across direction B and normal N
            in model coordinates.
        k_stream, k_span: the normal curvatures along and across the flow at the datum
            (1/mm, convex positive); used for spline spans and messages.
        curvature: the largest principal curvature magnitude over the table (1/mm).
        sections: (5, len(u), len(v)) the across-flow sections in the centreline frame, for
            the duct's fade: θ, m, e, the normal's turn θ_n and its T component (see
            :class:`PanelDuctMap`).
    """

    frame: PanelFrame
    surface: HeightField
    u: np.ndarray
    v: np.ndarray
    xy: np.ndarray
    centre: np.ndarray
    k_stream: float
    k_span: float
    curvature: float
    sections: np.ndarray
    name: str = "panel"
    _sx: RectBivariateSpline = field(init=False, repr=False, compare=False)
    _sy: RectBivariateSpline = field(init=False, repr=False, compare=False)
    _c: CubicSpline = field(init=False, repr=False, compare=False)
    _theta: Any = field(init=False, repr=False, compare=False)
    _m: Any = field(init=False, repr=False, compare=False)
    _e: Any = field(init=False, repr=False, compare=False)
    _theta_n: Any = field(init=False, repr=False, compare=False)
    _n_t: Any = field(init=False, repr=False, compare=False)

    def __post_init__(self) -> None:
        object.__setattr__(self, "_sx", RectBivariateSpline(self.u, self.v, self.xy[..., 0]))
        object.__setattr__(self, "_sy", RectBivariateSpline(self.u, self.v, self.xy[..., 1]))
        object.__setattr__(self, "_c", CubicSpline(self.u, self.centre.reshape(len(self.u), -1)))
        for name, table in zip(
            ("_theta", "_m", "_e", "_theta_n", "_n_t"), self.sections, strict=True
        ):
            object.__setattr__(self, name, RectBivariateSpline(self.u, self.v, table))

    @property
    def is_flat(self) -> bool:
        return False

    def _check(self, u: np.ndarray, v: np.ndarray) -> None:
        tol = 1e-6
        if (
            np.any(u < self.u[0] - tol)
            or np.any(u > self.u[-1] + tol)
            or np.any(np.abs(v) > self.v[-1] + tol)
        ):
            raise ValueError(
                f"panel map asked outside its table: u {u.min():.1f}…{u.max():.1f}, "
                f"|v| ≤ {np.abs(v).max():.1f} (table u {self.u[0]:.1f}…{self.u[-1]:.1f}, "
                f"|v| ≤ {self.v[-1]:.1f})"
            )

    def surface_local(self, uv: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Surface points and unit normals (each (N, 3)) in the local frame."""
        q = np.asarray(uv, dtype=float).reshape(-1, 2)
        self._check(q[:, 0], q[:, 1])
        x, y = self._sx.ev(q[:, 0], q[:, 1]), self._sy.ev(q[:, 0], q[:, 1])
        p = np.column_stack([x, y, self.surface.ev(x, y)])
        return p, self.surface.normal(x, y)

    def to_model(self, uvw: np.ndarray) -> np.ndarray:
        p = np.asarray(uvw, dtype=float).reshape(-1, 3)
        s, n = self.surface_local(p[:, :2])
        return self.frame.to_model(s + p[:, 2:3] * n)

    def normal(self, uv: np.ndarray) -> np.ndarray:
        _, n = self.surface_local(uv)
        return n @ self.frame.axes

    def centre_frame(self, u: np.ndarray) -> tuple[np.ndarray, ...]:
        """Centreline point c, tangent T, across B and normal N at stations u (each (N, 3),
        model coordinates; the directions re-normalised after interpolation)."""
        u = np.asarray(u, dtype=float).reshape(-1)
        self._check(u, np.zeros_like(u))
        a = self._c(u).reshape(len(u), 4, 3)
        dirs = a[:, 1:] / np.linalg.norm(a[:, 1:], axis=2)[..., None]
        return a[:, 0], dirs[:, 0], dirs[:, 1], dirs[:, 2]

    def duct_map(self, u_start: float, u_end: float) -> PanelDuctMap:
        """As :meth:`ductgen.geometry.skin.CurvedSkin.duct_map`: the panel up to ``u_start``,
        blended to the centreline's ruled frame by ``u_end`` and rigid beyond."""
        return PanelDuctMap(self, u_start, u_end)


@dataclass(frozen=True)
class PanelDuctMap:
    """The duct's map on a panel, built like the analytic skins' (its across-flow curvature
    faded to 0 between ``u_start`` and ``u_end``, rigid beyond).

    At station u the panel's across-flow section is written in the centreline frame
    (T, B, N): its unit tangent turns by θ(u, s) from B toward −N at arc length s, and has an
    in-plane length fraction m(u, s) (the rest along T). The faded section turns by f·θ, with
    f a smoothstep from 1 at ``u_start`` to 0 at ``u_end``:
    P = c + f·e·T + ∫₀ᵛ m cos(fθ) ds · B − ∫₀ᵛ m sin(fθ) ds · N + w·n_f, where e is the
    section's offset along T and n_f the surface normal turned likewise (f = 1 gives the panel
    itself; f = 0 the straight section c + v·B + w·N). On an analytic cylinder or torus this
    is exactly the analytic skins' fade (a circle of curvature f·k).
    """

    skin: PanelSkin
    u_start: float
    u_end: float
    name: str = "duct"

    @property
    def is_flat(self) -> bool:
        return False

    def _fade(self, u: np.ndarray) -> np.ndarray:
        span = max(self.u_end - self.u_start, 1e-9)
        s = np.clip((u - self.u_start) / span, 0.0, 1.0)
        return 1.0 - s * s * (3.0 - 2.0 * s)

    def _faded(self, q: np.ndarray) -> np.ndarray:
        sk = self.skin
        u, v, w = q[:, 0], q[:, 1], q[:, 2]
        sk._check(u, v)
        f = self._fade(u)
        x, wt = _GAUSS
        s = v[:, None] * (0.5 * (x[None, :] + 1.0))
        uu = np.broadcast_to(u[:, None], s.shape)
        th = sk._theta.ev(uu, s)
        m = sk._m.ev(uu, s)
        half = 0.5 * v[:, None] * wt[None, :]
        a = np.sum(half * m * np.cos(f[:, None] * th), axis=1)
        b = -np.sum(half * m * np.sin(f[:, None] * th), axis=1)
        e = sk._e.ev(u, v)
        tn, nt = sk._theta_n.ev(u, v), sk._n_t.ev(u, v)
        c, t, bb, n = sk.centre_frame(u)
        ft = f * nt
        inplane = np.sqrt(np.maximum(1.0 - ft * ft, 0.0))
        nf = (
            (inplane * np.sin(f * tn))[:, None] * bb
            + (inplane * np.cos(f * tn))[:, None] * n
            + ft[:, None] * t
        )
        out: np.ndarray = (
            c + (f * e)[:, None] * t + a[:, None] * bb + b[:, None] * n + w[:, None] * nf
        )
        return out

    def to_model(self, uvw: np.ndarray) -> np.ndarray:
        p = np.asarray(uvw, dtype=float).reshape(-1, 3)
        out = np.empty_like(p)
        on_skin = p[:, 0] <= self.u_start
        fading = (~on_skin) & (p[:, 0] <= self.u_end)
        rigid = p[:, 0] > self.u_end
        if on_skin.any():
            out[on_skin] = self.skin.to_model(p[on_skin])
        if fading.any():
            out[fading] = self._faded(p[fading])
        if rigid.any():
            q = p[rigid]
            c, t, b, n = (a[0] for a in self.skin.centre_frame(np.array([self.u_end])))
            out[rigid] = c + (q[:, 0:1] - self.u_end) * t + q[:, 1:2] * b + q[:, 2:3] * n
        return out

    def normal(self, uv: np.ndarray) -> np.ndarray:
        return self.skin.normal(uv)

    def outlet_frame(self) -> tuple[np.ndarray, np.ndarray]:
        """The outlet station's centreline point and the spigot axis (model coordinates)."""
        c, t, _, _ = (a[0] for a in self.skin.centre_frame(np.array([self.u_end])))
        return c, t

    def outlet_normal(self) -> np.ndarray:
        """The outward normal of the straight outlet frame (model coordinates)."""
        return self.skin.centre_frame(np.array([self.u_end]))[3][0, :]


@dataclass(frozen=True)
class PanelTurnedOver:
    """The plug's map on a panel (it is built upside down: design w = −z): the panel map,
    then a reflection in the tangent plane at the datum — as the analytic skins' plug map
    turns over in z = 0 — so the plug keeps its orientation and sits on that plane."""

    skin: PanelSkin

    def __call__(self, p: np.ndarray) -> np.ndarray:
        flip = np.array([1.0, 1.0, -1.0])
        q = self.skin.to_model(np.asarray(p, dtype=float).reshape(-1, 3) * flip)
        return self.skin.frame.to_model(self.skin.frame.to_local(q) * flip)


#: Gauss–Legendre nodes and weights on [−1, 1] for the faded sections' integrals.
_GAUSS = np.polynomial.legendre.leggauss(10)


def make_panel_skin(
    frame: PanelFrame,
    surface: HeightField,
    u_range: tuple[float, float],
    v_max: float,
    step: float = GEODESIC_STEP_MM,
) -> PanelSkin:
    """Tabulate the geodesic parallel coordinates of ``surface`` over u in ``u_range`` and
    |v| ≤ ``v_max`` (mm).

    Raises:
        ValueError: a geodesic leaves the sampled surface (the caller turns this into a
            message about the panel's edge).
    """
    lo, hi = u_range
    start = np.array([[0.0, 0.0, 1.0, 0.0]])
    u, states = both_ways(surface, start, lo, hi, step)
    cl = states[:, 0, :]
    if not surface.contains(cl[:, 0], cl[:, 1]):
        raise ValueError("the centreline leaves the sampled panel")
    t3 = tangent3(surface, cl)
    n3 = surface.normal(cl[:, 0], cl[:, 1])
    b3 = np.cross(n3, t3)
    b3 /= np.linalg.norm(b3, axis=1)[:, None]
    # the across-flow geodesics start along B: B is a unit tangent, so its in-plane part is
    # the unit-speed velocity
    cross0 = np.column_stack([cl[:, :2], b3[:, :2]])
    v, cross = both_ways(surface, cross0, -v_max, v_max, step)
    xy = np.transpose(cross[..., :2], (1, 0, 2))
    if not surface.contains(xy[..., 0], xy[..., 1]):
        raise ValueError("an across-flow section leaves the sampled panel")
    c_model = frame.to_model(np.column_stack([cl[:, :2], surface.ev(cl[:, 0], cl[:, 1])]))
    centre = np.stack([c_model, t3 @ frame.axes, b3 @ frame.axes, n3 @ frame.axes], axis=1)
    sections = _sections(surface, frame, cross, centre)
    k = convex_curvatures(surface, xy[..., 0].ravel(), xy[..., 1].ravel())
    # the normal curvatures at the datum along x (the flow) and y (across): −h_xx, −h_yy
    k_stream = float(-surface.ev(np.array([0.0]), np.array([0.0]), 2, 0)[0])
    k_span = float(-surface.ev(np.array([0.0]), np.array([0.0]), 0, 2)[0])
    return PanelSkin(
        frame=frame,
        surface=surface,
        u=u,
        v=v,
        xy=xy,
        centre=centre,
        k_stream=k_stream,
        k_span=k_span,
        curvature=float(np.max(np.abs(k))),
        sections=sections,
    )


def _sections(
    surface: HeightField, frame: PanelFrame, cross: np.ndarray, centre: np.ndarray
) -> np.ndarray:
    """θ, m, e, θ_n, n_T tables (see :class:`PanelDuctMap`) from the across-flow geodesics'
    states ``cross`` (len(v), len(u), 4) and the centreline frame ``centre``."""
    nv, nu = cross.shape[:2]
    st = cross.reshape(-1, 4)
    tau = (tangent3(surface, st) @ frame.axes).reshape(nv, nu, 3)
    nrm = (surface.normal(st[:, 0], st[:, 1]) @ frame.axes).reshape(nv, nu, 3)
    pts = frame.to_model(np.column_stack([st[:, :2], surface.ev(st[:, 0], st[:, 1])])).reshape(
        nv, nu, 3
    )
    c, t, b, n = (centre[None, :, i, :] for i in range(4))

    def comp(a: np.ndarray, d: np.ndarray) -> np.ndarray:
        dot: np.ndarray = np.sum(a * d, axis=2)
        return dot

    theta = np.arctan2(-comp(tau, n), comp(tau, b))
    m = np.hypot(comp(tau, b), comp(tau, n))
    e = comp(pts - c, t)
    theta_n = np.arctan2(comp(nrm, b), comp(nrm, n))
    n_t = comp(nrm, t)
    return np.stack([a.T for a in (theta, m, e, theta_n, n_t)])
