"""The package type-checks: ``mypy ductgen`` with the configuration in pyproject.toml
(``[tool.mypy]``: strict on ``ductgen.geometry``, ``ductgen.flow``, ``ductgen.design`` and
the solids modules cleaned last; no module skips checking)."""

from __future__ import annotations

import importlib.util
import os
import re
import subprocess
import sys
from typing import Any

import pytest

from tests.conftest import ROOT

try:
    import tomllib
except ModuleNotFoundError:  # Python 3.10
    import tomli as tomllib

#: Modules whose errors are not reported (34 when the type checker was added, all cleaned
#: since): no module may skip checking.
MAX_STILL_TO_CLEAN = 0


def _require_mypy() -> None:
    """Skip without mypy locally; fail under CI (the ``test`` extras install it)."""
    if importlib.util.find_spec("mypy") is not None:
        return
    if os.environ.get("CI", "").lower() == "true":
        pytest.fail("mypy is missing under CI: it is in the `test` extras of pyproject.toml")
    pytest.skip("mypy not installed (pip install -e '.[test]')")


def _mypy_config() -> dict[str, Any]:
    config = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))
    mypy: dict[str, Any] = config["tool"]["mypy"]
    return mypy


def test_mypy_is_clean() -> None:
    """``mypy ductgen`` as a contributor or CI types it: run in the checkout with mypy's
    own cache (``.mypy_cache``), so a check already made there (CI makes one before the
    tests) is not repeated from nothing; mypy's cache only skips modules whose source and
    dependencies are unchanged."""
    _require_mypy()
    args = [sys.executable, "-m", "mypy", "ductgen", "--no-error-summary"]
    run = subprocess.run(args, cwd=ROOT, capture_output=True, text=True, timeout=600)
    out = run.stdout + run.stderr
    assert run.returncode == 0, out[-6000:]
    # a stale entry in the configuration (a module renamed or removed) is a note, not an error
    assert "unused section" not in out, out[-2000:]


def test_no_module_skips_checking() -> None:
    config = _mypy_config()
    assert not config.get("ignore_errors"), "mypy must report errors in every module"
    overrides = config["overrides"]
    skipped = [m for o in overrides if o.get("ignore_errors") for m in o["module"]]
    assert len(skipped) <= MAX_STILL_TO_CLEAN, (
        f"{skipped} skip type checking; fix the module's errors instead of skipping it"
    )
    # a package module skipped another way: not followed, or passed off as untyped
    for o in overrides:
        ours = [m for m in o["module"] if m.startswith("ductgen")]
        assert not (ours and (o.get("follow_imports") or o.get("ignore_missing_imports"))), (
            f"{ours} are not followed by the type checker"
        )


def test_strict_modules() -> None:
    strict = next(o for o in _mypy_config()["overrides"] if "ductgen.geometry.*" in o["module"])
    for flag in ("disallow_untyped_defs", "disallow_any_generics", "warn_return_any"):
        assert strict.get(flag) is True, f"geometry/ is checked strictly: {flag}"
    assert {"ductgen.flow.*", "ductgen.design", "ductgen.design.*"} <= set(strict["module"]), (
        "flow/ and design/ are checked as strictly as geometry/"
    )
    for m in strict["module"]:
        path = ROOT / m.removesuffix(".*").replace(".", "/")
        assert path.with_suffix(".py").is_file() or (path / "__init__.py").is_file(), (
            f"{m} is listed but does not exist"
        )


def test_every_ignore_names_its_error() -> None:
    """A ``# type: ignore`` silences one named error code, never every error on the line."""
    bare = re.compile(r"#\s*type:\s*ignore(?!\[)")
    found = [
        f"{p.relative_to(ROOT)}:{n}"
        for p in sorted((ROOT / "ductgen").rglob("*.py"))
        for n, line in enumerate(p.read_text(encoding="utf-8").splitlines(), start=1)
        if bare.search(line)
    ]
    assert not found, f"blanket type: ignore (name the error code): {found}"
