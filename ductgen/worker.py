"""A kernel worker process with a memory limit and a timeout.

CAD-kernel work runs in a child process so that a pathological spec cannot hang or
exhaust the machine (one bad boolean was measured growing past 20 GB, brief §9): the child
caps its address space with ``RLIMIT_AS``, the parent waits at most ``timeout_s`` per job,
and a job that crashes, runs out of memory or overruns becomes a
:class:`~ductgen.errors.GeometryError` naming the stage. The child stays alive between
jobs (importing the kernel costs ~2 s) and is restarted after a failure.

Jobs are named by ``"module:function"`` and called with picklable arguments; the function
may call :func:`stage` to say what it is doing, so a timeout or crash can name the stage.
"""

from __future__ import annotations

import atexit
import contextlib
import os
import signal
import socket
import subprocess
import sys
import threading
import traceback
from dataclasses import dataclass
from importlib import import_module
from multiprocessing.connection import Connection
from typing import Any

from ductgen.errors import DuctgenError, GeometryError

__all__ = [
    "MEMORY_MB_RANGE",
    "TIMEOUT_S_RANGE",
    "KernelWorker",
    "WorkerLimits",
    "default_worker",
    "die_with_parent",
    "env_limit",
    "stage",
]

_stage_conn: Any = None


@dataclass(frozen=True)
class WorkerLimits:
    """Limits of one kernel process.

    Attributes:
        memory_mb: address-space cap of the child (MiB); ``DUCTGEN_MEMORY_MB`` overrides.
        timeout_s: wall-clock limit of one job (s); ``DUCTGEN_TIMEOUT_S`` overrides.
    """

    memory_mb: int = 8192
    timeout_s: float = 300.0

    @classmethod
    def from_env(cls) -> WorkerLimits:
        """The limits, with ``DUCTGEN_MEMORY_MB`` and ``DUCTGEN_TIMEOUT_S`` when set.

        Raises:
            SpecError: naming the variable, on a value that is not a number in its range.
        """
        return cls(
            memory_mb=int(env_limit(*MEMORY_MB_RANGE, default=cls.memory_mb, whole=True)),
            timeout_s=env_limit(*TIMEOUT_S_RANGE, default=cls.timeout_s),
        )


#: (variable, smallest, largest, unit, why) of the address-space cap. Measured on a full
#: build of a small spec: at 1 GiB the CAD kernel does not even load, at 2 GiB the preview
#: renderer runs out; 3 GiB builds everything.
MEMORY_MB_RANGE = (
    "DUCTGEN_MEMORY_MB",
    3072.0,
    1048576.0,
    "MiB",
    "the kernel process's memory cap; the CAD kernel and the preview renderer need about "
    "3 GiB of address space to load and run",
)
#: (variable, smallest, largest, unit, why) of the per-job time limit.
TIMEOUT_S_RANGE = (
    "DUCTGEN_TIMEOUT_S",
    0.1,
    86400.0,
    "s",
    "the longest one kernel job may run before it is stopped (at most a day)",
)


def env_limit(
    name: str, lo: float, hi: float, unit: str, why: str, *, default: float, whole: bool = False
) -> float:
    """The number in environment variable ``name`` (``default`` when unset or empty), checked
    to be finite (and whole with ``whole``) and within ``lo``..``hi``.

    Raises:
        SpecError: naming the variable, its range and why (exit 2).
    """
    import math

    from ductgen.errors import SpecError

    text = os.environ.get(name, "").strip()
    if not text:
        return default
    allowed = f"{'a whole number' if whole else 'a number'} from {lo:,.10g} to {hi:,.10g} {unit}"
    try:
        value = float(text)
    except ValueError:
        raise SpecError(name, text, allowed, f"not a number: {why}") from None
    if not math.isfinite(value) or (whole and not value.is_integer()):
        raise SpecError(name, text, allowed, why)
    if value < lo:
        reason = "too little memory" if unit == "MiB" else "too short"
        raise SpecError(name, text, allowed, f"{reason}: {why}")
    if value > hi:
        raise SpecError(name, text, allowed, why)
    return value


def stage(name: str) -> None:
    """Tell the parent which stage the current job has reached (no-op outside a worker)."""
    if _stage_conn is not None:
        _send(_stage_conn, ("stage", name))


def die_with_parent(parent_pid: int, sig: int = signal.SIGKILL) -> None:
    """Make the calling process die with its parent, on every exit path of the parent
    (crash, ``SIGKILL``, ``SIGTERM``, normal exit).

    On Linux the kernel delivers ``sig`` when the parent dies (``PR_SET_PDEATHSIG`` via
    ``prctl``); where that is not available a daemon thread checks once a second that
    ``parent_pid`` is still the parent. Between jobs the child also leaves when its pipe
    to the parent closes (end of file on the socket). Interrupts (``SIGINT`` from the terminal
    reaches the whole process group) are ignored here: the parent decides.
    """
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    armed = False
    if sys.platform.startswith("linux"):
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


_PR_SET_PDEATHSIG = 1


def _main(fd: int, memory_mb: int, parent_pid: int = 0) -> None:  # pragma: no cover - child
    if parent_pid:
        die_with_parent(parent_pid)
    # the parent went away or gave up: leave quietly, without a traceback
    with contextlib.suppress(BrokenPipeError, ConnectionError, EOFError, KeyboardInterrupt):
        _child(Connection(fd), memory_mb)
    sys.stdout.flush()
    os._exit(0)


def _send(conn: Any, msg: Any) -> None:  # pragma: no cover - runs in the child
    """Send to the parent; exit quietly (no traceback) when it is gone."""
    try:
        conn.send(msg)
    except (OSError, EOFError):
        os._exit(0)


def _child(conn: Any, memory_mb: int) -> None:  # pragma: no cover - runs in the child
    global _stage_conn
    import resource

    limit = memory_mb * 1024 * 1024
    resource.setrlimit(resource.RLIMIT_AS, (limit, limit))
    _stage_conn = conn
    while True:
        try:
            raw = conn.recv_bytes()
        except (EOFError, OSError):
            return
        try:
            import pickle

            msg = pickle.loads(raw)
            if msg is None:
                return
            target, args, kwargs = msg
            mod, fn = target.split(":")
            result = getattr(import_module(mod), fn)(*args, **kwargs)
            _send(conn, ("ok", result))
        except MemoryError:
            _send(conn, ("memory", "", traceback.format_exc()))
        except DuctgenError as err:
            _send(conn, ("ductgen", err, traceback.format_exc()))
        except BaseException as err:  # kernel exceptions share no base class
            _send(conn, ("error", f"{type(err).__name__}: {err}", traceback.format_exc()))


class KernelWorker:
    """One persistent child process running kernel jobs under :class:`WorkerLimits`."""

    def __init__(self, limits: WorkerLimits | None = None) -> None:
        self.limits = limits or WorkerLimits.from_env()
        self._proc: Any = None
        self._conn: Any = None

    def _start(self) -> None:
        # A fresh interpreter (not fork: the parent may hold BLAS or GUI threads; not
        # multiprocessing's spawn: it re-runs the caller's __main__).
        ours, theirs = socket.socketpair()
        fd = theirs.fileno()
        self._proc = subprocess.Popen(
            [
                sys.executable,
                "-c",
                "from ductgen.worker import _main; "
                f"_main({fd}, {self.limits.memory_mb}, {os.getpid()})",
            ],
            pass_fds=(fd,),
            stdin=subprocess.DEVNULL,
        )
        theirs.close()
        self._conn = Connection(ours.detach())

    def close(self) -> None:
        """Stop the child process."""
        if self._proc is not None:
            try:
                self._conn.send(None)
                self._proc.wait(timeout=2)
            except (OSError, subprocess.TimeoutExpired):
                pass
        self._kill()

    def _kill(self) -> None:
        if self._proc is not None and self._proc.poll() is None:
            self._proc.kill()
            self._proc.wait()
        if self._conn is not None:
            self._conn.close()
        self._proc = None
        self._conn = None

    def run(self, target: str, *args: Any, timeout_s: float | None = None, **kwargs: Any) -> Any:
        """Run ``module:function(*args, **kwargs)`` in the child and return its result."""
        if self._proc is None or self._proc.poll() is not None:
            self._start()
        timeout = self.limits.timeout_s if timeout_s is None else timeout_s
        current = target.split(":")[-1]
        self._conn.send((target, args, kwargs))
        import time

        deadline = time.monotonic() + timeout
        try:
            return self._wait(current, timeout, deadline)
        except BaseException as err:
            if not isinstance(err, DuctgenError):  # interrupted: stop the job now
                self._kill()
            raise

    def _wait(self, current: str, timeout: float, deadline: float) -> Any:
        import time

        while True:
            left = deadline - time.monotonic()
            if left <= 0 or not self._conn.poll(left):
                self._kill()
                raise GeometryError(
                    current, f"the kernel took longer than {timeout:.3g} s and was stopped"
                )
            try:
                msg = self._conn.recv()
            except (EOFError, OSError):
                code = self._proc.wait() if self._proc is not None else None
                self._kill()
                raise GeometryError(
                    current,
                    f"the kernel process died (exit code {code}); it may have exceeded its "
                    f"{self.limits.memory_mb} MiB memory limit",
                ) from None
            kind = msg[0]
            if kind == "stage":
                current = msg[1]
                continue
            if kind == "ok":
                return msg[1]
            if kind == "ductgen":
                raise msg[1]
            if kind == "memory":
                self._kill()
                raise GeometryError(
                    current, f"ran out of its {self.limits.memory_mb} MiB memory limit"
                )
            raise GeometryError(current, f"kernel failure: {msg[1]}")


_DEFAULT: KernelWorker | None = None


def default_worker() -> KernelWorker:
    """The process-wide kernel worker (started on first use, stopped at exit)."""
    global _DEFAULT
    if _DEFAULT is None:
        _DEFAULT = KernelWorker()
        atexit.register(_DEFAULT.close)
    return _DEFAULT
