"""The layup plug: a valid closed solid of the integrated volume, walls drafted by at least
``plug.draft_deg`` (measured from face normals), a base plate of the trim outline."""

from __future__ import annotations

import math

import numpy as np
import pytest

cq = pytest.importorskip("cadquery")

from ductgen.cli.app import main  # noqa: E402
from ductgen.design import build_design  # noqa: E402
from ductgen.geometry.fabrication import plug_trim_outline  # noqa: E402
from ductgen.geometry.outline import opening_outline, polygon_area  # noqa: E402
from ductgen.meshstats import mesh_stats  # noqa: E402
from ductgen.solids.check import CHECK_MESH  # noqa: E402
from ductgen.solids.mesh import triangulate  # noqa: E402
from ductgen.solids.plug import make_plug, plug_volume_mm3  # noqa: E402
from ductgen.spec import parse_spec  # noqa: E402

CASES = {
    "arc-flush": {
        "throat": {"width": 110, "depth": 28},
        "ramp": {"angle_deg": 7, "entry_radius": 120},
        "lip": {"thickness": 5},
        "plug": {"draft_deg": 4, "trim_margin": 20},
    },
    "sharp-raised": {
        "throat": {"width": 80, "depth": 20},
        "lip": {"style": "raised"},
        "plug": {"draft_deg": 2, "base_thickness": 6},
    },
}


@pytest.fixture(scope="module", params=list(CASES))
def plug(request: pytest.FixtureRequest):  # type: ignore[no-untyped-def]
    spec = parse_spec(CASES[request.param])
    d = build_design(spec)
    return d, d.fab, make_plug(d)


@pytest.mark.slow
def test_plug_is_valid_closed_with_integrated_volume(plug) -> None:  # type: ignore[no-untyped-def]
    d, _, solid = plug
    assert solid.isValid() and len(solid.Solids()) == 1
    v, f = triangulate(solid, *CHECK_MESH)
    tight, winding, vol, _ = mesh_stats(v, f)
    assert tight and winding
    # independent integral: Steiner plate area × thickness + drafted cavity sections
    assert vol == pytest.approx(plug_volume_mm3(d), rel=2e-3)


@pytest.mark.slow
def test_plug_walls_drafted_at_least_draft_deg(plug) -> None:  # type: ignore[no-untyped-def]
    _, fab, solid = plug
    need = math.sin(math.radians(fab.plug.draft_deg))
    checked = 0
    for face in solid.Faces():
        bb = face.BoundingBox()
        if bb.zmin < -0.5 or bb.zmax - bb.zmin < 1.0:
            continue  # the plate, or faces lying in one plane
        for u in np.linspace(0.05, 0.95, 7):
            for w in np.linspace(0.05, 0.95, 7):
                p = face.positionAt(u, w)
                n = face.normalAt(p)
                if abs(n.z) > 0.5:
                    continue  # the floor (ramp angle 7°), not a wall
                checked += 1
                assert n.z >= need - 1e-3, (face.geomType(), p, n)
    assert checked > 50


@pytest.mark.slow
def test_trim_outline_is_the_opening_offset_by_the_margin(plug) -> None:  # type: ignore[no-untyped-def]
    d, fab, _ = plug
    g = d.geometry
    m = fab.plug.trim_margin
    op = opening_outline(g.planform, g.throat_end_mm, 2000)
    per = float(np.sum(np.linalg.norm(np.diff(np.vstack([op, op[:1]]), axis=0), axis=1)))
    # Steiner: outward offset with round corners has area A + P·m + π·m² (exact geometry)
    steiner = polygon_area(op) + per * m + math.pi * m * m
    assert polygon_area(plug_trim_outline(g, fab.plug, 2000)) == pytest.approx(steiner, rel=2e-4)


def test_draft_of_45_deg_is_bad_input(tmp_path) -> None:  # type: ignore[no-untyped-def]
    spec = tmp_path / "s.toml"
    spec.write_text("throat = { width = 100, depth = 25 }\nplug = { draft_deg = 45 }\n")
    out = tmp_path / "out"
    assert main(["build", str(spec), "-o", str(out), "--only", "plug", "--quiet"]) == 2
    assert not out.exists() or not any(out.iterdir())


@pytest.mark.parametrize(
    ("extra", "key"),
    [
        ("insert = { wall = 13 }", "insert.wall"),  # > half the 25 mm throat depth
        ("insert = { flange_width = 5 }", "insert.flange_width"),  # holes of 4.2 mm break out
    ],
)
def test_bad_insert_input_exits_2_and_writes_nothing(
    tmp_path, capsys, extra: str, key: str
) -> None:  # type: ignore[no-untyped-def]
    spec = tmp_path / "s.toml"
    spec.write_text(f"throat = {{ width = 100, depth = 25 }}\n{extra}\n")
    out = tmp_path / "out"
    assert main(["build", str(spec), "-o", str(out), "--only", "plug", "--quiet"]) == 2
    assert key in capsys.readouterr().err
    assert not out.exists() or not any(out.iterdir())
