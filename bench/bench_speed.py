"""Benchmark of the speed work: the old commit against the working tree, side by side (not a test).

Builds the old commit (default b22f352, the commit before the speed work) in a temporary
``git worktree`` (removed afterwards) and runs it and the working tree alternately, each in
a subprocess of its own with ``PYTHONPATH`` set to that tree, so drift in the machine's load
falls on both. It prints:

1. full build of each sample with every output, after imports (interpreter, ductgen, the
   kernel worker warmed up): old s, new s, new/old, and the CPU seconds each used (the
   build process, its kernel worker and the worker's children): on a machine others load,
   the wall ratio shows what concurrency could get, the CPU what the work costs;
2. cold ``ductgen build`` of one sample (the whole process) against a bare
   ``python -c "import cadquery"`` timed in the same rounds;
3. a 12-variant sweep at ``-j 2``, old and new (whole ``ductgen sweep`` processes);
4. seconds per variant of the new sweep at 4, 12, 24 and 48 variants (``--curve-old``: the
   old one too).

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
BASE = "b22f352"

#: One full build, timed after the imports and the kernel warm-up (runs in a subprocess).
_FULL = r"""
import json, os, sys, time
from pathlib import Path
import ductgen.worker as w
from ductgen.pipeline import build
from ductgen.spec import load_spec
import ductgen.export.template, ductgen.sheets.sheet, ductgen.sheets.preview  # noqa
worker = w.default_worker()
worker.run("ductgen.solids.jobs:warm_up")
def cpu():  # this process and the kernel worker with its reaped children (s)
    f = open(f"/proc/{worker._proc.pid}/stat").read().rsplit(")", 1)[1].split()
    t = os.times()
    return t.user + t.system + sum(int(x) for x in f[11:15]) / os.sysconf("SC_CLK_TCK")
spec = load_spec(sys.argv[1])
c0, t0 = cpu(), time.perf_counter()
build(spec, Path(sys.argv[2]))
print(json.dumps({"s": time.perf_counter() - t0, "cpu": cpu() - c0}))
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
    env = dict(os.environ)
    env["PYTHONPATH"] = str(tree)
    return env


def _timed(cmd: list[str], tree: Path | None, cwd: Path) -> tuple[float, int]:
    t0 = time.perf_counter()
    run = subprocess.run(
        cmd,
        env=_env(tree) if tree else None,
        cwd=cwd,
        stdout=subprocess.DEVNULL,
        stderr=subprocess.PIPE,
        text=True,
    )
    return time.perf_counter() - t0, run.returncode


def full_build(tree: Path, sample: Path, tmp: Path) -> tuple[float, float]:
    """(wall s, CPU s) of one full build of ``sample`` with ``tree``'s code, after imports;
    CPU: the build process and its kernel worker with the worker's children."""
    out = Path(tempfile.mkdtemp(dir=tmp)) / sample.stem
    run = subprocess.run(
        [sys.executable, "-c", _FULL, str(sample), str(out)],
        env=_env(tree),
        cwd=tmp,
        capture_output=True,
        text=True,
        check=True,
    )
    shutil.rmtree(out.parent, ignore_errors=True)
    got = json.loads(run.stdout.strip().splitlines()[-1])
    return float(got["s"]), float(got["cpu"])


def cold_build(tree: Path, sample: Path, tmp: Path) -> float:
    """Seconds of a whole ``python -m ductgen build SAMPLE`` process."""
    out = Path(tempfile.mkdtemp(dir=tmp))
    s, code = _timed(
        [sys.executable, "-m", "ductgen", "build", str(sample), "-o", str(out / "o"), "--quiet"],
        tree,
        tmp,
    )
    shutil.rmtree(out, ignore_errors=True)
    if code:
        raise SystemExit(f"cold build failed with {tree}")
    return s


def sweep(tree: Path, n: int, tmp: Path) -> tuple[float, int]:
    """(seconds, exit code) of a whole ``ductgen sweep -j 2`` of ``n`` variants."""
    spec = tmp / "bench.toml"
    spec.write_text(SWEEP_SPEC)
    out = Path(tempfile.mkdtemp(dir=tmp))
    cmd = [sys.executable, "-m", "ductgen", "sweep", str(spec), *SWEEPS[n]]
    s, code = _timed([*cmd, "-o", str(out / "s"), "-j", "2", "--quiet"], tree, tmp)
    shutil.rmtree(out, ignore_errors=True)
    return s, code


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
    ap.add_argument("--no-full", action="store_true", help="skip the full builds")
    ap.add_argument("--no-cold", action="store_true", help="skip the cold build")
    ap.add_argument("--no-sweep", action="store_true", help="skip the 12-variant sweep")
    ap.add_argument("--no-curve", action="store_true", help="skip the per-variant curve")
    ap.add_argument("--curve-old", action="store_true", help="measure the curve for old too")
    args = ap.parse_args()
    # SIGTERM unwinds like Ctrl-C, so the temporary worktree is always removed
    signal.signal(signal.SIGTERM, _terminate)

    samples = sorted((ROOT / "samples").glob("*.toml"))
    if args.samples:
        wanted = args.samples.split(",")
        samples = [p for p in samples if p.stem in wanted]
    tmp = Path(tempfile.mkdtemp(prefix="bench-speed-"))
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
            for p in samples:
                t: dict[str, list[float]] = {"old": [], "new": []}
                c: dict[str, list[float]] = {"old": [], "new": []}
                for r in range(args.repeat):
                    for which in ("old", "new") if r % 2 == 0 else ("new", "old"):
                        wall, used = full_build(trees[which], p, tmp)
                        t[which].append(wall)
                        c[which].append(used)
                m = {k: statistics.median(v) for k, v in t.items()}
                mc = {k: statistics.median(v) for k, v in c.items()}
                for k in ("old", "new"):
                    tot[k] += m[k]
                    tot[f"{k} cpu"] += mc[k]
                print(
                    f"{p.stem:24s} {m['old']:8.2f} {m['new']:8.2f} {m['new'] / m['old']:8.2f}"
                    f" {mc['old']:8.2f} {mc['new']:8.2f}"
                )
            print(
                f"{'every sample':24s} {tot['old']:8.2f} {tot['new']:8.2f} "
                f"{tot['new'] / tot['old']:8.2f} {tot['old cpu']:8.2f} {tot['new cpu']:8.2f}"
            )
        if not args.no_cold:
            sample = ROOT / "samples" / f"{args.cold_sample}.toml"
            t = {"cq": [], "old": [], "new": []}
            for _ in range(args.repeat):
                t["cq"].append(_timed([sys.executable, "-c", "import cadquery"], None, tmp)[0])
                t["old"].append(cold_build(old, sample, tmp))
                t["new"].append(cold_build(ROOT, sample, tmp))
            m = {k: statistics.median(v) for k, v in t.items()}
            print(f"\ncold `ductgen build {sample.name}` (whole process) vs `import cadquery`")
            cq = m["cq"]
            print(
                f"import cadquery {cq:.2f} s; old {m['old']:.2f} s = {m['old'] / cq:.2f}x;"
                f" new {m['new']:.2f} s = {m['new'] / cq:.2f}x"
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
