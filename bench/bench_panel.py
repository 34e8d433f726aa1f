"""Placement time on the user's panel: a doubly curved B-spline bonnet as a STEP file and the
same bonnet as a ~200k-triangle scan (STL with 0.02 mm noise).

Measures, for each: the panel design (the worker reads and samples the file, the height field
and the geodesic table are made; the kernel worker already running), the design plus a
cutter-only build (placing the cutter solid on the panel and, for the STEP file, writing
``NAME-panel.step``), and the design plus a cutter-and-insert build (the panel is then cut by
the insert's cut-out tool as well). Builds bypass the solid cache. Prints a table; asserts
nothing.

    python bench/bench_panel.py [--repeat 3]
"""

from __future__ import annotations

import argparse
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=3)
    args = ap.parse_args()

    import cadquery as cq
    import trimesh

    from ductgen.design import build_design
    from ductgen.design import panel as panel_design
    from ductgen.pipeline import build
    from ductgen.solids.jobs import warm_up
    from ductgen.solids.mesh import triangulate
    from ductgen.spec import parse_spec
    from ductgen.worker import default_worker
    from tests.panels import bonnet_face, bonnet_height

    tmp = Path(tempfile.mkdtemp(prefix="bench-panel-"))
    face = bonnet_face()
    step = tmp / "bonnet.step"
    cq.exporters.export(face, str(step))
    mesh = trimesh.Trimesh(*triangulate(face, 0.05, 0.2)).subdivide_to_size(3.6)
    rng = np.random.default_rng(0)
    mesh.vertices[:, 2] += rng.normal(0.0, 0.02, len(mesh.vertices))
    scan = tmp / "bonnet.stl"
    mesh.export(str(scan))
    at = [40.0, 30.0, float(bonnet_height(np.array(40.0), np.array(30.0)))]
    base = {
        "name": "bench",
        "throat": {"width": 80, "depth": 20},
        "ramp": {"angle_deg": 7.0, "entry_radius": 60},
        "lip": {"thickness": 4.5},
        "outlet": {"kind": "round", "diameter": 50, "transition_length": 110},
    }
    default_worker().run(warm_up)
    print(f"scan: {len(mesh.faces):,} triangles, {scan.stat().st_size / 1e6:.1f} MB")
    print("first run reads the file; later runs reuse the worker's parsed copy")
    print(
        f"{'panel':<12} {'design s (first / best)':>24} {'+ cutter build s (best)':>24}"
        f" {'+ cutter, insert s (best)':>26}"
    )
    for label, path, extra in (
        ("STEP", step, {}),
        ("scan (STL)", scan, {"units": "mm"}),
    ):
        skin = {"shape": "panel", "file": str(path), "at": at, "flow_direction": [1, 0.15, 0]}
        spec = parse_spec({**base, "skin": {**skin, **extra}})
        t_design, t_build, t_insert = [], [], []
        for k in range(args.repeat):
            panel_design._CACHE.clear()  # measure the sampling each time
            t0 = time.perf_counter()
            build_design(spec)
            t_design.append(time.perf_counter() - t0)
            panel_design._CACHE.clear()
            t0 = time.perf_counter()
            build(spec, tmp / f"out-{label[:4]}-{k}", only=["cutter"], cache=False)
            t_build.append(time.perf_counter() - t0)
            panel_design._CACHE.clear()
            t0 = time.perf_counter()
            build(spec, tmp / f"ins-{label[:4]}-{k}", only=["cutter", "insert"], cache=False)
            t_insert.append(time.perf_counter() - t0)
        first = f"{t_design[0]:.2f} / {min(t_design):.2f}"
        print(f"{label:<12} {first:>24} {min(t_build):>24.2f} {min(t_insert):>26.2f}")


if __name__ == "__main__":
    main()
