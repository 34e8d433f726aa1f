"""Jobs that run inside the kernel worker: build, check and encode the solids.

Each solid kind has a recipe: how to build it from the pure geometry and what its volume
should be by an independent integral (None where no closed form is available; then the
watertight and validity checks still apply). Encoded files are written into the build's
staging folder; the parent publishes them only when the whole build succeeds.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from ductgen.geometry.inlet import InletGeometry
from ductgen.tolerances import DEFAULT_TOLERANCES, STL_QUALITY
from ductgen.worker import stage

__all__ = ["SOLID_KINDS", "SolidRecipe", "build_solids", "recipes", "warm_up"]


@dataclass(frozen=True)
class SolidRecipe:
    """How to make one solid kind: ``build(g) -> cq.Solid``; ``expected(g) -> mm³ | None``."""

    build: Callable[[InletGeometry], Any]
    expected: Callable[[InletGeometry], float | None]
    volume_rel: float | None = None


def recipes() -> dict[str, SolidRecipe]:
    """Solid kind → recipe (imports the kernel, so only call inside the worker)."""
    from ductgen.solids.cutter import make_cutter

    return {
        "cutter": SolidRecipe(make_cutter, lambda g: g.cutter_volume_mm3),
    }


#: Solid kinds in build order (names only, importable without the kernel).
SOLID_KINDS: tuple[str, ...] = ("cutter",)


def _wetted_area(solid: Any, g: InletGeometry) -> float:
    """Area of the cutter's air-washed surface (mm²): all faces except the open top in the
    skin plane and the outlet (or throat exit) face."""
    x_out = g.outlet_x_mm
    total = 0.0
    for f in solid.Faces():
        bb = f.BoundingBox()
        if f.geomType() == "PLANE" and abs(bb.zmax) < 1e-6 and abs(bb.zmin) < 1e-6:
            continue
        if f.geomType() == "PLANE" and abs(bb.xmin - x_out) < 1e-6 and abs(bb.xmax - x_out) < 1e-6:
            continue
        total += f.Area()
    return total


def build_solids(
    g: InletGeometry, kinds: list[str], quality: str, prefix: str, staging: str
) -> dict[str, dict[str, Any]]:
    """Build, check and encode each kind; write ``PREFIX-KIND.step/.stl`` into ``staging``.

    Returns per kind: measured volume and area (mm³, mm²), face count, expected volume,
    the written file names, wall-clock seconds per stage, and the STL mesh (vertices mm,
    faces) for previews and mesh checks in the parent.
    """
    import time

    from ductgen.export.atomic import write_atomic
    from ductgen.export.cad import step_bytes, stl_bytes
    from ductgen.solids.check import CHECK_MESH, check_solid, mesh_stats
    from ductgen.solids.mesh import triangulate

    out: dict[str, dict[str, Any]] = {}
    book = recipes()
    tol = DEFAULT_TOLERANCES
    for kind in kinds:
        recipe = book[kind]
        times: dict[str, float] = {}
        t0 = time.perf_counter()
        stage(kind)
        solid = recipe.build(g)
        times["build_s"] = time.perf_counter() - t0
        t0 = time.perf_counter()
        stage(f"{kind} check")
        res = check_solid(solid, kind, recipe.expected(g), tol, recipe.volume_rel)
        times["check_s"] = time.perf_counter() - t0
        t0 = time.perf_counter()
        stage(f"{kind} STEP")
        step_name = f"{prefix}-{kind}.step"
        write_atomic(Path(staging) / step_name, step_bytes(solid, f"{prefix}-{kind}"))
        times["step_s"] = time.perf_counter() - t0
        t0 = time.perf_counter()
        stage(f"{kind} STL")
        lin, ang = STL_QUALITY[quality]
        if (lin, ang) == CHECK_MESH and res.mesh is not None:
            verts, faces = res.mesh
        else:
            verts, faces = triangulate(solid, lin, ang)
        tight, winding, vol, _ = mesh_stats(verts, faces)
        if not (tight and winding):
            from ductgen.errors import GeometryError

            raise GeometryError(f"{kind} STL", "the STL triangulation is not closed")
        stl_name = f"{prefix}-{kind}.stl"
        write_atomic(Path(staging) / stl_name, stl_bytes(verts, faces, f"{prefix}-{kind}"))
        times["stl_s"] = time.perf_counter() - t0
        out[kind] = {
            "volume_mm3": res.volume_mm3,
            "expected_volume_mm3": res.expected_volume_mm3,
            "stl_volume_mm3": vol,
            "area_mm2": res.area_mm2,
            "faces": res.faces,
            "check_mesh": CHECK_MESH,
            "files": {"step": step_name, "stl": stl_name},
            "seconds": times,
            "mesh": (verts.astype("float32"), faces.astype("int32")),
        }
        if kind == "cutter":
            out[kind]["wetted_area_mm2"] = _wetted_area(solid, g)
    return out


def warm_up() -> str:
    """Import the kernel in the worker ahead of the first build; returns its version."""
    import cadquery as cq

    recipes()
    return str(cq.__version__)
