"""Spec loading: units, strictness, errors that name the key."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from ductgen.errors import SpecError
from ductgen.spec import load_spec, parse_spec
from ductgen.spec.schema import SCHEMA_PATH, schema_text

BASE = {"throat": {"width": 100, "depth": 25}}


def test_units_are_converted_once_at_load() -> None:
    s = parse_spec(
        {"throat": {"width": "4.5 in", "depth": "3 cm"}, "ramp": {"entry_radius": "0.1 m"}}
    )
    assert s.throat.width == pytest.approx(114.3)  # 4.5 in = 114.3 mm exactly (1 in = 25.4 mm)
    assert s.throat.depth == pytest.approx(30.0)
    assert s.ramp.entry_radius == pytest.approx(100.0)


def test_bare_numbers_are_mm_for_geometry() -> None:
    assert parse_spec(BASE).throat.width == 100.0


def test_speed_needs_a_unit() -> None:
    with pytest.raises(SpecError) as err:
        parse_spec({**BASE, "flow": {"speed": 50, "run_length": "1 m"}})
    assert err.value.key == "flow.speed"
    assert "unit" in err.value.reason


def test_spec_is_frozen() -> None:
    s = parse_spec(BASE)
    from pydantic import ValidationError

    with pytest.raises(ValidationError):
        s.throat.width = 3.0  # type: ignore[misc]


@pytest.mark.parametrize(
    ("data", "key", "words"),
    [
        ({"throat": {"width": 0, "depth": 25}}, "throat.width", ">= 5 mm"),
        ({"throat": {"width": 100, "depth": -3}}, "throat.depth", ">= 2 mm"),
        ({"throat": {"widht": 100, "depth": 25}}, "throat.widht", "did you mean 'width'"),
        ({**BASE, "ramp": {"angle_deg": 7, "length": 200}}, "ramp", "not both"),
        ({"throat": {"width": "12 kg", "depth": 25}}, "throat.width", "not a length"),
        ({**BASE, "lip": {"style": "proud"}}, "lip.style", "'flush'"),
        ({**BASE, "outlet": {"kind": "hex"}}, "outlet", "kind one of"),
        ({**BASE, "colour": "red"}, "colour", "unknown key"),
    ],
)
def test_bad_values_name_key_and_range(data: dict, key: str, words: str) -> None:
    with pytest.raises(SpecError) as err:
        parse_spec(data)
    keys = [p.key for p in err.value.problems]
    assert key in keys
    assert words in str(err.value)


def test_toml_syntax_error_reports_the_line(tmp_path: Path) -> None:
    p = tmp_path / "bad.toml"
    p.write_text('name = "x"\n[throat]\nwidth = 100\ndepth = = 25\n')
    with pytest.raises(SpecError) as err:
        load_spec(p)
    assert "line 4" in str(err.value)


def test_yaml_and_json_are_equivalent_to_toml(tmp_path: Path) -> None:
    (tmp_path / "a.toml").write_text('[throat]\nwidth = "4 in"\ndepth = 25\n')
    (tmp_path / "a.yaml").write_text("throat:\n  width: 4 in\n  depth: 25\n")
    (tmp_path / "a.json").write_text(json.dumps({"throat": {"width": "4 in", "depth": 25}}))
    specs = [load_spec(tmp_path / n) for n in ("a.toml", "a.yaml", "a.json")]
    assert specs[0] == specs[1] == specs[2]


def test_published_schema_is_current() -> None:
    assert SCHEMA_PATH.read_text(encoding="utf-8") == schema_text(), (
        "spec changed: run `python -m ductgen.spec.schema`"
    )
