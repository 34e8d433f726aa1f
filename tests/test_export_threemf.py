"""3MF packages of printed parts, read back by an independent reader (trimesh's 3MF loader,
which follows the 3MF Consortium's *3MF Core Specification*): the unit is millimetres, each
part keeps its volume, stands on the plate (lowest point at Z = 0) in the print orientation,
and the bytes depend on the meshes only."""

from __future__ import annotations

import io
import zipfile

import numpy as np
import pytest
import trimesh

from ductgen.export.threemf import PlatePart, plate_3mf, turn_up

pytest.importorskip("lxml")  # trimesh's 3MF reader needs it (in the test extras)


def _parts() -> list[PlatePart]:
    box = trimesh.creation.box((10.0, 20.0, 30.0))
    box.apply_translation((100.0, -40.0, 7.0))
    cyl = trimesh.creation.cylinder(radius=6.0, height=25.0, sections=48)
    return [
        PlatePart("piece 1", box.vertices, box.faces),
        PlatePart("piece 2 & co", cyl.vertices, cyl.faces),
    ]


@pytest.mark.parametrize("up", ["+z", "-z", "+x", "-x", "+y", "-y"])
def test_parts_read_back_with_volume_units_and_orientation(up: str) -> None:
    parts = _parts()
    data = plate_3mf(parts, up, "test plate")
    scene = trimesh.load(io.BytesIO(data), file_type="3mf")
    assert scene.units in ("millimeters", "mm", "millimeter")
    meshes = list(scene.dump())
    assert len(meshes) == 2
    want = sorted(trimesh.Trimesh(p.vertices, p.faces).volume for p in parts)
    # coordinates are written to 1e-6 mm
    assert sorted(m.volume for m in meshes) == pytest.approx(want, rel=1e-7)
    # the box (10 × 20 × 30 along x, y, z) stands with its "up" extent vertical
    extent = {"x": 10.0, "y": 20.0, "z": 30.0}[up[-1]]
    box = min(meshes, key=lambda m: abs(m.volume - 6000.0))
    assert box.bounds[1][2] - box.bounds[0][2] == pytest.approx(extent, abs=1e-6)
    for m in meshes:
        assert m.bounds[0][2] == pytest.approx(0.0, abs=1e-6)  # on the plate
        assert m.is_watertight and m.volume > 0  # still outward-facing after the turn
    # side by side, not overlapping
    (_a0, a1), (b0, _b1) = sorted((m.bounds[0][0], m.bounds[1][0]) for m in meshes)
    assert b0 >= a1


def test_turn_up_is_a_rotation() -> None:
    p = np.random.default_rng(1).normal(size=(20, 3))
    for up in ("+z", "-z", "+x", "-x", "+y", "-y"):
        q = turn_up(p, up)
        assert np.allclose(np.linalg.norm(q, axis=1), np.linalg.norm(p, axis=1))
        axis, sign = "xyz".index(up[-1]), (-1.0 if up[0] == "-" else 1.0)
        assert np.allclose(q[:, 2], sign * p[:, axis])
        r, *_ = np.linalg.lstsq(p, q, rcond=None)
        assert np.linalg.det(r) == pytest.approx(1.0)


def test_bytes_depend_on_the_meshes_only() -> None:
    a = plate_3mf(_parts(), "+z", "t")
    b = plate_3mf(_parts(), "+z", "t")
    assert a == b
    with zipfile.ZipFile(io.BytesIO(a)) as z:
        assert set(z.namelist()) == {"[Content_Types].xml", "_rels/.rels", "3D/3dmodel.model"}
        assert b'unit="millimeter"' in z.read("3D/3dmodel.model")


@pytest.mark.slow
def test_every_sample_insert_3mf_holds_its_pieces(sample_builds) -> None:  # type: ignore[no-untyped-def]
    """``NAME-insert.3mf`` of every sample: millimetres, one object per printed piece, each
    with the volume of its STL (trimesh's own volume of each file), standing on the plate."""
    for name, (result, folder) in sample_builds.items():
        files = result.report["files"]
        stls = [v for k, v in files.items() if k.startswith("insert_part") and k.endswith("_stl")]
        stls = stls or [files["insert_stl"]]
        scene = trimesh.load(folder / files["insert_3mf"], file_type="3mf")
        assert scene.units in ("millimeters", "mm", "millimeter"), name
        meshes = list(scene.dump())
        want = sorted(trimesh.load(folder / s, file_type="stl").volume for s in stls)
        assert sorted(m.volume for m in meshes) == pytest.approx(want, rel=1e-6), name
        for m in meshes:
            assert m.bounds[0][2] == pytest.approx(0.0, abs=1e-6), name
