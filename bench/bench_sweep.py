"""Benchmark: one 12-variant sweep with -j 1 and with -j 2 (not a test).

Runs ``ductgen sweep`` as a fresh process for each setting (so both pay the same start-up:
interpreter, kernel import), each into a new folder, and prints wall time, seconds per
variant and the speed-up of two workers. Run: ``python bench/bench_sweep.py [--only KINDS]``.
OCCT already uses a second core inside one process (measured here), so two workers on a 2-core
machine are expected to give about 1.25-1.3x, not 2x. The load average is printed because
other work on the machine skews the numbers.
"""

from __future__ import annotations

import argparse
import os
import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path

SPEC = """
name = "bench"
throat = { width = 100, depth = 25 }
ramp = { angle_deg = 7.0, entry_radius = 60 }
lip = { style = "flush", thickness = 4 }
outlet = { kind = "round", diameter = "2 in", transition_length = 120, spigot_length = 40 }
"""
VARY = ["--vary", "ramp.angle_deg=5:7.75:0.25"]  # 12 variants


def _run(spec: Path, out: Path, jobs: int, only: str | None) -> float:
    exe = Path(sys.executable).with_name("ductgen")
    cmd = [str(exe), "sweep", str(spec), *VARY, "-o", str(out), "-j", str(jobs), "--quiet"]
    if only:
        cmd += ["--only", only]
    t0 = time.perf_counter()
    subprocess.run(cmd, check=True)
    return time.perf_counter() - t0


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__)
    ap.add_argument("--only", default=None, help="output kinds (default: all)")
    args = ap.parse_args()
    tmp = Path(tempfile.mkdtemp(prefix="bench-sweep-"))
    try:
        spec = tmp / "bench.toml"
        spec.write_text(SPEC)
        n = 12
        print(f"load average before: {os.getloadavg()[0]:.2f} on {os.cpu_count()} cores")
        t1 = _run(spec, tmp / "j1", 1, args.only)
        t2 = _run(spec, tmp / "j2", 2, args.only)
        t_cached = _run(spec, tmp / "j2", 2, args.only)
        print(f"-j 1: {t1:6.1f} s  ({t1 / n:.2f} s/variant)")
        print(f"-j 2: {t2:6.1f} s  ({t2 / n:.2f} s/variant)")
        print(f"speed-up -j 2 over -j 1: {t1 / t2:.2f}x")
        print(f"re-run, nothing changed: {t_cached:.1f} s")
        print(f"load average after: {os.getloadavg()[0]:.2f}")
    finally:
        shutil.rmtree(tmp, ignore_errors=True)


if __name__ == "__main__":
    main()
