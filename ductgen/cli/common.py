"""What every command shares: the stderr console and the checks of common options."""

from __future__ import annotations

from pathlib import Path
from typing import Annotated

import typer
from rich.console import Console

from ductgen.cli.preload import preload_kernel

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
