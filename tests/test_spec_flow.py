"""The [flow] section: units rule, bad input (exit 2, key named, nothing written), round trip.

Rule for flow quantities (ductgen.units): a bare number is refused because ``speed = 50``
could be km/h, mph or m/s; write the unit. Zero may be written bare (it is zero in every
unit) and is then refused by the range check where zero makes no sense.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from ductgen.cli.app import main
from ductgen.errors import SpecError
from ductgen.spec import parse_spec
from ductgen.spec.flow import FlowSpec, flow_data

GEOM = 'name = "t"\nthroat = { width = 100, depth = 25 }\n'


def _write(tmp_path: Path, flow: str) -> Path:
    p = tmp_path / "spec.toml"
    p.write_text(GEOM + "[flow]\n" + flow, encoding="utf-8")
    return p


BAD = [
    ("speed = 0\n", "flow.speed", "> 0"),
    ('speed = "-5 m/s"\n', "flow.speed", "> 0"),
    ("speed = 50\n", "flow.speed", "ambiguous"),
    (
        'speed = "50 m/s"\nlosses = [{ kind = "hose", length = "1 m", diameter = 0 }]\n',
        "flow.losses[0].diameter",
        "> 0",
    ),
    ('speed = "50 m/s"\naltitude = "90 km"\n', "flow.altitude", "86000"),
    ('speed = "50 m/s"\naltitude = "-1 km"\n', "flow.altitude", "-610"),
    ('speed = "50 m/s"\nrecovery = "rec.csv"\n', "flow.recovery", "increase"),
    ('speed = "50 m/s"\nlosses = [{ kind = "cooler", k = 5 }]\n', "flow.losses[0]", "face_area"),
    ('speed = "50 m/s"\nspeeed = "3 m/s"\n', "flow.speeed", "did you mean"),
]


@pytest.mark.parametrize(("flow", "key", "why"), BAD)
def test_bad_flow_input_exits_2_and_writes_nothing(
    tmp_path: Path, capsys: pytest.CaptureFixture[str], flow: str, key: str, why: str
) -> None:
    (tmp_path / "rec.csv").write_text("ivr,recovery\n0.5,0.7\n0.4,0.8\n", encoding="utf-8")
    spec = _write(tmp_path, flow)
    out = tmp_path / "out"
    code = main(["build", str(spec), "-o", str(out), "--only", "cutter"])
    err = capsys.readouterr().err
    assert code == 2
    assert key in err and why in err, err
    assert not out.exists()


def test_size_bad_speed_writes_nothing(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    target = tmp_path / "sized.toml"
    for speed in ("0 m/s", "-3 m/s", "50"):
        code = main(["size", "--flow", "0.05 m^3/s", "--speed", speed, "--write-spec", str(target)])
        assert code == 2
        assert "--speed" in capsys.readouterr().err
    assert not target.exists()


def test_units_converted_and_round_trip() -> None:
    data = {
        "speed": "160 km/h",
        "altitude": "3000 ft",
        "temperature_offset": "10 K",
        "run_length": "55 in",
        "required_flow": "120 cfm",
        "exit_cp": -0.2,
        "losses": [
            {"kind": "hose", "length": "1.2 m", "diameter": "3 in", "label": "main hose"},
            {"kind": "bend", "angle_deg": 90, "radius": "6 in", "diameter": "3 in"},
            {"kind": "cooler", "pressure_drop": "1 inH2O", "reference_flow": "60 L/s"},
            {
                "kind": "diffuser",
                "inlet_diameter": "3 in",
                "outlet_diameter": "4 in",
                "length": "20 cm",
            },
        ],
    }
    f = FlowSpec.model_validate(data)
    assert f.speed == pytest.approx(160 / 3.6, rel=1e-10)  # units keep 12 digits
    assert f.altitude == pytest.approx(914.4, rel=1e-10)
    assert f.required_flow == pytest.approx(120 * 0.3048**3 / 60, rel=1e-9)
    assert f.losses[2].pressure_drop == pytest.approx(249.0889, rel=1e-4)  # 1 inH2O (4 degC)
    again = FlowSpec.model_validate(flow_data(f))
    assert again == f


def test_flow_section_in_spec_is_optional() -> None:
    s = parse_spec({"throat": {"width": 100, "depth": 25}})
    assert s.flow is None
    with pytest.raises(SpecError):
        parse_spec(
            {"throat": {"width": 100, "depth": 25}, "flow": {"speed": "50 m/s", "recovery": 1.5}}
        )


def test_a_null_optional_quantity_is_not_given_and_a_bad_one_names_the_key() -> None:
    # JSON/YAML null for an optional quantity means "not given" (was a TypeError from the
    # constraint check, an internal error instead of exit 2)
    base = {"throat": {"width": 100, "depth": 25}, "flow": {"speed": "50 m/s"}}
    s = parse_spec({**base, "flow": {**base["flow"], "density": None}})
    assert s.flow is not None and s.flow.density is None
    with pytest.raises(SpecError) as err:
        parse_spec({**base, "flow": {**base["flow"], "density": "-1 kg/m^3"}})
    assert "flow.density" in str(err.value)


def test_every_loss_kind_makes_a_flow_element() -> None:
    """One list of loss kinds (the spec's tagged union) and the flow model's factory table
    cover each other: a new kind without its element fails here, not in a user's build."""
    from ductgen.flow.system import ELEMENT_OF
    from ductgen.spec.losses import LOSS_KINDS

    assert set(ELEMENT_OF) == set(LOSS_KINDS) and len(LOSS_KINDS) >= 4


@pytest.mark.parametrize("kind", ["hose", "bend", "cooler", "diffuser"])
def test_loss_error_keys_leave_the_union_tag_out(kind: str) -> None:
    """The tag pydantic puts in an error's location (``flow.losses.0.hose.x``) is read off
    the union, so the key a user sees is ``flow.losses[0].x`` for every kind."""
    from ductgen.spec.losses import LOSS_KINDS

    assert kind in LOSS_KINDS
    data = {
        "name": "t",
        "throat": {"width": 100, "depth": 25},
        "flow": {"speed": "50 m/s", "losses": [{"kind": kind, "bogus": 1}]},
    }
    with pytest.raises(SpecError) as err:
        parse_spec(data)
    assert "flow.losses[0].bogus" in [p.key for p in err.value.problems]
