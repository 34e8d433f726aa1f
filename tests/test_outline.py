"""Plan offsets of an outline, against closed forms.

The outer parallel body of a convex figure of area A and perimeter P at distance d has area
A + P·d + π·d² (Steiner's formula); its boundary is the figure's sides moved out by d and a
circular arc of radius d about each corner.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from ductgen.geometry.outline import offset_outline, offset_runs, polygon_area, polyline_lengths

SIDE = 40.0  # mm


def _square(n: int = 5) -> list[tuple[np.ndarray, np.ndarray]]:
    """The CCW square [0, SIDE]² as four straight pieces of ``n`` points with their outward
    normals."""
    corners = np.array([[0.0, 0.0], [SIDE, 0.0], [SIDE, SIDE], [0.0, SIDE]])
    normals = np.array([[0.0, -1.0], [1.0, 0.0], [0.0, 1.0], [-1.0, 0.0]])
    t = np.linspace(0.0, 1.0, n)[:, None]
    return [
        (corners[i] + t * (corners[(i + 1) % 4] - corners[i]), np.tile(normals[i], (n, 1)))
        for i in range(4)
    ]


@pytest.mark.parametrize("d", [0.5, 2.0, 14.0])
def test_the_offset_square_has_steiners_area(d: float) -> None:
    # the polygonal arcs (3° steps) cut each corner's quarter circle short by its chords:
    # a circle as a regular 120-gon holds π·d²·sin(3°)/(3° in rad)
    area = SIDE**2 + 4 * SIDE * d + math.pi * d**2 * math.sin(math.radians(3)) / math.radians(3)
    assert polygon_area(offset_outline(_square(), d)) == pytest.approx(area, rel=1e-12)


@pytest.mark.parametrize("d", [0.5, 2.0, 14.0])
def test_the_runs_are_the_sides_and_the_corner_arcs_in_order(d: float) -> None:
    pieces = _square()
    runs = offset_runs(pieces, d)
    assert len(runs) == 8
    for i, run in enumerate(runs):
        assert np.allclose(run[-1], runs[(i + 1) % 8][0], atol=1e-12)  # a closed chain
        if i % 2:  # a corner's arc: radius d about the corner, a quarter turn
            corner = pieces[i // 2][0][-1]
            assert np.allclose(np.hypot(*(run - corner).T), d, atol=1e-12)
            assert polyline_lengths(run, closed=False)[-1] == pytest.approx(
                math.pi * d / 2, rel=2e-4
            )
        else:  # a side moved out by d, as long as the side
            assert polyline_lengths(run, closed=False)[-1] == pytest.approx(SIDE, abs=1e-12)
    # the runs, joined, are the offset outline's points
    chain = np.vstack([run[:-1] for run in runs])
    poly = offset_outline(pieces, d)
    assert chain.shape == poly.shape and np.allclose(chain, poly, rtol=0, atol=1e-12)
