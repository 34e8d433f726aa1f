"""Compare the report.json numbers of two builds of every sample (before/after a change).

    python bench/compare_reports.py DIR_A DIR_B [--rel 1e-9]
    python bench/compare_reports.py --base REV [--rel 1e-9]

With two folders, each holding one sub-folder per sample (``DIR/NAME/report.json``), it
compares them. With ``--base REV`` it builds every sample at git revision REV (in a temporary
worktree, with that revision's code) and at the working tree, then compares. Numbers must
agree to ``--rel`` (relative, with 1e-12 absolute for values near zero); timings, dates,
versions and file names are ignored, warnings compared by code. Prints every difference and
exits 1 when there is one.
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
IGNORED = {"ductgen_version", "files", "seconds", "build_s", "spec_sha256"}


def diff(a: Any, b: Any, path: str, rel: float, out: list[str]) -> None:
    """Append a line to ``out`` for every leaf where ``a`` and ``b`` differ."""
    if isinstance(a, dict) and isinstance(b, dict):
        for k in sorted(set(a) | set(b)):
            if k in IGNORED or k.endswith("_s"):
                continue
            if k not in a or k not in b:
                out.append(f"{path}.{k}: only in {'B' if k not in a else 'A'}")
                continue
            if k == "warnings":
                ca = sorted(w["code"] for w in a[k])
                cb = sorted(w["code"] for w in b[k])
                if ca != cb:
                    out.append(f"{path}.warnings: {ca} != {cb}")
                continue
            diff(a[k], b[k], f"{path}.{k}", rel, out)
    elif isinstance(a, list) and isinstance(b, list):
        if len(a) != len(b):
            out.append(f"{path}: length {len(a)} != {len(b)}")
            return
        for i, (x, y) in enumerate(zip(a, b, strict=True)):
            diff(x, y, f"{path}[{i}]", rel, out)
    elif isinstance(a, bool) or isinstance(b, bool) or isinstance(a, str) or a is None:
        if a != b:
            out.append(f"{path}: {a!r} != {b!r}")
    elif isinstance(a, int | float) and isinstance(b, int | float):
        if abs(a - b) > max(rel * max(abs(a), abs(b)), 1e-12):
            out.append(f"{path}: {a!r} != {b!r} (rel {abs(a - b) / max(abs(a), abs(b)):.2e})")
    elif a != b:
        out.append(f"{path}: {a!r} != {b!r}")


def compare_dirs(a: Path, b: Path, rel: float) -> list[str]:
    """Differences between the reports of every sample folder in ``a`` and ``b``."""
    out: list[str] = []
    names = sorted(p.parent.name for p in a.glob("*/report.json"))
    if not names:
        out.append(f"no */report.json under {a}")
    for name in names:
        ra = json.loads((a / name / "report.json").read_text())
        rb_path = b / name / "report.json"
        if not rb_path.is_file():
            out.append(f"{name}: missing in {b}")
            continue
        diff(ra, json.loads(rb_path.read_text()), name, rel, out)
    return out


def build_all(src: Path, dest: Path) -> None:
    """Build every sample of the source tree ``src`` into ``dest/NAME`` with that tree's code."""
    env = {**os.environ, "PYTHONPATH": str(src), "SOURCE_DATE_EPOCH": "0"}
    samples = sorted((src / "samples").glob("*.toml"))
    for spec in samples:
        cmd = [sys.executable, "-m", "ductgen", "build", str(spec), "-o", str(dest / spec.stem)]
        subprocess.run([*cmd, "--quiet", "--force"], check=True, env=env, cwd=src)


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("dirs", nargs="*", type=Path)
    ap.add_argument("--base", help="git revision to build and compare against")
    ap.add_argument("--rel", type=float, default=1e-9)
    args = ap.parse_args()
    if args.base:
        with tempfile.TemporaryDirectory() as tmp:
            wt = Path(tmp) / "base"
            subprocess.run(["git", "worktree", "add", "-q", "--detach", str(wt), args.base],
                           check=True, cwd=ROOT)
            try:
                build_all(wt, Path(tmp) / "a")
                build_all(ROOT, Path(tmp) / "b")
                problems = compare_dirs(Path(tmp) / "a", Path(tmp) / "b", args.rel)
            finally:
                subprocess.run(["git", "worktree", "remove", "--force", str(wt)], cwd=ROOT)
    elif len(args.dirs) == 2:
        problems = compare_dirs(args.dirs[0], args.dirs[1], args.rel)
    else:
        ap.error("give two folders or --base REV")
    for p in problems:
        print(p)
    print(f"{len(problems)} differences (relative tolerance {args.rel:g})")
    return 1 if problems else 0


if __name__ == "__main__":
    sys.exit(main())
