"""The typer application and the mapping from errors to exit codes.

Exit 0 on success, 2 on bad input (:class:`~ductgen.errors.SpecError`, usage errors),
1 on an internal or kernel failure. Messages go to stderr. Set ``DUCTGEN_DEBUG=1`` to see
the traceback of an unexpected error.
"""

from __future__ import annotations

import os
import sys
from collections.abc import Callable
from typing import Any

import typer

from ductgen.cli import build_cmd, cfd_cmd, check_cmd, design_cmd, size_cmd, sweep_cmd
from ductgen.cli.common import err_console
from ductgen.cli.signals import (
    Terminated,
    install,
    interrupt_code,
    interrupted_message,
    take_signal,
)
from ductgen.errors import DuctgenError

__all__ = ["COMMANDS", "Terminated", "app", "main"]

app = typer.Typer(
    name="ductgen",
    help="Flush (NACA-type) submerged air inlets from one spec file: geometry, airflow, "
    "cutter / insert / plug solids and 1:1 templates.",
    no_args_is_help=True,
    add_completion=False,
    pretty_exceptions_enable=False,
    rich_markup_mode=None,  # help text is printed literally (no markup, no :emoji: codes)
)

#: Command name → function: the whole command line, in one table.
COMMANDS: dict[str, Callable[..., Any]] = {
    "build": build_cmd.build_command,
    "init": build_cmd.init_command,
    "profiles": build_cmd.profiles_command,
    "check": check_cmd.check_command,
    "size": size_cmd.size_command,
    "sweep": sweep_cmd.sweep_command,
    "design": design_cmd.design_command,
    "cfd": cfd_cmd.cfd_command,
}
for _name, _command in COMMANDS.items():
    app.command(_name)(_command)


def _click_exceptions() -> tuple[
    tuple[type[Exception], ...], tuple[type[Exception], ...], tuple[type[Exception], ...]
]:
    """(Exit, Abort, ClickException) classes of click and of typer's own copy of click
    (typer >= 0.2x raises the latter)."""
    import click
    import typer

    mods = [click.exceptions, typer, typer.exceptions]
    try:
        from typer._click import exceptions as typer_click

        mods.append(typer_click)
    except ImportError:  # pragma: no cover - typer without a vendored click
        pass

    def found(name: str) -> tuple[type[Exception], ...]:
        got = {getattr(m, name, None) for m in mods}
        return tuple(t for t in got if isinstance(t, type) and issubclass(t, Exception))

    return found("Exit"), found("Abort"), found("ClickException")


def main(argv: list[str] | None = None) -> int:
    """Console entry point; returns (and exits with) the process exit code."""
    if argv is None:  # the real command line (not a caller embedding main())
        install()
    exits, aborts, usage = _click_exceptions()
    try:
        rv = app(args=argv, standalone_mode=False)
        code = rv if isinstance(rv, int) else 0  # click returns Exit codes in this mode
    except exits as ex:
        code = int(getattr(ex, "exit_code", 1))
    except aborts:
        code = 130
    except usage as ex:
        getattr(ex, "show")(file=sys.stderr)  # noqa: B009 - click's and typer's classes
        code = 2
    except DuctgenError as ex:
        err_console.print(f"error: {ex}", soft_wrap=True)
        code = ex.exit_code
    except KeyboardInterrupt:
        code = 130
    except RecursionError:
        err_console.print("error: the input is nested too deeply to read")
        code = 2
    except Exception as ex:  # an internal failure: short message, traceback on request
        if os.environ.get("DUCTGEN_DEBUG"):
            raise
        from ductgen.errors import excerpt

        err_console.print(
            f"internal error: {type(ex).__name__}: {excerpt(str(ex), 400)} "
            "(set DUCTGEN_DEBUG=1 for the traceback)",
            soft_wrap=True,
        )
        code = 1
    sig = take_signal()
    if code == 130 or sig is not None:  # typer turns an interrupt into exit code 130 itself
        err_console.print(interrupted_message)
        code = interrupt_code(sig)
    if argv is None:
        sys.exit(code)
    return code
