"""The CFD case on a curved skin and on the user's panel (no solver): the domain's wall is
the skin itself, the dictionaries parse, the background mesh is built and checked, and the
skin patch lies on the skin.

Independent checks: the round-cowling sample's skin is a cylinder of 320 mm radius whose
axis runs along the flow, tangent to z = 0 at the ramp start (the sample's spec), so every
point of the skin patch satisfies y² + (z + R)² = R² (closed form). The panel is the same
cylinder made by the CAD kernel (tests/panels.py) and moved by a rigid motion; the case is
written in the datum frame cfd.json states, and carried back through that frame and the
inverse motion the skin patch must lie on the kernel's cylinder again.
"""

from __future__ import annotations

import json
import re
import subprocess
from pathlib import Path

import numpy as np
import pytest

from tests.conftest import SAMPLES
from tests.test_cfd_case import require_openfoam

#: The round-cowling sample's skin radius (its spec: 320 mm), metres.
R_M = 0.320
#: The panel test's cylinder radius (metres; axis across the flow).
PANEL_R_M = 2.0
#: How far the skin patch may lie off the skin (the brief's acceptance: 0.1 mm), metres.
ON_SKIN_M = 1e-4


def _solid(stl_text: str, name: str) -> np.ndarray:
    block = stl_text.split(f"solid {name}\n")[1].split(f"endsolid {name}")[0]
    return np.array(re.findall(r"vertex (\S+) (\S+) (\S+)", block), dtype=float).reshape(-1, 3, 3)


def _off_cylinder(tri: np.ndarray, radius: float = R_M, axis: str = "x") -> float:
    """Largest distance (m) of the corners, edge midpoints and centroids of the triangles
    from the cylinder of ``radius`` tangent to z = 0 at the origin, its axis along ``axis``
    (x: y² + (z + R)² = R²; y: x² + (z + R)² = R²)."""
    pts = np.concatenate([tri.reshape(-1, 3), 0.5 * (tri[:, 0] + tri[:, 1]), tri.mean(axis=1)])
    across = pts[:, 1] if axis == "x" else pts[:, 0]
    return float(np.max(np.abs(np.hypot(across, pts[:, 2] + radius) - radius)))


def _check_case(case: Path) -> None:
    """OpenFOAM reads every dictionary, builds the background mesh and checkMesh passes it;
    topoSet finds the throat and exit planes (STL plates on a curved skin)."""
    require_openfoam()
    from ductgen.cfd.runner import openfoam_env

    env = openfoam_env()
    for rel in (
        "system/blockMeshDict",
        "system/snappyHexMeshDict",
        "system/controlDict",
        "system/topoSetDict",
        "system/fvSolution",
        "0/U",
        "0/p",
        "0/k",
        "0/omega",
    ):
        res = subprocess.run(["foamDictionary", "-keywords", str(case / rel)],
                             capture_output=True, env=env)  # fmt: skip
        assert res.returncode == 0, (rel, res.stderr.decode()[-800:])
    for tool in ("blockMesh", "checkMesh", "topoSet"):
        res = subprocess.run([tool, "-case", str(case)], capture_output=True, env=env)
        assert res.returncode == 0, (tool, res.stdout.decode()[-800:])
        if tool == "checkMesh":
            assert "Mesh OK." in res.stdout.decode()
    log = res.stdout.decode()
    for zone in ("throat", "transitionExit"):
        m = re.search(rf"faceZoneSet {zone} now size (\d+)", log)
        assert m and int(m.group(1)) > 0, zone


def _cylinder_spec_data() -> dict:
    from ductgen.spec.load import read_spec_data

    return read_spec_data(next(p for p in SAMPLES if p.stem == "round-cowling-vent"))


@pytest.mark.slow
def test_curved_sample_case_stands_on_the_cylinder(tmp_path: Path) -> None:
    from ductgen.cfd import run_cfd
    from ductgen.spec import parse_spec

    spec = parse_spec(_cylinder_spec_data())
    section = run_cfd(spec, tmp_path / "out", write_only=True)
    case = tmp_path / "out" / "cfd-coarse"
    stl = (case / "constant/triSurface/duct.stl").read_text()
    floor = _solid(stl, "floor")
    assert len(floor) > 100
    assert _off_cylinder(floor) < ON_SKIN_M
    # the skin patch surrounds the opening and reaches past the background mesh
    block = (case / "system/blockMeshDict").read_text()
    x0, y0, _zb = map(float, re.search(r"\((\S+) (\S+) (\S+)\)", block).groups())
    assert floor[..., 0].min() < x0 and floor[..., 1].min() < y0 < 0 < -y0 < floor[..., 1].max()
    # the free stream runs along the flow direction at the ramp start (+x here)
    assert re.search(r"internalField uniform \(\S+ 0 0\)", (case / "0/U").read_text())
    # the outlet runs straight on under the skin (the skin's axis is along the flow, so the
    # full eight diameters fit): every corner of the extension lies inside the cylinder
    level = section["levels"][0]
    assert level["outlet_extension_diameters"] == pytest.approx(8.0)
    hose = _solid(stl, "hose").reshape(-1, 3)
    assert np.all(np.hypot(hose[:, 1], hose[:, 2] + R_M) < R_M)
    assert section["skin_wall"]["source"].startswith("analytic")
    _check_case(case)


@pytest.mark.slow
def test_panel_case_stands_on_the_panel(tmp_path: Path) -> None:
    cq = pytest.importorskip("cadquery")
    from ductgen.cfd import run_cfd
    from ductgen.spec import parse_spec
    from tests.panels import MOTION, cylinder_panel

    # a spanwise cylinder of 2 m radius (it curves along the flow: the skin falls away
    # below the straight outlet), made by the kernel, moved, as a STEP file; big enough
    # that the floor needs no continuation past its edge
    panel = MOTION.shape(cylinder_panel(PANEL_R_M * 1e3, "spanwise", 1.5, size=(1300.0, 600.0)))
    path = tmp_path / "cowling.step"
    cq.exporters.export(panel, str(path))
    data = _cylinder_spec_data()
    data["skin"] = {
        "shape": "panel",
        "thickness": 1.5,
        "file": str(path),
        "at": [float(c) for c in MOTION.points(np.zeros(3))],
        "flow_direction": [float(c) for c in MOTION.vector([1.0, 0.0, 0.0])],
    }
    section = run_cfd(parse_spec(data), tmp_path / "out", write_only=True)
    case = tmp_path / "out" / "cfd-coarse"
    floor = _solid((case / "constant/triSurface/duct.stl").read_text(), "floor")
    assert len(floor) > 100
    # back to the file's frame (cfd.json's datum frame), then undo the motion
    wall = json.loads((tmp_path / "out" / "cfd.json").read_text())["skin_wall"]
    origin, axes = np.asarray(wall["datum_origin_mm"]), np.asarray(wall["datum_axes"])
    model = floor.reshape(-1, 3) * 1e3 @ axes + origin
    panel_pts = (model - np.asarray(MOTION.shift)) @ MOTION.matrix * 1e-3
    tri = panel_pts.reshape(-1, 3, 3)
    # the skin falls away below the straight outlet: behind the outlet's station the floor
    # runs on along the cylinder's tangent there (closed form: the circle's tangent line),
    # and the full eight diameters fit
    x_f = wall["floor_tangent_from_x_mm"] * 1e-3
    assert x_f > 0.0 and section["levels"][0]["outlet_extension_diameters"] == pytest.approx(8)
    ahead, behind = np.all(tri[..., 0] <= x_f, axis=1), np.all(tri[..., 0] >= x_f, axis=1)
    assert ahead.sum() > 100 and behind.sum() > 100
    assert _off_cylinder(tri[ahead], PANEL_R_M, "y") < ON_SKIN_M
    z_f = np.sqrt(PANEL_R_M**2 - x_f**2) - PANEL_R_M
    slope = -x_f / (z_f + PANEL_R_M)
    pts = tri[behind].reshape(-1, 3)
    assert np.max(np.abs(pts[:, 2] - (z_f + slope * (pts[:, 0] - x_f)))) < ON_SKIN_M
    assert section["skin_wall"]["source"] == "the panel file"
    assert wall["filled_past_panel_edge_mm"] == 0.0
    assert wall["datum_axes"] != np.eye(3).tolist()  # the moved panel's frame, not the identity
    _check_case(case)


def test_a_skin_that_wraps_round_the_domain_is_refused(tmp_path: Path, capsys) -> None:
    from ductgen.cli import main

    text = next(p for p in SAMPLES if p.stem == "round-cowling-vent").read_text()
    tight = tmp_path / "tight.toml"
    tight.write_text(text.replace('radius = "320 mm"', 'radius = "110 mm"'))
    assert main(["cfd", str(tight), "-o", str(tmp_path / "o"), "--write-only"]) == 2
    err = capsys.readouterr().err
    assert "skin" in err and "domain" in err
    assert not (tmp_path / "o").exists()


@pytest.mark.slow
def test_a_panel_smaller_than_the_domain_is_continued_past_its_edge(tmp_path: Path) -> None:
    """A panel that covers the inlet but not the domain's floor: the floor is the file's
    own surface where the file has one and continues it past the edge, said in cfd.json.
    Where the continuation stands, a streamwise cylinder (axis along the flow: it does
    not fall away behind the outlet) is a quadratic in y to within y⁴/(8R³) — under
    0.02 mm at the domain's 0.25 m half-width on R = 2 m (Taylor's remainder)."""
    cq = pytest.importorskip("cadquery")
    from ductgen.cfd import run_cfd
    from ductgen.spec import parse_spec
    from tests.panels import cylinder_panel

    size = (700.0, 180.0)
    panel = cylinder_panel(PANEL_R_M * 1e3, "streamwise", 1.5, size=size, x0=-60.0)
    path = tmp_path / "strip.step"
    cq.exporters.export(panel, str(path))
    data = _cylinder_spec_data()
    data["skin"] = {"shape": "panel", "thickness": 1.5, "file": str(path),
                    "at": [0.0, 0.0, 0.0], "flow_direction": [1.0, 0.0, 0.0]}  # fmt: skip
    section = run_cfd(parse_spec(data), tmp_path / "out", write_only=True)
    wall = section["skin_wall"]
    assert wall["filled_past_panel_edge_mm"] > 30.0
    assert "continued" in wall["source"]
    assert any("past its edge" in w for w in section["warnings"])
    case = tmp_path / "out" / "cfd-coarse"
    floor = _solid((case / "constant/triSurface/duct.stl").read_text(), "floor")
    inside = np.all(np.abs(floor[..., 1]) <= size[1] / 2e3, axis=1)
    inside &= np.all((floor[..., 0] >= -0.06) & (floor[..., 0] <= size[0] * 1e-3 - 0.06), axis=1)
    assert inside.sum() > 100 and (~inside).sum() > 100
    assert _off_cylinder(floor, PANEL_R_M, "x") < 0.05e-3  # the fill's bound plus the sag
    assert _off_cylinder(floor[inside], PANEL_R_M, "x") < ON_SKIN_M
    _check_case(case)
