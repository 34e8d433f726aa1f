"""Benchmark: insert and plug build time per sample (run by hand; not a test).

    /work/venv/bin/python bench/bench_insert_plug.py [SPEC ...]

Imports the kernel once, then times ``make_insert`` (reusing the cutter, as the pipeline
does, and building its own) and ``make_plug`` (best of ``-n``
runs, seconds after imports) and the printability pass on the insert's check mesh.
Target: under 2 s each.
"""

from __future__ import annotations

import argparse
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument(
        "specs", nargs="*", type=Path, default=sorted((ROOT / "samples").glob("*.toml"))
    )
    ap.add_argument("-n", type=int, default=1, help="runs per solid (best is reported)")
    args = ap.parse_args()

    t0 = time.perf_counter()
    import cadquery  # noqa: F401

    from ductgen.design import build_design
    from ductgen.printability import print_section
    from ductgen.solids.check import CHECK_MESH
    from ductgen.solids.cutter import make_cutter
    from ductgen.solids.insert import make_insert
    from ductgen.solids.mesh import triangulate
    from ductgen.solids.plug import make_plug
    from ductgen.spec import load_spec

    print(f"imports {time.perf_counter() - t0:.2f} s")
    print(
        f"{'sample':28s} {'insert s':>9s} {'(+cutter)':>9s} {'plug s':>8s} {'print s':>8s} "
        f"{'min wall':>9s}"
    )
    for path in args.specs:
        spec = load_spec(path)
        d = build_design(spec)
        best = {}
        cutter = make_cutter(d)
        jobs = (
            ("insert", lambda d, c=cutter: make_insert(d, cutter=c)),  # as the pipeline
            ("insert+cutter", lambda d: make_insert(d)),
            ("plug", make_plug),
        )
        for kind, fn in jobs:
            times = []
            for _ in range(args.n):
                t = time.perf_counter()
                solid = fn(d)
                times.append(time.perf_counter() - t)
                if kind == "insert":
                    insert = solid
            best[kind] = min(times)
        v, f = triangulate(insert, *CHECK_MESH)
        t = time.perf_counter()
        sec, _ = print_section(v, f, spec.insert.material)
        tp = time.perf_counter() - t
        print(
            f"{path.stem:28s} {best['insert']:9.2f} {best['insert+cutter']:9.2f} "
            f"{best['plug']:8.2f} {tp:8.2f} "
            f"{sec['min_wall_mm']:9.3f}"
        )


if __name__ == "__main__":
    main()
