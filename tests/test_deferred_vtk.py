"""VTK deferred in the kernel worker: the CAD kernel imports without all of VTK, and code
that does use VTK still gets the real package."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

from ductgen.solids.warm import warm_up
from ductgen.worker import KernelWorker

ROOT = Path(__file__).resolve().parents[1]
#: A VTK module only the whole ``vtk`` package loads (nothing the kernel or cadquery needs).
WHOLE_VTK_ONLY = "vtkmodules.vtkGeovisCore"

_FRESH = f"""
import sys
from ductgen.deferred_vtk import defer_vtk
defer_vtk()
import cadquery as cq
assert abs(cq.Workplane().box(10, 20, 30).val().Volume() - 6000.0) < 1e-6
stand_in = sys.modules["vtk"]
assert {WHOLE_VTK_ONLY!r} not in sys.modules, "the kernel's import loaded all of VTK"
import vtk  # the import statement alone loads nothing either
assert vtk is stand_in and {WHOLE_VTK_ONLY!r} not in sys.modules
points = vtk.vtkPoints()  # a name asked: the real package answers
points.InsertNextPoint(1.0, 2.0, 3.0)
assert points.GetNumberOfPoints() == 1
assert sys.modules["vtk"] is not stand_in and {WHOLE_VTK_ONLY!r} in sys.modules
assert stand_in.vtkPolyData is sys.modules["vtk"].vtkPolyData  # old references still answer
import vtk.util.numpy_support  # a submodule, through the real package's path
print("ok")
"""


def test_the_kernel_imports_without_vtk_and_vtk_still_answers() -> None:
    r = subprocess.run(
        [sys.executable, "-c", _FRESH],
        env={**os.environ, "PYTHONPATH": str(ROOT)},
        capture_output=True,
        text=True,
        timeout=300,
    )
    assert r.returncode == 0 and r.stdout.strip() == "ok", r.stderr[-3000:]


def test_a_kernel_worker_runs_with_vtk_deferred() -> None:
    worker = KernelWorker()
    try:
        worker.run(warm_up)  # the CAD kernel and the solid builders imported
        loaded = worker.run(eval, f"{WHOLE_VTK_ONLY!r} in __import__('sys').modules")
        doc = worker.run(eval, "__import__('sys').modules['vtk'].__doc__")
    finally:
        worker.close()
    assert loaded is False
    assert "imported on first use" in doc
