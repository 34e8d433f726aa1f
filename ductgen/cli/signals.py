"""Signals as exit codes: SIGTERM/SIGHUP unwind like Ctrl-C, at any moment of a run.

Light on purpose (standard library only): the handlers are installed before the command
line's heavy imports (typer, rich, numpy, pydantic: a second or two), so a signal while
importing ends the run with 128 + the signal number and one sentence, never a traceback.
"""

from __future__ import annotations

import signal
import threading

__all__ = ["Terminated", "install", "interrupt_code", "interrupted_message", "take_signal"]


class Terminated(KeyboardInterrupt):
    """``SIGTERM`` (or ``SIGHUP``) received: unwinds like Ctrl-C, so every ``finally`` and
    staging clean-up runs and kernel workers and OpenFOAM tools are stopped."""

    def __init__(self, signum: int) -> None:
        super().__init__(signum)
        self.signum = signum


_SIGNAL: list[int] = []  # the terminating signal received, if any


def _on_terminate(signum: int, _frame: object) -> None:
    _SIGNAL.append(signum)
    raise Terminated(signum)


def install() -> None:
    """Turn SIGTERM and SIGHUP into :class:`Terminated` (main thread; default handlers only)."""
    if threading.current_thread() is not threading.main_thread():
        return
    for name in ("SIGTERM", "SIGHUP"):
        sig = getattr(signal, name, None)
        if sig is not None and signal.getsignal(sig) in (signal.SIG_DFL, None):
            signal.signal(sig, _on_terminate)


def take_signal() -> int | None:
    """The terminating signal received since the last call (and forget it), or None."""
    sig = _SIGNAL[0] if _SIGNAL else None
    _SIGNAL.clear()
    return sig


def interrupt_code(sig: int | None) -> int:
    """Exit code of an interrupted run: 128 + the signal (Ctrl-C, SIGINT: 130), the
    interrupt now handled (:func:`_forget_escaped_interrupt`)."""
    _forget_escaped_interrupt()
    return 128 + (sig if sig is not None else int(signal.SIGINT))


def _forget_escaped_interrupt() -> None:
    """Let the exit code chosen stand. CPython (3.8 on) remembers a ``KeyboardInterrupt``
    that left any ``exec`` of a source string (scipy's array-API module imports numpy's
    names that way, during the first seconds of a build) and, under ``python -m``, ends the
    process by SIGINT at exit whatever code it exits with; the next ``exec`` of a string
    that ends normally clears that memory (``run_eval_code_obj`` in CPython's
    ``Python/pythonrun.c``)."""
    exec("None", {})  # a constant: clears the interpreter's flag


#: What an interrupted run prints on stderr.
interrupted_message = "interrupted: nothing partial was published (previous files are unchanged)"
