"""The shaded preview (:mod:`ductgen.sheets.preview`).

The preview picture frames the part: an empty border of a few per cent on every side and
the part filling the picture.

Background model: the preview's vertical gradient, estimated from the picture's top and
bottom rows (median colour); a pixel more than 10/255 away from it is the part. The 3 %
minimum border and 80 % fill are common practice for product pictures (no source).

The skin patch: the part's cut-out is cut exactly, not by whole grid cells.

Independent check: the patch's triangles, summed, cover the rectangle less the hole, whose
area is the shoelace area of the hole's own outline (closed form); on a cylinder curving
along the flow the skin develops without stretching (a cylinder is developable), so the
mapped triangles' area is the same to the chords' sag. A cut made of whole 4 mm cells (what
the preview did, and what left saw-teeth along the opening) misses it by tens of mm².
"""

from __future__ import annotations

import io

import numpy as np
import pytest

from ductgen.design import build_design
from ductgen.geometry.skin import CurvedSkin, FlatSkin
from ductgen.sheets.preview import curved_panel, patch_marks
from ductgen.spec import parse_spec
from tests.conftest import sample_ids


def _border(png: bytes) -> tuple[float, float, float, float]:
    """Free border (left, right, top, bottom) as fractions of width / height."""
    from PIL import Image

    img = np.asarray(Image.open(io.BytesIO(png)).convert("RGB")).astype(int)
    h, w = img.shape[:2]
    top, bottom = np.median(img[0], axis=0), np.median(img[-1], axis=0)
    bg = top + (bottom - top) * (np.arange(h)[:, None, None] / (h - 1))
    ink = np.any(np.abs(img - bg) > 10, axis=2)
    rows, cols = np.nonzero(ink.any(axis=1))[0], np.nonzero(ink.any(axis=0))[0]
    assert len(rows) and len(cols), "blank picture"
    return cols[0] / w, (w - 1 - cols[-1]) / w, rows[0] / h, (h - 1 - rows[-1]) / h


def _check(png: bytes) -> None:
    left, right, top, bottom = _border(png)
    assert min(left, right, top, bottom) >= 0.03, (left, right, top, bottom)
    assert max(1 - left - right, 1 - top - bottom) >= 0.80, (left, right, top, bottom)


@pytest.mark.parametrize("size", [(300, 80, 40), (60, 60, 120), (500, 40, 10)])
def test_render_frames_a_box(size: tuple[float, float, float]) -> None:
    import trimesh

    from ductgen.sheets.preview import render_png

    box = trimesh.creation.box(size)
    box.apply_translation((size[0] / 2, 0.0, -size[2] / 2))
    _check(render_png(box.vertices, box.faces))


@pytest.mark.slow
@pytest.mark.parametrize("name", sample_ids())
def test_sample_preview_is_framed(sample_builds: dict, name: str) -> None:
    _, folder = sample_builds[name]
    _check((folder / f"{name}-preview.png").read_bytes())


def test_border_measure_sees_a_part_at_the_edge() -> None:
    """The measure can fail: a picture whose part touches the left edge has no left border."""
    from PIL import Image

    img = np.full((100, 160, 3), 255, dtype=np.uint8)
    img[30:70, 0:90] = (120, 90, 40)
    buf = io.BytesIO()
    Image.fromarray(img).save(buf, format="PNG")
    assert _border(buf.getvalue())[0] == 0.0


# --- the skin patch: its cut-out and marks ---------------------------------------------


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
