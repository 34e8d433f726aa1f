"""Plan footprints (``ductgen.solids.footprint``): an offset that folds over itself is cut
at its crossing, checked against the closed form of a parabola's offset."""

from __future__ import annotations

import numpy as np
import pytest

pytest.importorskip("cadquery")

from ductgen.solids.footprint import untangled_runs


def test_a_folded_offset_is_cut_at_its_crossing() -> None:
    """The parabola y = x²/2 (radius of curvature 1 at its vertex, centre (0, 1)) offset
    toward its centre by d = 2 folds into a swallowtail; the two branches cross on the axis
    at y = (d² + 1)/2 = 2.5 (closed form: x - d·x/√(1 + x²) = 0 gives x² = d² - 1)."""
    x = np.linspace(-3.0, 3.0, 6001)
    d = 2.0
    nrm = np.column_stack([-x, np.ones_like(x)]) / np.sqrt(1.0 + x * x)[:, None]
    runs = untangled_runs(np.column_stack([x, x * x / 2.0]) + d * nrm)
    assert len(runs) == 2
    corner = runs[0][-1]
    assert runs[1][0] == pytest.approx(corner)
    assert corner == pytest.approx([0.0, 2.5], abs=1e-5)
    assert all(np.all(np.diff(r[:, 0]) > 0) for r in runs)  # the loop is gone
