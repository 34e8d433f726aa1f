"""`ductgen sweep --scheduler`: the same sweep on a Dask cluster (a LocalCluster started
here) gives the same results as the local run."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from ductgen.cli.app import main
from ductgen.sweep import parse_vary, run_sweep

pytestmark = pytest.mark.slow

SPEC = """
name = "dask-test"
throat = { width = 90, depth = 22 }
ramp = { angle_deg = 7.0 }
lip = { style = "raised", thickness = 3 }
outlet = { kind = "none" }
"""


def test_dask_cluster_matches_local_run(tmp_path: Path) -> None:
    distributed = pytest.importorskip("distributed")
    spec = tmp_path / "s.toml"
    spec.write_text(SPEC)
    vary = "ramp.angle_deg=6,7"
    local = run_sweep(spec, [parse_vary(vary)], tmp_path / "local", jobs=1, only=["cutter"])
    with distributed.LocalCluster(
        n_workers=1, threads_per_worker=1, processes=True, dashboard_address=None
    ) as cluster:
        out = tmp_path / "dask"
        code = main(
            [
                "sweep",
                str(spec),
                "--vary",
                vary,
                "-o",
                str(out),
                "--only",
                "cutter",
                "--scheduler",
                cluster.scheduler_address,
                "--quiet",
            ]
        )
        assert code == 0
        with distributed.Client(cluster.scheduler_address) as client:
            # the variants ran on the cluster's worker, not in this process
            assert sum(client.run(lambda: 1).values()) == 1
    doc = json.loads((out / "comparison.json").read_text())
    assert [r["variant"] for r in doc["variants"]] == [r["variant"] for r in local.rows]
    for remote, here in zip(doc["variants"], local.rows, strict=True):
        assert remote["status"] == "built"
        for key in ("ramp_length_mm", "throat_area_mm2", "ramp_cavity_volume_mm3"):
            assert remote[key] == here[key]  # pure geometry: identical
        # the same kernel on the same inputs: the measured volumes agree
        assert remote["cutter_volume_mm3"] == pytest.approx(here["cutter_volume_mm3"], rel=1e-9)
        assert remote["sym_diff_volume_mm3"] == pytest.approx(
            here["sym_diff_volume_mm3"], rel=1e-6, abs=1e-6
        )
    # L = H / tan θ for a sharp entry; raised lip: H = D ([derived]; DEVELOPERS.md, Conventions)
    import math

    assert doc["variants"][1]["ramp_length_mm"] == pytest.approx(
        22.0 / math.tan(math.radians(7.0)), rel=1e-12
    )
