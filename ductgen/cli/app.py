"""The typer application and the mapping from errors to exit codes.

Exit 0 on success, 2 on bad input (:class:`~ductgen.errors.SpecError`, usage errors),
1 on an internal or kernel failure. Messages go to stderr. Set ``DUCTGEN_DEBUG=1`` to see
the traceback of an unexpected error.
"""

from __future__ import annotations

import os
import sys

import typer
from rich.console import Console

from ductgen.errors import DuctgenError

__all__ = ["app", "err_console", "main"]

app = typer.Typer(
    name="ductgen",
    help="Flush (NACA-type) submerged air inlets from one spec file: geometry, airflow, "
    "cutter / insert / plug solids and 1:1 templates.",
    no_args_is_help=True,
    add_completion=False,
    pretty_exceptions_enable=False,
)

err_console = Console(stderr=True, highlight=False)


def main(argv: list[str] | None = None) -> int:
    """Console entry point; returns (and exits with) the process exit code."""
    import click

    from ductgen.cli import commands  # noqa: F401  (registers the commands)

    try:
        rv = app(args=argv, standalone_mode=False)
        code = rv if isinstance(rv, int) else 0  # click returns Exit codes in this mode
    except click.exceptions.Exit as ex:
        code = ex.exit_code
    except click.exceptions.Abort:
        err_console.print("aborted")
        code = 1
    except click.ClickException as ex:
        ex.show(file=sys.stderr)
        code = 2
    except DuctgenError as ex:
        err_console.print(f"[bold red]error:[/] {ex}", markup=True, soft_wrap=True)
        code = ex.exit_code
    except KeyboardInterrupt:
        code = 130
    except Exception as ex:  # an internal failure: short message, traceback on request
        if os.environ.get("DUCTGEN_DEBUG"):
            raise
        err_console.print(
            f"[bold red]internal error:[/] {type(ex).__name__}: {ex} "
            "(set DUCTGEN_DEBUG=1 for the traceback)",
            markup=True,
            soft_wrap=True,
        )
        code = 1
    if argv is None:
        sys.exit(code)
    return code
