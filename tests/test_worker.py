"""The kernel worker (ductgen/worker.py) shared by threads, and stopped from another thread
(the design page previews and saves from different request threads, and its Cancel stops
a running job)."""

from __future__ import annotations

import math
import os
import subprocess
import sys
import threading
import time
from pathlib import Path

import pytest

from ductgen.errors import GeometryError
from ductgen.worker import KernelWorker
from tests.conftest import ROOT


def test_two_threads_sharing_a_worker_each_get_their_own_answers() -> None:
    worker = KernelWorker()
    got: dict[str, list[float]] = {"a": [], "b": []}
    errors: list[BaseException] = []

    def ask(name: str, base: float) -> None:
        try:
            for k in range(25):
                got[name].append(worker.run(math.hypot, base, float(k)))
        except BaseException as err:  # reported below
            errors.append(err)

    threads = [threading.Thread(target=ask, args=(n, b)) for n, b in (("a", 3.0), ("b", 5.0))]
    try:
        for t in threads:
            t.start()
        for t in threads:
            t.join(timeout=120)
    finally:
        worker.close()
    assert not errors, errors
    assert got["a"] == [float((9.0 + k * k) ** 0.5) for k in range(25)]
    assert got["b"] == [float((25.0 + k * k) ** 0.5) for k in range(25)]


def test_stop_ends_a_running_job_and_the_next_job_runs() -> None:
    worker = KernelWorker()
    try:
        worker.run(math.sqrt, 4.0)  # the child is up
        threading.Timer(0.5, worker.stop).start()
        t0 = time.monotonic()
        with pytest.raises(GeometryError) as err:
            worker.run_within(120.0, time.sleep, 60.0)
        assert time.monotonic() - t0 < 60.0  # stopped, not finished (a timeout, not a timing)
        assert "process died" in str(err.value)
        assert worker.run(math.sqrt, 9.0) == 3.0
    finally:
        worker.close()


def test_a_worker_started_from_a_thread_outlives_that_thread() -> None:
    """Linux's parent-death signal follows the thread that started the child: a worker
    started from a page's request thread must not die when that request ends."""
    worker = KernelWorker()
    try:
        t = threading.Thread(target=worker.run, args=(math.sqrt, 4.0))
        t.start()
        t.join(timeout=60)
        pid = worker._proc.pid
        time.sleep(1.0)  # room for a death signal to arrive (not a timing assertion)
        assert worker._proc.poll() is None, "the child died with the thread that started it"
        assert worker.run(math.sqrt, 9.0) == 3.0 and worker._proc.pid == pid
    finally:
        worker.close()


def _alive(pid: int) -> bool:
    """Whether process ``pid`` still runs (a zombie waiting to be reaped does not)."""
    try:
        state = Path(f"/proc/{pid}/stat").read_text().rsplit(")", 1)[1].split()[0]
    except (FileNotFoundError, ProcessLookupError):
        return False
    return state != "Z"


@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="reads /proc")
def test_a_worker_started_from_a_thread_still_dies_with_its_parent() -> None:
    script = (
        "import math, threading, time\n"
        "from ductgen.worker import KernelWorker\n"
        "w = KernelWorker()\n"
        "t = threading.Thread(target=w.run, args=(math.sqrt, 4.0))\n"
        "t.start(); t.join()\n"
        "print(w._proc.pid, flush=True)\n"
        "time.sleep(120)\n"
    )
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    parent = subprocess.Popen([sys.executable, "-c", script], stdout=subprocess.PIPE, env=env)
    assert parent.stdout is not None
    child = int(parent.stdout.readline())
    assert _alive(child)
    parent.kill()
    parent.wait()
    deadline = time.monotonic() + 30.0  # a timeout, not a timing assertion
    while _alive(child) and time.monotonic() < deadline:
        time.sleep(0.1)
    assert not _alive(child), "the kernel worker outlived its killed parent"


def test_a_worker_runs_its_numerical_libraries_on_one_thread(monkeypatch) -> None:  # type: ignore[no-untyped-def]
    """A worker's BLAS gets one thread unless the environment says otherwise (numpy's
    BLAS reads ``OPENBLAS_NUM_THREADS`` / ``OMP_NUM_THREADS`` when it loads)."""
    monkeypatch.delenv("OPENBLAS_NUM_THREADS", raising=False)
    monkeypatch.delenv("MKL_NUM_THREADS", raising=False)
    monkeypatch.setenv("OMP_NUM_THREADS", "3")  # the user's own choice stays
    worker = KernelWorker()
    try:
        assert worker.run(os.getenv, "OPENBLAS_NUM_THREADS") == "1"
        assert worker.run(os.getenv, "MKL_NUM_THREADS") == "1"
        assert worker.run(os.getenv, "OMP_NUM_THREADS") == "3"
    finally:
        worker.close()


def test_a_worker_started_earlier_dates_its_files_as_the_caller_says_now(monkeypatch) -> None:  # type: ignore[no-untyped-def]
    """``SOURCE_DATE_EPOCH`` is the caller's at each job, not the worker's at its start (a
    side worker kept between builds writes some of a build's STEP files)."""
    from ductgen.stamp import build_date

    monkeypatch.setenv("SOURCE_DATE_EPOCH", "0")
    worker = KernelWorker()
    try:
        assert worker.run(build_date) == "1970-01-01"
        monkeypatch.setenv("SOURCE_DATE_EPOCH", "1700000000")  # 2023-11-14T22:13:20Z
        assert worker.run(build_date) == "2023-11-14"
        monkeypatch.delenv("SOURCE_DATE_EPOCH")
        assert worker.run(os.getenv, "SOURCE_DATE_EPOCH") is None
    finally:
        worker.close()


def _mark_preloaded() -> None:
    os.environ["DUCTGEN_TEST_PRELOADED"] = "yes"


def test_a_preloaded_worker_runs_its_warm_up_first_and_then_jobs() -> None:
    """``preload`` starts the child and runs the warm-up there before the first job (the
    command line's kernel import, while it reads the spec)."""
    worker = KernelWorker()
    try:
        worker.preload(_mark_preloaded)
        assert worker.run(os.getenv, "DUCTGEN_TEST_PRELOADED") == "yes"
    finally:
        worker.close()


def test_a_worker_closed_before_any_job_is_killed_not_waited_for() -> None:
    """A build served from the solid cache never sends the preloaded worker a job: closing
    it kills the child (SIGKILL) instead of waiting for its warm-up to finish; a worker that
    has run a job is asked to leave and exits on its own."""
    import signal

    from ductgen.solids.warm import warm_up

    worker = KernelWorker()
    worker.preload(warm_up)
    proc = worker._proc
    worker.close()
    assert proc.returncode == -signal.SIGKILL
    worker.run(os.getenv, "HOME")
    proc = worker._proc
    worker.close()
    assert proc.returncode == 0


def test_a_job_run_if_still_wanted_is_asked_once_the_worker_is_free() -> None:
    """``run_if`` asks ``wanted`` when the worker is free (after the job before it), runs
    the job when it says yes and returns None, starting nothing, when it says no: the kernel
    worker took over an outer body the side worker had not started."""
    worker = KernelWorker()
    asked: list[str] = []
    try:
        assert worker.run_if(lambda: asked.append("no") or False, math.sqrt, 4.0) is None
        assert worker._proc is None  # no child was started for a job not run
        worker.run(math.sqrt, 4.0)  # the child is up
        done = threading.Event()

        def second() -> None:
            asked.append("second: " + str(worker.run_if(lambda: "first" in asked, math.sqrt, 9.0)))
            done.set()

        with worker._lock:  # the worker busy: the second job waits, not yet asked
            threading.Thread(target=second).start()
            time.sleep(0.2)
            assert asked == ["no"]
            asked.append("first")
        assert done.wait(60)
        assert asked == ["no", "first", "second: 3.0"]
    finally:
        worker.close()
