"""What every command shares: the stderr console and the checks of common options."""

from __future__ import annotations

import contextlib
from pathlib import Path
from typing import Annotated

import typer
from rich.console import Console

__all__ = [
    "NoCacheOption",
    "QualityOption",
    "QuietOption",
    "err_console",
    "out_folder",
    "preload_kernel",
]

# Options more than one command takes, with one wording (typer reads them from annotations).
QuietOption = Annotated[bool, typer.Option("--quiet", "-q", help="print nothing on success")]
QualityOption = Annotated[
    str,
    typer.Option(
        "--quality",
        help="STL tessellation: draft | normal | fine",
    ),
]
NoCacheOption = Annotated[
    bool,
    typer.Option("--no-cache", help="build every solid, neither reading nor filling the cache"),
]

#: stderr console; user text is never read as markup or emoji codes (``120:100:10`` stays).
err_console = Console(stderr=True, highlight=False, emoji=False, markup=False)


def out_folder(out: str | None, default: Path) -> Path:
    """The ``-o/--out`` folder: ``default`` when not given; an empty text is refused
    (it would silently mean the current folder)."""
    from ductgen.errors import SpecError

    if out is None:
        return default
    if not out.strip():
        raise SpecError("-o/--out", out, "a folder path", "the path is empty")
    return Path(out)


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
