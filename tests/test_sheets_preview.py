"""The shaded preview (:mod:`ductgen.sheets.preview`).

The preview picture frames the part: an empty border of a few per cent on every side and
the part filling the picture.

Background model: the preview's vertical gradient, estimated from the picture's top and
bottom rows (median colour); a pixel more than 10/255 away from it is the part. The 3 %
minimum border and 80 % fill are common practice for product pictures (no source).
"""

from __future__ import annotations

import io

import numpy as np
import pytest

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

    from ductgen.render import render_png

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
