"""The kernel worker started first thing: its imports (~2 s) run while the command line
imports the rest (typer, rich: ~0.2 s) and reads the spec. Imports nothing heavy itself."""

from __future__ import annotations

import contextlib

__all__ = ["early_preload", "preload_kernel"]


def preload_kernel(only: str | None, beside: bool = False) -> None:
    """When the build may make a solid, start the kernel worker's imports now, while this
    process imports the rest and reads the spec (:meth:`~ductgen.worker.KernelWorker.preload`;
    a build served from the solid cache kills it at the end without waiting); ``beside``: the
    side worker's too (the design page, whose builds use both)."""
    from ductgen.errors import SpecError
    from ductgen.solids.kinds import SOLID_KINDS
    from ductgen.solids.warm import warm_up
    from ductgen.worker import WorkerLimits, default_worker, side_worker

    if only is not None and not any(k.strip() in SOLID_KINDS for k in only.split(",")):
        return
    with contextlib.suppress(SpecError):  # a bad DUCTGEN_* value: the build says so
        WorkerLimits.from_env()
        default_worker().preload(warm_up)
        if beside:
            side_worker(default_worker().limits).preload(warm_up)


def early_preload(args: list[str]) -> None:
    """``ductgen build`` (``args``: the command line after the program's name): start the
    kernel worker before the command table is imported, for the outputs ``--only`` names
    (:func:`preload_kernel`; the command calls it again, which starts nothing twice). Any
    other command, or a request for help, starts nothing."""
    if not args or args[0] != "build" or any(a in ("--help", "-h") for a in args):
        return
    only = None
    for i, a in enumerate(args):
        if a == "--only" and i + 1 < len(args):
            only = args[i + 1]
        elif a.startswith("--only="):
            only = a.partition("=")[2]
    preload_kernel(only)
