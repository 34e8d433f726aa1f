"""The kernel worker's time limit counts the child's CPU seconds, not the wall clock.

A paused (``SIGSTOP``) or starved child uses no CPU, so it is not stopped however long the
pause; a job that burns more CPU than the limit is stopped, and the message names the
variable that raises it; a wall-clock backstop (a multiple of the limit) stops a job that
never gets the CPU. Sources: proc(5), Linux man-pages (``/proc/PID/stat`` utime and stime
in clock ticks); the job is PBKDF2-HMAC-SHA256 (RFC 8018, section 5.2), whose result is
checked against the standard library's in this process.
"""

from __future__ import annotations

import hashlib
import os
import signal
import sys
import threading
import time

import pytest

import ductgen.worker as worker_mod
from ductgen.errors import GeometryError
from ductgen.worker import KernelWorker, WorkerLimits

pytestmark = pytest.mark.skipif(
    not sys.platform.startswith("linux"), reason="CPU time read from /proc (Linux)"
)

_JOB = hashlib.pbkdf2_hmac


def _cpu_s(pid: int) -> float:
    with open(f"/proc/{pid}/stat", "rb") as f:
        fields = f.read().rsplit(b")", 1)[1].split()
    return (int(fields[11]) + int(fields[12])) / os.sysconf("SC_CLK_TCK")


def _iterations_for(cpu_s: float) -> int:
    """PBKDF2 iterations that take about ``cpu_s`` CPU seconds here."""
    t0 = time.process_time()
    hashlib.pbkdf2_hmac("sha256", b"p", b"s", 200_000)
    per = max(time.process_time() - t0, 1e-3) / 200_000
    return int(cpu_s / per)


def test_a_paused_worker_past_the_limit_still_finishes() -> None:
    limit = 3.0
    n = _iterations_for(1.0)
    w = KernelWorker(WorkerLimits(timeout_s=limit))
    try:
        w.run(os.getpid)  # started and idle
        pid = w._proc.pid
        got: dict[str, object] = {}

        def job() -> None:
            try:
                got["value"] = w.run(_JOB, "sha256", b"p", b"s", n)
            except BaseException as err:  # reported below
                got["error"] = err

        t = threading.Thread(target=job)
        start = _cpu_s(pid)
        t.start()
        while _cpu_s(pid) - start < 0.1:  # the job is running
            time.sleep(0.02)
        os.kill(pid, signal.SIGSTOP)
        try:
            assert t.is_alive(), "the job ended before the pause"
            time.sleep(limit + 2.0)  # paused past the limit, in wall-clock time
            assert t.is_alive(), "the job was stopped while paused"
        finally:
            os.kill(pid, signal.SIGCONT)
        t.join(120)
        assert "error" not in got, got.get("error")
        assert got["value"] == hashlib.pbkdf2_hmac("sha256", b"p", b"s", n)
    finally:
        w.close()


def test_a_job_over_its_cpu_seconds_is_stopped_naming_the_variable() -> None:
    w = KernelWorker(WorkerLimits(timeout_s=0.5))
    try:
        w.run(os.getpid)
        with pytest.raises(GeometryError) as err:
            w.run(_JOB, "sha256", b"p", b"s", _iterations_for(30.0))
        assert "CPU seconds" in str(err.value) and "DUCTGEN_TIMEOUT_S" in str(err.value)
        assert "pbkdf2_hmac" in str(err.value)  # the stage
        assert w.run(os.getpid) != 0  # a fresh child takes the next job
    finally:
        w.close()


def test_the_wall_clock_backstop(monkeypatch: pytest.MonkeyPatch) -> None:
    """A job that waits without using the CPU (here: sleeps) is stopped at the backstop."""
    monkeypatch.setattr(worker_mod, "WALL_FACTOR", 2.0)
    w = KernelWorker(WorkerLimits(timeout_s=0.5))
    try:
        w.run(os.getpid)
        with pytest.raises(GeometryError) as err:
            w.run(time.sleep, 30.0)
        assert "wall-clock" in str(err.value) and "DUCTGEN_TIMEOUT_S" in str(err.value)
    finally:
        w.close()
