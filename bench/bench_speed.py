"""Benchmark: an old commit against the working tree, side by side (not a test).

Builds the old commit (default 465f6b6, before the solid cache) in a temporary
``git worktree`` (removed afterwards) and runs it and the working tree alternately, each in
a subprocess of its own with ``PYTHONPATH`` set to that tree, so drift in the machine's load
falls on both. It prints:

1. full build of each sample with every output, after imports (interpreter, ductgen, the
   kernel worker and, in a tree that has one, the side worker warmed up: both import the
   CAD kernel and the picture's drawing stack, and the build process the print checks'
   mesh tools, before the clock starts, as in the design page after its first build; a cold
   command-line build pays the imports, section 2): old s, new s, new/old, and the CPU
   seconds each used (the build process, its workers and their children): on a machine
   others load, the wall ratio shows what concurrency could get, the CPU what the work costs; then a
   table per sample of the CPU seconds per stage, parent (``build``'s progress stages), kernel
   worker and side worker (their jobs and ``stage`` names), old and new side by side (work on
   the parent's threads counts in the stage that was running);
2. cold ``ductgen build`` of one sample (the whole process) against a bare
   ``python -c "import cadquery"`` timed in the same rounds;
3. a 12-variant sweep at ``-j 2``, old and new (whole ``ductgen sweep`` processes);
4. seconds per variant of the new sweep at 4, 12, 24 and 48 variants (``--curve-old``: the
   old one too);
5. the solid cache (new only): a first build into an empty ``DUCTGEN_CACHE_DIR``, a rebuild
   into another folder and a build that changes only ``[flow]`` keys, and their ratios.

It measures and prints; it asserts nothing. Run it on a machine that is otherwise idle and
read the load averages it prints. Quick run::

    python bench/bench_speed.py --samples drone-avionics-vent --repeat 1 --no-sweep --no-curve

Full run (about 20 minutes on two cores)::

    python bench/bench_speed.py
"""

from __future__ import annotations

import argparse
import json
import os
import shutil
import signal
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
BASE = "465f6b6"

#: One full build, timed after the imports and the kernel warm-up (runs in a subprocess).
#: CPU seconds per stage: the parent's stages are the ``progress`` notes of ``build``, each
#: worker's (the kernel worker, and a side worker where the build starts one) the job names
#: and the ``stage`` messages its jobs send (read off its pipe). The build's CPU seconds are
#: the parent's (every thread) and every worker's, started cold in the build or not.
_FULL = r"""
import json, os, sys, time
from pathlib import Path
import ductgen.worker as w
from ductgen.solids.jobs import warm_up
from ductgen.pipeline import build
from ductgen.spec import load_spec
import ductgen.export.template, ductgen.sheets.sheet, ductgen.sheets.preview  # noqa
TCK = os.sysconf("SC_CLK_TCK")
worker = w.default_worker()
workers = []  # every kernel worker the build starts: the default one, a side worker
def proc_cpu(x):  # one worker's process with its reaped children (s); 0 when not running
    if x._proc is None or x._proc.poll() is not None:
        return 0.0
    f = open(f"/proc/{x._proc.pid}/stat").read().rsplit(")", 1)[1].split()
    return sum(int(v) for v in f[11:15]) / TCK
def wcpu():
    return sum(proc_cpu(x) for x in workers)
def pcpu():
    t = os.times()
    return t.user + t.system
prof, cur = {}, {"parent": ["start", 0.0]}
def add(key, dt):
    prof[key] = prof.get(key, 0.0) + max(dt, 0.0)
def switch(side, name, c):
    old, c0 = cur.get(side, [None, 0.0])
    if old is not None:
        add(f"{side}: {old}", c - c0)
    cur[side] = [name, c]
class Pipe:  # the parent's end of a worker's pipe, noting its stage changes
    def __init__(self, real, owner):
        self.real, self.owner = real, owner
        self.side = "worker" if owner is worker else "side worker"
    def __getattr__(self, k):
        return getattr(self.real, k)
    def send(self, msg):
        if msg:
            switch(self.side, msg[0].split(":")[-1], proc_cpu(self.owner))
        return self.real.send(msg)
    def recv(self):
        msg = self.real.recv()
        switch(self.side, msg[1] if msg[0] == "stage" else None, proc_cpu(self.owner))
        return msg
start = w.KernelWorker._start
def _start(self):
    start(self)
    self._conn = Pipe(self._conn, self)
    if self not in workers:
        workers.append(self)
w.KernelWorker._start = _start
if "--cold-worker" not in sys.argv:  # an old tree's run takes "module:function"
    worker.run(warm_up if hasattr(w, "job_target") else "ductgen.solids.jobs:warm_up")
    if hasattr(w, "side_worker"):  # a tree with a side worker: its imports are done too
        w.side_worker(worker.limits).run(warm_up)
    # and what a design page has imported after its first build: the picture's drawing
    # stack in every worker (either may draw)
    for x in workers:
        x.run(exec if hasattr(w, "job_target") else "builtins:exec", "import pyvista.plotting")
import trimesh  # noqa: F401  # the print checks' mesh tools, in every run alike (an import)
def cpu():
    return pcpu() + wcpu()
spec = load_spec(sys.argv[1])
if "--flow-only" in sys.argv:  # a different speed: the [flow] keys change, nothing else
    flow = spec.flow.model_copy(update={"speed": spec.flow.speed * 1.1})
    spec = spec.model_copy(update={"flow": flow})
prof.clear()  # the warm-up is not part of the build
c0, t0 = cpu(), time.perf_counter()
cur["parent"] = ["geometry", pcpu()]
build(spec, Path(sys.argv[2]), progress=lambda s: switch("parent", s, pcpu()))
switch("parent", None, pcpu())
print(json.dumps({"s": time.perf_counter() - t0, "cpu": cpu() - c0, "prof": prof}))
"""

SWEEP_SPEC = """
name = "bench"
throat = { width = 100, depth = 25 }
ramp = { angle_deg = 7.0, entry_radius = 60 }
lip = { style = "flush", thickness = 4 }
outlet = { kind = "round", diameter = "2 in", transition_length = 120, spigot_length = 40 }
"""
#: Variant count → --vary options (a grid of ramp angle × throat width).
SWEEPS: dict[int, list[str]] = {
    4: ["--vary", "ramp.angle_deg=5:5.75:0.25"],
    12: ["--vary", "ramp.angle_deg=5:7.75:0.25"],
    24: ["--vary", "ramp.angle_deg=5:7.75:0.25", "--vary", "throat.width=98:100:2"],
    48: ["--vary", "ramp.angle_deg=5:7.75:0.25", "--vary", "throat.width=96:102:2"],
}


def _env(tree: Path) -> dict[str, str]:
    """The environment of a run of ``tree``: its code, and an empty solid cache of its own
    (never the user's; so every build but the cache runs' is a kernel build)."""
    env = dict(os.environ)
    env["PYTHONPATH"] = str(tree)
    env["DUCTGEN_CACHE_DIR"] = tempfile.mkdtemp(prefix="bench-cache-", dir=_TMP[0])
    return env


_TMP: list[str | None] = [None]  # the benchmark's temporary folder, set by main()


def _timed(cmd: list[str], tree: Path | None, cwd: Path) -> tuple[float, int, float]:
    """(wall s, exit code, CPU s) of one whole process: its CPU seconds are its own and
    those of the children it waited for (the kernel worker), from ``getrusage``."""
    import resource

    def cpu() -> float:
        r = resource.getrusage(resource.RUSAGE_CHILDREN)
        return r.ru_utime + r.ru_stime

    c0, t0 = cpu(), time.perf_counter()
    run = subprocess.run(
        cmd,
        env=_env(tree) if tree else None,
        cwd=cwd,
        stdout=subprocess.DEVNULL,
        stderr=subprocess.PIPE,
        text=True,
    )
    return time.perf_counter() - t0, run.returncode, cpu() - c0


class BuildFailed(SystemExit):
    """A build that failed (exits the benchmark unless the caller skips the sample)."""


def full_build(
    tree: Path, sample: Path, tmp: Path, *extra: str, env: dict[str, str] | None = None
) -> tuple[float, float, dict[str, float]]:
    """(wall s, CPU s, CPU s per stage) of one full build of ``sample`` with ``tree``'s code,
    after imports; CPU: the build process and its kernel worker with the worker's children.
    ``extra``: ``--flow-only`` (the sample with another speed), ``--cold-worker`` (no warm-up:
    the worker starts only if the build needs it)."""
    out = Path(tempfile.mkdtemp(dir=tmp)) / sample.stem
    run = subprocess.run(
        [sys.executable, "-c", _FULL, str(sample), str(out), *extra],
        env={**_env(tree), **(env or {})},
        cwd=tmp,
        capture_output=True,
        text=True,
    )
    shutil.rmtree(out.parent, ignore_errors=True)
    if run.returncode:
        raise BuildFailed(f"build of {sample.stem} failed with {tree}:\n{run.stderr[-3000:]}")
    got = json.loads(run.stdout.strip().splitlines()[-1])
    return float(got["s"]), float(got["cpu"]), got["prof"]


def print_profile(name: str, prof: dict[str, list[dict[str, float]]]) -> None:
    """CPU seconds per stage (median of the rounds), old and new side by side."""
    keys = sorted({k for runs in prof.values() for r in runs for k in r})
    med = {
        w: {k: statistics.median([r.get(k, 0.0) for r in runs]) for k in keys}
        for w, runs in prof.items()
    }
    keys.sort(key=lambda k: -max(m[k] for m in med.values()))
    print(f"\nCPU seconds per stage, {name} (median of rounds)")
    print(f"{'stage':36s} " + " ".join(f"{w + ' cpu':>9s}" for w in med))
    for k in keys:
        if max(m[k] for m in med.values()) >= 0.05:
            print(f"{k:36s} " + " ".join(f"{med[w][k]:9.2f}" for w in med))
    print(f"{'total':36s} " + " ".join(f"{sum(m.values()):9.2f}" for m in med.values()))


def cold_build(tree: Path, sample: Path, tmp: Path, only: str = "") -> tuple[float, float]:
    """(wall s, CPU s) of a whole ``python -m ductgen build SAMPLE [--only ONLY]`` process
    (CPU: with its kernel worker)."""
    out = Path(tempfile.mkdtemp(dir=tmp))
    extra = ["--only", only] if only else []
    s, code, cpu = _timed(
        [
            *[sys.executable, "-m", "ductgen", "build", str(sample)],
            *["-o", str(out / "o"), "--quiet", *extra],
        ],
        tree,
        tmp,
    )
    shutil.rmtree(out, ignore_errors=True)
    if code:
        raise SystemExit(f"cold build failed with {tree}")
    return s, cpu


def sweep(tree: Path, n: int, tmp: Path) -> tuple[float, int]:
    """(seconds, exit code) of a whole ``ductgen sweep -j 2`` of ``n`` variants."""
    spec = tmp / "bench.toml"
    spec.write_text(SWEEP_SPEC)
    out = Path(tempfile.mkdtemp(dir=tmp))
    cmd = [sys.executable, "-m", "ductgen", "sweep", str(spec), *SWEEPS[n]]
    s, code, _ = _timed([*cmd, "-o", str(out / "s"), "-j", "2", "--quiet"], tree, tmp)
    shutil.rmtree(out, ignore_errors=True)
    return s, code


def cache_runs(tree: Path, samples: list[Path], tmp: Path, repeat: int) -> None:
    """The solid cache (working tree only): a first build into an empty cache, a rebuild into
    another folder and a build that changes only ``[flow]`` keys, both with the kernel worker
    not started ahead (it starts only if something misses)."""
    print("\nsolid cache: first build (empty cache), rebuild elsewhere, flow-only change")
    print(
        f"{'sample':24s} {'first s':>8s} {'again s':>8s} {'ratio':>6s} {'flow s':>8s}"
        f" {'ratio':>6s} {'first cpu':>9s} {'again cpu':>9s} {'flow cpu':>9s}"
    )
    for p in samples:
        r: dict[str, list[tuple[float, float]]] = {"first": [], "again": [], "flow": []}
        last: dict[str, float] = {}
        for _ in range(repeat):
            cache = {"DUCTGEN_CACHE_DIR": str(Path(tempfile.mkdtemp(dir=tmp)))}
            r["first"].append(full_build(tree, p, tmp, env=cache)[:2])
            r["again"].append(full_build(tree, p, tmp, "--cold-worker", env=cache)[:2])
            wall, used, last = full_build(tree, p, tmp, "--cold-worker", "--flow-only", env=cache)
            r["flow"].append((wall, used))
        m = {k: statistics.median(x[0] for x in v) for k, v in r.items()}
        mc = {k: statistics.median(x[1] for x in v) for k, v in r.items()}
        print(
            f"{p.stem:24s} {m['first']:8.2f} {m['again']:8.2f} {m['again'] / m['first']:6.2f}"
            f" {m['flow']:8.2f} {m['flow'] / m['first']:6.2f} {mc['first']:9.2f}"
            f" {mc['again']:9.2f} {mc['flow']:9.2f}"
        )
        print(
            "   flow-only build, CPU s per stage: "
            + ", ".join(
                f"{k} {v:.2f}" for k, v in sorted(last.items(), key=lambda kv: -kv[1]) if v >= 0.05
            )
        )


def _terminate(*_: object) -> None:
    raise KeyboardInterrupt


def _load() -> str:
    return f"load average {os.getloadavg()[0]:.2f} on {os.cpu_count()} cores"


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawTextHelpFormatter)
    ap.add_argument("--base", default=BASE, help="old commit (default %(default)s)")
    ap.add_argument("--samples", default="", help="comma list of sample names (default: all)")
    ap.add_argument("--repeat", type=int, default=1, help="rounds of old/new per measurement")
    ap.add_argument("--cold-sample", default="club-racer-brake", help="sample of the cold build")
    ap.add_argument(
        "--cold-only", default="cutter", help="--only of the cold build ('': every output)"
    )
    ap.add_argument("--no-full", action="store_true", help="skip the full builds")
    ap.add_argument("--no-cold", action="store_true", help="skip the cold build")
    ap.add_argument("--no-sweep", action="store_true", help="skip the 12-variant sweep")
    ap.add_argument("--no-curve", action="store_true", help="skip the per-variant curve")
    ap.add_argument("--no-cache-runs", action="store_true", help="skip the solid-cache runs")
    ap.add_argument("--curve-old", action="store_true", help="measure the curve for old too")
    args = ap.parse_args()
    # SIGTERM unwinds like Ctrl-C, so the temporary worktree is always removed
    signal.signal(signal.SIGTERM, _terminate)

    samples = sorted((ROOT / "samples").glob("*.toml"))
    if args.samples:
        wanted = args.samples.split(",")
        samples = [p for p in samples if p.stem in wanted]
    tmp = Path(tempfile.mkdtemp(prefix="bench-speed-"))
    _TMP[0] = str(tmp)
    old = tmp / "old"
    subprocess.run(
        ["git", "-C", str(ROOT), "worktree", "add", "--detach", str(old), args.base],
        check=True,
        capture_output=True,
    )
    trees = {"old": old, "new": ROOT}
    print(f"old = {args.base} (temporary worktree), new = {ROOT}; {_load()}")
    try:
        if not args.no_full:
            print("\nfull build, every output, after imports (median of rounds)")
            print(
                f"{'sample':24s} {'old s':>8s} {'new s':>8s} {'new/old':>8s}"
                f" {'old cpu':>8s} {'new cpu':>8s}"
            )
            tot = {"old": 0.0, "new": 0.0, "old cpu": 0.0, "new cpu": 0.0}
            profiles: dict[str, dict[str, list[dict[str, float]]]] = {}
            for p in samples:
                t: dict[str, list[float]] = {"old": [], "new": []}
                c: dict[str, list[float]] = {"old": [], "new": []}
                pr: dict[str, list[dict[str, float]]] = {"old": [], "new": []}
                try:
                    for r in range(args.repeat):
                        for which in ("old", "new") if r % 2 == 0 else ("new", "old"):
                            cache = {"DUCTGEN_CACHE_DIR": str(Path(tempfile.mkdtemp(dir=tmp)))}
                            wall, used, stages = full_build(trees[which], p, tmp, env=cache)
                            t[which].append(wall)
                            c[which].append(used)
                            pr[which].append(stages)
                except BuildFailed as err:
                    if which == "new":
                        raise
                    # a sample made (or changed) after the old commit, which refuses it
                    last = str(err.code).strip().splitlines()[-1]
                    print(f"{p.stem:24s} skipped: the old commit cannot build it ({last})")
                    continue
                profiles[p.stem] = pr
                m = {k: statistics.median(v) for k, v in t.items()}
                mc = {k: statistics.median(v) for k, v in c.items()}
                for k in ("old", "new"):
                    tot[k] += m[k]
                    tot[f"{k} cpu"] += mc[k]
                best = min(t["new"]) / min(t["old"])
                print(
                    f"{p.stem:24s} {m['old']:8.2f} {m['new']:8.2f} {m['new'] / m['old']:8.2f}"
                    f" {mc['old']:8.2f} {mc['new']:8.2f}  (best/best {best:.2f},"
                    f" CPU {mc['new'] / mc['old']:.2f})"
                )
            print(
                f"{'every sample':24s} {tot['old']:8.2f} {tot['new']:8.2f} "
                f"{tot['new'] / tot['old']:8.2f} {tot['old cpu']:8.2f} {tot['new cpu']:8.2f}"
            )
            for name, pr in profiles.items():
                print_profile(name, pr)
        if not args.no_cache_runs:
            cache_runs(ROOT, samples, tmp, args.repeat)
        if not args.no_cold:
            sample = ROOT / "samples" / f"{args.cold_sample}.toml"
            # (wall s, CPU s) per round
            t: dict[str, list[tuple[float, float]]] = {"cq": [], "old": [], "new": []}
            for _ in range(args.repeat):
                bare = _timed([sys.executable, "-c", "import cadquery"], None, tmp)
                t["cq"].append((bare[0], bare[2]))
                t["old"].append(cold_build(old, sample, tmp, args.cold_only))
                t["new"].append(cold_build(ROOT, sample, tmp, args.cold_only))
            only = f" --only {args.cold_only}" if args.cold_only else ""
            print(f"\ncold `ductgen build {sample.name}{only}` (whole process, with its worker)")
            print("(beyond: the process less one bare import, as a multiple of that import)")
            for i, what in ((1, "CPU"), (0, "wall")):
                m = {k: statistics.median(r[i] for r in v) for k, v in t.items()}
                cq = m["cq"]
                for k in ("old", "new"):
                    print(
                        f"{what} {k}: best {min(r[i] for r in t[k]):.2f} s, median {m[k]:.2f} s"
                        f" = {m[k] / cq:.2f}x import cadquery ({cq:.2f} s);"
                        f" beyond {(m[k] - cq) / cq:.2f}x"
                    )
        if not args.no_sweep:
            print("\n12-variant sweep, -j 2 (whole process)")
            t = {"old": [], "new": []}
            for r in range(args.repeat):
                for which in ("old", "new") if r % 2 == 0 else ("new", "old"):
                    s, code = sweep(trees[which], 12, tmp)
                    t[which].append(s)
                    if code:
                        print(f"  ({which}: exit code {code}: a variant failed)")
            m = {k: statistics.median(v) for k, v in t.items()}
            print(f"old {m['old']:.1f} s, new {m['new']:.1f} s, new/old {m['new'] / m['old']:.2f}")
        if not args.no_curve:
            print("\nsweep -j 2: seconds per variant against the number of variants")
            which_all = ("old", "new") if args.curve_old else ("new",)
            print(
                f"{'variants':>8s} "
                + " ".join(f"{w + ' s':>9s} {w + ' s/var':>10s}" for w in which_all)
            )
            for n in SWEEPS:
                cells = []
                for which in which_all:
                    s, code = sweep(trees[which], n, tmp)
                    cells.append(
                        f"{s:9.1f} {s / n:10.2f}" + (" (a variant failed)" if code else "")
                    )
                print(f"{n:8d} " + " ".join(cells))
        print(f"\n{_load()}")
    finally:
        subprocess.run(
            ["git", "-C", str(ROOT), "worktree", "remove", "--force", str(old)],
            capture_output=True,
        )
        shutil.rmtree(tmp, ignore_errors=True)


if __name__ == "__main__":
    main()
