"""A face's surface and an edge's curves evaluated at many parameters at once (CAD kernel:
runs in the kernel worker; mm): B-splines by SciPy's B-splines from their poles and knots
(agreeing with the kernel to ~3e-12 mm on this project's mapped faces; rational ones by their
weighted poles, periodic curves over one period), lines, circles, ellipses, extrusions of
these curves and cylinders in closed form (to ~3e-13 mm), planes in closed form, anything else
(a periodic surface) by the kernel point by point. Used by
:mod:`ductgen.solids.intersection`.
"""

from __future__ import annotations

from typing import Any

import numpy as np

__all__ = ["Surface", "batch_curve"]


class Surface:
    """A face's surface evaluated at many parameters at once: a non-rational, non-periodic
    B-spline surface by SciPy's tensor-product B-spline (its poles and knots; agrees with
    the kernel to ~3e-12 mm on this project's mapped faces, ~4x faster at 65 points), an
    extrusion of such a curve and a cylinder in closed form (:func:`_batch_surface`), any
    other surface and small batches by the kernel (:func:`_evaluate`)."""

    #: Fewer parameters than this go to the kernel (SciPy's ~70 µs a call is ~15 points').
    BATCH = 16

    def __init__(self, adaptor: Any) -> None:
        self.adaptor = adaptor
        self._batch = _batch_surface(adaptor)

    def at(self, uv: np.ndarray) -> np.ndarray:
        """Points and first derivatives at (N, 2) parameters: (N, 3, 3) rows X, ∂X/∂u,
        ∂X/∂v."""
        if self._batch is None or len(uv) < self.BATCH:
            return _evaluate(self.adaptor, uv)
        return np.stack([self._batch(uv, nu=nu) for nu in ((0, 0), (1, 0), (0, 1))], axis=1)

    def points(self, uv: np.ndarray) -> np.ndarray:
        """Points (N, 3) at (N, 2) parameters."""
        if self._batch is None or len(uv) < self.BATCH:
            return _evaluate(self.adaptor, uv)[:, 0]
        return np.asarray(self._batch(uv))


def _batch_surface(a: Any) -> Any:
    """SciPy's NdBSpline of the adaptor's surface when it is a non-periodic B-spline (as
    transformed by the face's location; a rational one by its weighted poles,
    :class:`_Rational`), the extrusion of a curve :func:`batch_curve` takes
    (:class:`_Extrusion`) or a cylinder (:class:`_Cylinder`), else None."""
    from OCP.GeomAbs import GeomAbs_BSplineSurface, GeomAbs_Cylinder, GeomAbs_SurfaceOfExtrusion
    from scipy.interpolate import NdBSpline

    if a.GetType() == GeomAbs_Cylinder:
        return _Cylinder(a.Cylinder())
    if a.GetType() == GeomAbs_SurfaceOfExtrusion:
        return _Extrusion.of(a)
    if a.GetType() != GeomAbs_BSplineSurface:
        return None
    b = a.BSpline()
    if b.IsUPeriodic() or b.IsVPeriodic():
        return None
    ku, kv = b.UKnotSequence(), b.VKnotSequence()
    t = (
        np.array([ku.Value(i) for i in range(1, ku.Length() + 1)]),
        np.array([kv.Value(i) for i in range(1, kv.Length() + 1)]),
    )
    nu, nv = range(1, b.NbUPoles() + 1), range(1, b.NbVPoles() + 1)
    poles = np.array([[b.Pole(i, j).Coord() for j in nv] for i in nu])
    k = (b.UDegree(), b.VDegree())
    if not (b.IsURational() or b.IsVRational()):
        return NdBSpline(t, poles, k, extrapolate=True)
    w = np.array([[b.Weight(i, j) for j in nv] for i in nu])[:, :, None]
    return _Rational(NdBSpline(t, np.concatenate([poles * w, w], axis=2), k, extrapolate=True))


class _Extrusion:
    """A linear extrusion C(u) + v·D of a B-spline C, moved by the face's location (a
    rotation R and a shift t: R·(C(u) + v·D) + t), called like SciPy's NdBSpline."""

    def __init__(self, c: Any, d: np.ndarray, rot: np.ndarray, shift: np.ndarray) -> None:
        self.c, self.d, self.rot, self.shift = c, d, rot, shift

    @classmethod
    def of(cls, a: Any) -> _Extrusion | None:
        """The extrusion of a surface adaptor whose basis curve is a non-rational,
        non-periodic B-spline, else None."""
        local = a.Surface()  # the surface in the face's own coordinates
        c = batch_curve(local.BasisCurve())
        if c is None:
            return None
        d = local.Direction()
        t = a.Trsf()
        if abs(t.ScaleFactor() - 1.0) > 1e-15:
            return None
        rot = np.array([[t.Value(i, j) for j in (1, 2, 3)] for i in (1, 2, 3)])
        shift = np.array([t.Value(i, 4) for i in (1, 2, 3)])
        return cls(c, np.array([d.X(), d.Y(), d.Z()]), rot, shift)

    def __call__(self, uv: np.ndarray, nu: tuple[int, int] = (0, 0)) -> np.ndarray:
        if nu == (0, 0):
            return (np.asarray(self.c(uv[:, 0])) + uv[:, 1:] * self.d) @ self.rot.T + self.shift
        if nu == (1, 0):
            return np.asarray(self.c(uv[:, 0], nu=1)) @ self.rot.T
        return np.broadcast_to(self.rot @ self.d, (len(uv), 3))


class _Cylinder:
    """A cylinder O + r·(cos u·X + sin u·Y) + v·Z (its placed axes), called like SciPy's
    NdBSpline."""

    def __init__(self, cyl: Any) -> None:
        ax = cyl.Position()
        self.o, self.x, self.y, self.z = (
            np.array([p.X(), p.Y(), p.Z()])
            for p in (ax.Location(), ax.XDirection(), ax.YDirection(), ax.Direction())
        )
        self.r = cyl.Radius()

    def __call__(self, uv: np.ndarray, nu: tuple[int, int] = (0, 0)) -> np.ndarray:
        cu, su = np.cos(uv[:, :1]), np.sin(uv[:, :1])
        if nu == (0, 0):
            return self.o + self.r * (cu * self.x + su * self.y) + uv[:, 1:] * self.z
        if nu == (1, 0):
            return self.r * (cu * self.y - su * self.x)
        return np.broadcast_to(self.z, (len(uv), 3))


def batch_curve(a: Any) -> Any:
    """A B-spline curve adaptor (3D or on a surface) evaluated a batch at a time, called
    like SciPy's BSpline (``c(ts)``, ``c(ts, nu=1)``): a non-rational one as SciPy's
    BSpline, a rational one (a circle's arc) by its weighted poles (:class:`_Rational`), a
    periodic one (a circle) made plain over one period with the parameter taken modulo it
    (:class:`_Periodic`); None for any other curve."""
    from OCP.GeomAbs import GeomAbs_BSplineCurve
    from scipy.interpolate import BSpline

    if a.GetType() != GeomAbs_BSplineCurve:
        return _Line.of(a) or _Conic.of(a)
    b = a.BSpline()
    period = (b.FirstParameter(), b.Period()) if b.IsPeriodic() else None
    if period is not None:
        b = b.Copy()  # the edge's own curve stays periodic
        b.SetNotPeriodic()
    ks = b.KnotSequence()
    t = np.array([ks.Value(i) for i in range(1, ks.Length() + 1)])
    poles = np.array([b.Pole(i).Coord() for i in range(1, b.NbPoles() + 1)])
    curve: Any = BSpline(t, poles, b.Degree(), extrapolate=True)
    if b.IsRational():
        w = np.array([b.Weight(i) for i in range(1, b.NbPoles() + 1)])[:, None]
        curve = _Rational(BSpline(t, np.hstack([poles * w, w]), b.Degree(), extrapolate=True))
    return curve if period is None else _Periodic(curve, *period)


class _Line:
    """A line (3D, or 2D on a surface) P + t·D, called like SciPy's BSpline."""

    def __init__(self, p: np.ndarray, d: np.ndarray) -> None:
        self.p, self.d = p, d

    @classmethod
    def of(cls, a: Any) -> _Line | None:
        """The adaptor's line, or None for any other kind."""
        from OCP.GeomAbs import GeomAbs_Line

        if a.GetType() != GeomAbs_Line:
            return None
        line = a.Line()
        return cls(np.array(line.Location().Coord()), np.array(line.Direction().Coord()))

    def __call__(self, t: np.ndarray, nu: int = 0) -> np.ndarray:
        t = np.asarray(t, dtype=float)[:, None]
        return self.p + t * self.d if nu == 0 else np.broadcast_to(self.d, (len(t), len(self.d)))


class _Conic:
    """A circle or ellipse (3D, or 2D on a surface) in closed form, called like SciPy's
    BSpline: C + a·cos t·X + b·sin t·Y on its placed axes (a = b = r for a circle)."""

    def __init__(self, c: np.ndarray, x: np.ndarray, y: np.ndarray, ab: tuple[float, float]):
        self.c, self.x, self.y, self.ab = c, x, y, ab

    @classmethod
    def of(cls, a: Any) -> _Conic | None:
        """The adaptor's curve in closed form, or None for any other kind."""
        from OCP.GeomAbs import GeomAbs_Circle, GeomAbs_Ellipse

        kind = a.GetType()
        if kind not in (GeomAbs_Circle, GeomAbs_Ellipse):
            return None
        conic = a.Circle() if kind == GeomAbs_Circle else a.Ellipse()
        ab = (
            (conic.Radius(), conic.Radius())
            if kind == GeomAbs_Circle
            else (conic.MajorRadius(), conic.MinorRadius())
        )
        x, y = (np.array(axis.Direction().Coord()) for axis in (conic.XAxis(), conic.YAxis()))
        return cls(np.array(conic.Location().Coord()), x, y, ab)

    def __call__(self, t: np.ndarray, nu: int = 0) -> np.ndarray:
        t = np.asarray(t, dtype=float)[:, None]
        a, b = self.ab
        if nu == 0:
            return self.c + a * np.cos(t) * self.x + b * np.sin(t) * self.y
        return -a * np.sin(t) * self.x + b * np.cos(t) * self.y


class _Rational:
    """A rational B-spline curve or surface A/W from one SciPy spline of its weighted poles
    and weights (the last column W), called like that spline for points and first
    derivatives (the quotient rule: (A′ − X·W′)/W)."""

    def __init__(self, aw: Any) -> None:
        self.aw = aw

    def __call__(self, at: np.ndarray, nu: Any = 0) -> np.ndarray:
        h = np.asarray(self.aw(at))
        x = h[:, :-1] / h[:, -1:]
        if not np.any(nu):
            return x
        d = np.asarray(self.aw(at, nu=nu))
        return (d[:, :-1] - x * d[:, -1:]) / h[:, -1:]


class _Periodic:
    """A periodic curve made plain over the period from ``first``, called like SciPy's
    BSpline at any parameter (taken modulo ``period``)."""

    def __init__(self, curve: Any, first: float, period: float) -> None:
        self.curve, self.first, self.period = curve, first, period

    def __call__(self, t: np.ndarray, nu: int = 0) -> np.ndarray:
        return self.curve(self.first + np.mod(np.asarray(t) - self.first, self.period), nu=nu)


def _evaluate(s: Any, uv: np.ndarray) -> np.ndarray:
    """Points and first derivatives of the surface adaptor ``s`` at (N, 2) parameters:
    (N, 3, 3) rows X, ∂X/∂u, ∂X/∂v (a plane in closed form, other surfaces point by
    point through the kernel)."""
    from OCP.GeomAbs import GeomAbs_Plane
    from OCP.gp import gp_Pnt, gp_Vec

    out = np.empty((len(uv), 3, 3))
    if s.GetType() == GeomAbs_Plane:
        ax = s.Plane().Position()
        o, xd, yd = (
            np.array([v.X(), v.Y(), v.Z()])
            for v in (ax.Location(), ax.XDirection(), ax.YDirection())
        )
        out[:, 0] = o + uv[:, :1] * xd + uv[:, 1:] * yd
        out[:, 1], out[:, 2] = xd, yd
        return out
    p, du, dv = gp_Pnt(), gp_Vec(), gp_Vec()
    for i, (u, v) in enumerate(uv):
        s.D1(float(u), float(v), p, du, dv)
        out[i] = (p.X(), p.Y(), p.Z()), (du.X(), du.Y(), du.Z()), (dv.X(), dv.Y(), dv.Z())
    return out
