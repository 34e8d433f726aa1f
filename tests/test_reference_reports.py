"""Regression guard: every sample's report.json numbers stay what the stored reference
reports say (tests/data/reference_reports, made before the package restructure; see their
``source``). Not an outside check — it proves that refactoring changed no result: geometry and
flow numbers to 1e-9 relative, values measured on the kernel's triangulation to 1e-8."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest

from tests.conftest import ROOT, sample_ids

REFERENCES = ROOT / "tests" / "data" / "reference_reports"


def test_every_sample_has_a_reference() -> None:
    assert sorted(p.stem for p in REFERENCES.glob("*.json")) == sorted(sample_ids())


@pytest.mark.slow
def test_reports_equal_the_references(sample_builds, tmp_path: Path) -> None:  # type: ignore[no-untyped-def]
    for name, (result, _) in sample_builds.items():
        (tmp_path / f"{name}.json").write_text(json.dumps(result.report), encoding="utf-8")
    run = subprocess.run(
        [
            sys.executable,
            str(ROOT / "bench" / "compare_reports.py"),
            str(REFERENCES),
            str(tmp_path),
        ],
        capture_output=True,
        text=True,
    )
    assert run.returncode == 0, run.stdout[-4000:]
    assert "0 differences" in run.stdout
