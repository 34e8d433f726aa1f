"""Comparison of sweep variants: the table rows and the solid comparison to a baseline.

Solids are compared as built, in the shared frame of every variant (x = 0 at the ramp
start, the skin at z = 0), from the cutters' STL meshes:

* ``sym_diff_volume_mm3`` — volume of the symmetric difference, vol(A − B) + vol(B − A),
  by mesh booleans (trimesh with the manifold3d engine);
* ``hausdorff_mm`` — the largest surface deviation, max over both surfaces of the distance
  to the other surface (trimesh proximity), sampled at every mesh vertex plus
  :data:`SAMPLES` seeded surface points per mesh, so it is a lower bound that converges
  with the sampling.

The baseline's own row is computed like every other (it comes out 0 to round-off).
"""

from __future__ import annotations

import csv
import io
import json
from concurrent.futures import Executor
from pathlib import Path
from typing import TYPE_CHECKING, Any

from ductgen.sweep.report_record import METRICS, metric_value

if TYPE_CHECKING:
    from ductgen.sweep.results import VariantResult, VariantTask
    from ductgen.sweep.variants import Variant

__all__ = [
    "COMPARE_FILE",
    "METRICS",
    "SAMPLES",
    "compare_all",
    "compare_meshes",
    "comparison_rows",
    "csv_text",
    "metric_value",
]

#: Columns after the metrics.
EXTRA = ("warnings_count", "build_s", "sym_diff_volume_mm3", "hausdorff_mm", "status", "error")

#: Seeded surface samples per mesh for the Hausdorff distance (in addition to vertices).
SAMPLES = 4000

#: File in each variant folder caching its comparison with the baseline.
COMPARE_FILE = "sweep-compare.json"


def _load(path: str) -> Any:
    import trimesh

    mesh: Any = trimesh.load(path, force="mesh")
    if not mesh.is_watertight:
        raise ValueError(f"{Path(path).name} is not a closed mesh")
    return mesh


def compare_meshes(a: Any, b: Any, samples: int = SAMPLES) -> dict[str, float]:
    """Symmetric-difference volume (mm³) and Hausdorff distance (mm) of two closed meshes."""
    import numpy as np
    import trimesh

    def vol(parts: list[Any], op: str) -> float:
        fn = trimesh.boolean.difference if op == "diff" else trimesh.boolean.intersection
        m = fn(parts, engine="manifold")
        if m is None or len(m.faces) == 0:
            return 0.0
        with np.errstate(invalid="ignore", divide="ignore"):
            return abs(float(m.volume))

    sym = vol([a, b], "diff") + vol([b, a], "diff")

    def directed(src: Any, dst: Any) -> float:
        from scipy.spatial import cKDTree

        pts = np.vstack([src.vertices, trimesh.sample.sample_surface(src, samples, seed=1)[0]])
        # Distances to points *on* dst bound the distance to dst's surface from above, so
        # only the points with the largest bounds need the exact (slow) closest-point
        # query: once the exact maximum reaches the next bound, no other point can beat it.
        dense = np.vstack(
            [dst.vertices, trimesh.sample.sample_surface(dst, 5 * samples, seed=2)[0]]
        )
        bound: Any = cKDTree(dense).query(pts)[0]
        order = np.argsort(-bound)
        k = min(256, len(pts))
        while True:
            found: Any = trimesh.proximity.closest_point(dst, pts[order[:k]])
            best = float(np.max(found[1]))
            if k >= len(pts) or best >= bound[order[k]]:
                return best
            k = min(4 * k, len(pts))

    haus = max(directed(a, b), directed(b, a))
    return {"sym_diff_volume_mm3": sym, "hausdorff_mm": haus}


def _compare_task(item: tuple[str, str, str, str, str]) -> tuple[str, dict[str, Any]]:
    """Worker task: compare one variant's cutter with the baseline's, with a cache file."""
    vid, path, base_path, cache_path, key = item
    cache = Path(cache_path)
    try:
        stored = json.loads(cache.read_text(encoding="utf-8"))
        if stored.get("key") == key:
            return vid, stored["metrics"]
    except (OSError, ValueError, KeyError, AttributeError):
        pass
    try:
        metrics = compare_meshes(_load(path), _load(base_path))
    except Exception as err:  # a bad mesh leaves this variant's comparison empty
        return vid, {"error": f"comparison failed: {type(err).__name__}: {err}"}
    from ductgen.atomic import write_atomic

    data = json.dumps({"key": key, "metrics": metrics}, indent=2) + "\n"
    write_atomic(cache, data.encode(), force=True)
    return vid, metrics


def _cutter_stl(r: VariantResult) -> str | None:
    name = None if r.report is None else r.report.cutter_stl
    return str(Path(r.folder) / name) if name else None


def compare_all(
    tasks: list[VariantTask], results: list[VariantResult], baseline: str, ex: Executor | None
) -> dict[str, dict[str, Any]]:
    """Compare every built variant's cutter with the baseline's (on the same executor)."""
    by_id = {r.id: r for r in results}
    hashes = {t.id: t.hash for t in tasks}
    base_stl = _cutter_stl(by_id[baseline])
    if base_stl is None:
        return {r.id: {"error": f"baseline {baseline} has no cutter"} for r in results}
    items = []
    for r in results:
        stl = _cutter_stl(r)
        if stl is None:
            continue
        key = f"{hashes[r.id]}:{hashes[baseline]}"
        items.append((r.id, stl, base_stl, str(Path(r.folder) / COMPARE_FILE), key))
    out: dict[str, dict[str, Any]] = {}
    if ex is None:
        for it in items:
            vid, m = _compare_task(it)
            out[vid] = m
    else:
        for vid, m in ex.map(_compare_task, items):
            out[vid] = m
    return out


def comparison_rows(
    variants: list[Variant], results: list[VariantResult], comparison: dict[str, dict[str, Any]]
) -> list[dict[str, Any]]:
    """One row per variant: ``variant``, the varied keys (values as resolved by the spec:
    mm, deg, SI), the report metrics, warnings count, build seconds, solid comparison,
    status and error."""
    rows = []
    has_cfd = any(r.report is not None and r.report.has_cfd for r in results)
    for v, r in zip(variants, results, strict=True):
        rep = r.report
        row: dict[str, Any] = {"variant": v.id, **v.resolved}
        for m in METRICS:
            row[m] = None if rep is None else rep.metrics[m]
        if has_cfd:  # ductgen sweep --cfd: the CFD check beside the 1-D estimate
            row["cfd_volume_flow_m3_s"] = None if rep is None else rep.cfd_volume_flow_m3_s
            row["cfd_ram_recovery"] = None if rep is None else rep.cfd_ram_recovery
            row["cfd_flow_difference"] = None if rep is None else rep.cfd_flow_difference
        row["warnings_count"] = None if rep is None else rep.warnings_count
        row["build_s"] = r.build_s
        cmp = comparison.get(v.id, {})
        row["sym_diff_volume_mm3"] = cmp.get("sym_diff_volume_mm3")
        row["hausdorff_mm"] = cmp.get("hausdorff_mm")
        row["status"] = r.status
        row["error"] = r.error or cmp.get("error")
        rows.append(row)
    return rows


def csv_text(rows: list[dict[str, Any]]) -> str:
    """The rows as CSV (empty cells where a value is absent)."""
    buf = io.StringIO()
    if not rows:
        return ""
    w = csv.DictWriter(buf, fieldnames=list(rows[0]), lineterminator="\n")
    w.writeheader()
    for row in rows:
        w.writerow(
            {
                k: ("" if v is None else repr(v) if isinstance(v, float) else v)
                for k, v in row.items()
            }
        )
    return buf.getvalue()
