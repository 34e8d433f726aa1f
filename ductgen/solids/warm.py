"""The kernel worker's warm-up job, in a module that loads nothing when imported: a command
line that will build solids starts its worker with it before it has read its spec
(:meth:`ductgen.worker.KernelWorker.preload`)."""

from __future__ import annotations

__all__ = ["warm_up"]


def warm_up() -> str:
    """Import the CAD kernel and the solid builders in the worker ahead of the first build;
    returns the kernel's version."""
    import cadquery as cq

    import ductgen.solids.cad_io
    import ductgen.solids.check
    import ductgen.solids.cutter
    import ductgen.solids.insert
    import ductgen.solids.plug  # noqa: F401

    return str(cq.__version__)
