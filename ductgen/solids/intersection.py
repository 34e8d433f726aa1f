"""The exact intersection curve of two faces along an existing edge, and curves fitted to
it (CAD kernel: runs in the kernel worker; mm). Used by :mod:`ductgen.solids.tighten`.

:class:`EdgeIntersection` finds, for parameters t of the edge's present curve, the point on
both surfaces in the plane normal to that curve at t (:func:`~ductgen.solids.meet.meet`:
Newton's method on (u₁, v₁, u₂, v₂) for S₁(u₁, v₁) = S₂(u₂, v₂) and tan·(X − C(t)) = 0,
started from the edge's surface curves, all points at once). Its
:meth:`~EdgeIntersection.fit` gives a 3D curve and both surface curves on one knot vector
and one parameter, the chord length along the exact points: so the three agree between the
samples to the fit's accuracy, not merely at them. Where a surface curve crosses a knot of
its surface, a derivative may jump (the surface's continuity there); the fit puts a knot
there that lets it. Surfaces and the old curves are evaluated a batch at a time
(:mod:`ductgen.solids.batch_eval`).
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any, NamedTuple

import numpy as np

from ductgen.solids.batch_eval import Surface, batch_curve
from ductgen.solids.meet import meet

if TYPE_CHECKING:  # the kernel's bindings carry no type information
    from OCP.TopoDS import TopoDS_Edge, TopoDS_Face

__all__ = ["DEGREE", "EdgeIntersection", "Fitted", "chord_parameter"]

#: Degree of the fitted curves (a cubic needed spans under 1 mm on a drafted wall's
#: 335 mm section; a quintic reaches 1e-8 mm with a few millimetres).
DEGREE = 5

#: Points a knot span at which a fit's deviation from the surfaces is sampled
#: (:attr:`Fitted.deviation`).
SAMPLES_PER_SPAN = 24


class Fitted(NamedTuple):
    """Curves fitted to an edge's true intersection: ``curves`` (Geom_BSplineCurve and
    its two Geom2d_BSplineCurve surface curves, on one parameter) and ``deviation``, the
    largest distance (mm) between the 3D curve and each surface curve mapped through its
    surface at :data:`SAMPLES_PER_SPAN` points a knot span (a sample of the kernel's
    measure: ~1000x cheaper than its optimiser, and the analyser run after healing has
    the last word); ``spans``: each knot span's start and end on the old curve's parameter
    and its own largest distance, (K, 3)."""

    curves: Any
    deviation: float
    spans: np.ndarray


def chord_parameter(pts: np.ndarray, t0: float, t1: float) -> np.ndarray | None:
    """Chord length along the points (N, 3), scaled to run from t0 to t1; None when two
    points coincide."""
    d = np.linalg.norm(np.diff(pts, axis=0), axis=1)
    if np.any(d <= 0.0):
        return None
    chord = np.concatenate([[0.0], np.cumsum(d)])
    out = t0 + (t1 - t0) * chord / chord[-1]
    out[-1] = t1
    return out


class EdgeIntersection:
    """The true intersection of an edge's two faces, along its present curve."""

    def __init__(self, e: TopoDS_Edge, faces: list[TopoDS_Face]) -> None:
        from OCP.BRepAdaptor import BRepAdaptor_Curve, BRepAdaptor_Curve2d, BRepAdaptor_Surface

        self.c = BRepAdaptor_Curve(e)
        self.t0, self.t1 = self.c.FirstParameter(), self.c.LastParameter()
        adaptors = [BRepAdaptor_Surface(f) for f in faces]
        self.s = [Surface(a) for a in adaptors]
        self.p = [BRepAdaptor_Curve2d(e, f) for f in faces]
        self.knots = [_surface_knots(a) for a in adaptors]
        # the old curves a batch at a time when all three are plain B-splines (SciPy)
        batch = [batch_curve(k) for k in (self.c, *self.p)]
        self._batch = None if any(b is None for b in batch) else batch

    def _start(self, ts: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """The old curve's points and tangents (N, 3) and both surface curves' parameters
        (N, 4) at ``ts``."""
        if self._batch is not None:
            c, p, q = self._batch
            return c(ts), c(ts, nu=1), np.concatenate([p(ts), q(ts)], axis=1)
        from OCP.gp import gp_Pnt, gp_Vec

        n = len(ts)
        x0, tan, w = np.empty((n, 3)), np.empty((n, 3)), np.empty((n, 4))
        P, V = gp_Pnt(), gp_Vec()
        for i, t in enumerate(ts):
            self.c.D1(float(t), P, V)
            x0[i] = P.X(), P.Y(), P.Z()
            tan[i] = V.X(), V.Y(), V.Z()
            a, b = self.p[0].Value(float(t)), self.p[1].Value(float(t))
            w[i] = a.X(), a.Y(), b.X(), b.Y()
        return x0, tan, w

    def solve(self, ts: np.ndarray) -> tuple[np.ndarray, np.ndarray] | None:
        """Points (N, 3) and parameters (N, 4) at the old-curve parameters ``ts``; None
        when Newton's method fails at one of them (surfaces that touch, not cross)."""
        x0, tan, w = self._start(np.asarray(ts, dtype=float))
        norm = np.linalg.norm(tan, axis=1)
        if np.any(norm < 1e-12):
            return None
        tan /= norm[:, None]
        ts = np.asarray(ts, dtype=float)
        return meet(self.s, x0, tan, w, (ts == self.t0) | (ts == self.t1))

    def knot_crossings(self, ts: np.ndarray, w: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """The old-curve parameters where the parameters ``w`` (N, 4) at ``ts`` cross a knot
        of that face's surface, refined by the Illinois method to 1e-12 of the range, and
        the multiplicity each needs in the fitted curve (:func:`_surface_knots`); a knot
        met at a sample (found from both sides of it) is given once, as that sample."""
        col, k, need, lo, hi = [], [], [], [], []
        for j in range(4):
            a, b = w[:-1, j], w[1:, j]
            for knot, mult in self.knots[j // 2][j % 2]:
                # a knot met exactly at a sample counts too (once a side: merged later)
                for i in np.nonzero((np.minimum(a, b) <= knot) & (knot <= np.maximum(a, b)))[0]:
                    col.append(j)
                    k.append(float(knot))
                    need.append(int(mult))
                    lo.append(float(ts[i]))
                    hi.append(float(ts[i + 1]))
        if not col:
            return np.zeros(0), np.zeros(0, dtype=int)
        gap = 1e-9 * (self.t1 - self.t0)
        found = self._illinois(np.array(col), np.array(k), np.array(lo), np.array(hi))
        if found is None:
            return np.zeros(0), np.zeros(0, dtype=int)
        t, mults = _apart(found, np.array(need), gap)
        return _snapped(t, ts, gap), mults

    def _illinois(
        self, col: np.ndarray, k: np.ndarray, a: np.ndarray, b: np.ndarray
    ) -> np.ndarray | None:
        rows = np.arange(len(col))
        ga, gb = self.solve(a), self.solve(b)
        if ga is None or gb is None:
            return None
        fa, fb = ga[1][rows, col] - k, gb[1][rows, col] - k
        for _ in range(60):
            same = fb == fa  # a row on its knot at both ends (both zero): it stays there
            c = np.where(same, b, (a * fb - b * fa) / np.where(same, 1.0, fb - fa))
            got = self.solve(c)
            if got is None:
                return None
            fc = got[1][rows, col] - k
            flip = fc * fb < 0
            a, fa = np.where(flip, b, a), np.where(flip, fb, 0.5 * fa)
            b, fb = c, fc
            if np.all((np.abs(fc) < 1e-12 * (1.0 + np.abs(k))) | (np.abs(b - a) < 1e-13)):
                break
        return b

    def fit(
        self,
        spans: int,
        crossings: tuple[np.ndarray, np.ndarray],
        dense: np.ndarray,
        along: np.ndarray,
    ) -> Fitted | None:
        """Curves of degree :data:`DEGREE` (:class:`Fitted`) on ``spans`` uniform spans
        with a knot at each crossing of the multiplicity it needs (``crossings``: sorted
        parameters, multiplicities), or None.
        ``dense``/``along``: old parameters (every crossing among them) and their chord
        parameter, used to place DEGREE + 5 samples in every knot span."""
        t0, t1 = self.t0, self.t1
        at, mults = crossings
        knots = _knot_vector(t0, t1, spans, along[np.isin(dense, at)], mults)
        inner = np.unique(knots)
        want = _spread(inner, DEGREE + 5)[:-1]
        ts = np.union1d(np.interp(want, along, dense), np.append(at, [t0, t1]))
        got = self.solve(ts)
        if got is None:
            return None
        s = chord_parameter(got[0], t0, t1)
        if s is None:
            return None
        knots = _knot_vector(t0, t1, spans, s[np.isin(ts, at)], mults)
        fits = _lsq_fits(knots, s, *got)
        if fits is None:
            return None
        curves = _bspline_curves(knots, fits)
        if curves is None:
            return None
        per_span = self._sampled_deviation(knots, fits)
        breaks = np.interp(np.unique(knots), s, ts)  # the knots on the old curve's parameter
        return Fitted(
            curves, float(per_span.max()), np.column_stack([breaks[:-1], breaks[1:], per_span])
        )

    def _sampled_deviation(self, knots: np.ndarray, fits: list[np.ndarray]) -> np.ndarray:
        """Largest distance (mm) in each knot span between the fitted 3D curve and each
        fitted surface curve mapped through its surface, at :data:`SAMPLES_PER_SPAN` points
        a span (both ends included)."""
        from scipy.interpolate import BSpline

        ts = _spread(np.unique(knots), SAMPLES_PER_SPAN)
        xyz = BSpline(knots, fits[0], DEGREE)(ts)
        far = np.max(
            [
                np.linalg.norm(s.points(BSpline(knots, c, DEGREE)(ts)) - xyz, axis=1)
                for s, c in zip(self.s, fits[1:], strict=True)
            ],
            axis=0,
        )
        n = SAMPLES_PER_SPAN
        return np.array([far[i * n : (i + 1) * n + 1].max() for i in range(len(ts) // n)])


def _spread(breaks: np.ndarray, n: int) -> np.ndarray:
    """``n`` evenly spaced values in each interval between the sorted ``breaks`` (its start
    included, its end not; as ``np.linspace(a, b, n + 1)[:-1]`` gives them), and the last
    break."""
    return np.append(np.linspace(breaks[:-1], breaks[1:], n + 1, axis=1)[:, :-1], breaks[-1])


def _apart(t: np.ndarray, mult: np.ndarray, gap: float) -> tuple[np.ndarray, np.ndarray]:
    """The values ``t`` sorted, with any closer than ``gap`` to the one kept before it
    dropped (a knot met at a sample is found from both sides of it), and each kept one's
    largest multiplicity ``mult`` among those it stands for."""
    order = np.argsort(t, kind="stable")
    keep: list[float] = []
    most: list[int] = []
    for x, m in zip(t[order], mult[order], strict=True):
        if keep and x - keep[-1] <= gap:
            most[-1] = max(most[-1], int(m))
        else:
            keep.append(float(x))
            most.append(int(m))
    return np.array(keep), np.array(most, dtype=int)


def _snapped(t: np.ndarray, to: np.ndarray, within: float) -> np.ndarray:
    """``t`` with each value within ``within`` of one of ``to`` replaced by it."""
    if not len(t):
        return t
    nearest = to[np.argmin(np.abs(t[:, None] - to[None, :]), axis=1)]
    return np.where(np.abs(nearest - t) <= within, nearest, t)


def _surface_knots(a: Any) -> tuple[np.ndarray, np.ndarray]:
    """A face surface's interior knots in u and in v (none for analytic surfaces), each
    (K, 2): the knot, and the multiplicity a curve fitted across it needs. Where the
    surface is C^c (degree minus the knot's multiplicity) the intersection curve is C^c
    too, so a knot of multiplicity DEGREE − c (at most DEGREE − 1: C¹) lets its fit follow;
    a knot where the surface is C^DEGREE or smoother is left out. Not its end knots: a
    surface curve along the surface's edge (an iso-line at its first or last knot) wanders
    across that knot by the Newton solve's rounding (±4e-9 on a mapped plug's 300 mm
    edge), and each such "crossing" would put a knot in the fit at random."""
    from OCP.GeomAbs import GeomAbs_BSplineCurve, GeomAbs_BSplineSurface
    from OCP.GeomAbs import GeomAbs_SurfaceOfExtrusion as Extrusion

    def needed(knots: list[float], mults: list[int], degree: int) -> np.ndarray:
        need = [min(DEGREE - (degree - m), DEGREE - 1) for m in mults]
        kept = [(k, n) for k, n in zip(knots, need, strict=True) if n > 0]
        return np.array(kept, dtype=float).reshape(-1, 2)

    none = np.zeros((0, 2))
    if a.GetType() == GeomAbs_BSplineSurface:
        b = a.BSpline()
        iu, iv = range(2, b.NbUKnots()), range(2, b.NbVKnots())
        return (
            needed([b.UKnot(i) for i in iu], [b.UMultiplicity(i) for i in iu], b.UDegree()),
            needed([b.VKnot(i) for i in iv], [b.VMultiplicity(i) for i in iv], b.VDegree()),
        )
    if a.GetType() == Extrusion and a.BasisCurve().GetType() == GeomAbs_BSplineCurve:
        b = a.BasisCurve().BSpline()
        ii = range(2, b.NbKnots())
        return needed([b.Knot(i) for i in ii], [b.Multiplicity(i) for i in ii], b.Degree()), none
    return none, none


def _knot_vector(
    t0: float, t1: float, spans: int, breaks: np.ndarray, mults: np.ndarray
) -> np.ndarray:
    """Clamped knot vector of degree :data:`DEGREE` on [t0, t1]: ``spans`` uniform spans,
    each of the sorted ``breaks`` a knot of its multiplicity in ``mults`` (uniform knots
    within a fifth of a span of a break dropped)."""
    h = (t1 - t0) / spans
    uni = np.linspace(t0, t1, spans + 1)[1:-1]
    inside = (t0 + 0.05 * h < breaks) & (breaks < t1 - 0.05 * h)
    br, m = _apart(breaks[inside], mults[inside], 0.0)
    if len(br) > 1:  # crossings a hair apart (two knots met at one point) are one break
        br, m = _apart(br, m, 1e-6 * (t1 - t0))
    if len(br):
        uni = np.array([u for u in uni if np.min(np.abs(br - u)) > 0.2 * h])
    inner = np.sort(np.concatenate([uni, np.repeat(br, m)]))
    return np.concatenate([[t0] * (DEGREE + 1), inner, [t1] * (DEGREE + 1)])


def _lsq_fits(
    knots: np.ndarray, ts: np.ndarray, pts: np.ndarray, w: np.ndarray
) -> list[np.ndarray] | None:
    """Poles of the 3D curve (n, 3) and both surface curves (n, 2) fitted by least squares
    to the points and both parameter paths at ``ts``, ends held exact; None when the fit
    fails."""
    from scipy.interpolate import make_lsq_spline

    ys = (pts, w[:, :2], w[:, 2:])
    try:
        fits = [np.array(make_lsq_spline(ts, y, knots, k=DEGREE).c) for y in ys]
    except (ValueError, np.linalg.LinAlgError):
        return None
    for c, y in zip(fits, ys, strict=True):
        c[0], c[-1] = y[0], y[-1]
    return fits


def _bspline_curves(knots: np.ndarray, fits: list[np.ndarray]) -> Any:
    """(Geom_BSplineCurve, Geom2d_BSplineCurve, Geom2d_BSplineCurve) with the poles
    ``fits`` (:func:`_lsq_fits`) on ``knots``; None when the kernel refuses them."""
    from OCP.Geom import Geom_BSplineCurve
    from OCP.Geom2d import Geom2d_BSplineCurve
    from OCP.gp import gp_Pnt, gp_Pnt2d
    from OCP.TColgp import TColgp_Array1OfPnt, TColgp_Array1OfPnt2d
    from OCP.TColStd import TColStd_Array1OfInteger, TColStd_Array1OfReal

    uk, um = np.unique(knots, return_counts=True)
    ka, ma = TColStd_Array1OfReal(1, len(uk)), TColStd_Array1OfInteger(1, len(uk))
    for i, (k, m) in enumerate(zip(uk, um, strict=True), start=1):
        ka.SetValue(i, float(k))
        ma.SetValue(i, int(m))
    n = len(fits[0])
    p3 = TColgp_Array1OfPnt(1, n)
    p2 = [TColgp_Array1OfPnt2d(1, n), TColgp_Array1OfPnt2d(1, n)]
    for i in range(n):
        p3.SetValue(i + 1, gp_Pnt(*(float(v) for v in fits[0][i])))
        for arr, c in zip(p2, fits[1:], strict=True):
            arr.SetValue(i + 1, gp_Pnt2d(float(c[i, 0]), float(c[i, 1])))
    try:
        return (
            Geom_BSplineCurve(p3, ka, ma, DEGREE),
            Geom2d_BSplineCurve(p2[0], ka, ma, DEGREE),
            Geom2d_BSplineCurve(p2[1], ka, ma, DEGREE),
        )
    except Exception:  # the kernel refuses the knots (kernel exceptions share no base class)
        return None
