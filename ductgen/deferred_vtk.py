"""VTK imported on first use in a kernel worker.

The CAD kernel's VTK bridge (``OCP.IVtkOCC``, which cadquery imports with its shapes) runs
``import vtk``, and that package imports every VTK module (~160 of them: ~0.4 s of a kernel
worker's start on the development machine) though the solids never use one; the preview's
picture imports the VTK modules it draws with itself. :func:`defer_vtk` puts a stand-in
there instead, which imports the real package the first time a name is asked of it, so
nothing changes for code that does use VTK.
"""

from __future__ import annotations

import sys
import types
from importlib import import_module
from typing import Any

__all__ = ["defer_vtk"]


def defer_vtk() -> None:
    """Let ``import vtk`` give a stand-in until a name is asked of it (then the real
    package is imported and answers). Call first thing in a fresh interpreter, before the
    CAD kernel is imported; does nothing once ``vtk`` is imported.

    The stand-in is a plain module without ``__spec__``, so the import system's own
    lookups (``import vtk`` again) do not load it: a module of
    ``importlib.util.LazyLoader`` loads on the first of those."""
    if "vtk" in sys.modules:
        return
    stand_in = types.ModuleType("vtk", "VTK, imported on first use (ductgen.deferred_vtk)")

    def __getattr__(name: str) -> Any:  # PEP 562: asked only for names the module lacks
        if sys.modules.get("vtk") is stand_in:
            del sys.modules["vtk"]
            try:
                import_module("vtk")
            except BaseException:
                sys.modules["vtk"] = stand_in
                raise
        return getattr(sys.modules["vtk"], name)

    stand_in.__getattr__ = __getattr__  # type: ignore[method-assign]
    sys.modules["vtk"] = stand_in
