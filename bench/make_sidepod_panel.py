"""Make the bundled panel sample's STEP file: the flank of a kit car's side pod.

    python bench/make_sidepod_panel.py [--check]

Our own scenario (illustrative numbers): the pod's flank is a smooth, doubly curved skin,
convex both ways (radius about 2.2 m along the car and 0.9 m across it at the inlet, not
symmetric), 600 × 400 mm, facing out and a little up (its normal 20° above horizontal), in
the car's coordinates (mm: x rearward from the front axle, y to the left, z up). It is one
open B-spline face (an exported body surface, as users give it): ductgen thickens it by
``skin.thickness`` into the body.

Writes ``ductgen/data/samples/kitcar-sidepod-panel.step`` byte for byte the same on every
run (the file's date is fixed) and prints the datum point ``skin.at`` of the sample spec.
``--check`` only compares the file with a fresh one (exit 1 when they differ).
"""

from __future__ import annotations

import argparse
import os
import sys
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
OUT = ROOT / "ductgen" / "data" / "samples" / "kitcar-sidepod-panel.step"

#: The flank's local frame: X along the car (the flow), Y down the flank, Z out of it.
X_RANGE, Y_RANGE = (-150.0, 450.0), (-200.0, 200.0)
#: Radii (mm) at the local origin, along X and across (Y), convex.
R_ALONG, R_ACROSS = 2200.0, 900.0
#: The flank's normal tilts up from horizontal (deg); the local origin in car coordinates.
TILT_DEG = 20.0
ORIGIN = np.array([1850.0, 780.0, 420.0])
#: The inlet's datum in local X, Y (mm).
DATUM = (0.0, 20.0)
#: A fixed file date (2026-01-01, UTC), so the bytes do not depend on the day.
EPOCH = "1767225600"


def height(x: np.ndarray, y: np.ndarray) -> np.ndarray:
    """Height (mm) of the flank over its local X, Y plane: convex both ways, the across
    radius tightening rearward, a slight twist."""
    return -x * x / (2.0 * R_ALONG) - y * y / (2.0 * R_ACROSS) - 2.0e-7 * x * y * y + 1.5e-8 * x**3


def to_car(local: np.ndarray) -> np.ndarray:
    """Local (X, Y, Z) points (N, 3) → car coordinates: X stays along x, the flank's
    normal Z points to +y tilted ``TILT_DEG`` up, Y runs down the flank."""
    t = np.radians(TILT_DEG)
    ex = np.array([1.0, 0.0, 0.0])
    ez = np.array([0.0, np.cos(t), np.sin(t)])
    ey = np.cross(ez, ex)
    return ORIGIN + local @ np.vstack([ex, ey, ez])


def flank_face():  # type: ignore[no-untyped-def]
    """The flank as one B-spline face through a 31 × 21 grid of its points (0.1 µm fit)."""
    import cadquery as cq

    xs = np.linspace(*X_RANGE, 31)
    ys = np.linspace(*Y_RANGE, 21)
    pts = [[cq.Vector(*to_car(np.array([[x, y, float(height(x, y))]]))[0]) for y in ys] for x in xs]
    return cq.Face.makeSplineApprox(pts, tol=1e-4, maxDeg=3)


def datum() -> np.ndarray:
    """``skin.at``: the datum on the flank, car coordinates (mm)."""
    x, y = DATUM
    return to_car(np.array([[x, y, float(height(np.array(x), np.array(y)))]]))[0]


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--check", action="store_true", help="compare with the shipped file")
    args = ap.parse_args()
    os.environ["SOURCE_DATE_EPOCH"] = EPOCH
    from ductgen.solids.cad_io import step_bytes

    data = step_bytes(flank_face(), "kitcar-sidepod-panel")
    if args.check:
        same = OUT.read_bytes() == data
        print("the same" if same else f"{OUT} differs from a fresh one")
        return 0 if same else 1
    OUT.write_bytes(data)
    at = ", ".join(f"{c:.3f}" for c in datum())
    print(f"wrote {OUT.relative_to(ROOT)} ({len(data)} bytes); skin.at = [{at}]")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
