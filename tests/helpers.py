"""Helpers several test files share (public names; no test file imports another's
private functions)."""

from __future__ import annotations

import hashlib
from pathlib import Path

import numpy as np

from ductgen.spec import parse_spec

#: The curved-skin tests' inlet (a round outlet behind a transition, an insert with holes).
CURVED_BASE = {
    "name": "curved",
    "throat": {"width": 80, "depth": 20},
    "ramp": {"angle_deg": 7.0, "entry_radius": 60},
    "lip": {"thickness": 4.5},
    "outlet": {"kind": "round", "diameter": 50, "transition_length": 110, "spigot_length": 35},
    "insert": {"wall": 2.0, "flange_width": 14, "holes": {"count": 6, "diameter": 3.2}},
}

#: The curved-skin tests' inlet, its files named "panel-…".
PANEL_BASE = {**CURVED_BASE, "name": "panel"}


def tree_digest(root: Path) -> dict[str, str]:
    """Name → sha256 of every regular file (and a marker for folders) under ``root``."""
    out: dict[str, str] = {}
    for p in sorted(root.rglob("*")):
        rel = str(p.relative_to(root))
        if p.is_symlink() or not (p.is_file() or p.is_dir()):
            out[rel] = "special"
        elif p.is_dir():
            out[rel] = "dir"
        else:
            out[rel] = hashlib.sha256(p.read_bytes()).hexdigest()
    return out


def opening_from_dxf(path) -> np.ndarray:  # type: ignore[no-untyped-def]
    """The template's air opening: the smallest closed CUT polyline (ezdxf, mm)."""
    import ezdxf
    from ezdxf import path as dxf_path

    doc = ezdxf.readfile(path)
    best = None
    for pl in doc.modelspace().query("LWPOLYLINE[layer=='CUT']"):
        pts = np.array([(v.x, v.y) for v in dxf_path.make_path(pl).flattening(0.05)])
        area = 0.5 * abs(
            np.dot(pts[:, 0], np.roll(pts[:, 1], -1)) - np.dot(pts[:, 1], np.roll(pts[:, 0], -1))
        )
        if best is None or area < best[0]:
            best = (area, pts)
    assert best is not None
    return best[1]


def depth_along(solid, p0: np.ndarray, n: np.ndarray) -> float:  # type: ignore[no-untyped-def]
    """Distance (mm) from ``p0`` along −n to the nearest boundary crossing of ``solid``."""
    from OCP.BRepIntCurveSurface import BRepIntCurveSurface_Inter
    from OCP.gp import gp_Dir, gp_Lin, gp_Pnt

    inter = BRepIntCurveSurface_Inter()
    inter.Init(solid.wrapped, gp_Lin(gp_Pnt(*p0), gp_Dir(*(-n))), 1e-7)
    ts = []
    while inter.More():
        ts.append(inter.W())
        inter.Next()
    return min(t for t in ts if t > 1e-6)


def adaptive_volume(shape) -> float:  # type: ignore[no-untyped-def]
    """A solid's volume (mm³) by the kernel's adaptive integration (relative error 1e-7) of
    its B-spline form (``BRepBuilderAPI_NurbsConvert``, a copy): on an offset surface the
    plain ``Volume()`` was measured up to 0.1 % of a panel off, and the adaptive one 0.16 %
    low and unsteady with its tolerance (an S-shaped panel thickened 2.5 mm, against
    t·(A_outer + A_inner)/2, which the B-spline form's meets to 2e-7)."""
    from OCP.BRepGProp import BRepGProp
    from OCP.GProp import GProp_GProps

    props = GProp_GProps()
    BRepGProp.VolumeProperties_s(spline_form(shape).wrapped, props, 1e-7, False)
    return float(props.Mass())


def spline_form(shape):  # type: ignore[no-untyped-def]
    """A copy of ``shape`` with every surface and curve in B-spline form (the kernel's
    ``BRepBuilderAPI_NurbsConvert``): Booleans against an offset surface in that form were
    ~3x faster than against the offset itself."""
    import cadquery as cq
    from OCP.BRepBuilderAPI import BRepBuilderAPI_NurbsConvert

    return cq.Shape.cast(BRepBuilderAPI_NurbsConvert(shape.wrapped, True).Shape())


def panel_spec(skin: dict, base: dict | None = None):  # type: ignore[no-untyped-def]
    """A spec of ``base`` (the panel inlet) on ``skin``, 2 mm thick unless it says."""
    return parse_spec({**(base or PANEL_BASE), "skin": {"thickness": 2.0, **skin}})


def panel_skin(path: Path, at, flow, **more) -> dict:  # type: ignore[no-untyped-def]
    """A ``[skin]`` table for the user's panel file at ``path``: datum ``at`` (mm), flow
    direction ``flow``, and any more keys."""
    return {
        "shape": "panel",
        "file": str(path),
        "at": [float(c) for c in at],
        "flow_direction": [float(c) for c in flow],
        **more,
    }
