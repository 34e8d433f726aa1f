"""Benchmark of the core pipeline: seconds per stage for every sample (not a test).

Run: ``python bench/bench_core.py [--repeat N]``. Imports and the kernel worker's start-up are
timed once, then each sample is built ``--repeat`` times (cutter only) and the best time of
each stage is shown: spec load, geometry, cutter build, cutter check, STEP, STL, and the
cutter + STEP + STL total the target refers to (< 1.0 s per sample after imports, 2-core
machine).
"""

from __future__ import annotations

import argparse
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__)
    ap.add_argument("--repeat", type=int, default=3)
    args = ap.parse_args()

    t0 = time.perf_counter()
    from ductgen.design import build_design
    from ductgen.pipeline import build
    from ductgen.solids.jobs import warm_up
    from ductgen.spec import load_spec
    from ductgen.worker import default_worker

    t_import = time.perf_counter() - t0
    t0 = time.perf_counter()
    default_worker().run(warm_up)  # starts the child, imports the kernel
    t_kernel = time.perf_counter() - t0
    print(
        f"import ductgen: {t_import:.2f} s; kernel worker start + import cadquery: {t_kernel:.2f} s"
    )

    cols = ["spec", "design", "cutter", "check", "STEP", "STL", "cutter+STEP+STL", "build()"]
    print(f"{'sample':24s}" + "".join(f"{c:>17s}" for c in cols))
    for path in sorted((ROOT / "samples").glob("*.toml")):
        best: dict[str, float] = {}
        for _ in range(args.repeat):
            t0 = time.perf_counter()
            spec = load_spec(path)
            t_spec = time.perf_counter() - t0
            t0 = time.perf_counter()
            build_design(spec)
            t_geo = time.perf_counter() - t0
            with tempfile.TemporaryDirectory() as tmp:
                t0 = time.perf_counter()
                res = build(spec, Path(tmp), only=["cutter"])
                t_build = time.perf_counter() - t0
            s = res.seconds
            row = {
                "spec": t_spec,
                "design": t_geo,
                "cutter": s["cutter_build_s"],
                "check": s["cutter_check_s"],
                "STEP": s["cutter_step_s"],
                "STL": s["cutter_stl_s"],
                "cutter+STEP+STL": s["cutter_build_s"] + s["cutter_step_s"] + s["cutter_stl_s"],
                "build()": t_build,
            }
            best = {k: min(v, best.get(k, v)) for k, v in row.items()}
        print(f"{path.stem:24s}" + "".join(f"{best[c]:17.3f}" for c in cols))
    print("(seconds, best of", args.repeat, "runs; 'check' is the validity and volume check)")


if __name__ == "__main__":
    main()
