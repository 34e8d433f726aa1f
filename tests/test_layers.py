"""The package's shape: layers (import-linter contracts in pyproject.toml), no import
cycles between modules (grimp's import graph), modules and functions of a readable size."""

from __future__ import annotations

import grimp
import pytest

from tests.conftest import ROOT

#: Longest module (lines) the house style allows before it is split.
MAX_MODULE_LINES = 400
#: Longest function or method (lines, ``def`` to its last line, decorators aside).
MAX_FUNCTION_LINES = 60
#: Functions still over :data:`MAX_FUNCTION_LINES`: ``"path/to/module.py::name"`` → why it
#: is not cut yet. Keep it short; an entry that is no longer over the limit fails too.
LONG_FUNCTIONS: dict[str, str] = {}


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


def _function_lengths() -> dict[str, int]:
    """Every function and method in the package: ``"ductgen/mod.py::name"`` → its lines."""
    import ast

    out: dict[str, int] = {}
    for path in sorted((ROOT / "ductgen").rglob("*.py")):
        rel = path.relative_to(ROOT).as_posix()
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            if isinstance(node, (ast.FunctionDef, ast.AsyncFunctionDef)):
                key = f"{rel}::{node.name}"
                length = (node.end_lineno or node.lineno) - node.lineno + 1
                out[key] = max(out.get(key, 0), length)
    return out


def test_function_size() -> None:
    lengths = _function_lengths()
    long = {k: n for k, n in lengths.items() if n > MAX_FUNCTION_LINES}
    new = sorted(f"{k}: {n} lines" for k, n in long.items() if k not in LONG_FUNCTIONS)
    assert not new, f"functions over {MAX_FUNCTION_LINES} lines; cut them at a seam: {new}"
    stale = sorted(k for k in LONG_FUNCTIONS if k not in long)
    assert not stale, f"LONG_FUNCTIONS entries no longer over the limit (remove them): {stale}"


def _worker_calls() -> list[tuple[str, int, str]]:
    """Every ``.run(...)`` / ``.run_within(...)`` call in the package whose job argument is a
    string or a function (imported, or defined at the module's top level): (module file,
    line, the function's ``module:name`` or the string)."""
    import ast

    found = []
    for path in sorted((ROOT / "ductgen").rglob("*.py")):
        tree = ast.parse(path.read_text(encoding="utf-8"))
        module = ".".join(path.relative_to(ROOT).with_suffix("").parts)
        functions = {
            n.name: f"{module}:{n.name}" for n in tree.body if isinstance(n, ast.FunctionDef)
        }
        for node in ast.walk(tree):
            if isinstance(node, ast.ImportFrom) and node.module:
                for a in node.names:
                    functions[a.asname or a.name] = f"{node.module}:{a.name}"
        for node in ast.walk(tree):
            if not (isinstance(node, ast.Call) and isinstance(node.func, ast.Attribute)):
                continue
            if isinstance(node.func.value, ast.Name) and node.func.value.id == "subprocess":
                continue
            where = {"run": 0, "run_within": 1}.get(node.func.attr)
            if where is None or len(node.args) <= where:
                continue
            job = node.args[where]
            if isinstance(job, ast.Constant) and isinstance(job.value, str):
                found.append((str(path), node.lineno, f"string {job.value!r}"))
            elif isinstance(job, ast.Name) and job.id in functions:
                found.append((str(path), node.lineno, functions[job.id]))
    return found


def test_every_kernel_job_is_a_registered_function() -> None:
    """The worker is handed functions from the one table of kernel jobs, never a name
    string (which the layer contracts could not see)."""
    from ductgen.pipeline.jobs import KERNEL_JOBS

    jobs = _worker_calls()
    assert len(jobs) >= 7, jobs  # builder, solid cache (2), preview (2), panel, check
    unknown = [c for c in jobs if c[2] not in KERNEL_JOBS]
    assert not unknown, f"worker calls with a job outside ductgen.pipeline.jobs: {unknown}"


def test_kernel_jobs_do_not_load_the_kernel_on_import() -> None:
    """Importing the table (and so every job's module) loads neither the CAD kernel nor VTK:
    that happens in the worker only."""
    import subprocess
    import sys

    code = (
        "import sys, ductgen.pipeline.jobs; "
        "print(sorted(m for m in ('cadquery', 'OCP', 'vtk', 'vtkmodules') if m in sys.modules))"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "[]", out.stdout + out.stderr


def test_design_does_not_reach_solids() -> None:
    """``design/`` asks the panel reader below it for samples, never ``solids/`` (also a
    layer contract; checked here on the import graph, kernel-free imports included)."""
    graph = grimp.build_graph("ductgen")
    design = {m for m in graph.modules if m.startswith("ductgen.design")}
    reached = {n for m in design for n in graph.find_modules_directly_imported_by(m)}
    assert not {n for n in reached if n.startswith("ductgen.solids")}, reached
