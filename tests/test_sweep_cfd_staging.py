"""``sweep --cfd``: a variant's build and CFD results are staged and published together, so an
interrupted or failed CFD run leaves nothing half-written in the variant folder (the same
all-or-nothing rule as ``ductgen cfd``). The solver is replaced by stand-ins here: what is
checked is where the files land, not the flow."""

from __future__ import annotations

import json
from pathlib import Path
from typing import Any

import pytest

import ductgen.cfd
from ductgen.report import BuildRecord, report_bytes
from ductgen.spec import load_spec
from ductgen.sweep.results import VariantTask
from ductgen.sweep.run import build_variant
from ductgen.sweep.variants import STAMP_FILE
from tests.conftest import ROOT

pytestmark = pytest.mark.slow  # every test here builds a variant's cutter in the kernel worker

SAMPLE = ROOT / "ductgen" / "data" / "samples" / "drone-avionics-vent.toml"


def _task(folder: Path) -> VariantTask:
    return VariantTask(
        "v1", load_spec(SAMPLE), str(folder), ("cutter",), "normal", "h", {}, None, "coarse", False
    )


def _half_written_then_fail(spec: Any, design: Any, record: Any, stl: Path, out: Path,
                            **_kw: Any) -> dict[str, Any]:  # fmt: skip
    (out / "cfd-coarse").mkdir()
    (out / "cfd-coarse" / "log.simpleFoam").write_text("Time = 1\n")
    (out / "cfd.json").write_text("{")
    raise RuntimeError("simpleFoam stopped")


def _fake_cfd(spec: Any, design: Any, record: BuildRecord, stl: Path, out: Path,
              **_kw: Any) -> dict[str, Any]:  # fmt: skip
    assert stl.parent == out and stl.is_file()  # the cutter is in the staging folder too
    assert not (out.parent / stl.name).exists()  # not yet published
    section = {"result": {"volume_flow_m3_s": 0.0066}}
    (out / "cfd.json").write_text(json.dumps(section))
    record.cfd = section
    (out / "report.json").write_bytes(report_bytes(record.to_report()))
    return section


def test_failed_cfd_publishes_nothing(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setattr(ductgen.cfd, "cfd_for_build", _half_written_then_fail)
    folder = tmp_path / "v1"
    res = build_variant(_task(folder))
    assert res.status == "failed" and "simpleFoam stopped" in (res.error or "")
    left = sorted(p.name for p in folder.iterdir()) if folder.exists() else []
    assert left == []  # no cutter, no report, no case, no cfd.json, no staging folder


def test_cfd_results_are_published_with_the_build(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    monkeypatch.setattr(ductgen.cfd, "cfd_for_build", _fake_cfd)
    folder = tmp_path / "v1"
    res = build_variant(_task(folder))
    assert res.status == "built", res.error
    names = {p.name for p in folder.iterdir()}
    assert {"cfd.json", "report.json", STAMP_FILE} <= names
    assert not [n for n in names if n.startswith(".ductgen-staging")]
    stamp = json.loads((folder / STAMP_FILE).read_text())
    assert "cfd.json" in stamp["files"]  # a re-run checks the CFD result is there too
    assert json.loads((folder / "report.json").read_text())["cfd"]["result"]
