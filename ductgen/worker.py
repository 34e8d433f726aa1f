"""A kernel worker process with a memory limit and a timeout.

CAD-kernel work runs in a child process so that a pathological spec cannot hang or
exhaust the machine (one bad boolean was measured growing past 20 GB): the child
caps its address space with ``RLIMIT_AS``, the parent stops a job that has used more than
``timeout_s`` seconds of the child's CPU time (on a busy machine a valid build can take many
times its CPU time in wall-clock time) or, as a backstop, :data:`WALL_FACTOR` times that in
wall-clock time, and a job that crashes, runs out of memory or overruns becomes a
:class:`~ductgen.errors.GeometryError` naming the stage. The child stays alive between
jobs (importing the kernel costs ~2 s) and is restarted after a failure.

A job is a module-level function passed by reference (``worker.run(build_solids, d, ...)``,
so the caller imports it and the layer contracts see the dependency), called in the child
with picklable arguments; the child imports it by its module and name. The jobs ductgen
runs are listed in :data:`ductgen.solids.registry.KERNEL_JOBS`. A job may call
:func:`stage` to say what it is doing, so a timeout or crash can name the stage.
"""

from __future__ import annotations

import atexit
import contextlib
import os
import socket
import subprocess
import sys
import threading
import traceback
from collections.abc import Callable
from importlib import import_module
from multiprocessing.connection import Connection
from typing import Any, ParamSpec, TypeVar

from ductgen.deferred_vtk import defer_vtk
from ductgen.errors import DuctgenError, GeometryError
from ductgen.lifeline import die_with_parent
from ductgen.worker_limits import MEMORY_MB_RANGE, TIMEOUT_S_RANGE, WorkerLimits, env_limit

__all__ = [
    "MEMORY_MB_RANGE",
    "TIMEOUT_S_RANGE",
    "KernelWorker",
    "WorkerLimits",
    "default_worker",
    "env_limit",
    "job_target",
    "side_worker",
    "side_workers",
    "stage",
]

P = ParamSpec("P")
R = TypeVar("R")

_stage_conn: Any = None


def job_target(job: Callable[..., Any]) -> str:
    """``"module:function"`` of a module-level function (what the child imports and calls).

    Raises:
        TypeError: ``job`` is a lambda, a nested function or a bound method, which the
            child could not import by name.
    """
    module = getattr(job, "__module__", None)
    name = getattr(job, "__qualname__", "")
    if not module or not name or "." in name or "<" in name:
        raise TypeError(f"a kernel job must be a module-level function, not {job!r}")
    if getattr(import_module(module), name, None) is not job:
        raise TypeError(f"{module}.{name} does not name the job {job!r}")
    return f"{module}:{name}"


def stage(name: str) -> None:
    """Tell the parent which stage the current job has reached (no-op outside a worker)."""
    if _stage_conn is not None:
        _send(_stage_conn, ("stage", name))


#: Thread counts of the numerical libraries in a worker (unless the environment sets them):
#: one. A worker's numpy work is many small matrices (spline fits, meshes), where a BLAS
#: thread per core only spins: mapping the kitcar sample's insert used 2.43–2.53 CPU s with a
#: thread per core on two cores and 1.51–1.58 with one, in 1.63–1.71 s and 1.51–1.58 s of
#: wall time; and a worker's CPU time is what its time limit counts. Builds that want more
#: cores run more workers.
BLAS_THREADS = {"OPENBLAS_NUM_THREADS": "1", "OMP_NUM_THREADS": "1", "MKL_NUM_THREADS": "1"}


#: Environment variables a job reads that decide its files (the STEP and DXF date stamp,
#: :mod:`ductgen.stamp`): sent with every job and set in the worker before it runs, so a
#: worker started earlier (a side worker kept between builds) writes what the caller's
#: environment says now.
JOB_ENVIRONMENT = ("SOURCE_DATE_EPOCH",)


def worker_environment() -> dict[str, str]:
    """The environment a worker process starts with: this one's, with
    :data:`BLAS_THREADS` where it does not say otherwise."""
    return {**BLAS_THREADS, **os.environ}


#: The wall-clock backstop of a job, as a multiple of its CPU-time limit.
WALL_FACTOR = 20.0
#: How often the parent looks at a running job's CPU time (s).
_POLL_S = 0.2
_CLOCK_TICKS = os.sysconf("SC_CLK_TCK") if hasattr(os, "sysconf") else 100


def _main(  # pragma: no cover - child
    fd: int, memory_mb: int, parent_pid: int = 0, prctl: bool = True, preload: str = ""
) -> None:
    defer_vtk()  # before the kernel's import: it would load all of VTK, unused here
    if parent_pid:
        die_with_parent(parent_pid, prctl=prctl)
    # the parent went away or gave up: leave quietly, without a traceback
    with contextlib.suppress(BrokenPipeError, ConnectionError, EOFError, KeyboardInterrupt):
        _child(Connection(fd), memory_mb, preload)
    sys.stdout.flush()
    os._exit(0)


def _send(conn: Any, msg: Any) -> None:  # pragma: no cover - runs in the child
    """Send to the parent; exit quietly (no traceback) when it is gone."""
    try:
        conn.send(msg)
    except (OSError, EOFError):
        os._exit(0)


def _child(conn: Any, memory_mb: int, preload: str = "") -> None:  # pragma: no cover - child
    global _stage_conn
    import resource

    limit = memory_mb * 1024 * 1024
    resource.setrlimit(resource.RLIMIT_AS, (limit, limit))
    _stage_conn = conn
    if preload:  # a failure here shows again, and is reported, in the first job
        with contextlib.suppress(Exception):
            mod, fn = preload.split(":")
            getattr(import_module(mod), fn)()
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
            target, args, kwargs, env = msg
            for key, value in env.items():  # the caller's, now (JOB_ENVIRONMENT)
                if value is None:
                    os.environ.pop(key, None)
                else:
                    os.environ[key] = value
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
        # one job at a time: two threads sharing the pipe would interleave their messages
        # (the design page previews and saves from different request threads)
        self._lock = threading.RLock()
        self._ran = False  # whether the child has been sent a job

    def preload(self, job: Callable[[], Any]) -> None:
        """Start the child now and have it run ``job`` (a warm-up: imports) before it
        waits for its first job, while this process goes on (a command line that will build
        solids calls it first thing, so the kernel's import runs while it imports and reads
        the spec). A worker closed before any job ran is killed at once: a build served
        from the solid cache does not wait for the warm-up."""
        with self._lock:
            if self._proc is None or self._proc.poll() is not None:
                self._start(job_target(job))

    def _start(self, preload: str = "") -> None:
        # A fresh interpreter (not fork: the parent may hold BLAS or GUI threads; not
        # multiprocessing's spawn: it re-runs the caller's __main__).
        ours, theirs = socket.socketpair()
        fd = theirs.fileno()
        main_thread = threading.current_thread() is threading.main_thread()
        self._ran = False
        self._proc = subprocess.Popen(
            [
                sys.executable,
                "-c",
                "from ductgen.worker import _main; "
                f"_main({fd}, {self.limits.memory_mb}, {os.getpid()}, {main_thread}, "
                f"{preload!r})",
            ],
            pass_fds=(fd,),
            stdin=subprocess.DEVNULL,
            env=worker_environment(),
        )
        theirs.close()
        self._conn = Connection(ours.detach())

    def close(self) -> None:
        """Stop the child process (at once when it has run no job: nothing to finish)."""
        if self._proc is not None and self._ran:
            try:
                self._conn.send(None)
                self._proc.wait(timeout=2)
            except (OSError, subprocess.TimeoutExpired):
                pass
        self._kill()

    def stop(self) -> None:
        """Stop a running job now, from another thread: the child is killed, the waiting
        :meth:`run` raises :class:`~ductgen.errors.GeometryError` and the next job starts a
        fresh child."""
        proc = self._proc
        if proc is not None and proc.poll() is None:
            proc.kill()

    def _kill(self) -> None:
        if self._proc is not None and self._proc.poll() is None:
            self._proc.kill()
            self._proc.wait()
        if self._conn is not None:
            self._conn.close()
        self._proc = None
        self._conn = None

    def run(self, job: Callable[P, R], *args: P.args, **kwargs: P.kwargs) -> R:
        """Run ``job(*args, **kwargs)`` in the child under the CPU-time limit and return its
        result (a second thread waits for the first one's job)."""
        with self._lock:
            result: R = self._run(job_target(job), args, kwargs, None)
            return result

    def run_if(
        self, wanted: Callable[[], bool], job: Callable[P, R], *args: P.args, **kwargs: P.kwargs
    ) -> R | None:
        """:meth:`run`, once the child is free, if ``wanted()`` (asked then, with the worker
        held) is true; else None, and the job never starts (another process took it over
        while this one was busy or still importing)."""
        with self._lock:
            if not wanted():
                return None
            result: R = self._run(job_target(job), args, kwargs, None)
            return result

    def run_within(
        self, timeout_s: float, job: Callable[P, R], *args: P.args, **kwargs: P.kwargs
    ) -> R:
        """:meth:`run` with its own CPU-time limit ``timeout_s`` (s) instead of the worker's."""
        with self._lock:
            result: R = self._run(job_target(job), args, kwargs, timeout_s)
            return result

    def _run(
        self, target: str, args: tuple[Any, ...], kwargs: dict[str, Any], timeout_s: float | None
    ) -> Any:
        if self._proc is None or self._proc.poll() is not None:
            self._start()
        timeout = self.limits.timeout_s if timeout_s is None else timeout_s
        current = target.split(":")[-1]
        self._ran = True
        self._conn.send((target, args, kwargs, {k: os.environ.get(k) for k in JOB_ENVIRONMENT}))
        import time

        deadline = time.monotonic() + timeout
        try:
            return self._wait(current, timeout, deadline)
        except BaseException as err:
            if not isinstance(err, DuctgenError):  # interrupted: stop the job now
                self._kill()
            raise

    def _cpu_s(self) -> float | None:
        """CPU seconds the child has used (user + system, with its reaped children), from
        ``/proc/PID/stat``; None where that is not readable (then the wall clock counts)."""
        try:
            with open(f"/proc/{self._proc.pid}/stat", "rb") as f:
                fields = f.read().rsplit(b")", 1)[1].split()
            return sum(int(x) for x in fields[11:15]) / _CLOCK_TICKS
        except (OSError, IndexError, ValueError, AttributeError):
            return None

    def _over(self, timeout: float, cpu0: float | None, start: float) -> str | None:
        """Why the job must stop now (None while it is within its limits)."""
        import time

        wall = time.monotonic() - start
        cpu = self._cpu_s()
        used = wall if cpu0 is None or cpu is None else cpu - cpu0
        if used > timeout:
            what = "wall-clock seconds" if cpu0 is None or cpu is None else "CPU seconds"
            return (
                f"the kernel took longer than {timeout:.3g} {what} and was stopped "
                "(DUCTGEN_TIMEOUT_S raises the limit)"
            )
        if wall > WALL_FACTOR * timeout:
            return (
                f"the kernel took longer than {WALL_FACTOR * timeout:.3g} s of wall-clock time "
                f"({WALL_FACTOR}x the {timeout:.3g} CPU seconds of DUCTGEN_TIMEOUT_S) and was "
                "stopped; the machine may be overloaded (DUCTGEN_TIMEOUT_S raises the limit)"
            )
        return None

    def _wait(self, current: str, timeout: float, deadline: float) -> Any:

        start = deadline - timeout
        cpu0 = self._cpu_s()
        while True:
            why = self._over(timeout, cpu0, start)  # every poll and every stage message
            if why is not None:
                self._kill()
                raise GeometryError(current, why)
            if not self._conn.poll(_POLL_S):
                continue
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


_SIDE: dict[WorkerLimits, KernelWorker] = {}


def side_worker(limits: WorkerLimits) -> KernelWorker:
    """A second process-wide worker with ``limits`` (started on first use, stopped at exit),
    for work that runs beside the kernel worker's: a build draws its preview in it while the
    kernel worker splits the insert. Its jobs import only what they need (the picture:
    numpy and VTK, not the CAD kernel)."""
    if limits not in _SIDE:
        _SIDE[limits] = KernelWorker(limits)
        atexit.register(_SIDE[limits].close)
    return _SIDE[limits]


def side_workers() -> list[KernelWorker]:
    """The side workers this process has started (to stop a build's work in them, or close
    them where ``atexit`` does not run)."""
    return list(_SIDE.values())
