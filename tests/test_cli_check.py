"""`ductgen check`: healthy meshes pass (exit 0), a mesh with a face removed is not closed
(exit 1), STEP files are read through the kernel."""

from __future__ import annotations

import json

import numpy as np
import pytest
import trimesh

from ductgen.cli.app import main
from ductgen.solids.cad_io import stl_bytes


def _write_stl(path, mesh: trimesh.Trimesh) -> None:  # type: ignore[no-untyped-def]
    path.write_bytes(stl_bytes(np.asarray(mesh.vertices), np.asarray(mesh.faces)))


def test_healthy_box_passes(tmp_path, capsys) -> None:  # type: ignore[no-untyped-def]
    p = tmp_path / "box.stl"
    _write_stl(p, trimesh.creation.box(extents=(30.0, 20.0, 10.0)))
    assert main(["check", str(p), "--json"]) == 0
    rep = json.loads(capsys.readouterr().out)
    assert rep["healthy"] and rep["watertight"] and rep["manifold"]
    assert rep["volume_mm3"] == pytest.approx(6000.0, rel=1e-6)
    assert rep["bbox_size_mm"] == pytest.approx([30.0, 20.0, 10.0])
    assert rep["min_wall_mm"] == pytest.approx(10.0, abs=1e-4)


def test_removed_face_is_not_closed(tmp_path, capsys) -> None:  # type: ignore[no-untyped-def]
    m = trimesh.creation.icosphere(subdivisions=2, radius=10.0)
    p = tmp_path / "broken.stl"
    p.write_bytes(stl_bytes(np.asarray(m.vertices), np.asarray(m.faces)[1:]))  # one face removed
    assert main(["check", str(p), "--json"]) == 1
    rep = json.loads(capsys.readouterr().out)
    assert rep["watertight"] is False and rep["healthy"] is False


def test_thin_wall_flag(tmp_path) -> None:  # type: ignore[no-untyped-def]
    p = tmp_path / "plate.stl"
    _write_stl(p, trimesh.creation.box(extents=(30.0, 30.0, 0.8)))
    assert main(["check", str(p)]) == 0  # report only by default
    assert main(["check", str(p), "--min-wall", "1.2"]) == 1  # FDM: warn below 1.2 mm (practice)


@pytest.mark.slow
def test_step_file(tmp_path, capsys) -> None:  # type: ignore[no-untyped-def]
    cq = pytest.importorskip("cadquery")
    from ductgen.solids.cad_io import step_bytes

    p = tmp_path / "cyl.step"
    p.write_bytes(step_bytes(cq.Solid.makeCylinder(10.0, 20.0)))
    assert main(["check", str(p), "--json"]) == 0
    rep = json.loads(capsys.readouterr().out)
    assert rep["volume_mm3"] == pytest.approx(np.pi * 100 * 20, rel=2e-3)


def test_missing_file_is_bad_input(tmp_path) -> None:  # type: ignore[no-untyped-def]
    assert main(["check", str(tmp_path / "nope.stl")]) == 2


@pytest.mark.slow
def test_step_without_shapes_is_bad_input(tmp_path, capsys) -> None:  # type: ignore[no-untyped-def]
    # a well-formed ISO 10303-21 exchange file (header and an empty DATA section) holds
    # nothing to triangulate: bad input (exit 2) naming the file, not a kernel traceback
    p = tmp_path / "empty.step"
    p.write_text(
        "ISO-10303-21;\nHEADER;\nFILE_DESCRIPTION(('empty'),'2;1');\n"
        "FILE_NAME('empty.step','2020-01-01T00:00:00',(''),(''),'','','');\n"
        "FILE_SCHEMA(('AUTOMOTIVE_DESIGN'));\nENDSEC;\nDATA;\nENDSEC;\nEND-ISO-10303-21;\n"
    )
    assert main(["check", str(p)]) == 2
    err = capsys.readouterr().err
    assert "empty.step" in err and "no surfaces could be read" in err
