"""Stopping ``ductgen cfd`` mid-run (OpenFOAM): SIGTERM or Ctrl-C while snappyHexMesh meshes
or simpleFoam solves ends ductgen with 143 / 130, stops the tools (mpirun and its ranks
included: nothing marked by the test is left running) and publishes nothing: the ``-o``
folder holds no cutter file, no report without its ``cfd`` section and no half-run case.

The processes are found by the test's ``DUCTGEN_TEST_MARK`` in their environment (OpenFOAM
tools inherit it), so only what this test started is looked at or killed. Waits are
bounded; nothing is timed.
"""

from __future__ import annotations

import signal
import time
from pathlib import Path

import pytest

from tests.conftest import SAMPLES
from tests.processes import WAIT_S, cmdline, gone, marked, until
from tests.test_cfd_case import require_openfoam
from tests.test_cli_signals import run as run  # the fixture

#: OpenFOAM programs (and the MPI launcher) that must not outlive an interrupted run.
TOOLS = ("simpleFoam", "snappyHexMesh", "blockMesh", "mpirun", "orted", "topoSet")


def _running(marker: str, tool: str) -> bool:
    """A marked process whose program is ``tool`` (a rank under mpirun, or the serial tool)."""
    return any(Path(cmdline(p).split(" ")[0]).name == tool for p in marked(marker))


def _tools_left(marker: str) -> list[str]:
    return [c for c in (cmdline(p) for p in marked(marker)) if any(t in c for t in TOOLS)]


@pytest.mark.openfoam
@pytest.mark.slow
@pytest.mark.parametrize(
    ("sig", "tool", "n_procs"),
    [
        (signal.SIGTERM, "simpleFoam", "2"),  # the solve on two MPI ranks
        (signal.SIGINT, "snappyHexMesh", "1"),  # Ctrl-C in a serial tool
        (signal.SIGTERM, "snappyHexMesh", "1"),  # meshing
    ],
)
def test_interrupted_cfd_stops_the_tools_and_publishes_nothing(
    tmp_path: Path,
    run,  # type: ignore[no-untyped-def]
    sig: int,
    tool: str,
    n_procs: str,
) -> None:
    require_openfoam()
    club = next(p for p in SAMPLES if p.stem == "club-racer-brake")  # a flat skin
    out = tmp_path / "cfd"
    out.mkdir()
    (out / "notes.txt").write_text("mine")
    p = run("cfd", str(club), "-o", str(out), "--np", n_procs, "--mesh", "coarse")
    until(lambda: _running(run.marker, tool) or p.poll() is not None, f"{tool} to run")
    assert p.poll() is None, f"ductgen cfd ended before {tool} ran: {p.communicate()[1][-2000:]}"
    if tool == "simpleFoam":  # let the solver iterate a little (it has not written yet)
        time.sleep(3.0)
        assert p.poll() is None
    p.send_signal(sig)
    _, err = p.communicate(timeout=WAIT_S)
    assert p.returncode == 128 + sig, err[-2000:]
    assert "interrupted" in err and "Traceback" not in err and "failed" not in err
    until(lambda: gone(run.marker), "every OpenFOAM tool and mpirun rank to end")
    assert _tools_left(run.marker) == []
    # nothing published, no staging folder left: the folder is as it was
    assert sorted(x.name for x in out.iterdir()) == ["notes.txt"]


def test_a_tool_session_keeps_the_tools_niceness(tmp_path: Path) -> None:
    """Each OpenFOAM tool runs in a session of its own; under the kernel's autogroup
    scheduling that session's group must carry the tool's niceness (ductgen's plus the tool
    increment), or a niced solve takes half of a two-core machine from the user's other work
    (seen: a niced campaign's ranks at full share beside a test run)."""
    import os
    import subprocess

    from ductgen.cfd import runner

    if not Path("/proc/self/autogroup").exists():
        pytest.skip("the kernel has no autogroup scheduling here")
    want = min(os.getpriority(os.PRIO_PROCESS, 0) + runner.TOOL_NICE, 19)
    own = Path("/proc/self/autogroup").read_text()
    out = subprocess.run(
        ["cat", "/proc/self/autogroup"],
        preexec_fn=runner._child_setup,
        start_new_session=True,
        capture_output=True,
        text=True,
        check=True,
    ).stdout
    assert out.strip().endswith(f"nice {want}"), out
    assert Path("/proc/self/autogroup").read_text() == own  # this session's group as it was
