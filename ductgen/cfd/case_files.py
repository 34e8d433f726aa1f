"""The files of a complete OpenFOAM case (system/, constant/, 0/) written from our
templates (:mod:`ductgen.cfd.templates`) and a :class:`~ductgen.cfd.case.CaseSetup`."""

from __future__ import annotations

import shutil
from pathlib import Path
from typing import Any

import numpy as np

from ductgen.cfd import templates as T
from ductgen.cfd.case import LAYERS, LEVELS, CaseSetup
from ductgen.cfd.fields import field_files
from ductgen.cfd.surface import WettedSurface

__all__ = ["write_case"]


def _fmt(v: float) -> str:
    return f"{v:.9g}"


def _zone_functions() -> str:
    parts = [
        ("throatFlow", "throat", "sum", "", "phi"),
        ("throatArea", "throat", "areaAverage", "", "p0f pf"),
        ("throatFlowAvg", "throat", "weightedAverage", " weightField phi;", "p0f pf"),
        ("exitFlow", "transitionExit", "sum", "", "phi"),
        ("exitArea", "transitionExit", "areaAverage", "", "pf"),
        ("exitFlowAvg", "transitionExit", "weightedAverage", " weightField phi;", "p0f pf Uf"),
    ]
    return "".join(
        T.ZONE_FUNCTION.format(name=n, zone=z, operation=op, extra=extra, fields=f)
        for n, z, op, extra, f in parts
    )


def _plate(name: str, b: tuple[float, float, float, float, float, float]) -> str:
    return T.PLATE_ZONE.format(
        name=name, x=_fmt(b[0]), y0=_fmt(b[1]), z0=_fmt(b[2]),
        dy=_fmt(b[4] - b[1]), dz=_fmt(b[5] - b[2]),
    )  # fmt: skip


def _lower_faces(curved: bool) -> dict[str, str]:
    """Boundary faces of the lower block: on a flat skin all inside the body (walls, cut
    away); on a curved skin the air above a falling skin reaches below z = 0, so the lower
    block's ends and sides are inlet, outflow and sides like the upper block's."""
    if not curved:
        return dict(
            lower_inlet="", lower_outflow="", lower_sides="",
            lower_walls=" (0 4 7 3) (1 2 6 5) (0 1 5 4) (3 7 6 2)",
        )  # fmt: skip
    return dict(
        lower_inlet=" (0 4 7 3)", lower_outflow=" (1 2 6 5)",
        lower_sides=" (0 1 5 4) (3 7 6 2)", lower_walls="",
    )  # fmt: skip


def _line(s: CaseSetup) -> dict[str, str]:
    if s.depth_line is None:
        zb = s.box[4]
        a = (s.throat_x_m, 0.0, zb, s.throat_x_m, 0.0, -1e-5)
        axis = "z"
    else:
        a, axis = s.depth_line, "distance"
    return dict(line_axis=axis, **{k: _fmt(v) for k, v in zip(
        ("lx0", "ly0", "lz0", "lx1", "ly1", "lz1"), a, strict=True)})  # fmt: skip


def _zones(s: CaseSetup) -> str:
    if s.throat_plate is None:
        throat = (s.throat_x_m, *s.throat_bounds[1:3], s.throat_x_m, *s.throat_bounds[4:6])
        return _plate("throat", throat) + _plate("transitionExit", s.exit_bounds)
    return T.STL_ZONE.format(name="throat", file="throatPlate.stl") + T.STL_ZONE.format(
        name="transitionExit", file="exitPlate.stl"
    )


def _stl(tri: Any) -> str:
    out = ["solid plate"]
    for t in np.asarray(tri, float):
        n = np.cross(t[1] - t[0], t[2] - t[0])
        n /= max(float(np.linalg.norm(n)), 1e-300)
        out += [f"  facet normal {n[0]:.6g} {n[1]:.6g} {n[2]:.6g}", "    outer loop"]
        out += [f"      vertex {v[0]:.9g} {v[1]:.9g} {v[2]:.9g}" for v in t]
        out += ["    endloop", "  endfacet"]
    return "\n".join([*out, "endsolid plate"]) + "\n"


def write_case(case_dir: Path, s: CaseSetup, surface: WettedSurface, n_procs: int = 1) -> Path:
    """Write the complete case (system/, constant/, 0/) into ``case_dir`` (replaced)."""
    if case_dir.exists():
        shutil.rmtree(case_dir)
    for sub in ("system", "constant/triSurface", "0"):
        (case_dir / sub).mkdir(parents=True, exist_ok=True)
    x0, x1, y0, y1, zb, zt = s.box
    nx, ny, nzl, nzu = s.cells
    bx = s.opening
    values: dict[str, dict[str, object]] = {
        "blockMesh": dict(
            x0=_fmt(x0), x1=_fmt(x1), y0=_fmt(y0), y1=_fmt(y1), zb=_fmt(zb), zt=_fmt(zt),
            nx=nx, ny=ny, nzl=nzl, nzu=nzu, gz=1, **_lower_faces(s.throat_plate is not None),
        ),
        "features": dict(included_angle=150),
        "snappy": dict(
            bx0=_fmt(bx[0]), by0=_fmt(bx[1]), bz0=_fmt(bx[2]),
            bx1=_fmt(bx[3]), by1=_fmt(bx[4]), bz1=_fmt(bx[5]),
            feature_level=LEVELS["feature"], cavity_level=LEVELS["cavity"],
            floor_level=LEVELS["floor"], box_level=LEVELS["box"], layers=LAYERS,
            hose_level=LEVELS["hose"], approach_level=LEVELS["approach"],
            ax0=_fmt(s.approach[0]), ay0=_fmt(s.approach[1]), az0=_fmt(s.approach[2]),
            ax1=_fmt(s.approach[3]), ay1=_fmt(s.approach[4]), az1=_fmt(s.approach[5]),
            lx=_fmt(s.location[0]), ly=_fmt(s.location[1]), lz=_fmt(s.location[2]),
        ),
        "control": dict(
            max_iterations=s.max_iterations,
            throat_functions=_zone_functions(),
            px=_fmt(s.probe[0]), py=_fmt(s.probe[1]), pz=_fmt(s.probe[2]),
            **_line(s),
        ),
        "schemes": {},
        "solution": {},
        "transport": dict(nu=_fmt(s.nu_m2_s)),
        "turbulence": dict(model=s.turbulence),
        "topoSet": dict(zones=_zones(s)),
        "decompose": dict(n=n_procs),
    }  # fmt: skip
    for key, (path, cls, obj, text) in T.FILES.items():
        where = path.split("/")[0]
        (case_dir / path).write_text(T.header(cls, obj, where) + text.format(**values[key]))
    rows = "\n".join(f"    ({_fmt(q)} {_fmt(-p)})" for q, p in s.system_curve)
    (case_dir / "constant/ductSystem").write_text(T.FAN_CURVE.format(rows=rows))
    (case_dir / "constant/triSurface/duct.stl").write_text(surface.stl_text())
    if s.throat_plate is not None:
        (case_dir / "constant/triSurface/throatPlate.stl").write_text(_stl(s.throat_plate))
        (case_dir / "constant/triSurface/exitPlate.stl").write_text(_stl(s.exit_plate))
    for name, text in field_files(s.profile, s.speed_m_s, s.direction).items():
        (case_dir / "0" / name).write_text(text)
    return case_dir
