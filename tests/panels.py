"""Panels made by the tests with the CAD kernel (no files from elsewhere): a cylinder patch
and a torus patch (analytic surfaces whose inlet the analytic skins give), a doubly curved
B-spline bonnet, a bent plate with a crease, and rigid motions to put them anywhere."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = [
    "MOTION",
    "Motion",
    "bent_plate",
    "bonnet_face",
    "bonnet_height",
    "cylinder_panel",
    "s_height",
    "s_panel_face",
    "torus_panel",
]


@dataclass(frozen=True)
class Motion:
    """A rigid motion: rotation by ``angle_deg`` about ``axis`` through the origin, then a
    translation by ``shift`` (mm)."""

    axis: tuple[float, float, float]
    angle_deg: float
    shift: tuple[float, float, float]

    @property
    def matrix(self) -> np.ndarray:
        a = np.asarray(self.axis, dtype=float)
        a /= np.linalg.norm(a)
        k = np.array([[0, -a[2], a[1]], [a[2], 0, -a[0]], [-a[1], a[0], 0]])
        t = np.radians(self.angle_deg)
        return np.eye(3) + np.sin(t) * k + (1 - np.cos(t)) * k @ k

    def points(self, p: np.ndarray) -> np.ndarray:
        return np.asarray(p, dtype=float) @ self.matrix.T + np.asarray(self.shift)

    def vector(self, v: np.ndarray) -> np.ndarray:
        return np.asarray(v, dtype=float) @ self.matrix.T

    def shape(self, s):  # type: ignore[no-untyped-def]
        import cadquery as cq

        return s.rotate(cq.Vector(0, 0, 0), cq.Vector(*self.axis), self.angle_deg).translate(
            cq.Vector(*self.shift)
        )


#: An arbitrary pose: 37° about a skew axis, moved off the origin.
MOTION = Motion((0.3, -0.5, 0.8), 37.0, (120.0, -45.0, 310.0))


def cylinder_panel(radius: float, axis: str, thickness: float, size=(900.0, 600.0), x0=-250.0):  # type: ignore[no-untyped-def]
    """A convex cylinder-patch panel (a closed solid, ``thickness`` mm) whose outer surface
    touches z = 0 at the origin with outward normal +z; its axis along y (``"spanwise"``:
    it curves along the flow, x) or along x (``"streamwise"``); ``size`` (along x, across)
    mm, starting at x = ``x0``."""
    import cadquery as cq

    length, width = size
    if axis == "spanwise":
        base, direction = cq.Vector(0, -width / 2, -radius), cq.Vector(0, 1, 0)
        extent = width
    else:
        base, direction = cq.Vector(x0, 0, -radius), cq.Vector(1, 0, 0)
        extent = length
    outer = cq.Solid.makeCylinder(radius, extent, base, direction)
    inner = cq.Solid.makeCylinder(radius - thickness, extent, base, direction)
    box = cq.Solid.makeBox(length, width, 250.0, cq.Vector(x0, -width / 2, -200))
    return outer.cut(inner).intersect(box)


def torus_panel(r_stream: float, r_span: float, thickness: float):  # type: ignore[no-untyped-def]
    """A convex torus patch (closed solid) through the origin, normal +z there: its outer
    equator (radius ``r_stream``) runs along x, its meridians (radius ``r_span``) across."""
    import cadquery as cq

    centre = cq.Vector(0, 0, -r_stream)
    outer = cq.Solid.makeTorus(r_stream - r_span, r_span, centre, cq.Vector(0, 1, 0))
    inner = cq.Solid.makeTorus(r_stream - r_span, r_span - thickness, centre, cq.Vector(0, 1, 0))
    box = cq.Solid.makeBox(800.0, 500.0, 220.0, cq.Vector(-250, -250, -200))
    return outer.cut(inner).intersect(box)


def bonnet_height(x: np.ndarray, y: np.ndarray) -> np.ndarray:
    """A bonnet-like doubly curved height (mm): convex both ways, radii ~1.8 m along and
    ~0.9 m across at the origin, tightening off it and not symmetric."""
    return -x * x / (2 * 1800.0) - y * y / (2 * 900.0) + 4e-7 * x * y * y - 2e-8 * x**3


def bonnet_face():  # type: ignore[no-untyped-def]
    """The bonnet's outer surface as one B-spline face (an open surface, not a solid)."""
    import cadquery as cq

    xs, ys = np.linspace(-300, 500, 33), np.linspace(-260, 260, 27)
    pts = [[cq.Vector(x, y, float(bonnet_height(x, y))) for y in ys] for x in xs]
    return cq.Face.makeSplineApprox(pts, tol=1e-4, maxDeg=3)


def bent_plate(fold_x: float, angle_deg: float, thickness: float = 3.0):  # type: ignore[no-untyped-def]
    """A flat plate (top at z = 0) folded down by ``angle_deg`` along the line x = fold_x: a
    crease across the flow."""
    import cadquery as cq

    a = np.radians(angle_deg)
    far = 400.0
    top = [(-200.0, 0.0), (fold_x, 0.0), (fold_x + far * np.cos(a), -far * np.sin(a))]
    bottom = [(x, z - thickness) for x, z in top[::-1]]
    return cq.Workplane("XZ").polyline(top + bottom).close().extrude(200, both=True).val()


def s_height(x: np.ndarray, y: np.ndarray) -> np.ndarray:
    """An S-shaped height (mm): a sine wave along the flow (25 mm amplitude, 1.2 m long, so
    convex then concave, radius ≥ 1.46 m) with a gentle spanwise camber (R 3 m)."""
    return 25.0 * np.sin(2 * np.pi * (x - 100.0) / 1200.0) - y * y / (2 * 3000.0)


def s_panel_face(reversed_: bool = False):  # type: ignore[no-untyped-def]
    """The S-shaped surface as one open B-spline face, its normal up (or, ``reversed_``,
    down: the file's faces then say the body is above)."""
    import cadquery as cq

    xs, ys = np.linspace(-300, 700, 41), np.linspace(-260, 260, 27)
    pts = [[cq.Vector(x, y, float(s_height(x, y))) for y in ys] for x in xs]
    face = cq.Face.makeSplineApprox(pts, tol=1e-4, maxDeg=3)
    return cq.Face(face.wrapped.Reversed()) if reversed_ else face
