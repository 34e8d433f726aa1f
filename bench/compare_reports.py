"""Compare the report.json numbers of two builds of every sample (before/after a change).

    python bench/compare_reports.py DIR_A DIR_B [--rel 1e-9] [--mesh-rel 1e-8]
    python bench/compare_reports.py --base REV [--rel 1e-9] [--mesh-rel 1e-8]
    python bench/compare_reports.py --refresh-flow

``--refresh-flow`` rewrites only the ``flow`` section of every stored reference report
(tests/data/reference_reports) from the working tree's design and flow model, without building
any solid (the flow model reads the design's numbers only): for a change that is meant to move
the flow numbers and nothing else. The geometry and print sections are left as they are.

With two folders, each holding one sub-folder per sample (``DIR/NAME/report.json``), it
compares them. With ``--base REV`` it builds every sample at git revision REV (in a temporary
worktree, with that revision's code) and at the working tree, then compares. Numbers must
agree to ``--rel`` (relative, with 1e-12 absolute for values near zero), except the values
measured on the kernel's triangulation (solid volumes, wetted area, the ``print`` section),
which agree to ``--mesh-rel``: an ulp-level change in how a B-rep is written can move its
mesh (whose volume is itself only ~3e-4 from the exact one) by a few parts in 1e9.
Timings, dates, versions and file names are ignored, warnings compared by code, and keys
added since A (new report entries) are not differences. Prints every
difference and exits 1 when there is one. A report folder may hold ``NAME.json`` files
instead of ``NAME/report.json``.
"""

from __future__ import annotations

import argparse
import json
import os
import subprocess
import sys
import tempfile
from pathlib import Path
from typing import Any

ROOT = Path(__file__).resolve().parents[1]
IGNORED = {"ductgen_version", "files", "seconds", "build_s", "spec_sha256", "source"}
#: Values measured on the kernel's triangulation.
MESH_KEYS = {"cutter_volume_mm3", "insert_volume_mm3", "plug_volume_mm3", "wetted_area_mm2"}


def diff(a: Any, b: Any, path: str, rel: float, out: list[str], mesh_rel: float = 1e-8) -> None:
    """Append a line to ``out`` for every leaf where ``a`` and ``b`` differ."""
    if path.rsplit(".", 1)[-1] in MESH_KEYS or ".print" in path:
        rel = max(rel, mesh_rel)
    if isinstance(a, dict) and isinstance(b, dict):
        for k in sorted(set(a) | set(b)):
            if k in IGNORED or k.endswith("_s"):
                continue
            if k not in b:  # a number the reference has and the new build lost
                out.append(f"{path}.{k}: only in A")
                continue
            if k not in a:  # a key added since the reference: new, not a change
                continue
            if k == "warnings":
                ca = sorted(w["code"] for w in a[k])
                cb = sorted(w["code"] for w in b[k])
                if ca != cb:
                    out.append(f"{path}.warnings: {ca} != {cb}")
                continue
            diff(a[k], b[k], f"{path}.{k}", rel, out, mesh_rel)
    elif isinstance(a, list) and isinstance(b, list):
        if len(a) != len(b):
            out.append(f"{path}: length {len(a)} != {len(b)}")
            return
        for i, (x, y) in enumerate(zip(a, b, strict=True)):
            diff(x, y, f"{path}[{i}]", rel, out, mesh_rel)
    elif isinstance(a, bool) or isinstance(b, bool) or isinstance(a, str) or a is None:
        if a != b:
            out.append(f"{path}: {a!r} != {b!r}")
    elif isinstance(a, int | float) and isinstance(b, int | float):
        if abs(a - b) > max(rel * max(abs(a), abs(b)), 1e-12):
            out.append(f"{path}: {a!r} != {b!r} (rel {abs(a - b) / max(abs(a), abs(b)):.2e})")
    elif a != b:
        out.append(f"{path}: {a!r} != {b!r}")


def _reports(folder: Path) -> dict[str, Path]:
    found = {p.parent.name: p for p in folder.glob("*/report.json")}
    found.update({p.stem: p for p in folder.glob("*.json")})
    return found


def compare_dirs(a: Path, b: Path, rel: float, mesh_rel: float = 1e-8) -> list[str]:
    """Differences between the reports of every sample in ``a`` and ``b``."""
    out: list[str] = []
    ra, rb = _reports(a), _reports(b)
    if not ra:
        out.append(f"no reports under {a}")
    for name in sorted(ra):
        if name not in rb:
            out.append(f"{name}: missing in {b}")
            continue
        doc_a = json.loads(ra[name].read_text())
        doc_b = json.loads(rb[name].read_text())
        for doc in (doc_a, doc_b):  # stored references may hold only some sections
            doc.pop("source", None)
        common = {k: doc_b[k] for k in doc_a if k in doc_b}
        diff(doc_a, common, name, rel, out, mesh_rel)
    return out


def build_all(src: Path, dest: Path) -> None:
    """Build every sample of the source tree ``src`` into ``dest/NAME`` with that tree's code."""
    env = {**os.environ, "PYTHONPATH": str(src), "SOURCE_DATE_EPOCH": "0"}
    samples = sorted((src / "samples").glob("*.toml"))
    for spec in samples:
        cmd = [sys.executable, "-m", "ductgen", "build", str(spec), "-o", str(dest / spec.stem)]
        subprocess.run([*cmd, "--quiet", "--force"], check=True, env=env, cwd=src)


def refresh_flow(references: Path) -> list[str]:
    """Rewrite the ``flow`` section of every reference report in ``references`` (no solids);
    returns the sample names refreshed."""
    sys.path.insert(0, str(ROOT))
    from ductgen.design import build_design
    from ductgen.report import flow_report
    from ductgen.spec import load_spec

    done = []
    for path in sorted(references.glob("*.json")):
        spec = load_spec(ROOT / "samples" / f"{path.stem}.toml")
        doc = json.loads(path.read_text(encoding="utf-8"))
        if spec.flow is None or "flow" not in doc:
            continue
        doc["flow"] = json.loads(json.dumps(flow_report(spec, build_design(spec))[0]))
        path.write_text(json.dumps(doc, indent=1) + "\n", encoding="utf-8")
        done.append(path.stem)
    return done


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("dirs", nargs="*", type=Path)
    ap.add_argument("--base", help="git revision to build and compare against")
    ap.add_argument("--rel", type=float, default=1e-9)
    ap.add_argument("--mesh-rel", type=float, default=1e-8)
    ap.add_argument(
        "--refresh-flow",
        action="store_true",
        help="rewrite the stored references' flow sections from the working tree (no solids)",
    )
    args = ap.parse_args()
    if args.refresh_flow:
        refs = ROOT / "tests" / "data" / "reference_reports"
        print("refreshed flow of:", ", ".join(refresh_flow(refs)))
        return 0
    if args.base:
        with tempfile.TemporaryDirectory() as tmp:
            wt = Path(tmp) / "base"
            subprocess.run(
                ["git", "worktree", "add", "-q", "--detach", str(wt), args.base],
                check=True,
                cwd=ROOT,
            )
            try:
                build_all(wt, Path(tmp) / "a")
                build_all(ROOT, Path(tmp) / "b")
                problems = compare_dirs(Path(tmp) / "a", Path(tmp) / "b", args.rel, args.mesh_rel)
            finally:
                subprocess.run(["git", "worktree", "remove", "--force", str(wt)], cwd=ROOT)
    elif len(args.dirs) == 2:
        problems = compare_dirs(args.dirs[0], args.dirs[1], args.rel, args.mesh_rel)
    else:
        ap.error("give two folders or --base REV")
    for p in problems:
        print(p)
    print(f"{len(problems)} differences (relative tolerance {args.rel:g})")
    return 1 if problems else 0


if __name__ == "__main__":
    sys.exit(main())
