"""``ductgen cfd --write-only`` publishes everything together from its staging folder: the
cutter files, the case folder with its Allrun script, ``cfd.json`` and the report with its
``cfd`` section; a second run refuses to overwrite them without ``--force`` and with it
replaces the case folder whole. No OpenFOAM needed (nothing is run)."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from ductgen.cli.app import main
from tests.conftest import SAMPLES

pytestmark = pytest.mark.usefixtures("keep_signal_handlers")


@pytest.mark.slow
def test_write_only_publishes_together_and_respects_force(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    club = next(p for p in SAMPLES if p.stem == "club-racer-brake")
    out = tmp_path / "cfd"
    args = ["cfd", str(club), "-o", str(out), "--write-only", "--quiet"]
    assert main(args) == 0
    names = sorted(p.name for p in out.iterdir())
    stem = "club-racer-brake"
    assert names == sorted(
        ["cfd-coarse", "cfd.json", "report.json", f"{stem}-cutter.step", f"{stem}-cutter.stl"]
    )
    doc = json.loads((out / "cfd.json").read_text())
    assert doc["levels"][0]["case"] == "cfd-coarse"  # a name in -o, not the staging path
    assert json.loads((out / "report.json").read_text())["cfd"] == doc
    assert (out / "cfd-coarse" / "Allrun").stat().st_mode & 0o111
    (out / "cfd-coarse" / "stale-marker").write_text("from an earlier run")

    capsys.readouterr()
    assert main(args) == 2  # refuses to overwrite
    assert "--force" in capsys.readouterr().err
    assert main([*args, "--force"]) == 0
    assert not (out / "cfd-coarse" / "stale-marker").exists()  # the folder replaced whole
    assert (out / "cfd-coarse" / "Allrun").is_file()
    assert not list(out.glob(".ductgen-staging-*"))
