"""Laying edges on their faces (``solids/tighten.py``, ``solids/deviation.py``,
``solids/intersection.py``): the deviation an edge is measured by, the knots a fitted curve
needs where it crosses a surface's knots, and which rebuilt edges are kept; against closed
forms and B-spline theory."""

from __future__ import annotations

import numpy as np
import pytest

pytest.importorskip("cadquery")


def _box_edge_moved(offset: float):  # type: ignore[no-untyped-def]
    """A 10 mm cube's edge along x at y = z = 0 with its 3D curve moved by ``offset`` mm
    along +y (its surface curves on the faces y = 0 and z = 0 left where they were): edge,
    its two faces."""
    import cadquery as cq
    from OCP.BRep import BRep_Builder
    from OCP.Geom import Geom_Line
    from OCP.gp import gp_Dir, gp_Pnt

    box = cq.Solid.makeBox(10, 10, 10)
    edge = next(e for e in box.Edges() if e.Center().toTuple() == pytest.approx((5.0, 0.0, 0.0)))
    faces = [f for f in box.Faces() if any(e.isSame(edge) for e in f.Edges())]
    line = Geom_Line(gp_Pnt(0.0, offset, 0.0), gp_Dir(1.0, 0.0, 0.0))
    BRep_Builder().UpdateEdge(edge.wrapped, line, 1e-7)
    return edge.wrapped, [f.wrapped for f in faces]


def test_an_edges_deviation_is_the_offset_of_its_curve_and_kept_when_it_changes() -> None:
    """An edge whose 3D curve runs 1e-4 mm beside both its faces' surface curves (a line
    moved off the cube's edge): the sampled lower bound and the kernel's measure are both
    the offset (closed form: the distance between two parallel lines), and the measure is
    of the curves the edge had when it was taken, though the edge is changed after."""
    from OCP.BRep import BRep_Builder
    from OCP.Geom import Geom_Line
    from OCP.gp import gp_Dir, gp_Pnt

    from ductgen.solids.deviation import Deviation, curve_on_face_deviation

    e, faces = _box_edge_moved(1e-4)
    dev = Deviation(e, faces)
    assert dev.lower == pytest.approx(1e-4, rel=1e-9)
    assert dev.above(5e-5) and not dev.above(2e-4)
    BRep_Builder().UpdateEdge(e, Geom_Line(gp_Pnt(0, 3e-4, 0), gp_Dir(1, 0, 0)), 1e-7)
    assert max(curve_on_face_deviation(e, f) for f in faces) == pytest.approx(3e-4, rel=1e-6)
    assert dev.exact() == pytest.approx(1e-4, rel=1e-6)  # the edge as it was
    assert Deviation.known(2e-8).above(1e-8) and not Deviation.known(2e-8).above(2e-8)


def _bspline_surface(degree_u: int, inner_mults: list[int]):  # type: ignore[no-untyped-def]
    """A B-spline surface of degree ``degree_u`` in u (bilinear-flat in v) over
    0 ≤ u ≤ 10 with interior knots 2.5, 5, 7.5 of the multiplicities ``inner_mults``: its
    adaptor."""
    from OCP.BRepAdaptor import BRepAdaptor_Surface
    from OCP.BRepBuilderAPI import BRepBuilderAPI_MakeFace
    from OCP.Geom import Geom_BSplineSurface
    from OCP.gp import gp_Pnt
    from OCP.TColgp import TColgp_Array2OfPnt
    from OCP.TColStd import TColStd_Array1OfInteger, TColStd_Array1OfReal

    uk = [0.0, 2.5, 5.0, 7.5, 10.0]
    um = [degree_u + 1, *inner_mults, degree_u + 1]
    n = sum(um) - degree_u - 1
    poles = TColgp_Array2OfPnt(1, n, 1, 2)
    for i in range(1, n + 1):
        for j in (1, 2):
            poles.SetValue(i, j, gp_Pnt(10.0 * (i - 1) / (n - 1), 10.0 * (j - 1), np.sin(i)))
    ka, ma = TColStd_Array1OfReal(1, 5), TColStd_Array1OfInteger(1, 5)
    for i, (k, m) in enumerate(zip(uk, um, strict=True), start=1):
        ka.SetValue(i, k)
        ma.SetValue(i, m)
    vk, vm = TColStd_Array1OfReal(1, 2), TColStd_Array1OfInteger(1, 2)
    for i, k in enumerate((0.0, 10.0), start=1):
        vk.SetValue(i, k)
        vm.SetValue(i, 2)
    s = Geom_BSplineSurface(poles, ka, vk, ma, vm, degree_u, 1)
    return BRepAdaptor_Surface(BRepBuilderAPI_MakeFace(s, 1e-7).Face())


def test_a_fitted_curve_gets_the_knot_the_surface_continuity_needs() -> None:
    """A knot of multiplicity m in a degree-p B-spline leaves it C^(p−m) there (de Boor, A
    Practical Guide to Splines, ch. IX), and so is a curve on it: the quintic fitted across
    it needs a knot of multiplicity 5 − (p − m), at most 4 (C¹, as before for every knot),
    and none where the surface is C⁵ or smoother. Cubic simple knots: 3; a cubic double
    knot: 4; a cubic triple knot (C⁰): 4; degree 9, simple: none; quintic knots of
    multiplicities 2, 1, 3: 2, 1, 3."""
    from ductgen.solids.intersection import _surface_knots

    u, v = _surface_knots(_bspline_surface(3, [1, 2, 3]))
    assert u.tolist() == [[2.5, 3.0], [5.0, 4.0], [7.5, 4.0]]
    assert v.shape == (0, 2)  # v has no interior knot
    assert _surface_knots(_bspline_surface(9, [1, 1, 1]))[0].shape == (0, 2)
    quintic = _surface_knots(_bspline_surface(5, [2, 1, 3]))[0].tolist()
    assert quintic == [[2.5, 2.0], [5.0, 1.0], [7.5, 3.0]]  # C³, C⁴, C²


def test_knot_vector_breaks_take_their_multiplicities() -> None:
    """Breaks a hair apart are one, with the larger multiplicity; uniform knots within a
    fifth of a span of a break are dropped (2.5 and 5.0 of 2.5 mm spans, beside breaks at 3.0
    and 5.2); the vector is clamped at degree 5."""
    from ductgen.solids.intersection import DEGREE, _knot_vector

    k = _knot_vector(0.0, 10.0, 4, np.array([3.0, 3.0 + 1e-9, 5.2]), np.array([3, 4, 2]))
    inner = k[DEGREE + 1 : -(DEGREE + 1)]
    assert inner.tolist() == [3.0, 3.0, 3.0, 3.0, 5.2, 5.2, 7.5]
    assert k[: DEGREE + 1].tolist() == [0.0] * 6 and k[-(DEGREE + 1) :].tolist() == [10.0] * 6


class _Face:
    def IsSame(self, other: object) -> bool:  # the kernel's name
        return other is self


def test_a_face_that_fails_gets_its_edges_back_one_at_a_time() -> None:
    """Three rebuilt edges on faces A-B, B-C and C-D, where face B fails its check only
    while both its new edges are on (their surface curves cross): the first is kept, the
    second put back as it was, the third (faces that pass) kept without a second look."""
    from ductgen.solids.tighten import _kept_where_valid, _Rebuilt

    a, b, c, d = (_Face() for _ in range(4))
    state = {1: "new", 2: "new", 3: "new"}
    checked: list[object] = []

    def setter(k: int, to: str):  # type: ignore[no-untyped-def]
        return lambda: state.__setitem__(k, to)

    def valid(f: object) -> bool:
        checked.append(f)
        return f is not b or not (state[1] == state[2] == "new")

    rebuilt = [
        _Rebuilt([a, b], setter(1, "old"), setter(1, "new")),
        _Rebuilt([b, c], setter(2, "old"), setter(2, "new")),
        _Rebuilt([c, d], setter(3, "old"), setter(3, "new")),
    ]
    assert _kept_where_valid(rebuilt, valid) == 2
    assert state == {1: "new", 2: "old", 3: "new"}
    assert checked[:4] == [a, b, c, d]  # each face once, then B's edges one at a time


def test_a_fit_reports_each_span_and_new_knots_join_the_breaks() -> None:
    """A fit of the intersection of a curved B-spline face with a plane (the fitted curves'
    sampled deviation, :class:`~ductgen.solids.intersection.Fitted`) gives each knot span
    on the old curve's parameter, end to end over the edge, and its largest deviation,
    whose maximum is the fit's; the spans that miss the goal get a simple knot at their
    middle among the fit's breaks (the crossings keep their multiplicities), and the
    intersection is solved there before the refit."""
    import cadquery as cq

    from ductgen.solids.intersection import EdgeIntersection
    from ductgen.solids.tighten import _Samples, _with_breaks

    wave = cq.Face(_bspline_surface(3, [1, 1, 1]).Face())
    cut = cq.Solid.makeBox(12, 4, 4, cq.Vector(-1, 3, -2)).intersect(
        cq.Solid.extrudeLinear(wave, cq.Vector(0, 0, -3))
    )
    assert cut.isValid()
    edge = max(
        (e for e in cut.Edges() if abs(e.Center().y - 3.0) < 1e-9 and e.geomType() != "LINE"),
        key=lambda e: e.Length(),
    )
    faces = [f for f in cut.Faces() if any(e.isSame(edge) for e in f.Edges())]
    x = EdgeIntersection(edge.wrapped, [f.wrapped for f in faces])
    dense = np.linspace(x.t0, x.t1, 65)
    got = x.solve(dense)
    assert got is not None
    samples = _Samples(x, dense, got[0])
    assert samples.add(np.zeros(0)) and np.array_equal(samples.t, dense)
    crossings = x.knot_crossings(dense, got[1])
    fitted = x.fit(8, crossings, samples.t, samples.along)
    assert fitted is not None
    spans = fitted.spans
    assert spans[0, 0] == pytest.approx(x.t0, abs=1e-12)
    assert spans[-1, 1] == pytest.approx(x.t1, abs=1e-12)
    assert np.allclose(spans[1:, 0], spans[:-1, 1], rtol=0, atol=1e-12)
    assert fitted.deviation == spans[:, 2].max()
    mids = 0.5 * (spans[:2, 0] + spans[:2, 1])
    assert samples.add(mids) and np.all(np.isin(mids, samples.t))
    assert np.all(np.diff(samples.t) > 0) and len(samples.along) == len(samples.t)
    old = (np.array([1.0, 3.0]), np.array([3, 2]))
    at, mults = _with_breaks(old, np.array([2.0, 0.5, 3.0]))  # 3.0 is a break already
    assert at.tolist() == [0.5, 1.0, 2.0, 3.0] and mults.tolist() == [1, 3, 1, 2]
