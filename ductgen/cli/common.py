"""What every command shares: the stderr console and the checks of common options."""

from __future__ import annotations

from pathlib import Path

from rich.console import Console

__all__ = ["err_console", "out_folder"]

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
