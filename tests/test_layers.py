"""The package's shape: layers (import-linter contracts in pyproject.toml), no import
cycles between modules (grimp's import graph), modules of a readable size."""

from __future__ import annotations

import grimp
import pytest

from tests.conftest import ROOT

#: Longest module (lines) the house style allows before it is split (~400; a little slack).
MAX_MODULE_LINES = 450


def test_import_linter_contracts_pass(capsys: pytest.CaptureFixture[str]) -> None:
    from importlinter.cli import lint_imports

    code = lint_imports(config_filename=str(ROOT / "pyproject.toml"), no_cache=True)
    out = capsys.readouterr().out
    assert code == 0, out[-4000:]
    assert "BROKEN" not in out and out.count("KEPT") >= 3


def test_no_import_cycles() -> None:
    graph = grimp.build_graph("ductgen")
    cycles = sorted(
        (m, n)
        for m in graph.modules
        for n in graph.find_modules_directly_imported_by(m)
        if n.startswith("ductgen") and graph.chain_exists(importer=n, imported=m)
    )
    assert not cycles, f"modules that import each other (directly or through others): {cycles}"


@pytest.mark.parametrize("path", sorted((ROOT / "ductgen").rglob("*.py")), ids=str)
def test_module_size(path) -> None:  # type: ignore[no-untyped-def]
    lines = len(path.read_text(encoding="utf-8").splitlines())
    assert lines <= MAX_MODULE_LINES, f"{path.name}: {lines} lines; split it by concern"
