"""The CFD floor past the panel file's edge and behind the outlet on a convex skin
(:mod:`ductgen.cfd.floor_fill`), against closed forms.

Independent checks: a circular cylinder x² + (z + R)² = R² (R = 2 m, tangent to z = 0 at
the origin) sampled on a grid. Its Taylor series z = −x²/(2R) − x⁴/(8R³) − … bounds how far a
quadratic continuation fitted inside |x| ≤ a may leave the cylinder at |x| ≤ b: by the
first neglected term, b⁴/(8R³), plus what the fit's least squares shift inside (of the
order of a⁴/(8R³)). The tangent line of the circle at x_f, z = z(x_f) + z′(x_f)·(x − x_f)
with z′ = −x_f / (z(x_f) + R), is the closed form of the faired floor.
"""

from __future__ import annotations

import numpy as np
import pytest

from ductgen.cfd.floor_fill import continue_panel, fair_downstream

R = 2000.0  # mm


def _circle(x: np.ndarray) -> np.ndarray:
    return np.sqrt(R * R - x * x) - R


def test_panel_continued_past_its_edge_stays_on_the_cylinder() -> None:
    x = np.linspace(-300.0, 300.0, 61)
    y = np.linspace(-150.0, 150.0, 31)
    xx, _ = np.meshgrid(x, y, indexing="ij")
    exact = _circle(xx)
    a = 100.0  # the panel file covers |x| <= a, |y| <= 60
    inside = (np.abs(xx) <= a) & (np.abs(np.meshgrid(x, y, indexing="ij")[1]) <= 60.0)
    h = np.where(inside, exact, np.nan)
    filled, reach = continue_panel(x, y, h)
    assert np.array_equal(filled[inside], exact[inside])  # the panel itself is kept
    assert not np.isnan(filled).any()
    # farthest filled point: (300, 150) from the panel's corner (100, 60)
    assert reach == pytest.approx(np.hypot(200.0, 90.0))
    b = 300.0
    bound = (b**4 + a**4) / (8 * R**3)
    assert np.max(np.abs(filled - exact)) < bound
    # it carries the curvature on: a tangent-plane continuation would be off by b²/(2R)
    # (22 mm) at the end
    assert bound < 0.01 * b * b / (2 * R)


def test_the_fill_meets_the_panel_without_a_step() -> None:
    """A panel that is no quadratic (a cylinder with a 2 mm bump) still meets its
    continuation without a step: across the edge, neighbouring points 10 mm apart differ
    by less than twice the most that neighbours inside the panel do (the continuation's
    slope at the edge is the fitted quadratic's plus the carried residual's, not the
    bump's, so only a kink is left). Carrying the edge value on unsmoothed, or the bare
    quadratic, would leave steps up to the fit's residual there (about 1 mm)."""
    x = np.linspace(-300.0, 300.0, 61)
    y = np.linspace(-150.0, 150.0, 31)
    xx, yy = np.meshgrid(x, y, indexing="ij")
    exact = _circle(xx) + 2.0 * np.exp(-((xx / 60.0) ** 2 + (yy / 40.0) ** 2))
    inside = (np.abs(xx) <= 100.0) & (np.abs(yy) <= 60.0)
    filled, _ = continue_panel(x, y, np.where(inside, exact, np.nan))
    step_in = np.max(np.abs(np.diff(exact, axis=0)[inside[:-1] & inside[1:]]))
    edge = inside[:-1] != inside[1:]
    step_edge = np.max(np.abs(np.diff(filled, axis=0)[edge]))
    assert step_edge < 2.0 * step_in
    bare = np.max(
        np.abs(np.diff(np.where(inside, exact, _quad(x, y, exact, inside)), axis=0)[edge])
    )
    assert step_edge < bare


def _quad(x: np.ndarray, y: np.ndarray, h: np.ndarray, inside: np.ndarray) -> np.ndarray:
    """The least-squares quadratic of ``h`` over ``inside``, everywhere (numpy's polyfit
    in two variables, written out)."""
    xx, yy = np.meshgrid(x, y, indexing="ij")
    basis = np.stack([np.ones_like(xx), xx, yy, xx * xx, xx * yy, yy * yy], axis=-1)
    coef, *_ = np.linalg.lstsq(basis[inside], h[inside], rcond=None)
    out: np.ndarray = basis @ coef
    return out


def test_a_full_panel_is_left_alone_and_a_bare_one_refused() -> None:
    x = np.linspace(0.0, 50.0, 6)
    h = np.zeros((6, 6))
    out, reach = continue_panel(x, x, h)
    assert out is h and reach == 0.0
    with pytest.raises(ValueError, match="fewer than six"):
        continue_panel(x, x, np.full((6, 6), np.nan))


def test_the_floor_behind_the_outlet_runs_on_along_the_tangent() -> None:
    u = np.linspace(-100.0, 800.0, 91)  # rows along the flow, 10 mm apart
    v = np.linspace(-50.0, 50.0, 5)
    uu, vv = np.meshgrid(u, v, indexing="ij")
    pts = np.column_stack([uu.ravel(), vv.ravel(), _circle(uu).ravel()])
    faired, x_f = fair_downstream(pts, (len(u), len(v)), 395.0)
    assert x_f == pytest.approx(400.0)
    before = pts[:, 0] <= x_f + 1e-9
    assert np.array_equal(faired[before], pts[before])
    after = faired[~before]
    z_f = _circle(np.array(x_f))
    slope = -x_f / (z_f + R)
    tangent = z_f + slope * (after[:, 0] - x_f)
    # the backward difference's error on a circle of radius R, 10 mm steps: ~h²·z‴/3
    # (5e-8 in slope), 400 mm on: well under 0.01 mm
    assert np.max(np.abs(after[:, 2] - tangent)) < 0.01
    assert np.all(after[:, 2] > _circle(after[:, 0]))  # above the convex skin it replaces


def test_no_row_to_fair_from_leaves_the_floor_alone() -> None:
    pts = np.zeros((4 * 3, 3))
    pts[:, 0] = np.repeat(np.arange(4.0), 3)
    out, x_f = fair_downstream(pts, (4, 3), 10.0)
    assert x_f is None and np.array_equal(out, pts)
