"""Running OpenFOAM: finding it, meshing, solving to a flow-rate plateau (serial or MPI).

Debian's ``openfoam`` package puts the tools on PATH but its bashrc is broken: setting
``WM_PROJECT_DIR=/usr/share/openfoam`` is all the tools need, so that is what this module
sets when it is missing. Every tool runs under ``nice`` (its session's scheduling group too,
:func:`autogroup_nice`) with its output in ``log.<tool>`` inside the case. The solve stops
when the mean duct-outlet flow of the last :data:`PLATEAU_WINDOW` iterations differs from the
window before by less than :data:`PLATEAU_TOL` (relative), by switching the case's ``stopAt``
to ``writeNow`` (OpenFOAM re-reads controlDict), or at the iteration cap.
"""

from __future__ import annotations

import contextlib
import os
import re
import shutil
import subprocess
import sys
import time
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path

from ductgen.errors import DuctgenError

__all__ = [
    "INSTALL_HINT",
    "PLATEAU_SPREAD",
    "PLATEAU_TOL",
    "PLATEAU_WINDOW",
    "CfdError",
    "MeshStats",
    "OpenFoamMissing",
    "SolveStats",
    "find_openfoam",
    "make_mesh",
    "openfoam_env",
    "plateau",
    "require_openfoam",
    "solve",
    "spread_of",
    "stop_tool",
]

#: How to install OpenFOAM where ductgen was tested (Debian/Ubuntu).
INSTALL_HINT = "install it with `apt-get install openfoam` (Debian/Ubuntu; OpenFOAM v1912)"
#: Relative change of the windowed mean duct-outlet flow that counts as a plateau.
PLATEAU_TOL = 5e-4
#: Largest relative spread of the flow within the last window at a plateau.
PLATEAU_SPREAD = 0.01
#: Iterations per window.
PLATEAU_WINDOW = 50
#: No plateau is declared before this many iterations (start-up transients).
MIN_ITERATIONS = 100
#: Seconds a stopped tool gets to end on SIGTERM before its process group is killed.
STOP_GRACE_S = 5.0
_TOOLS = ("blockMesh", "snappyHexMesh", "simpleFoam", "checkMesh", "topoSet")


class OpenFoamMissing(DuctgenError):
    """OpenFOAM is not installed (bad environment for the command: exit 2)."""

    exit_code = 2


class CfdError(DuctgenError):
    """An OpenFOAM tool failed; the message names it and its log."""


def find_openfoam() -> str | None:
    """Path of ``simpleFoam`` when every tool the case needs is on PATH, else None."""
    paths = [shutil.which(t) for t in _TOOLS]
    return paths[2] if all(paths) else None


def openfoam_env(n_procs: int = 1) -> dict[str, str]:
    """The environment for OpenFOAM tools (``WM_PROJECT_DIR`` set; MPI may run as root)."""
    env = dict(os.environ)
    if not env.get("WM_PROJECT_DIR"):
        for cand in ("/usr/share/openfoam", "/usr/lib/openfoam/openfoam"):
            if Path(cand, "etc", "controlDict").is_file():
                env["WM_PROJECT_DIR"] = cand
                break
    env.setdefault("OMPI_ALLOW_RUN_AS_ROOT", "1")
    env.setdefault("OMPI_ALLOW_RUN_AS_ROOT_CONFIRM", "1")
    env.setdefault("OMPI_MCA_rmaps_base_oversubscribe", "1")
    env["FOAM_SIGFPE"] = "true"
    return env


def require_openfoam() -> None:
    """Raise :class:`OpenFoamMissing` (exit 2, with the install command) without the tools."""
    if find_openfoam() is None:
        raise OpenFoamMissing(
            "OpenFOAM was not found (simpleFoam, blockMesh, snappyHexMesh, checkMesh and "
            f"topoSet must be on PATH): {INSTALL_HINT}, or write the case only with "
            "--write-only and run it elsewhere"
        )


def _tail(path: Path, n: int = 12) -> str:
    try:
        lines = path.read_text(errors="replace").splitlines()
    except OSError:
        return ""
    return "\n".join(lines[-n:])


#: How much nicer than ductgen the OpenFOAM tools run (the ``nice`` increment), so a long
#: solve leaves the machine usable.
TOOL_NICE = 10


def _cmd(case: Path, args: list[str], n_procs: int) -> list[str]:
    base = ["nice", "-n", str(TOOL_NICE)]
    if n_procs > 1 and args[0] not in ("decomposePar", "reconstructPar", "blockMesh"):
        mpirun = ["mpirun", "-np", str(n_procs)]
        if os.geteuid() == 0:
            mpirun.append("--allow-run-as-root")
        return [*base, *mpirun, *args, "-parallel", "-case", str(case)]
    return [*base, *args, "-case", str(case)]


def _child_setup() -> None:  # pragma: no cover - runs in the child before exec
    """Linux: the tool gets SIGTERM when ductgen dies, however it dies (no orphan solver),
    and its session keeps the tool's niceness (:func:`autogroup_nice`)."""
    import contextlib
    import ctypes
    import signal

    with contextlib.suppress(OSError, AttributeError):
        ctypes.CDLL(None).prctl(1, int(signal.SIGTERM), 0, 0, 0)  # PR_SET_PDEATHSIG = 1
    autogroup_nice()


def autogroup_nice() -> None:
    """Give this process's autogroup the niceness its tool will have (this process's nice
    value plus :data:`TOOL_NICE`, at most 19); nothing where there is no autogroup (not
    Linux, or the kernel's autogroup scheduling off).

    With autogroup scheduling (the default of many Linux desktops) every session is a group
    that gets an equal share of the CPU whatever its processes' nice values, and each tool
    starts a session of its own (:func:`run_tool`): without this a ``nice -n 19 ductgen
    cfd`` would still take half of a two-core machine from the user's other work. Raising
    a group's niceness needs no privilege."""
    want = min(os.getpriority(os.PRIO_PROCESS, 0) + TOOL_NICE, 19)
    with contextlib.suppress(OSError), open("/proc/self/autogroup", "w") as f:
        f.write(str(want))


def run_tool(
    case: Path, args: list[str], n_procs: int = 1, log: str | None = None
) -> subprocess.Popen[bytes]:
    """Start one tool with its output in ``log.<tool>``; the caller waits.

    The tool runs in a process group of its own (with ``mpirun``, its ranks too), so a
    Ctrl-C at the terminal reaches ductgen alone, which then stops the whole group
    (:func:`stop_tool`): an interrupted run never reads as a failed tool, and no rank is
    left behind."""
    name = log or args[0]
    with (case / f"log.{name}").open("wb") as out:
        return subprocess.Popen(
            _cmd(case, args, n_procs),
            stdin=subprocess.DEVNULL,  # outside the terminal's group: reading it would stop it
            stdout=out,
            stderr=subprocess.STDOUT,
            env=openfoam_env(),
            preexec_fn=_child_setup if sys.platform.startswith("linux") else None,
            start_new_session=True,  # its own process group (and session): killpg(pid)
        )


def stop_tool(proc: subprocess.Popen[bytes], grace_s: float = STOP_GRACE_S) -> None:
    """Stop a tool started by :func:`run_tool` and everything in its process group:
    SIGTERM (mpirun passes it to its ranks), then SIGKILL after ``grace_s``."""
    import signal

    def _signal_group(sig: int) -> None:
        with contextlib.suppress(ProcessLookupError, PermissionError):
            os.killpg(proc.pid, sig)

    _signal_group(signal.SIGTERM)
    with contextlib.suppress(subprocess.TimeoutExpired):
        proc.wait(grace_s)
    _signal_group(signal.SIGKILL)  # ranks mpirun did not take down, or a tool that hangs
    proc.wait()


def _wait(proc: subprocess.Popen[bytes], case: Path, name: str) -> None:
    try:
        rc = proc.wait()
    except BaseException:  # interrupted (Ctrl-C, SIGTERM): the tool goes with us
        stop_tool(proc)
        raise
    if rc != 0:
        raise CfdError(
            f"{name} failed (exit {rc}); the end of log.{name}:\n{_tail(case / f'log.{name}')}"
        )


@dataclass(frozen=True)
class MeshStats:
    """checkMesh's verdict on the mesh: cells, whether it passed, the worst values.

    ``usable``: every failed check is a quality measure (skewness, non-orthogonality,
    concavity) of a few faces, not a broken mesh; the solve goes on and the failure is
    reported (snappyHexMesh left 18 skewed faces of ~300 000 on one fine mesh).
    """

    cells: int
    ok: bool
    failed_checks: int
    failures: tuple[str, ...]
    usable: bool
    max_non_orthogonality: float | None
    max_skewness: float | None
    layer_coverage: dict[str, float]


def _check_mesh(case: Path) -> MeshStats:
    text = (case / "log.checkMesh").read_text(errors="replace")
    cells = int(re.search(r"^\s*cells:\s+(\d+)", text, re.M).group(1))  # type: ignore[union-attr]
    failed = re.search(r"Failed (\d+) mesh checks", text)
    non = re.search(r"Mesh non-orthogonality Max: ([\d.eE+-]+)", text)
    skew = re.search(r"Max skewness = ([\d.eE+-]+)", text)
    cover: dict[str, float] = {}
    snappy = case / "log.snappyHexMesh"
    if snappy.is_file():
        for m in re.finditer(
            r"^(duct_\w+)\s+\d+\s+([\d.]+)\s+[\d.eE+-]+\s+([\d.]+)", snappy.read_text(), re.M
        ):
            cover[m.group(1)] = float(m.group(3)) / 100.0
    failures = tuple(ln.strip(" *") for ln in text.splitlines() if ln.lstrip().startswith("***"))
    quality = ("skew", "non-orthogonal", "concave", "warp")
    return MeshStats(
        cells=cells,
        ok="Mesh OK." in text and failed is None,
        failed_checks=int(failed.group(1)) if failed else 0,
        failures=failures,
        usable=all(any(q in f.lower() for q in quality) for f in failures),
        max_non_orthogonality=float(non.group(1)) if non else None,
        max_skewness=float(skew.group(1)) if skew else None,
        layer_coverage=cover,
    )


def make_mesh(case: Path, progress: Callable[[str], None] | None = None) -> MeshStats:
    """blockMesh, surfaceFeatureExtract, snappyHexMesh, topoSet, checkMesh (serial)."""
    require_openfoam()
    note = progress or (lambda _s: None)
    for args in (
        ["blockMesh"],
        ["surfaceFeatureExtract"],
        ["snappyHexMesh", "-overwrite"],
        ["topoSet"],
        ["checkMesh"],
    ):
        note(args[0])
        _wait(run_tool(case, args), case, args[0])
    return _check_mesh(case)


def plateau(
    values: list[float],
    window: int = PLATEAU_WINDOW,
    tol: float = PLATEAU_TOL,
    spread: float = PLATEAU_SPREAD,
) -> bool:
    """True when the mean of the last ``window`` values differs from the mean of the
    ``window`` before by less than ``tol`` (relative) and the last window spreads by less
    than ``spread``: a level flow, or a flow oscillating steadily about a level mean (fine
    meshes settle into a small limit cycle, ±0.13 % on one sample, that never flattens)."""
    if len(values) < max(2 * window, MIN_ITERATIONS):
        return False
    last, before = values[-window:], values[-2 * window : -window]
    mean = sum(last) / window
    if mean <= 0.0:
        return False
    drift = abs(mean - sum(before) / window) / mean
    return drift < tol and (max(last) - min(last)) / mean < spread


def spread_of(values: list[float], window: int = PLATEAU_WINDOW) -> float | None:
    """Relative spread (max − min)/mean of the last ``window`` values: the iterative
    uncertainty of the flow (None when there are too few)."""
    if len(values) < window:
        return None
    last = values[-window:]
    return (max(last) - min(last)) / (sum(last) / window)


def _read_flow(case: Path) -> list[float]:
    path = case / "postProcessing/outletFlow/0/surfaceFieldValue.dat"
    try:
        text = path.read_text()
    except OSError:
        return []
    out = []
    for line in text.splitlines():
        if line and not line.startswith("#"):
            parts = line.split()
            if len(parts) >= 2:
                try:
                    out.append(float(parts[1]))
                except ValueError:
                    continue
    return out


def _stop_now(case: Path) -> None:
    path = case / "system/controlDict"
    text = re.sub(r"^stopAt\s+\w+;", "stopAt          writeNow;", path.read_text(), flags=re.M)
    path.write_text(text)


@dataclass(frozen=True)
class SolveStats:
    """How the solve ended: iterations run, plateau reached, the outlet-flow history (m³/s),
    the flow's relative spread over the last window (iterative uncertainty)."""

    iterations: int
    plateau: bool
    flow_history: list[float]
    seconds: float
    flow_spread: float | None = None


def solve(
    case: Path,
    n_procs: int = 1,
    max_iterations: int = 600,
    progress: Callable[[int, int], None] | None = None,
) -> SolveStats:
    """Run simpleFoam (decomposed on ``n_procs`` ranks when > 1) until the plateau or the cap;
    ``progress(iteration, cap)`` is called as the solve advances."""
    require_openfoam()
    t0 = time.perf_counter()
    if n_procs > 1:
        _wait(run_tool(case, ["decomposePar", "-force"]), case, "decomposePar")
    proc = run_tool(case, ["simpleFoam"], n_procs)
    stopped = False
    flows: list[float] = []
    try:
        while proc.poll() is None:
            time.sleep(1.0)
            flows = _read_flow(case)
            if progress:
                progress(len(flows), max_iterations)
            if not stopped and plateau(flows):
                _stop_now(case)
                stopped = True
    except BaseException:  # interrupted or failed here: stop the solver (and its ranks) now
        stop_tool(proc)
        raise
    _wait(proc, case, "simpleFoam")
    flows = _read_flow(case)
    if n_procs > 1:
        _wait(run_tool(case, ["reconstructPar", "-latestTime"]), case, "reconstructPar")
    return SolveStats(
        iterations=len(flows),
        plateau=plateau(flows[:-1] if stopped else flows),
        flow_history=flows,
        seconds=time.perf_counter() - t0,
        flow_spread=spread_of(flows),
    )
