"""Child processes that die with their parent, however it ends (crash, ``SIGKILL``,
``SIGTERM``, normal exit): the kernel workers and a sweep's pool processes."""

from __future__ import annotations

import os
import signal
import sys
import threading

__all__ = ["die_with_parent"]

_PR_SET_PDEATHSIG = 1


def die_with_parent(parent_pid: int, sig: int = signal.SIGKILL, prctl: bool = True) -> None:
    """Make the calling process die with its parent, on every exit path of the parent
    (crash, ``SIGKILL``, ``SIGTERM``, normal exit).

    On Linux the kernel delivers ``sig`` when the parent dies (``PR_SET_PDEATHSIG`` via
    ``prctl``); where that is not available a daemon thread checks once a second that
    ``parent_pid`` is still the parent. Between jobs the child also leaves when its pipe
    to the parent closes (end of file on the socket). Interrupts (``SIGINT`` from the terminal
    reaches the whole process group) are ignored here: the parent decides.

    ``prctl=False`` when the parent started the child from a thread other than its main
    one: Linux sends the signal when that *thread* ends (a web server's request thread, a
    page's job thread), not the process, so the checking thread is used instead.
    """
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    armed = False
    if prctl and sys.platform.startswith("linux"):
        try:
            import ctypes

            libc = ctypes.CDLL(None, use_errno=True)
            armed = libc.prctl(_PR_SET_PDEATHSIG, int(sig), 0, 0, 0) == 0
        except (OSError, AttributeError):  # pragma: no cover - no libc prctl
            armed = False
    if os.getppid() != parent_pid:  # the parent died before prctl took effect
        os._exit(0)
    if armed:
        return  # no extra thread: its stack and malloc arena count against RLIMIT_AS

    def _watch() -> None:  # pragma: no cover - runs in the child
        import time

        while True:
            time.sleep(1.0)
            if os.getppid() != parent_pid:
                os._exit(0)

    threading.Thread(target=_watch, name="ductgen-parent-watch", daemon=True).start()
