"""CFD against the 1-D airflow estimate on every sample (not a test; long: ~10-40 min per
sample for the three-mesh study on 2 cores).

Run: ``nice python bench/bench_cfd.py [--mesh study|coarse|medium|fine] [--np N]
[--out DIR] [SAMPLE ...]``. For each sample it runs ``ductgen cfd`` and prints one row:
cells and iterations of the finest mesh, CFD flow and recovery (flow-averaged), the
Richardson-extrapolated flow with its GCI (study only), the 1-D flow and recovery, and the
differences. The table is also written as ``bench-cfd.json`` in the output folder.
"""

from __future__ import annotations

import argparse
import json
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


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
        f"{'eta 1-D':>9s}{'IVR':>7s}{'min':>6s}"
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
            f"{r['inlet_velocity_ratio']:>7.3f}{minutes:>6.1f}",
            flush=True,
        )
    (out / "bench-cfd.json").write_text(json.dumps(rows, indent=2) + "\n")
    print(f"wrote {out / 'bench-cfd.json'}")


if __name__ == "__main__":
    main()
