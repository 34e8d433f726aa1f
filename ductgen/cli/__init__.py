"""Command-line interface (typer). Each command parses, calls one library function and
formats the result; heavy imports happen inside the commands.

:func:`main` is the console entry point. It installs the signal handlers before importing
the command table (typer, rich: the first moments of every run), so Ctrl-C or SIGTERM at
any moment ends with 130 / 143 and a sentence, not a traceback; on ``ductgen build`` it
starts the kernel worker's imports before that (:mod:`ductgen.cli.preload`).
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
        if argv is None:  # ``ductgen build``: the kernel's imports start first
            from ductgen.cli.preload import early_preload

            early_preload(sys.argv[1:])
        from ductgen.cli.app import main as app_main

        return app_main(argv)
    except KeyboardInterrupt:  # Ctrl-C or SIGTERM while the command line was importing, or
        # before the command's own handling began
        sys.stderr.write(f"{signals.interrupted_message}\n")
        code = signals.interrupt_code(signals.take_signal())
        if argv is None:
            sys.exit(code)
        return code


def __getattr__(name: str) -> Any:
    if name == "app":
        from ductgen.cli.app import app

        return app
    raise AttributeError(f"module 'ductgen.cli' has no attribute {name!r}")
