"""Skin maps: from design coordinates to points in space.

Every solid, template and sheet is laid out in *design coordinates* (mm): ``u`` along the
skin surface in the flow direction (0 at the ramp start), ``v`` along the surface across the
flow (0 on the centreline), ``w`` along the local outward surface normal (0 on the outer skin
surface, negative into the body). A :class:`SkinMap` turns them into model coordinates
``(x, y, z)`` — the one place that knows the shape of the panel.

:class:`CurvedSkin` covers every analytic skin ductgen knows, by two signed curvatures at the
ramp start (1/mm; positive convex, negative concave, 0 straight):

* ``k_stream`` — curvature along the flow: the centreline runs on the circle
  m(u) = (sin(k u)/k, 0, (cos(k u) − 1)/k) with tangent t(u) and outward normal
  n(u) = (sin(k u), 0, cos(k u));
* ``k_span`` — curvature across the flow: the skin's section at each station u lies in the
  plane spanned by b = (0, 1, 0) and n(u) and is the circle of radius 1/k_span through m(u)
  (so the surface is a torus, or a cylinder or plane when a curvature is 0).

A point (u, v, w) is P = m(u) + S(v) b + C(v) n(u) + w·N(u, v), with S(v) = sin(k_span v)/k_span,
C(v) = (cos(k_span v) − 1)/k_span and N = sin(k_span v) b + cos(k_span v) n(u) the unit outward
normal, so ``v`` is arc length across the flow and ``w`` the distance along the normal. On a
cylinder (one curvature 0) ``u`` is arc length too and the map is an isometry of the skin: the
opening develops exactly. On a doubly curved skin the u-lines off the centreline are shortened
by 1 + k_stream·C(v); the template is then flattened by least distortion (``flatten.py``).

The internal duct must end in a straight outlet face and spigot: :meth:`CurvedSkin.duct_map`
keeps the skin map up to the throat end, fades the across-flow curvature to 0 by the outlet face
and continues rigidly (a rotation and translation) beyond it.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Protocol

import numpy as np

__all__ = ["FLAT", "CurvedSkin", "DuctMap", "FlatSkin", "SkinMap", "TurnedOver"]


class SkinMap(Protocol):
    """Design coordinates (u, v, w) → model coordinates (x, y, z), all in mm."""

    @property
    def name(self) -> str:
        """The map's name ("flat", "panel", ...); read-only, so frozen dataclasses fit."""
        ...

    def to_model(self, uvw: np.ndarray) -> np.ndarray:
        """Points (N, 3) in design coordinates → (N, 3) model coordinates (mm)."""
        ...

    def normal(self, uv: np.ndarray) -> np.ndarray:
        """Outward unit surface normals (N, 3) at surface points (N, 2) given as (u, v)."""
        ...

    @property
    def is_flat(self) -> bool:
        """True when the map is a rigid motion, so planar faces stay planar."""
        ...


def _s(k: float, t: np.ndarray) -> np.ndarray:
    """sin(k t)/k, → t as k → 0."""
    return np.sin(k * t) / k if k != 0.0 else np.asarray(t, dtype=float)


def _c(k: float, t: np.ndarray) -> np.ndarray:
    """(cos(k t) − 1)/k, → 0 as k → 0 (written as −2 sin²(k t/2)/k: no cancellation)."""
    if k == 0.0:
        return np.zeros_like(np.asarray(t, dtype=float))
    return -2.0 * np.sin(0.5 * k * t) ** 2 / k


@dataclass(frozen=True)
class FlatSkin:
    """A flat panel: design coordinates are model coordinates (skin outer surface z = 0)."""

    name: str = "flat"

    def to_model(self, uvw: np.ndarray) -> np.ndarray:
        return np.asarray(uvw, dtype=float).reshape(-1, 3)

    def normal(self, uv: np.ndarray) -> np.ndarray:
        n = len(np.asarray(uv).reshape(-1, 2))
        return np.tile([0.0, 0.0, 1.0], (n, 1))

    @property
    def is_flat(self) -> bool:
        return True

    @property
    def k_stream(self) -> float:
        return 0.0

    @property
    def k_span(self) -> float:
        return 0.0


#: The flat skin (``skin.shape = "flat"``).
FLAT = FlatSkin()


@dataclass(frozen=True)
class CurvedSkin:
    """A cylindrical or doubly curved skin (see the module text).

    Attributes:
        k_stream: curvature along the flow at the ramp start (1/mm; > 0 convex).
        k_span: curvature across the flow (1/mm; > 0 convex).
        name: "cylinder" or "doubly" (for messages).
    """

    k_stream: float
    k_span: float
    name: str = "cylinder"

    @property
    def is_flat(self) -> bool:
        return self.k_stream == 0.0 and self.k_span == 0.0

    # --- the centreline frame --------------------------------------------------------------
    def centre(self, u: np.ndarray) -> np.ndarray:
        """m(u): the centreline point at arc length u (N, 3)."""
        u = np.asarray(u, dtype=float).reshape(-1)
        k = self.k_stream
        return np.column_stack([_s(k, u), np.zeros_like(u), _c(k, u)])

    def frame(self, u: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Tangent t(u) and outward normal n(u) of the centreline, each (N, 3)."""
        a = self.k_stream * np.asarray(u, dtype=float).reshape(-1)
        z = np.zeros_like(a)
        return np.column_stack([np.cos(a), z, -np.sin(a)]), np.column_stack(
            [np.sin(a), z, np.cos(a)]
        )

    # --- the map ---------------------------------------------------------------------------
    def _map(self, uvw: np.ndarray, k_span: np.ndarray | float) -> np.ndarray:
        p = np.asarray(uvw, dtype=float).reshape(-1, 3)
        u, v, w = p[:, 0], p[:, 1], p[:, 2]
        ky = np.broadcast_to(np.asarray(k_span, dtype=float), u.shape)
        _, n = self.frame(u)
        m = self.centre(u)
        safe = np.where(ky == 0.0, 1.0, ky)
        s = np.where(ky == 0.0, v, np.sin(ky * v) / safe)
        c = np.where(ky == 0.0, 0.0, -2.0 * np.sin(0.5 * ky * v) ** 2 / safe)
        sn, cs = np.sin(ky * v), np.cos(ky * v)
        b_coef = s + w * sn
        n_coef = c + w * cs
        out: np.ndarray = m + n * n_coef[:, None]
        out[:, 1] += b_coef
        return out

    def to_model(self, uvw: np.ndarray) -> np.ndarray:
        return self._map(uvw, self.k_span)

    def normal(self, uv: np.ndarray) -> np.ndarray:
        q = np.asarray(uv, dtype=float).reshape(-1, 2)
        _, n = self.frame(q[:, 0])
        a = self.k_span * q[:, 1]
        out = n * np.cos(a)[:, None]
        out[:, 1] += np.sin(a)
        return out

    def duct_map(self, u_start: float, u_end: float) -> DuctMap:
        """The map for the internal duct and its spigot: this skin's map up to ``u_start``
        (the throat end), the across-flow curvature faded smoothly to 0 at ``u_end`` (the
        outlet face) and a rigid continuation beyond, so the outlet face is planar and the
        spigot straight."""
        return DuctMap(self, u_start, u_end)

    def metric_u(self, v: np.ndarray) -> np.ndarray:
        """Length of a unit step in u at the skin surface off the centreline:
        1 + k_stream·C(v) (1 on cylinders; < 1 off the centreline of a convex torus)."""
        return 1.0 + self.k_stream * _c(self.k_span, np.asarray(v, dtype=float))


@dataclass(frozen=True)
class DuctMap:
    """The duct's map (see :meth:`CurvedSkin.duct_map`); mm in, mm out."""

    skin: CurvedSkin
    u_start: float
    u_end: float
    name: str = field(default="duct")

    @property
    def is_flat(self) -> bool:
        return self.skin.is_flat

    def _fade(self, u: np.ndarray) -> np.ndarray:
        span = max(self.u_end - self.u_start, 1e-9)
        s = np.clip((u - self.u_start) / span, 0.0, 1.0)
        return 1.0 - s * s * (3.0 - 2.0 * s)  # smoothstep from 1 to 0

    def to_model(self, uvw: np.ndarray) -> np.ndarray:
        p = np.asarray(uvw, dtype=float).reshape(-1, 3)
        u = p[:, 0]
        inside = u <= self.u_end
        out = np.empty_like(p)
        if inside.any():
            ky = self.skin.k_span * self._fade(u[inside])
            out[inside] = self.skin._map(p[inside], ky)
        if (~inside).any():
            q = p[~inside]
            m0 = self.skin.centre(np.array([self.u_end]))[0]
            t0, n0 = (a[0] for a in self.skin.frame(np.array([self.u_end])))
            du = q[:, 0] - self.u_end
            rigid = m0 + du[:, None] * t0 + q[:, 2:3] * n0
            rigid[:, 1] += q[:, 1]
            out[~inside] = rigid
        return out

    def normal(self, uv: np.ndarray) -> np.ndarray:  # the duct has no skin surface
        return self.skin.normal(uv)

    def outlet_frame(self) -> tuple[np.ndarray, np.ndarray]:
        """Where the outlet face sits and where the spigot points: the centreline point of
        the outlet station and the unit axis direction t (model coordinates)."""
        m0 = self.skin.centre(np.array([self.u_end]))[0]
        t0, _ = self.skin.frame(np.array([self.u_end]))
        return m0, t0[0]

    def outlet_normal(self) -> np.ndarray:
        """The outward normal of the straight outlet frame (model coordinates)."""
        return self.skin.frame(np.array([self.u_end]))[1][0, :]


@dataclass(frozen=True)
class TurnedOver:
    """The map of a part built upside down (the plug: design w = −z), turned over again
    after mapping so it keeps its orientation: (x, y, z) → mirror_z(skin(x, y, −z))."""

    skin: CurvedSkin | FlatSkin

    def __call__(self, p: np.ndarray) -> np.ndarray:
        flip = np.array([1.0, 1.0, -1.0])
        out: np.ndarray = (
            self.skin.to_model(np.asarray(p, dtype=float).reshape(-1, 3) * flip) * flip
        )
        return out
