"""The skin round a part in the preview (:mod:`ductgen.sheets.skin_patch`): the part's
cut-out is cut exactly, not by whole grid cells.

Independent check: the patch's triangles, summed, cover the rectangle less the hole, whose
area is the shoelace area of the hole's own outline (closed form); on a cylinder curving
along the flow the skin develops without stretching (a cylinder is developable), so the
mapped triangles' area is the same to the chords' sag. A cut made of whole 4 mm cells (what
the preview did, and what left saw-teeth along the opening) misses it by tens of mm².
"""

from __future__ import annotations

import numpy as np
import pytest

from ductgen.design import build_design
from ductgen.geometry.skin import CurvedSkin, FlatSkin
from ductgen.sheets.skin_patch import curved_panel, patch_marks
from ductgen.spec import parse_spec


def _shoelace(p: np.ndarray) -> float:
    x, y = p[:, 0], p[:, 1]
    return 0.5 * abs(float(np.dot(x, np.roll(y, -1)) - np.dot(y, np.roll(x, -1))))


def _area(xyz: np.ndarray, faces: np.ndarray) -> float:
    a, b, c = (xyz[faces[:, i]] for i in range(3))
    return 0.5 * float(np.linalg.norm(np.cross(b - a, c - a), axis=1).sum())


@pytest.fixture(scope="module")
def design():  # type: ignore[no-untyped-def]
    return build_design(parse_spec({"name": "p", "throat": {"width": 80, "depth": 20}}))


@pytest.mark.parametrize("skin", [FlatSkin(), CurvedSkin(1.0 / 900.0, 0.0)], ids=["flat", "cyl"])
def test_patch_cut_out_is_the_outline(design, skin) -> None:  # type: ignore[no-untyped-def]
    around, hole = design.plug_trim_xy, design.layout.opening_xy
    xyz, faces = curved_panel(skin, around, hole)
    lo, hi = around.min(axis=0) - 20.0, around.max(axis=0) + 20.0
    want = float(np.prod(hi - lo)) - _shoelace(hole)
    assert _area(xyz, faces) == pytest.approx(want, rel=2e-5)
    # every point lies on the skin's outer surface (w = 0): on the cylinder, at R from its axis
    if isinstance(skin, CurvedSkin):
        r = 1.0 / skin.k_stream
        assert np.allclose(np.hypot(xyz[:, 0], xyz[:, 2] + r), r, atol=1e-9)


def test_marks_sit_on_the_skin(design) -> None:  # type: ignore[no-untyped-def]
    """The datum is the design origin on the skin; the flow arrow points downstream along it,
    clear of the opening; the cut edge is the hole's outline."""
    skin = CurvedSkin(1.0 / 900.0, 0.0)
    g = design.geometry
    m = patch_marks(skin, design.plug_trim_xy, design.layout.opening_xy, g.length_mm, g.width_mm)
    assert np.allclose(m["datum"], 0.0, atol=1e-12)
    assert np.allclose(m["normal"], (0.0, 0.0, 1.0), atol=1e-12)
    tail, head = m["arrow"]
    assert head[0] > tail[0] and abs(head[1] - tail[1]) < 1e-9
    assert tail[1] > 0.5 * g.width_mm  # beside the opening, not over it
    cut = m["lines"][1]
    r = 900.0
    assert np.allclose(np.hypot(cut[:, 0], cut[:, 2] + r), r + 0.05, atol=1e-9)


def test_whole_patch_faces_point_out_of_the_skin(design) -> None:  # type: ignore[no-untyped-def]
    """The patch a curved cutter is clipped by (no cut-out): every triangle's normal points
    away from the cylinder's axis (outward, by the cylinder's own geometry), so what the
    clip keeps is inside the skin."""
    r = 900.0
    xyz, faces = curved_panel(CurvedSkin(1.0 / r, 0.0), design.plug_trim_xy, None)
    a, b, c = (xyz[faces[:, i]] for i in range(3))
    n = np.cross(b - a, c - a)
    centre = (a + b + c) / 3.0
    radial = centre - np.column_stack(
        [np.zeros(len(centre)), centre[:, 1], np.full(len(centre), -r)]
    )
    assert np.all(np.einsum("ij,ij->i", n, radial) > 0)
    assert len(faces) > 100
