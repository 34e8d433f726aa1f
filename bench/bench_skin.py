"""Build time of a curved-skin sample against its flat twin (the same spec on a flat skin).

    python bench/bench_skin.py [--sample kitcar-bonnet-intake] [-n 1]

Builds every output of both, one after the other, in fresh output folders (the kernel worker
stays warm between builds), and prints the seconds of each and their ratio. It measures; it
asserts nothing. Run it on an idle machine.
"""

from __future__ import annotations

import argparse
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--sample", default="kitcar-bonnet-intake")
    ap.add_argument("-n", type=int, default=1, help="builds of each (best is reported)")
    args = ap.parse_args()

    from ductgen.pipeline import build
    from ductgen.solids.jobs import warm_up
    from ductgen.spec import load_spec
    from ductgen.worker import default_worker

    default_worker().run(warm_up)
    curved = load_spec(ROOT / "samples" / f"{args.sample}.toml")
    flat_skin = curved.skin.model_copy(
        update={"shape": "flat", "radius": None, "axis": None, "side": "convex"}
    )
    flat = curved.model_copy(update={"skin": flat_skin})
    best: dict[str, float] = {}
    for _ in range(args.n):
        for label, spec in (("flat twin", flat), ("curved", curved)):
            with tempfile.TemporaryDirectory() as tmp:
                t0 = time.perf_counter()
                build(spec, Path(tmp))
                dt = time.perf_counter() - t0
            best[label] = min(dt, best.get(label, dt))
    for label, dt in best.items():
        print(f"{args.sample} {label:10s} {dt:7.2f} s")
    print(f"curved / flat = {best['curved'] / best['flat twin']:.2f} (best of {args.n})")


if __name__ == "__main__":
    main()
