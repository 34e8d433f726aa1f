"""``--vary`` parsing, grids and variant ids (no kernel work)."""

from __future__ import annotations

from pathlib import Path

import pytest

from ductgen.errors import SpecError
from ductgen.sweep.variants import make_variants, variant_id
from ductgen.sweep.vary import combinations, get_dotted, parse_vary, set_dotted

SPEC = """
name = "vary-test"
throat = { width = 100, depth = 25 }
ramp = { angle_deg = 7.0, entry_radius = 40 }
lip = { style = "flush", thickness = 4 }
"""


@pytest.fixture
def spec_file(tmp_path: Path) -> Path:
    p = tmp_path / "s.toml"
    p.write_text(SPEC)
    return p


def test_range_includes_end_on_a_step() -> None:
    assert parse_vary("ramp.angle_deg=5:7:1").values == (5, 6, 7)
    assert parse_vary("ramp.angle_deg=5:7.5:1").values == (5.0, 6.0, 7.0)  # 7.5 is not on a step
    assert parse_vary("ramp.angle_deg=0.1:0.3:0.1").values == (0.1, 0.2, 0.3)  # no float drift
    assert parse_vary("ramp.angle_deg=7:5:-1").values == (7, 6, 5)


def test_range_keeps_units_as_written() -> None:
    v = parse_vary("throat.width=100mm:140mm:10mm")
    assert v.values == ("100 mm", "110 mm", "120 mm", "130 mm", "140 mm")
    # a part without a unit takes the unit of the others
    assert parse_vary("throat.width=4in:5:0.5").values == ("4 in", "4.5 in", "5 in")
    # mixed units are converted to the first one: 10 cm to 120 mm in 1 cm steps
    assert parse_vary("throat.width=10cm:120mm:1cm").values == ("10 cm", "11 cm", "12 cm")


def test_lists() -> None:
    assert parse_vary("ramp.angle_deg=5,6.5,7").values == (5, 6.5, 7)
    assert parse_vary("lip.style=flush,raised").values == ("flush", "raised")
    assert parse_vary("throat.width=4 in,120mm").values == ("4 in", "120mm")


@pytest.mark.parametrize(
    "text",
    [
        "ramp.angle_deg=7:5:1",  # empty range
        "ramp.angle_deg=5:7:0",  # zero step
        "ramp.angle_deg=5:7",  # two parts
        "throat.width=100mm:4s:10mm",  # units of different kinds
        "throat.width=100mm:140mm:10furlongz",  # unknown unit
        "ramp.angle_deg",  # no values
        "ramp..angle=1,2",  # not a dotted key
        "ramp.angle_deg=5,,7",  # empty item
    ],
)
def test_bad_options_are_spec_errors(text: str) -> None:
    with pytest.raises(SpecError) as err:
        parse_vary(text)
    assert err.value.key == "--vary"


def test_grid_and_zip() -> None:
    a = parse_vary("ramp.angle_deg=5,6,7")
    b = parse_vary("throat.width=100,120")
    assert combinations([a, b]) == [(5, 100), (5, 120), (6, 100), (6, 120), (7, 100), (7, 120)]
    c = parse_vary("throat.depth=20,25,30")
    assert combinations([a, c], zip_values=True) == [(5, 20), (6, 25), (7, 30)]
    with pytest.raises(SpecError):
        combinations([a, b], zip_values=True)  # unequal lengths
    with pytest.raises(SpecError):
        combinations([a, parse_vary("ramp.angle_deg=1,2")])  # a key twice


def test_dotted_set_and_get() -> None:
    data = {"throat": {"width": 100}, "flow": {"losses": [{"kind": "hose", "length": "1 m"}]}}
    out = set_dotted(data, "flow.losses[0].length", "2 m")
    assert out["flow"]["losses"][0]["length"] == "2 m"
    assert data["flow"]["losses"][0]["length"] == "1 m"  # the original is untouched
    assert get_dotted(out, "flow.losses[0].length") == "2 m"
    with pytest.raises(SpecError):
        set_dotted(data, "throat.width.x", 1)


def test_variants_resolve_units_and_ids(spec_file: Path) -> None:
    vs = make_variants(spec_file, [parse_vary("throat.width=4in:5in:1in")])
    assert [v.id for v in vs] == ["throat.width=4in", "throat.width=5in"]
    # 1 in = 25.4 mm exactly (international inch)
    assert [v.spec.throat.width for v in vs] == pytest.approx([101.6, 127.0], rel=1e-12)
    assert [v.resolved["throat.width"] for v in vs] == pytest.approx([101.6, 127.0], rel=1e-12)
    assert (
        variant_id({"ramp.angle_deg": 7.0, "lip.style": "raised"})
        == "ramp.angle_deg=7,lip.style=raised"
    )


@pytest.mark.parametrize(
    ("text", "key"),
    [
        ("ramp.angel_deg=5:7:1", "ramp.angel_deg"),  # unknown key (typo)
        ("throat.width=5s:7s:1s", "throat.width"),  # wrong dimension for a length
        ("ramp.angle_deg=5,40", "ramp.angle_deg"),  # one variant out of range
        ("ramp.entry_radius=40,5000", "ramp.entry_radius"),  # cross-field rule (arc > drop)
    ],
)
def test_invalid_variants_are_found_before_building(spec_file: Path, text: str, key: str) -> None:
    with pytest.raises(SpecError) as err:
        make_variants(spec_file, [parse_vary(text)])
    assert err.value.key == key
    assert "variant" in str(err.value)


def test_grid_variant_ids(spec_file: Path) -> None:
    vs = make_variants(
        spec_file, [parse_vary("ramp.angle_deg=6,7"), parse_vary("throat.width=100mm,4in")]
    )
    assert [v.id for v in vs] == [
        "ramp.angle_deg=6,throat.width=100mm",
        "ramp.angle_deg=6,throat.width=4in",
        "ramp.angle_deg=7,throat.width=100mm",
        "ramp.angle_deg=7,throat.width=4in",
    ]
    assert [v.spec.ramp.angle_deg for v in vs] == [6, 6, 7, 7]
