"""The panel samples' pure helpers: the crease measure and the surface's continuation beyond
the file's edge, against closed forms."""

from __future__ import annotations

import numpy as np
import pytest

from ductgen.geometry.panel_samples import continue_surface, crease_angle


def test_a_plane_is_continued_exactly() -> None:
    # a plane's tangent plane is itself: the filled heights are the plane's (closed form)
    x, y = np.linspace(-20, 20, 21), np.linspace(-10, 10, 11)
    xx, yy = np.meshgrid(x, y, indexing="ij")
    plane = 3.0 + 0.2 * xx - 0.1 * yy
    h = plane.copy()
    h[:4, :] = np.nan  # the file ends: no samples upstream
    h[:, -2:] = np.nan
    got = continue_surface(x, y, h)
    assert np.allclose(got, plane, atol=1e-9)


def test_a_fold_reads_its_angle_only_where_asked() -> None:
    # a plate folded by 12 deg along x = 0: neighbouring normals 12 deg apart there
    x, y = np.linspace(-10, 10, 11), np.linspace(-5, 5, 6)
    a = np.radians(12.0)
    n = np.zeros((len(x), len(y), 3))
    n[x <= 0] = [0.0, 0.0, 1.0]
    n[x > 0] = [np.sin(a), 0.0, np.cos(a)]
    h = np.zeros((len(x), len(y)))
    worst, where = crease_angle(n, h)
    assert worst == pytest.approx(12.0) and x[where[0]] == 0.0
    # missing samples (beyond the file's edge: NaN, normal unset) are no crease
    h[x > 0] = np.nan
    n[x > 0] = 0.0
    assert crease_angle(n, h)[0] == 0.0
    # nor a fold outside the region the parts need
    h[:] = 0.0
    n[x > 0] = [np.sin(a), 0.0, np.cos(a)]
    assert crease_angle(n, h, np.outer(x < -2, np.ones(len(y), bool)))[0] == 0.0
