"""`ductgen size`: smallest throat for a flow target, --json, --write-spec."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from ductgen.cli.app import main
from ductgen.sizing import delivered_flow, size_throat, spec_with_throat
from ductgen.spec import load_spec, parse_spec

TARGET = 0.05  # m^3/s
SPEED = 40.0  # m/s


@pytest.fixture(scope="module")
def plain():  # type: ignore[no-untyped-def]
    """No outlet, no losses: the exit is the throat, so IVR = sqrt(recovery) < 1."""
    return size_throat(TARGET, SPEED, aspect=4.0, angle_deg=7.0)


def test_size_delivers_target_and_is_smallest(plain) -> None:  # type: ignore[no-untyped-def]
    f = plain.flow
    assert plain.limited_by == "flow"
    assert TARGET <= f["volume_flow_m3_s"] <= 1.01 * TARGET
    assert f["meets_required_flow"] is True
    g = plain.geometry
    assert g.width_mm / g.depth_mm == pytest.approx(4.0, abs=1e-3)
    # 1 % shallower (same W/D) no longer delivers the target
    smaller = spec_with_throat(plain.spec, 0.99 * g.depth_mm, 4.0, 7.0)
    assert delivered_flow(smaller) < TARGET
    # the ramp length follows the floor drop: L = H / tan(7 deg) for a straight floor
    # (trigonometry [derived])
    import math

    assert g.length_mm == pytest.approx(g.drop_mm / math.tan(math.radians(7.0)), rel=1e-9)


def test_size_json_keys(capsys: pytest.CaptureFixture[str]) -> None:
    code = main(["size", "--flow", "50 L/s", "--speed", "144 km/h", "--json"])
    assert code == 0
    out = json.loads(capsys.readouterr().out)
    for key in (
        "throat_width_mm",
        "throat_depth_mm",
        "throat_area_mm2",
        "ramp_length_mm",
        "ramp_angle_deg",
    ):
        assert key in out
    assert out["throat_area_mm2"] == pytest.approx(out["throat_width_mm"] * out["throat_depth_mm"])
    assert out["flow"]["volume_flow_m3_s"] == pytest.approx(0.05, rel=0.01)
    assert {"element", "velocity_m_s", "k", "dp_pa"} <= set(out["flow"]["budget"][0])


def test_write_spec_round_trip_and_no_overwrite(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    (tmp_path / "rec.csv").write_text("ivr,recovery\n0.1,0.55\n1.2,0.75\n", encoding="utf-8")
    base = tmp_path / "base.toml"
    base.write_text(
        'name = "brake"\nthroat = { width = 100, depth = 25 }\n'
        'lip = { style = "flush", thickness = 5 }\n'
        'outlet = { kind = "round", diameter = "2 in", transition_length = 150 }\n'
        '[flow]\nspeed = "100 km/h"\nrun_length = "0.8 m"\nrecovery = "rec.csv"\n'
        'losses = [{ kind = "hose", length = "1 m", diameter = "2 in", label = "brake hose" }]\n',
        encoding="utf-8",
    )
    out_dir = tmp_path / "elsewhere"
    target = out_dir / "sized.toml"
    args = [
        "size",
        "--flow",
        "30 L/s",
        "--speed",
        "120 km/h",
        "--spec",
        str(base),
        "--write-spec",
        str(target),
    ]
    assert main(args) == 0
    s = load_spec(target)  # loads from another folder: the table path was made absolute
    assert s.name == "brake" and s.lip.thickness == 5.0 and s.outlet.kind == "round"
    assert s.flow is not None and s.flow.recovery_kind == "table"
    assert s.flow.speed == pytest.approx(120 / 3.6, rel=1e-10)
    assert s.flow.required_flow == pytest.approx(0.03, rel=1e-10)
    assert s.flow.losses[0].label == "brake hose"
    assert delivered_flow(s) >= 0.03
    before = target.read_bytes()
    capsys.readouterr()
    assert main(args) == 2  # refuses to overwrite
    assert "--force" in capsys.readouterr().err
    assert target.read_bytes() == before
    assert main([*args, "--force"]) == 0
    assert sorted(p.name for p in out_dir.iterdir()) == ["sized.toml"]  # no temp files left


def test_ivr_limit_enlarges_throat() -> None:
    # a wide hose behind a small throat would need the throat air faster than the free
    # stream; the default limit IVR <= 1 (common practice, no source) enlarges the throat
    base = parse_spec(
        {
            "name": "b",
            "throat": {"width": 100, "depth": 25},
            "outlet": {"kind": "round", "diameter": "3 in", "transition_length": 200},
            "flow": {
                "speed": "120 km/h",
                "run_length": "0.8 m",
                "losses": [{"kind": "hose", "length": "1.5 m", "diameter": "3 in"}],
            },
        }
    )
    r = size_throat(0.03, 120 / 3.6, base=base)
    assert r.limited_by == "ivr"
    assert r.flow["inlet_velocity_ratio"] <= 1.0 + 1e-9
    assert r.flow["volume_flow_m3_s"] >= 0.03
    free = size_throat(0.03, 120 / 3.6, base=base, max_ivr=3.0)
    assert free.limited_by == "flow"
    assert free.flow["inlet_velocity_ratio"] > 1.0
    assert "ivr_above_one" in {w.code for w in free.warnings}


def test_unreachable_flow_is_bad_input(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    # a 1 in hose cannot pass 0.5 m^3/s on 10 m/s of ram pressure (q = 61 Pa)
    base = tmp_path / "base.toml"
    base.write_text(
        "throat = { width = 100, depth = 25 }\n"
        'outlet = { kind = "round", diameter = "1 in", transition_length = 150 }\n'
        '[flow]\nspeed = "10 m/s"\n'
        'losses = [{ kind = "hose", length = "2 m", diameter = "1 in" }]\n',
        encoding="utf-8",
    )
    target = tmp_path / "never.toml"
    code = main(
        [
            "size",
            "--flow",
            "0.5 m^3/s",
            "--speed",
            "10 m/s",
            "--spec",
            str(base),
            "--write-spec",
            str(target),
        ]
    )
    assert code == 2
    assert "--flow" in capsys.readouterr().err
    assert not target.exists()


@pytest.mark.slow
def test_size_then_build_delivers_flow(tmp_path: Path) -> None:
    # `size` then `build` of the written spec delivers the requested flow to 1 %
    from ductgen.pipeline import build

    target = tmp_path / "sized.toml"
    assert (
        main(
            ["size", "--flow", "40 L/s", "--speed", "35 m/s", "--write-spec", str(target), "--json"]
        )
        == 0
    )
    result = build(load_spec(target), tmp_path / "out", only=["cutter"])
    flow = result.report["flow"]
    assert flow["volume_flow_m3_s"] == pytest.approx(0.040, rel=0.01)
    assert flow["meets_required_flow"] is True
    assert (tmp_path / "out" / "report.json").is_file()


def test_written_spec_loads_back_as_toml_and_json(tmp_path: Path, plain) -> None:  # type: ignore[no-untyped-def]
    # the TOML comes from tomli-w (a maintained writer); both files must load back to the
    # same validated spec, and TOML keeps the header as comments
    from ductgen.sizing import sized_spec_data
    from ductgen.spec.write import spec_text

    data = sized_spec_data(plain)
    specs = []
    for suffix in (".toml", ".json"):
        path = tmp_path / f"s{suffix}"
        path.write_text(spec_text(data, path, "made by a test\nsecond line"), encoding="utf-8")
        specs.append(load_spec(path))
    assert specs[0] == specs[1] == parse_spec(data)
    assert (tmp_path / "s.toml").read_text().startswith("# made by a test\n# second line\n")
    with pytest.raises(ValueError):
        spec_text(data, tmp_path / "s.yaml")
