"""Every bundled sample builds, with every output, and its outputs are sound."""

from __future__ import annotations

import json

import pytest

from tests.conftest import sample_ids

GEOMETRY_KEYS = [
    "throat_width_mm",
    "throat_depth_mm",
    "throat_area_mm2",
    "ramp_angle_deg",
    "ramp_length_mm",
    "floor_drop_mm",
    "apex_width_mm",
    "max_wall_divergence_deg",
    "ramp_cavity_volume_mm3",
    "cutter_volume_mm3",
    "wetted_area_mm2",
    "offsets",
]


@pytest.mark.slow
@pytest.mark.parametrize("name", sample_ids())
def test_sample_builds_every_output(sample_builds: dict, name: str) -> None:
    _, folder = sample_builds[name]
    rep = json.loads((folder / "report.json").read_text())
    assert rep["name"] == name
    assert len(rep["spec_sha256"]) == 64
    for key in GEOMETRY_KEYS:
        assert key in rep["geometry"], key
    for fname in rep["files"].values():
        assert (folder / fname).is_file() and (folder / fname).stat().st_size > 0
    assert not [p for p in folder.iterdir() if p.name.startswith(".")], "staging left behind"


@pytest.mark.slow
@pytest.mark.parametrize("name", sample_ids())
def test_sample_cutter_volume_agrees_with_geometry(sample_builds: dict, name: str) -> None:
    import trimesh

    result, folder = sample_builds[name]
    m = result.solids["cutter"]
    assert m.volume_mm3 == pytest.approx(m.expected_volume_mm3, rel=5e-3)
    mesh = trimesh.load(folder / f"{name}-cutter.stl", force="mesh")
    assert mesh.is_watertight and mesh.is_winding_consistent
    assert mesh.volume == pytest.approx(m.expected_volume_mm3, rel=5e-3)
