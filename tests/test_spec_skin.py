"""``[skin]`` as a tagged union (ductgen/spec/model.py): one model per ``skin.shape`` with
only its own keys, flat when the table gives no shape, and every per-shape table of the
package total over the shapes."""

from __future__ import annotations

import typing
from pathlib import Path

import pytest

from ductgen.design.record import SkinRecord, TemplateRecord
from ductgen.errors import SpecError
from ductgen.sheets import SKIN_LINES, skin_lines
from ductgen.spec import load_spec, parse_spec
from ductgen.spec.model import (
    SKIN_SHAPES,
    CylinderSkinSpec,
    DoublySkinSpec,
    FlatSkinSpec,
    PanelSkinSpec,
    SkinSpec,
)

ROOT = Path(__file__).resolve().parents[1]
BASE = {"name": "t", "throat": {"width": 100, "depth": 25}}


def _skin(skin: dict) -> object:
    return parse_spec({**BASE, "skin": skin}).skin


def test_the_union_has_one_model_per_shape() -> None:
    members = typing.get_args(typing.get_args(SkinSpec)[0])
    assert {m.model_fields["shape"].default: m for m in members} == SKIN_SHAPES
    assert set(SKIN_SHAPES) == {"flat", "cylinder", "doubly", "panel"}


def test_a_skin_without_shape_is_flat_as_before() -> None:
    assert _skin({"thickness": 3}) == FlatSkinSpec(thickness=3.0)
    assert parse_spec(BASE).skin == FlatSkinSpec()


@pytest.mark.parametrize(
    ("skin", "model"),
    [
        ({"shape": "cylinder", "radius": "2 m", "axis": "streamwise"}, CylinderSkinSpec),
        ({"shape": "doubly", "radius_streamwise": 900, "radius_spanwise": 700}, DoublySkinSpec),
        (
            {"shape": "panel", "file": "p.step", "at": [1, 2, "3 in"], "flow_direction": [1, 0, 0]},
            PanelSkinSpec,
        ),
    ],
)
def test_each_shape_reads_its_own_keys(skin: dict, model: type) -> None:
    got = _skin(skin)
    assert type(got) is model
    if model is CylinderSkinSpec:
        assert got.radius == 2000.0 and got.side == "convex"  # type: ignore[attr-defined]
    if model is PanelSkinSpec:
        assert got.at == (1.0, 2.0, 76.2)  # type: ignore[attr-defined]


@pytest.mark.parametrize(
    ("skin", "key", "words"),
    [
        ({"radius": 500}, "skin.radius", "not a key of a flat skin"),
        ({"shape": "flat", "side": "concave"}, "skin.side", "not a key of a flat skin"),
        (
            {"shape": "cylinder", "radius": 500, "axis": "spanwise", "radius_spanwise": 9},
            "skin.radius_spanwise",
            "not a key of a cylinder skin",
        ),
        ({"shape": "cylinder", "axis": "spanwise"}, "skin.radius", "a cylinder skin needs it"),
        ({"shape": "doubly", "radius_streamwise": 900}, "skin.radius_spanwise", "needs"),
        ({"shape": "panel", "file": "p.step", "at": [0, 0, 0]}, "skin.flow_direction", "needs"),
        ({"shape": "cyl"}, "skin", "shape one of 'flat', 'cylinder', 'doubly', 'panel'"),
        ({"shape": "cylinder", "radius": 500, "axis": "sideways"}, "skin.axis", "'spanwise'"),
    ],
)
def test_a_key_of_another_shape_or_a_missing_key_is_named(skin: dict, key: str, words: str) -> None:
    with pytest.raises(SpecError) as err:
        _skin(skin)
    assert key in {p.key for p in err.value.problems}, str(err.value)
    assert words in str(err.value)


@pytest.mark.parametrize("path", sorted((ROOT / "samples").glob("*.toml")), ids=lambda p: p.stem)
def test_every_sample_loads_unchanged(path: Path) -> None:
    spec = load_spec(path)
    assert spec.skin.shape in SKIN_SHAPES


#: A report's ``geometry.skin`` for each shape, as ``design/skin.py`` and ``design/panel.py``
#: write them (the fields the sheet reads).
_SUMMARIES = {
    "flat": {"shape": "flat", "thickness_mm": 2.0},
    "cylinder": {"shape": "cylinder", "radius_mm": 900.0, "side": "convex", "axis": "spanwise"},
    "doubly": {
        "shape": "doubly",
        "radius_streamwise_mm": 900.0,
        "radius_spanwise_mm": 700.0,
        "side": "concave",
    },
    "panel": {
        "shape": "panel",
        "file": "bonnet.step",
        "smallest_radius_mm": 640.0,
        "smallest_radius_side": "convex",
        "datum_mm": [1.0, 2.0, 3.0],
        "flow_direction": [1.0, 0.0, 0.0],
        "outward": [0.0, 0.0, 1.0],
    },
}


def test_the_sheet_has_lines_for_every_shape() -> None:
    """A new shape without its sheet lines fails here, not in a user's build."""
    assert set(SKIN_LINES) == set(SKIN_SHAPES) == set(_SUMMARIES)
    tpl = TemplateRecord("least-distortion (LSCM + ARAP)", 0.4)
    skins = {s: SkinRecord.of_section(_SUMMARIES[s]) for s in _SUMMARIES}
    assert skin_lines(skins["flat"], tpl) == ()
    lines = {s: dict(skin_lines(skins[s], tpl)) for s in ("cylinder", "doubly", "panel")}
    assert lines["cylinder"]["skin"] == "cylinder R 900 mm, convex, axis spanwise"
    assert lines["doubly"]["skin"] == "doubly R 900 (along) / 700 (across) mm, concave"
    assert lines["panel"]["smallest radius"] == "640 mm, convex"
    assert lines["doubly"]["template"] == "flattened, 0.40 % max"
