"""Signals and faults during builds and sweeps: nothing partial published,
previous files intact, no process left behind, no traceback.

Every process a test starts carries a unique ``DUCTGEN_TEST_MARK`` in its environment (and
its children inherit it), so orphan checks look only at descendants of what the test
started; the test kills only its own session. Waits are bounded; nothing is timed.
"""

from __future__ import annotations

import errno
import hashlib
import os
import signal
import subprocess
import sys
import uuid
from pathlib import Path

import pytest

from ductgen.cli.app import main
from tests.conftest import GOOD
from tests.processes import WAIT_S, cmdline, gone, marked, until


def _digest(root: Path) -> dict[str, str]:
    return {
        str(p.relative_to(root)): hashlib.sha256(p.read_bytes()).hexdigest() if p.is_file() else "d"
        for p in sorted(root.rglob("*"))
    }


def _kernel_workers(marker: str) -> list[int]:
    return [p for p in marked(marker) if "ductgen.worker import _main" in cmdline(p)]


def _staged_files(folder: Path) -> list[Path]:
    return [p for d in folder.glob(".ductgen-staging-*") for p in d.rglob("*") if p.is_file()]


def _pythonpath() -> str:
    """The checkout these tests belong to first on the path: ``python -m ductgen`` runs in
    ``tmp_path``, where it would otherwise import whichever ductgen is installed."""
    root = str(Path(__file__).resolve().parents[1])
    return os.pathsep.join([root, *filter(None, [os.environ.get("PYTHONPATH")])])


def sigint_as_at_a_terminal() -> None:
    """Give the child the default Ctrl-C action: a job started in the background by a
    non-interactive shell (``cmd &``) inherits SIGINT ignored, and so would every process
    it starts, which would turn these tests into tests of how the suite was launched."""
    signal.signal(signal.SIGINT, signal.SIG_DFL)


@pytest.fixture
def run(tmp_path: Path):  # type: ignore[no-untyped-def]
    """Start ``python -m ductgen ARGS`` marked and in its own session; clean up after."""
    started: list[subprocess.Popen[str]] = []
    marker = uuid.uuid4().hex

    def start(*args: str) -> subprocess.Popen[str]:
        p = subprocess.Popen(
            [sys.executable, "-m", "ductgen", *args],
            cwd=tmp_path,
            env={**os.environ, "DUCTGEN_TEST_MARK": marker, "PYTHONPATH": _pythonpath()},
            stdout=subprocess.PIPE,
            stderr=subprocess.PIPE,
            text=True,
            start_new_session=True,
            preexec_fn=sigint_as_at_a_terminal,
        )
        started.append(p)
        return p

    start.marker = marker  # type: ignore[attr-defined]
    yield start
    for p in started:
        if p.poll() is None:
            os.killpg(p.pid, signal.SIGKILL)
        p.communicate(timeout=30)
    for pid in marked(marker):  # only processes this test started
        os.kill(pid, signal.SIGKILL)


def _spec(tmp: Path) -> Path:
    p = tmp / "t.toml"
    p.write_text(GOOD)
    return p


@pytest.mark.parametrize(
    ("sig", "moment"),
    [
        (signal.SIGINT, "kernel started"),
        (signal.SIGTERM, "kernel started"),
        (signal.SIGTERM, "files staged"),
    ],
)
def test_signal_during_build_publishes_nothing(tmp_path: Path, run, sig: int, moment: str) -> None:  # type: ignore[no-untyped-def]
    spec = _spec(tmp_path)
    out = tmp_path / "out"
    out.mkdir()
    (out / "t-cutter.step").write_text("previous build")
    (out / "notes.txt").write_text("mine")
    before = _digest(out)
    p = run("build", str(spec), "-o", str(out), "--force")
    if moment == "kernel started":
        until(lambda: _kernel_workers(run.marker) or p.poll() is not None, "the kernel worker")
    else:
        until(lambda: _staged_files(out) or p.poll() is not None, "a staged file")
    assert p.poll() is None, "the build ended before the signal"
    p.send_signal(sig)
    _, err = p.communicate(timeout=WAIT_S)
    assert p.returncode == 128 + sig
    assert "interrupted" in err and "Traceback" not in err
    assert _digest(out) == before  # previous files intact, no staging folder left
    until(lambda: gone(run.marker), "every started process to end")


def test_killed_parent_leaves_no_orphan_and_next_run_cleans_staging(tmp_path: Path, run) -> None:  # type: ignore[no-untyped-def]
    spec = _spec(tmp_path)
    out = tmp_path / "out"
    out.mkdir()
    # the insert and plug still take seconds after the cutter's files are staged
    p = run("build", str(spec), "-o", str(out), "--only", "cutter,insert,plug")
    until(lambda: _staged_files(out) or p.poll() is not None, "a staged file")
    assert p.poll() is None
    os.kill(p.pid, signal.SIGKILL)  # no clean-up runs in the parent
    _, err = p.communicate(timeout=WAIT_S)
    until(lambda: gone(run.marker), "the kernel worker to die with its parent")
    assert "Traceback" not in err and "BrokenPipeError" not in err
    assert list(out.glob(".ductgen-staging-*")), "SIGKILL leaves the staging folder"
    q = run("build", str(spec), "-o", str(out), "--only", "template", "-q")
    _, err = q.communicate(timeout=WAIT_S)
    assert q.returncode == 0, err
    assert not list(out.glob(".ductgen-staging-*")), "the next run removes a dead run's staging"


def test_sigterm_to_sweep_stops_every_worker(tmp_path: Path, run) -> None:  # type: ignore[no-untyped-def]
    spec = _spec(tmp_path)
    sw = tmp_path / "sw"
    p = run(
        "sweep",
        str(spec),
        "-o",
        str(sw),
        "-j",
        "2",
        "--only",
        "cutter",
        "--vary",
        "throat.width=70,90",
    )
    until(
        lambda: len(_kernel_workers(run.marker)) >= 2 or p.poll() is not None, "two kernel workers"
    )
    assert p.poll() is None
    p.send_signal(signal.SIGTERM)
    _, err = p.communicate(timeout=WAIT_S)
    assert p.returncode == 143
    until(lambda: gone(run.marker), "pool and kernel workers to end")
    assert "Traceback" not in err and "KeyboardInterrupt" not in err
    if sw.exists():
        for d in sw.iterdir():
            if d.is_dir() and not d.name.startswith("."):
                assert any(d.iterdir()), f"empty variant folder {d.name}"


def test_full_disk_on_a_small_tmpfs(tmp_path: Path, run) -> None:  # type: ignore[no-untyped-def]
    """A 64 KiB tmpfs: the cutter files do not fit. Exit 1 naming the full disk, nothing
    published, no staging left (skipped where mounting is not permitted)."""
    mnt = tmp_path / "mnt"
    mnt.mkdir()
    r = subprocess.run(
        ["mount", "-t", "tmpfs", "-o", "size=64k", "tmpfs", str(mnt)], capture_output=True
    )
    if r.returncode != 0:
        pytest.skip("cannot mount a tmpfs here; the fault-injected test covers the path")
    try:
        spec = _spec(tmp_path)
        p = run("build", str(spec), "-o", str(mnt / "out"), "--only", "cutter")
        _, err = p.communicate(timeout=WAIT_S)
        flat = " ".join(err.split())
        assert p.returncode == 1
        assert "disk is full" in flat and "nothing was published" in flat
        assert "Traceback" not in err and "kernel failure" not in err
        assert sorted(x.name for x in mnt.iterdir()) == []
    finally:
        subprocess.run(["umount", str(mnt)], check=False)


def test_full_disk_fault_injected(tmp_path: Path, monkeypatch, capsys) -> None:  # type: ignore[no-untyped-def]
    """The writer fails with ENOSPC: exit 1, 'disk is full', the output folder never made."""
    import ductgen.atomic as atomic

    def no_space(_fd: int) -> None:
        raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))

    monkeypatch.setattr(atomic.os, "fsync", no_space)
    spec = _spec(tmp_path)
    saved = {s: signal.getsignal(s) for s in (signal.SIGTERM, signal.SIGHUP)}
    before = _digest(tmp_path)
    try:
        code = main(["build", str(spec), "-o", str(tmp_path / "out"), "--only", "template", "-q"])
    finally:
        for s, h in saved.items():
            signal.signal(s, h)
    err = " ".join(capsys.readouterr().err.split())
    assert code == 1
    assert "disk is full" in err and "nothing was published" in err
    assert _digest(tmp_path) == before


#: Runs ``python -m ductgen ARGS`` after planting an import hook that sends the process
#: SIG the moment module TRIGGER is first imported: a signal at a known moment of the
#: imports, whatever the machine's speed.
_SIGNAL_AT_IMPORT = """
import os, runpy, sys
trigger, sig = sys.argv[1], int(sys.argv[2])
class Hook:
    def find_spec(self, name, path=None, target=None):
        if name == trigger:
            sys.meta_path.remove(self)
            os.kill(os.getpid(), sig)
        return None
sys.meta_path.insert(0, Hook())
sys.argv = ["ductgen", *sys.argv[3:]]
runpy.run_module("ductgen", run_name="__main__", alter_sys=True)
"""


def _assert_interrupted(
    tmp_path: Path, script: list[str], sig: int, out: Path, marker: str = ""
) -> None:
    """Run ``python -c SCRIPT...`` (which signals itself) in ``tmp_path``: it must end with
    128 + ``sig`` and one sentence, no traceback, and write nothing to ``out``."""
    env = {**os.environ, "PYTHONPATH": _pythonpath()}
    if marker:
        env["DUCTGEN_TEST_MARK"] = marker
    r = subprocess.run(
        [sys.executable, "-c", *script],
        cwd=tmp_path,
        env=env,
        capture_output=True,
        text=True,
        timeout=WAIT_S,
        preexec_fn=sigint_as_at_a_terminal,
    )
    assert r.returncode == 128 + sig, r.stderr[-2000:]
    assert "interrupted" in r.stderr
    assert "Traceback" not in r.stderr and "KeyboardInterrupt" not in r.stderr
    assert not out.exists()


#: Runs ``python -m ductgen ARGS`` sending the process SIG just before the command line's
#: own handling begins (its exit-code table is looked up), after every import.
_SIGNAL_BEFORE_COMMAND = """
import os, runpy, sys
import ductgen.cli.app as app
sig = int(sys.argv[1])
real = app._click_exceptions
def signalled():
    os.kill(os.getpid(), sig)
    return real()
app._click_exceptions = signalled
sys.argv = ["ductgen", *sys.argv[2:]]
runpy.run_module("ductgen", run_name="__main__", alter_sys=True)
"""


@pytest.mark.parametrize("sig", [signal.SIGINT, signal.SIGTERM])
def test_signal_before_the_command_runs_exits_cleanly(tmp_path: Path, sig: int) -> None:
    """Ctrl-C or SIGTERM after the imports, before the command's own handling: 128 + signal
    and one sentence, nothing written, no process left."""
    out = tmp_path / "out"
    args = ["build", str(_spec(tmp_path)), "-o", str(out)]
    marker = uuid.uuid4().hex
    _assert_interrupted(
        tmp_path, [_SIGNAL_BEFORE_COMMAND, str(int(sig)), *args], sig, out, marker=marker
    )
    until(lambda: gone(marker), "every started process to end")


@pytest.mark.parametrize("sig", [signal.SIGINT, signal.SIGTERM])
@pytest.mark.parametrize(
    ("command", "trigger"),
    [
        ("build", "typer"),  # the command table is importing
        ("build", "pydantic"),  # the build command is importing the spec models
        ("sweep", "typer"),
        ("sweep", "numpy"),
    ],
)
def test_signal_while_importing_exits_cleanly(
    tmp_path: Path, command: str, trigger: str, sig: int
) -> None:
    """Ctrl-C or SIGTERM in the first moments of a run (while importing): 128 + signal
    and one sentence, no traceback, nothing written."""
    spec = _spec(tmp_path)
    out = tmp_path / "out"
    args = ["build", str(spec), "-o", str(out)]
    if command == "sweep":
        args = ["sweep", str(spec), "-o", str(out), "--vary", "throat.width=70,90"]
    _assert_interrupted(tmp_path, [_SIGNAL_AT_IMPORT, trigger, str(int(sig)), *args], sig, out)


def test_an_interrupt_that_passed_through_exec_still_exits_130(tmp_path: Path) -> None:
    """Under ``python -m``, CPython ends a process by SIGINT at exit (status -2, whatever
    code it exits with) once a ``KeyboardInterrupt`` has left an ``exec`` of a string —
    scipy's array-API module imports numpy that way during a build, so Ctrl-C there gave
    -2 instead of 130. The handled interrupt's exit code must stand."""
    (tmp_path / "interrupted_in_exec.py").write_text(
        "import sys\n"
        "from ductgen.cli.signals import interrupt_code\n"
        "try:\n"
        "    exec('raise KeyboardInterrupt')\n"
        "except KeyboardInterrupt:\n"
        "    sys.exit(interrupt_code(None))\n"
    )
    r = subprocess.run(
        [sys.executable, "-m", "interrupted_in_exec"],
        cwd=tmp_path,
        env={**os.environ, "PYTHONPATH": _pythonpath()},
        capture_output=True,
        text=True,
        timeout=WAIT_S,
    )
    assert r.returncode == 130, r.stderr[-2000:]
