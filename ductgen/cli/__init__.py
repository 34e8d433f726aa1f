"""Command-line interface (typer). Each command parses, calls one library function and
formats the result; heavy imports happen inside the commands.

:func:`main` is the console entry point. It installs the signal handlers before importing
the command table (typer, rich: the first moments of every run), so Ctrl-C or SIGTERM at
any moment ends with 130 / 143 and a sentence, not a traceback; and a ``build`` starts its
kernel worker before that import (:func:`_start_kernel_early`).
"""

from __future__ import annotations

import sys
from typing import Any

__all__ = ["app", "main"]


def main(argv: list[str] | None = None) -> int:
    """Console entry point; returns (and exits with) the process exit code."""
    from ductgen.cli import signals

    if argv is None:  # the real command line (not a caller embedding main())
        signals.install()
    try:
        if argv is None:
            _start_kernel_early(sys.argv[1:])
        from ductgen.cli.app import main as app_main

        return app_main(argv)
    except KeyboardInterrupt:  # Ctrl-C or SIGTERM while the command line was importing, or
        # before the command's own handling began (a build's worker may be running by then)
        sys.stderr.write(f"{signals.interrupted_message}\n")
        code = signals.interrupt_code(signals.take_signal())
        if argv is None:
            sys.exit(code)
        return code


def _start_kernel_early(args: list[str]) -> None:
    """For ``ductgen build`` (``--only`` read as the command will read it): start the kernel
    worker's imports now, before the command table is imported (typer, rich and the spec
    model: ~0.2 s the worker spends importing the kernel meanwhile). The command starts it
    again after parsing, which does nothing; a command line that turns out bad leaves an
    unused worker, killed at exit (:meth:`~ductgen.worker.KernelWorker.preload`)."""
    if not args or args[0] != "build" or "--help" in args:
        return
    only = None
    for i, arg in enumerate(args):
        if arg == "--only" and i + 1 < len(args):
            only = args[i + 1]
        elif arg.startswith("--only="):
            only = arg.split("=", 1)[1]
    from ductgen.cli.common import preload_kernel

    preload_kernel(only)


def __getattr__(name: str) -> Any:
    if name == "app":
        from ductgen.cli.app import app

        return app
    raise AttributeError(f"module 'ductgen.cli' has no attribute {name!r}")
