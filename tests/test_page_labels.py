"""The design page's words and per-shape tables (no browser): every spec key has a plain
label, every skin shape a drawing caption, and the panel file list stays in the work folder."""

from __future__ import annotations

import json
import math
import os
from pathlib import Path

import pytest

from ductgen.page.labels import ADD_ITEM, LABELS
from ductgen.spec.model import SKIN_SHAPES

ROOT = Path(__file__).resolve().parents[1]


def _schema_keys() -> tuple[set[str], set[str]]:
    """(leaf keys, section keys) of the published schema, dotted, ``[]`` for a list item."""
    schema = json.loads((ROOT / "ductgen" / "schema" / "spec.schema.json").read_text())
    defs = schema["$defs"]
    leaves: set[str] = set()
    sections: set[str] = set()

    def refs(p: dict) -> list[tuple[str, str]]:
        out = [("", p["$ref"])] if "$ref" in p else []
        out += [("", a["$ref"]) for a in p.get("anyOf", []) + p.get("oneOf", []) if "$ref" in a]
        items = p.get("items", {}) if p.get("type") == "array" else {}
        out += [("[]", a["$ref"]) for a in items.get("oneOf", []) if "$ref" in a]
        return out

    def walk(model: dict, prefix: str) -> None:
        for name, p in model.get("properties", {}).items():
            key = prefix + name
            found = refs(p)
            if not found:
                leaves.add(key)
            else:
                sections.add(key)
            for index, ref in found:
                walk(defs[ref.split("/")[-1]], f"{key}{index}.")

    walk(schema, "")
    return leaves, sections


def test_every_spec_key_has_a_plain_label() -> None:
    leaves, sections = _schema_keys()
    assert "skin.flow_direction" in leaves and "flow.losses[].kind" in leaves
    missing = sorted((leaves | sections) - set(LABELS))
    assert not missing, f"keys without a label in ductgen/page/labels.py: {missing}"
    # labels are words, not key names, and a list's add button is not a cut plural
    assert not [k for k, v in LABELS.items() if "_" in v]
    assert ADD_ITEM["flow.losses"] == "add a loss"


def test_every_skin_shape_has_a_caption() -> None:
    """A new shape without its caption fails here, not on a user's page."""
    from ductgen.page.captions import SKIN_CAPTIONS

    assert set(SKIN_CAPTIONS) == set(SKIN_SHAPES)


@pytest.mark.parametrize(
    ("sample", "words"),
    [
        ("club-racer-brake", "flat skin: both drawings are true to scale"),
        ("kitcar-bonnet-intake", "section drawn on the curved skin"),
        ("round-cowling-vent", "curves across the flow only, so the centreline section is true"),
    ],
)
def test_the_caption_says_what_is_drawn_flat(sample: str, words: str) -> None:
    from ductgen.design import build_design
    from ductgen.page.captions import skin_caption
    from ductgen.spec import load_spec

    caption = skin_caption(build_design(load_spec(ROOT / "samples" / f"{sample}.toml")))
    assert words in caption
    if sample != "club-racer-brake":
        assert "plan drawn flat as the developed opening (developed exactly)" in caption


def test_a_curved_section_follows_the_skin() -> None:
    """On a cylinder curving along the flow the skin line of the section drops by the
    sagitta R − √(R² − x²) at distance x along the chord (mm)."""
    import re

    from ductgen.design import build_design
    from ductgen.page.draw import section_svg
    from ductgen.spec import load_spec

    spec = load_spec(ROOT / "samples" / "kitcar-bonnet-intake.toml")
    assert spec.skin.shape == "cylinder" and spec.skin.axis == "spanwise"
    svg = section_svg(build_design(spec))
    m = re.search(r'id="section-top" points="([^"]+)"', svg)
    assert m is not None
    pts = [tuple(map(float, p.split(","))) for p in m.group(1).split()]
    r = spec.skin.radius
    for x, y in pts[:: max(1, len(pts) // 8)]:
        # SVG y points down: the drop below the datum is +y; 0.01 mm is the SVG rounding
        assert y == pytest.approx(r - (r * r - x * x) ** 0.5, abs=0.011)
    assert max(y for _, y in pts) > 10.0  # visibly curved, not the flat line


def test_panel_files_are_listed_inside_the_work_folder_only(tmp_path: Path) -> None:
    from ductgen.page.app import DesignApp
    from ductgen.page.guard import WorkFolder

    work, outside = tmp_path / "work", tmp_path / "outside"
    (work / "panels").mkdir(parents=True)
    (work / ".hidden").mkdir()
    outside.mkdir()
    for name in ("a.step", "panels/b.STL", "panels/c.obj", "d.ply", "notes.txt", ".hidden/e.stp"):
        (work / name).write_text("x")
    (outside / "secret.step").write_text("x")
    os.symlink(outside / "secret.step", work / "link.step")
    os.symlink(outside, work / "linked-folder")
    app = DesignApp(data={}, work=WorkFolder(work))
    assert app.panel_files() == ["a.step", "d.ply", "panels/b.STL", "panels/c.obj"]


def test_the_plan_of_a_doubly_curved_skin_is_the_developed_template() -> None:
    """The plan shows the opening as the template flattens it (its lengths stretched, as
    the caption says), not the design's (u, v)."""
    import re

    import numpy as np

    from ductgen.design import build_design
    from ductgen.page.captions import skin_caption
    from ductgen.page.draw import plan_svg
    from ductgen.spec import parse_spec
    from tests.helpers import CURVED_BASE as BASE

    skin = {"shape": "doubly", "radius_streamwise": 700, "radius_spanwise": 300}
    d = build_design(parse_spec({**BASE, "skin": skin}))
    assert not d.development.exact and d.development.max_length_distortion_pct > 0.5
    m = re.search(r'id="plan-opening" points="([^"]+)"', plan_svg(d))
    assert m is not None
    drawn = np.array([tuple(map(float, p.split(","))) for p in m.group(1).split()])
    want = d.development.xy(d.layout.opening_xy) * (1.0, -1.0)  # SVG y points down
    assert np.abs(drawn - want).max() <= 0.006  # the SVG's 0.01 mm rounding
    assert np.abs(drawn - d.layout.opening_xy * (1.0, -1.0)).max() > 0.1  # not (u, v)
    pct = f"{d.development.max_length_distortion_pct:.2f} %"
    assert f"lengths stretched up to {pct}" in skin_caption(d)


def test_a_densified_polyline_keeps_its_points_and_short_segments() -> None:
    import numpy as np

    from ductgen.page.draw import densified

    pts = np.array([[0.0, 0.0], [10.0, 0.0], [10.0, 2.5], [0.0, 30.0]])
    out = densified(pts, 3.0)
    assert np.linalg.norm(np.diff(out, axis=0), axis=1).max() <= 3.0 + 1e-12
    for p in pts:  # every corner is still there, in order
        assert np.min(np.linalg.norm(out - p, axis=1)) < 1e-12
    assert len(out) == 1 + 4 + 1 + 10  # the start, then ceil(10/3), ceil(2.5/3), ceil(29.26/3)


def _live(flow: dict | None = None) -> dict:
    """The page's live answer for the club sample with ``flow`` keys changed."""
    import tomllib

    from ductgen.page.preview import preview

    data = tomllib.loads((ROOT / "samples" / "club-racer-brake.toml").read_text())
    data["flow"].update(flow or {})
    out = preview(data)
    assert out["ok"], out
    return out


def test_every_live_row_has_a_plain_label() -> None:
    from ductgen.display import SHOWN

    out = _live(
        {
            "speed": "420 km/h",
            "external_drag_coefficient": 0.1,
            "exit": "plenum",
            "inlet_cp_gradient_per_m": 0.2,
        }
    )
    rows = out["numbers"] + out["flow"]["rows"]
    keys = {r["key"] for r in rows}
    assert keys >= {"steepest_wall_angle_deg", "impact_pressure_pa", "shape_factor"}
    for r in rows:
        assert r["label"] in {s.label for s in SHOWN.values()} and "_" not in r["label"], r


def test_live_answer_shows_the_reviewers_terms() -> None:
    # closed forms beside each: isentropic impact pressure p[(1 + 0.2 M^2)^3.5 - 1] (NACA
    # Report 1135), applied above Mach 0.3 (common practice, no source); the axial head
    # cos^2(psi) [derived]; the default beta = 1 + (alpha - 1)/3 [derived]
    out = _live({"speed": "420 km/h", "flow_angle_deg": 10.0, "inlet_cp": -0.2})
    rows = {r["key"]: r for r in out["flow"]["rows"]}
    m, q = rows["mach"]["value"], rows["dynamic_pressure_pa"]["value"]
    assert m > 0.3
    qc = rows["impact_pressure_pa"]["value"]
    p = qc / ((1.0 + 0.2 * m * m) ** 3.5 - 1.0)
    assert q == pytest.approx(0.7 * p * m * m, rel=1e-9)  # 1/2 rho V^2 = gamma/2 p M^2
    assert rows["recovery_head_pa"]["value"] == qc > q
    assert rows["yaw_factor"]["value"] == pytest.approx(math.cos(math.radians(10.0)) ** 2)
    assert rows["inlet_cp"]["value"] == -0.2
    assert rows["kinetic_energy_factor"]["label"] == "outflow α, mixed out in the hose"
    assert rows["momentum_factor"]["value"] == pytest.approx(1.0 + 0.25 / 3.0, rel=1e-12)
    slow = {r["key"]: r["value"] for r in _live()["flow"]["rows"]}
    assert slow["recovery_head_pa"] == slow["dynamic_pressure_pa"]  # Mach 0.11


def test_live_answer_shows_the_steepest_wall_and_its_clearing_length() -> None:
    # [derived] a roof-aligned 3 in outlet 170 mm behind a 28 mm throat: the floor at
    # atan(48.2/170) = 15.83 deg, above line a-a of the 2-D diffuser chart (Kline et al.,
    # recalled) at N/W1 = 6.07; the page offers the length that clears it
    import tomllib

    from ductgen.flow.stall import stall_line_included_deg
    from ductgen.page.preview import preview

    data = tomllib.loads((ROOT / "samples" / "club-racer-brake.toml").read_text())
    data["throat"]["depth"], data["outlet"]["transition_length"] = 28, 170
    rows = {r["key"]: r["value"] for r in preview(data)["numbers"]}
    assert rows["steepest_wall_angle_deg"] == pytest.approx(
        math.degrees(math.atan(48.2 / 170.0)), abs=1e-4
    )
    assert rows["stall_line_included_deg"] == pytest.approx(stall_line_included_deg(170 / 28))
    n = rows["length_under_stall_line_mm"]
    assert n > 170 and math.degrees(math.atan(48.2 / n)) == pytest.approx(
        stall_line_included_deg(n / 28.0), abs=1e-3
    )
