"""CFD against the 1-D airflow estimate on every sample (not a test; long: ~10-40 min per
sample for the three-mesh study on 2 cores).

Run: ``nice python bench/bench_cfd.py [--mesh study|coarse|medium|fine] [--np N]
[--out DIR] [SAMPLE ...]``. For each sample it runs ``ductgen cfd`` and prints one row:
cells and iterations of the finest mesh, CFD flow and recovery (flow-averaged), the
Richardson-extrapolated flow with its GCI (study only), the 1-D flow and recovery, the
differences, the transition exit's kinetic-energy factor α and the transition K counted to
the mixed-out exit beside the 1-D K, and the mesh's cells across the throat depth and
prism-layer coverage of the cavity walls (any layer, and all five). Curved-skin samples
run too (the skin is the domain's floor). The table is also written as ``bench-cfd.json``
in the output folder.
"""

from __future__ import annotations

import argparse
import json
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
# the package of this checkout, not whichever ductgen is installed (python puts bench/ first
# on the path, so an installed copy of another checkout would be measured instead)
sys.path.insert(0, str(ROOT))


def _f(v: float | None, width: int, digits: int) -> str:
    return f"{(float('nan') if v is None else v):>{width}.{digits}f}"


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__)
    ap.add_argument("samples", nargs="*", help="sample names (default: every sample)")
    ap.add_argument("--mesh", default="study")
    ap.add_argument("--np", type=int, default=1, dest="n_procs")
    ap.add_argument("--out", default=None, help="output folder (default: a temporary one)")
    args = ap.parse_args()

    from ductgen.cfd import run_cfd
    from ductgen.spec import load_spec

    paths = sorted((ROOT / "ductgen/data/samples").glob("*.toml"))
    if args.samples:
        paths = [p for p in paths if p.stem in args.samples]
    out = Path(args.out or tempfile.mkdtemp(prefix="bench-cfd-"))
    rows = []
    head = (
        f"{'sample':22s}{'cells':>8s}{'it':>6s}{'Q cfd L/s':>11s}{'Q ext L/s':>11s}"
        f"{'GCI %':>7s}{'range %':>8s}{'Q 1-D L/s':>11s}{'dQ %':>7s}{'eta cfd':>9s}"
        f"{'eta 1-D':>9s}{'IVR':>7s}{'alpha':>7s}{'K mix':>7s}{'K 1-D':>7s}{'n/D':>5s}"
        f"{'layers':>7s}{'all 5':>7s}{'min':>6s}"
    )
    print(head, flush=True)
    for path in paths:
        spec = load_spec(path)
        if spec.flow is None:
            continue
        t0 = time.perf_counter()
        sec = run_cfd(spec, out / path.stem, mesh=args.mesh, n_procs=args.n_procs, force=True)
        minutes = (time.perf_counter() - t0) / 60.0
        r, one = sec["result"], sec["one_d"]
        study = (sec.get("study") or {}).get("volume_flow_m3_s") or {}
        ext, g = study.get("extrapolated"), study.get("gci_fine")
        q_ref = ext if ext is not None else r["volume_flow_m3_s"]
        row = {
            "sample": path.stem,
            "cells": r["cells"],
            "iterations": r["iterations"],
            "plateau": r["plateau"],
            "cfd_volume_flow_m3_s": r["volume_flow_m3_s"],
            "cfd_extrapolated_flow_m3_s": ext,
            "gci_fine": g,
            "one_d_volume_flow_m3_s": one["volume_flow_m3_s"],
            "flow_difference_vs_best_cfd": (one["volume_flow_m3_s"] - q_ref) / q_ref,
            "cfd_ram_recovery_flow_avg": r["ram_recovery_flow_avg"],
            "cfd_ram_recovery_area_avg": r["ram_recovery_area_avg"],
            "one_d_ram_recovery": one["ram_recovery"],
            "cfd_ivr": r["inlet_velocity_ratio"],
            "kinetic_energy_factor": r.get("kinetic_energy_factor"),
            "momentum_factor": r.get("momentum_factor"),
            "outlet_kinetic_energy_factor": r.get("outlet_kinetic_energy_factor"),
            "transition_k_flow_avg": r.get("transition_k"),
            "transition_k_mixed_out": r.get("transition_k_mixed_out"),
            "one_d_transition_k": one.get("transition_k"),
            "outlet_extension_diameters": r.get("outlet_extension_diameters"),
            "cells_across_throat_depth": r.get("cells_across_throat_depth"),
            "layer_coverage": r.get("layer_coverage"),
            "layer_coverage_all_layers": r.get("layer_coverage_all_layers"),
            "solve_s": r.get("solve_s"),
            "warnings": sec.get("warnings"),
            "layers_by_patch": r.get("layers_by_patch"),
            "y_plus_by_patch": sec.get("y_plus_by_patch"),
            "probe_static_cp": r.get("probe_static_cp"),
            "study": sec.get("study"),
            "minutes": minutes,
        }
        rows.append(row)
        print(
            f"{path.stem:22s}{r['cells']:>8d}{r['iterations']:>6d}"
            f"{r['volume_flow_m3_s'] * 1e3:>11.2f}"
            f"{(ext * 1e3 if ext is not None else float('nan')):>11.2f}"
            f"{(g * 100 if g is not None else float('nan')):>7.1f}"
            f"{(study.get('range_rel') or float('nan')) * 100:>8.1f}"
            f"{one['volume_flow_m3_s'] * 1e3:>11.2f}"
            f"{one.get('flow_difference', float('nan')) * 100:>+7.1f}"
            f"{r['ram_recovery_flow_avg']:>9.3f}{one['ram_recovery']:>9.3f}"
            f"{r['inlet_velocity_ratio']:>7.3f}{_f(r.get('kinetic_energy_factor'), 7, 3)}"
            f"{_f(r.get('transition_k_mixed_out'), 7, 3)}{_f(one.get('transition_k'), 7, 3)}"
            f"{_f(r.get('cells_across_throat_depth'), 5, 0)}{_f(r.get('layer_coverage'), 7, 2)}"
            f"{_f(r.get('layer_coverage_all_layers'), 7, 2)}"
            f"{minutes:>6.1f}",
            flush=True,
        )
    (out / "bench-cfd.json").write_text(json.dumps(rows, indent=2) + "\n")
    print(f"wrote {out / 'bench-cfd.json'}")


if __name__ == "__main__":
    main()
