"""Splines carried through a point map by least squares on their own parametrization (mm).

A face's surface S(u, v) (or an edge's curve C(t)) is carried through the skin map f by
fitting a non-rational B-spline to f(S(u, v)) at the same (u, v): the fit keeps S's knots
with their multiplicities (so its continuity), its degree raised to at least 3, knots added
so no span is longer than ``start_span_mm`` in space, then the spans where f(S) departs from
the fit at the points between the fitted ones by more than ``tol_mm`` are halved until none
does (at most :data:`MAX_ROUNDS` times; the departure reached is returned either way).
Because the parametrization is S's own, a face's boundary curves in (u, v) (its p-curves)
stay exact on the fitted surface, and a fitted edge curve lies on it within the two fits'
errors. A surface closed on itself (a hole's wall) is fitted among closed splines, smooth
across the seam where S is: fitted freely, its two seam edges lay micrometres apart.

The error of a cubic fit falls as the fourth power of the span (de Boor, *A Practical Guide
to Splines*, chapter XII [recalled]), where mapping the poles of S (the first-order
construction) errs by about span²·κ/8 on a skin of curvature κ; at equal accuracy the fit
needs far fewer spans.

S itself is evaluated here with numpy from its knots, poles and weights (the basis from
:meth:`scipy.interpolate.BSpline.design_matrix`), so a fit costs a few matrix products.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import numpy as np

__all__ = ["FIT_TOL_MM", "fit_curve", "fit_surface"]

#: Largest departure (mm) of a fitted spline from the mapped one, at the test points.
FIT_TOL_MM = 1e-4
#: Distance (mm) within which a surface's two end iso-lines one way are one (a seam).
SEAM_MM = 1e-9
#: Longest span (mm, in space) before any refinement.
START_SPAN_MM = 25.0
#: Rounds of halving the spans that miss the tolerance.
MAX_ROUNDS = 10
#: Fitted points per span (fractions of it) and the test points between them.
_FIT = np.array([0.0, 1.0 / 3.0, 2.0 / 3.0])
_TEST = np.array([1.0 / 6.0, 0.5, 5.0 / 6.0])

PointMap = Callable[[np.ndarray], np.ndarray]


@dataclass(frozen=True)
class _Knots:
    """Distinct knots (increasing), their multiplicities and the degree of one direction."""

    values: np.ndarray
    mults: np.ndarray
    degree: int

    def clamped_mults(self) -> np.ndarray:
        """Multiplicities of a clamped vector: ends degree + 1, inner ones at most degree."""
        m = np.minimum(self.mults, self.degree).copy()
        m[0] = m[-1] = self.degree + 1
        return m

    def full(self) -> np.ndarray:
        """The clamped knot vector."""
        return np.repeat(self.values, self.clamped_mults())

    def at(self, fractions: np.ndarray, end: bool = False) -> np.ndarray:
        """Parameters at ``fractions`` of every span (and the last knot when ``end``)."""
        a, b = self.values[:-1], self.values[1:]
        out = (a[:, None] + (b - a)[:, None] * fractions[None, :]).ravel()
        return np.append(out, self.values[-1]) if end else out

    def span_of(self, t: np.ndarray) -> np.ndarray:
        return np.clip(np.searchsorted(self.values, t, side="right") - 1, 0, len(self.values) - 2)

    def halved(self, bad: np.ndarray) -> _Knots:
        """Every span flagged in ``bad`` split at its middle (a simple knot)."""
        mids = 0.5 * (self.values[:-1] + self.values[1:])[bad]
        v = np.concatenate([self.values, mids])
        m = np.concatenate([self.mults, np.ones(len(mids), dtype=int)])
        order = np.argsort(v, kind="stable")
        return _Knots(v[order], m[order], self.degree)

    def refined(self, lengths: np.ndarray, span_mm: float) -> _Knots:
        """Each span of space length ``lengths[i]`` (mm) cut evenly to at most ``span_mm``."""
        v, m = [self.values[0]], [self.mults[0]]
        for i, length in enumerate(lengths):
            n = max(1, int(np.ceil(length / span_mm)))
            a, b = self.values[i], self.values[i + 1]
            v += [a + (b - a) * j / n for j in range(1, n)]
            m += [1] * (n - 1)
            v.append(b)
            m.append(self.mults[i + 1])
        return _Knots(np.array(v), np.array(m), self.degree)


def _basis(t: np.ndarray, knots: np.ndarray, degree: int) -> Any:
    """B-spline basis values on ``knots``: a sparse (len(t), n) matrix."""
    from scipy.interpolate import BSpline

    x = np.clip(t, knots[degree], knots[-degree - 1])
    return BSpline.design_matrix(x, knots, degree)


def _lsq(b: Any, rhs: np.ndarray) -> np.ndarray:
    """Least-squares solution X of b·X = rhs (b sparse (m, n), rhs (m, k)) by the normal
    equations, which are banded for a B-spline basis."""
    import warnings

    from scipy.sparse.linalg import MatrixRankWarning, spsolve

    with warnings.catch_warnings():
        warnings.simplefilter("error", MatrixRankWarning)
        try:
            x = np.asarray(spsolve((b.T @ b).tocsc(), b.T @ rhs)).reshape(b.shape[1], -1)
            if np.all(np.isfinite(x)):
                return x
        except MatrixRankWarning:
            pass
    # a basis function the samples hardly see (knots nearly coinciding): least norm
    return np.linalg.lstsq(b.toarray(), rhs, rcond=None)[0].reshape(b.shape[1], -1)


def _apply(b: Any, values: np.ndarray) -> np.ndarray:
    """``b`` (sparse (m, n)) applied along the first axis of ``values`` (n, ...)."""
    return np.asarray(b @ values.reshape(values.shape[0], -1)).reshape(-1, *values.shape[1:])


def _fit_knots(full: np.ndarray, degree: int, new_degree: int) -> _Knots:
    """The distinct knots of a knot vector inside its domain [t_p, t_n], multiplicities
    raised with the degree (the continuity at each knot kept)."""
    lo, hi = full[degree], full[-degree - 1]
    values, mults = np.unique(full[(full >= lo) & (full <= hi)], return_counts=True)
    return _Knots(values, np.minimum(mults + new_degree - degree, new_degree), new_degree)


def _smooth_joints(k: _Knots, along: Callable[[np.ndarray], np.ndarray]) -> _Knots:
    """``k`` with each inner knot of full multiplicity (a C0 joint) lowered by one where
    the source is C1 there after all. A rational arc's usual B-spline form (a circle over
    more than a quarter turn, as the kernel converts it) has a double knot that says C0
    where the arc turns smoothly; kept, the fit would be a C0 surface, which a geometry
    check reports.

    ``along(t)``: source points at parameters ``t`` (shape (len(t), ..., 3), mm). The
    one-sided first derivatives either side of the knot, by second-order differences over
    1e-4 of the domain, agree to 1e-6 of their size at a C1 joint (their error ~1e-8 of
    it) and differ by the order of their size at a corner."""
    joints = np.flatnonzero(k.mults[1:-1] >= k.degree) + 1
    if len(joints) == 0:
        return k
    h = 1e-4 * (k.values[-1] - k.values[0])
    mults = k.mults.copy()
    for i in joints:
        t = k.values[i]
        p = along(t + h * np.array([-2.0, -1.0, 0.0, 1.0, 2.0]))
        left = (3.0 * p[2] - 4.0 * p[1] + p[0]) / (2.0 * h)
        right = (-3.0 * p[2] + 4.0 * p[3] - p[4]) / (2.0 * h)
        size = max(float(np.abs(left).max()), float(np.abs(right).max()), 1e-300)
        if float(np.abs(left - right).max()) <= 1e-6 * size:
            mults[i] = k.degree - 1
    return _Knots(k.values, mults, k.degree)


@dataclass(frozen=True)
class _Spline:
    """A B-spline (curve: one direction; surface: two) as arrays, evaluated with numpy:
    clamped knot vectors, degrees, poles (..., 3) mm and weights (...)."""

    knots: tuple[np.ndarray, ...]
    degrees: tuple[int, ...]
    poles: np.ndarray
    weights: np.ndarray

    def curve(self, t: np.ndarray) -> np.ndarray:
        b = _basis(t, self.knots[0], self.degrees[0])
        h = _apply(b, np.c_[self.poles * self.weights[:, None], self.weights])
        return h[:, :3] / h[:, 3:]

    def grid(self, u: np.ndarray, v: np.ndarray) -> np.ndarray:
        bu = _basis(u, self.knots[0], self.degrees[0])
        bv = _basis(v, self.knots[1], self.degrees[1])
        hom = np.concatenate([self.poles * self.weights[..., None], self.weights[..., None]], 2)
        h = _apply(bv, _apply(bu, hom).transpose(1, 0, 2)).transpose(1, 0, 2)
        return h[..., :3] / h[..., 3:]


def _seams(src: _Spline) -> tuple[str, str]:
    """How the surface ``src`` closes on itself in u and in v (a cylinder's seam), at 9
    iso-lines across: "" (open), "C0" (its two end iso-lines that way coincide to
    :data:`SEAM_MM`) or "C1" (their first derivatives too, to 1e-4 relative)."""
    out = []
    for axis in (0, 1):
        k, deg = src.knots[axis], src.degrees[axis]
        lo, hi = k[deg], k[-deg - 1]
        h = 1e-3 * (hi - lo)
        ends = np.array([lo, lo + h, lo + 2 * h, hi - 2 * h, hi - h, hi])
        kk, dd = src.knots[1 - axis], src.degrees[1 - axis]
        across = np.linspace(kk[dd], kk[-dd - 1], 9)
        g = src.grid(ends, across) if axis == 0 else src.grid(across, ends).transpose(1, 0, 2)
        if np.linalg.norm(g[0] - g[5], axis=-1).max() > SEAM_MM:
            out.append("")
            continue
        d0 = (-3.0 * g[0] + 4.0 * g[1] - g[2]) / (2.0 * h)
        d1 = (3.0 * g[5] - 4.0 * g[4] + g[3]) / (2.0 * h)
        size = max(float(np.linalg.norm(d0, axis=-1).max()), 1e-300)
        out.append("C1" if np.linalg.norm(d0 - d1, axis=-1).max() <= 1e-4 * size else "C0")
    return out[0], out[1]


def _seam_map(knots: np.ndarray, degree: int, n: int, seam: str) -> np.ndarray | None:
    """For a fit closed at a seam (``seam`` "C0" or "C1", see :func:`_seams`; None when
    "" or too few poles): the matrix T (n, m) with poles = T @ X of the m free unknowns X,
    tying the first and last poles (one point Q), and for "C1" the second and last-but-one
    to Q + α·D and Q − β·D (one end derivative D: a clamped spline's end derivatives are
    p·(P1 − P0)/(t_p+1 − t_p) and p·(Pn-1 − Pn-2)/(t_n − t_n-1))."""
    if not seam or n < 6:
        return None
    c1 = int(seam == "C1")
    t = np.zeros((n, n - 1 - c1))
    t[[0, -1], 0] = 1.0
    if c1:
        t[[1, -2], 0] = 1.0
        t[1, 1] = (knots[degree + 1] - knots[degree]) / degree
        t[-2, 1] = -(knots[n] - knots[n - 1]) / degree
    t[1 + c1 : n - 1 - c1, 1 + c1 :] = np.eye(n - 2 - 2 * c1)
    return t


def _tied_lsq(b: Any, rhs: np.ndarray, tie: np.ndarray | None) -> np.ndarray:
    """:func:`_lsq` with the unknowns tied by ``tie`` (:func:`_seam_map`) when given: the
    least-squares fit among closed splines, not a fit closed afterwards (which leaves a
    kink the kernel finds the face crossing itself at)."""
    if tie is None:
        return _lsq(b, rhs)
    from scipy.sparse import csr_matrix

    return tie @ _lsq(csr_matrix(b @ tie), rhs)


def _surface_arrays(bs: Any) -> _Spline:
    """A kernel B-spline surface (made non-periodic on a copy) as arrays."""
    if bs.IsUPeriodic() or bs.IsVPeriodic():
        bs = bs.Copy()
        if bs.IsUPeriodic():
            bs.SetUNotPeriodic()
        if bs.IsVPeriodic():
            bs.SetVNotPeriodic()
    nu, nv = bs.NbUPoles(), bs.NbVPoles()
    poles = np.array([[bs.Pole(i, j).Coord() for j in range(1, nv + 1)] for i in range(1, nu + 1)])
    weights = np.array([[bs.Weight(i, j) for j in range(1, nv + 1)] for i in range(1, nu + 1)])
    tu = np.array(list(bs.UKnotSequence()))
    tv = np.array(list(bs.VKnotSequence()))
    return _Spline((tu, tv), (bs.UDegree(), bs.VDegree()), poles, weights)


def _curve_arrays(bc: Any) -> _Spline:
    """A kernel B-spline curve (made non-periodic on a copy) as arrays."""
    if bc.IsPeriodic():
        bc = bc.Copy()
        bc.SetNotPeriodic()
    n = bc.NbPoles()
    poles = np.array([bc.Pole(i).Coord() for i in range(1, n + 1)])
    weights = np.array([bc.Weight(i) for i in range(1, n + 1)])
    return _Spline((np.array(list(bc.KnotSequence())),), (bc.Degree(),), poles, weights)


def _lengths(points: np.ndarray) -> np.ndarray:
    """Polyline length of each run of 5 points along the first axis (one per span)."""
    seg = np.linalg.norm(np.diff(points, axis=0), axis=-1)
    return seg.reshape(-1, 4, *seg.shape[1:]).sum(axis=1)


def fit_surface(
    bs: Any, fn: PointMap, tol_mm: float = FIT_TOL_MM, start_span_mm: float = START_SPAN_MM
) -> tuple[Any, float]:
    """``bs`` (a kernel B-spline surface, mm) carried through ``fn``: the fitted surface (a
    ``Geom_BSplineSurface`` on ``bs``'s parameter box) and its largest departure (mm) from
    f(bs) at the test points."""
    src = _surface_arrays(bs)
    p, q = max(src.degrees[0], 3), max(src.degrees[1], 3)
    ku = _fit_knots(src.knots[0], src.degrees[0], p)
    kv = _fit_knots(src.knots[1], src.degrees[1], q)
    across_u = np.linspace(kv.values[0], kv.values[-1], 7)  # iso-lines a u-joint is tested on
    across_v = np.linspace(ku.values[0], ku.values[-1], 7)
    ku = _smooth_joints(ku, lambda t: src.grid(t, across_u))
    kv = _smooth_joints(kv, lambda t: src.grid(across_v, t).transpose(1, 0, 2))
    seams = _seams(src)
    quarter = np.linspace(0.0, 1.0, 5)[:-1]
    lu = _lengths(src.grid(ku.at(quarter, end=True), kv.values)).max(axis=1)
    lv = _lengths(src.grid(ku.values, kv.at(quarter, end=True)).transpose(1, 0, 2)).max(axis=1)
    ku, kv = ku.refined(lu, start_span_mm), kv.refined(lv, start_span_mm)
    for _ in range(MAX_ROUNDS):
        us, vs = ku.at(_FIT, end=True), kv.at(_FIT, end=True)
        target = fn(src.grid(us, vs).reshape(-1, 3)).reshape(len(us), len(vs), 3)
        bu, bv = _basis(us, ku.full(), p), _basis(vs, kv.full(), q)
        tu, tv = (
            _seam_map(k.full(), d, b.shape[1], seam)
            for k, d, b, seam in ((ku, p, bu, seams[0]), (kv, q, bv, seams[1]))
        )
        a = _tied_lsq(bu, target.reshape(len(us), -1), tu).reshape(-1, len(vs), 3)
        poles = _tied_lsq(bv, a.transpose(1, 0, 2).reshape(len(vs), -1), tv)
        poles = poles.reshape(bv.shape[1], -1, 3).transpose(1, 0, 2)
        ut, vt = np.sort(np.r_[us, ku.at(_TEST)]), np.sort(np.r_[vs, kv.at(_TEST)])
        fitted = _Spline((ku.full(), kv.full()), (p, q), poles, np.ones(poles.shape[:2]))
        used = (ku, kv)  # the knots of this fit (the loop may halve ku, kv once more)
        err = np.linalg.norm(
            fitted.grid(ut, vt) - fn(src.grid(ut, vt).reshape(-1, 3)).reshape(len(ut), len(vt), 3),
            axis=2,
        )
        if err.max() <= tol_mm:
            break
        bad_u = np.zeros(len(ku.values) - 1, dtype=bool)
        bad_v = np.zeros(len(kv.values) - 1, dtype=bool)
        bad_u[ku.span_of(ut[np.any(err > tol_mm, axis=1)])] = True
        bad_v[kv.span_of(vt[np.any(err > tol_mm, axis=0)])] = True
        ku, kv = ku.halved(bad_u), kv.halved(bad_v)
    return _kernel_surface(fitted, *used), float(err.max())


def fit_curve(
    bc: Any, fn: PointMap, tol_mm: float = FIT_TOL_MM, start_span_mm: float = START_SPAN_MM
) -> tuple[Any, float]:
    """``bc`` (a kernel B-spline curve, mm) carried through ``fn``, its ends mapped exactly:
    the fitted ``Geom_BSplineCurve`` on ``bc``'s parameter range and its largest departure
    (mm) from f(bc) at the test points."""
    src = _curve_arrays(bc)
    p = max(src.degrees[0], 3)
    k = _smooth_joints(_fit_knots(src.knots[0], src.degrees[0], p), src.curve)
    k = k.refined(_lengths(src.curve(k.at(np.linspace(0.0, 1.0, 5)[:-1], end=True))), start_span_mm)
    for _ in range(MAX_ROUNDS):
        ts = k.at(_FIT, end=True)
        target = fn(src.curve(ts))
        b = _basis(ts, k.full(), p)
        b = b.tocsc()
        first, last = b[:, [0]].toarray(), b[:, [-1]].toarray()
        rhs = target - first @ target[:1] - last @ target[-1:]
        inner = _lsq(b[:, 1:-1].tocsr(), rhs)
        fitted = _Spline(
            (k.full(),), (p,), np.vstack([target[0], inner, target[-1]]), np.ones(len(inner) + 2)
        )
        used = k  # the knots of this fit (the loop may halve k once more)
        tt = np.sort(np.r_[ts, k.at(_TEST)])
        err = np.linalg.norm(fitted.curve(tt) - fn(src.curve(tt)), axis=1)
        if err.max() <= tol_mm:
            break
        bad = np.zeros(len(k.values) - 1, dtype=bool)
        bad[k.span_of(tt[err > tol_mm])] = True
        k = k.halved(bad)
    return _kernel_curve(fitted, used), float(err.max())


def _reals(values: np.ndarray) -> Any:
    from OCP.TColStd import TColStd_Array1OfReal

    arr = TColStd_Array1OfReal(1, len(values))
    for i, x in enumerate(values, start=1):
        arr.SetValue(i, float(x))
    return arr


def _mults(k: _Knots) -> Any:
    from OCP.TColStd import TColStd_Array1OfInteger

    m = k.clamped_mults()
    arr = TColStd_Array1OfInteger(1, len(m))
    for i, x in enumerate(m, start=1):
        arr.SetValue(i, int(x))
    return arr


def _kernel_surface(s: _Spline, ku: _Knots, kv: _Knots) -> Any:
    from OCP.Geom import Geom_BSplineSurface
    from OCP.gp import gp_Pnt
    from OCP.TColgp import TColgp_Array2OfPnt

    nu, nv = s.poles.shape[:2]
    poles = TColgp_Array2OfPnt(1, nu, 1, nv)
    for i in range(nu):
        for j in range(nv):
            poles.SetValue(i + 1, j + 1, gp_Pnt(*s.poles[i, j]))
    return Geom_BSplineSurface(
        poles,
        _reals(ku.values),
        _reals(kv.values),
        _mults(ku),
        _mults(kv),
        ku.degree,
        kv.degree,
    )


def _kernel_curve(s: _Spline, k: _Knots) -> Any:
    from OCP.Geom import Geom_BSplineCurve
    from OCP.gp import gp_Pnt
    from OCP.TColgp import TColgp_Array1OfPnt

    poles = TColgp_Array1OfPnt(1, len(s.poles))
    for i, pt in enumerate(s.poles, start=1):
        poles.SetValue(i, gp_Pnt(*pt))
    return Geom_BSplineCurve(poles, _reals(k.values), _mults(k), k.degree)
