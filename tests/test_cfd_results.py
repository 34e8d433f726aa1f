"""Reading a solved case (ductgen.cfd.results) against closed forms, on hand-written files."""

from __future__ import annotations

import struct
from pathlib import Path

import pytest


def test_mixed_out_is_borda_carnot() -> None:
    from ductgen.cfd.results import mixed_out

    # half the area at 2ū, half at rest, uniform static pressure 0 (kinematic): the sudden
    # expansion of a jet of area A/2 into A. Borda–Carnot (textbook, recalled): the mixing
    # loses ½(2ū − ū)² = ½ū²; α = (2ū)³(A/2)/(ū³A) = 4; β = (2ū)²(A/2)/(ū²A) = 2.
    u, area = 3.0, 0.01
    q = u * area
    p0_flow = 0.5 * (2 * u) ** 2  # all the flow carries the jet's total pressure
    res = mixed_out(q, area, p0_flow, 0.0, 0.0, 2 * u)
    assert res["kinetic_energy_factor"] == pytest.approx(4.0)
    assert res["momentum_factor"] == pytest.approx(2.0)
    assert p0_flow - res["total_mixed_out"] == pytest.approx(0.5 * u * u)
    # a uniform flow is already mixed: α = β = 1 and nothing is lost
    uni = mixed_out(q, area, 10.0 + 0.5 * u * u, 10.0, 10.0, u)
    assert uni["kinetic_energy_factor"] == pytest.approx(1.0)
    assert uni["total_mixed_out"] == pytest.approx(10.0 + 0.5 * u * u)


def _field(path: Path, values: list[float], binary: bool) -> None:
    fmt = "binary" if binary else "ascii"
    head = (
        f"FoamFile\n{{\n    version     2.0;\n    format      {fmt};\n"
        "    class       volScalarField;\n    object      nSurfaceLayers;\n}\n"
        "dimensions [0 0 0 0 0 0 0];\ninternalField uniform 0;\nboundaryField\n{\n"
        "    duct_floor\n    {\n        type calculated;\n        value uniform 5;\n    }\n"
        "    duct_cavity\n    {\n        type calculated;\n"
        f"        value nonuniform List<scalar> {len(values)}\n("
    ).encode()
    if binary:
        body = struct.pack(f"<{len(values)}d", *values)
    else:
        body = ("\n".join(f"{v:g}" for v in values) + "\n").encode()
    path.write_bytes(head + body + b")\n;\n    }\n}\n")


@pytest.mark.parametrize("binary", [False, True])
def test_layer_coverage_counted_face_by_face(tmp_path: Path, binary: bool) -> None:
    from ductgen.cfd.results import layer_report, patch_values

    counts = [5.0] * 18 + [3.0, 0.0]
    (tmp_path / "0").mkdir()
    _field(tmp_path / "0/nSurfaceLayers", counts, binary)
    assert patch_values(tmp_path / "0/nSurfaceLayers", "duct_cavity") == counts
    assert patch_values(tmp_path / "0/nSurfaceLayers", "duct_floor") == [5.0]
    (tmp_path / "log.snappyHexMesh").write_text(
        "patch       faces    layers   overall thickness\n"
        "                              [m]       [%]\n"
        "-----       -----    ------   ---       ---\n"
        "duct_cavity 20     4.15     0.00381   79.1\n"
    )
    rep = layer_report(tmp_path, 5)["duct_cavity"]
    assert rep["faces"] == 20 and rep["layers_mean"] == 4.15
    assert rep["coverage"] == pytest.approx(19 / 20)  # layers on 19 of 20 faces
    assert rep["coverage_all_layers"] == pytest.approx(18 / 20)  # all five on 18
    assert rep["thickness_fraction"] == pytest.approx(0.791)
