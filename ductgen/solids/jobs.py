"""Jobs that run inside the kernel worker: build, check and encode the solids; the
preview's cutter mesh.

Each solid kind has a recipe: how to build it from the pure geometry and what its volume
should be by an independent integral (None where no closed form is available; then the
watertight and validity checks still apply). Encoded files are written into the build's
staging folder; the parent publishes them only when the whole build succeeds.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING, Any

from ductgen.design import Design
from ductgen.solids.kinds import INSERT_BODIES, SOLID_KINDS
from ductgen.solids.results import Mesh, SolidResult
from ductgen.solids.warm import warm_up
from ductgen.tolerances import DEFAULT_TOLERANCES, STL_QUALITY
from ductgen.worker import stage

if TYPE_CHECKING:
    import numpy as np

    from ductgen.solids.check import SolidCheck

__all__ = [
    "SOLID_KINDS",
    "SolidRecipe",
    "build_solids",
    "cutter_mesh_job",
    "recipes",
    "warm_up",
    "write_step",
]


@dataclass(frozen=True)
class SolidRecipe:
    """How to make one solid kind in design coordinates: ``build(d, built) -> cq.Solid``
    (``built``: the solids made before it in this job, by kind, in design coordinates);
    ``expected(d) -> mm³ | None``, its volume by an independent integral on a flat skin."""

    build: Callable[[Design, dict[str, Any]], Any]
    expected: Callable[[Design], float | None]
    volume_rel: float | None = None


def recipes() -> dict[str, SolidRecipe]:
    """Solid kind → recipe (imports the kernel, so only call inside the worker)."""
    from ductgen.solids.cutter import build_cutter
    from ductgen.solids.insert import bodies_from, build_insert
    from ductgen.solids.plug import build_plug, plug_volume_mm3

    return {
        "cutter": SolidRecipe(lambda d, _: build_cutter(d), lambda d: d.geometry.cutter_volume_mm3),
        # insert: a union of overlapping pieces minus the cutter has no independent
        # integral; the watertight/validity checks and the printability hook apply.
        "insert": SolidRecipe(
            lambda d, built: build_insert(
                d, built.get("cutter"), bodies_from(built.get(INSERT_BODIES))
            ),
            lambda d: None,
        ),
        "plug": SolidRecipe(lambda d, _: build_plug(d), plug_volume_mm3),
    }


def _subdivided(mesh: Any, step_mm: float) -> Any:
    """``mesh`` (a trimesh) with every edge split to at most ``step_mm`` (mm)."""
    return mesh.subdivide_to_size(step_mm)


def mapped_mesh(
    flat: Any,
    fn: Any,
    lin: float,
    ang: float,
    curvature: float,
    design_mesh: tuple[Any, Any] | None = None,
) -> tuple[Any, Any]:
    """Triangulation of a mapped solid (vertices mm, faces): the design-coordinate solid
    triangulated at (``lin`` mm, ``ang`` rad), its edges split until a mapped chord sags less
    than ``lin`` on the skin's curvature (edge ≤ √(8·lin/κ)), vertices mapped. Watertight
    when the design mesh is (it is checked), and its points lie on the exactly mapped
    surface — unlike the kernel's own mesh of the mapped splines (see CHECK_MESH_CURVED).
    ``design_mesh``: ``flat``'s triangulation at (``lin``, ``ang``) when already made (the
    mesher gives the same one again)."""
    import math

    import numpy as np
    import trimesh

    from ductgen.solids.mesh import triangulate

    v, f = design_mesh if design_mesh is not None else triangulate(flat, lin, ang)
    m = trimesh.Trimesh(v, f)  # merges the kernel's per-face copies of shared vertices
    step = math.sqrt(8.0 * lin / curvature) if curvature > 0 else math.inf
    if math.isfinite(step):
        m = _subdivided(m, step)
    return np.asarray(fn(m.vertices)), np.asarray(m.faces)


#: Largest sag (mm) of a mapped chord in the expected volume's mesh: a tenth of the check
#: mesh's deflection (0.05 mm), whose own error (3e-4 to 9e-4 of the volume on the curved and
#: panel samples) then dominates; the 2 mm edges used before moved the expected volumes by at
#: most 2e-5 relative, at 3-18x the CPU.
EXPECTED_SAG_MM = 0.005


def expected_step_mm(curvature_per_mm: float, sag_mm: float = EXPECTED_SAG_MM) -> float:
    """Edge length (mm) of the expected volume's refined mesh on a skin of curvature κ: the
    chord whose mapped image sags ``sag_mm``, √(8·sag/κ), never below 2 mm."""
    import math

    k = abs(curvature_per_mm)
    return math.inf if k == 0 else max(2.0, math.sqrt(8.0 * sag_mm / k))


def mapped_volume_mm3(
    flat: Any, fn: Any, step_mm: float = 2.0, design_mesh: tuple[Any, Any] | None = None
) -> float:
    """Volume (mm³) of a design-coordinate solid carried through the point map ``fn``,
    measured without the mapped B-rep: its triangulation, subdivided to ``step_mm`` edges
    (so a mapped chord departs from the mapped surface by < step²κ/8), vertices mapped.
    ``design_mesh``: ``flat``'s triangulation at ``CHECK_MESH`` when already made. The
    volume is the divergence theorem's Σ v0·(v1 × v2) / 6 over the mapped triangles."""
    import numpy as np

    from ductgen.solids.check import CHECK_MESH
    from ductgen.solids.mesh import subdivide_to_size, triangulate

    v, f = design_mesh if design_mesh is not None else triangulate(flat, *CHECK_MESH)
    fine_v, fine_f = subdivide_to_size(v, f, step_mm)
    t = np.asarray(fn(fine_v), dtype=float)[fine_f]
    return float(np.einsum("ij,ij->i", t[:, 0], np.cross(t[:, 1], t[:, 2])).sum() / 6.0)


def build_solids(
    d: Design,
    kinds: list[str],
    quality: str,
    prefix: str,
    staging: str,
    flats: dict[str, bytes] | None = None,
    step: bool = True,
    placed: dict[str, bytes] | None = None,
) -> dict[str, SolidResult]:
    """Build, check and encode each kind; write ``PREFIX-KIND.step/.stl`` into ``staging``.

    Returns per kind its :class:`~ductgen.solids.results.SolidResult`: measured volume and
    area (mm³, mm²), face count, expected volume, the written file names, wall-clock seconds
    per stage, and the STL mesh (vertices mm, faces) for previews and mesh checks in the
    parent. ``flats``: solids already built in design coordinates (kind → binary B-rep,
    :func:`~ductgen.solids.handoff.flat_solid_job`), taken instead of building them again
    (the same solid to the last bit, so the same files), by the kinds that need them too
    (the insert its cutter). ``step`` False: no STEP file is written (another worker writes
    it, :func:`~ductgen.solids.handoff.step_solid_job`); its name is returned all the same.
    ``placed``: kinds placed on a curved skin already (kind → binary B-rep, with their flat
    solids in ``flats``: :func:`~ductgen.solids.handoff.placed_solid_job`), not mapped again.
    """
    from io import BytesIO

    import cadquery as cq

    out: dict[str, SolidResult] = {}
    built: dict[str, Any] = {k: cq.Shape.importBin(BytesIO(b)) for k, b in (flats or {}).items()}
    on_skin = {k: cq.Shape.importBin(BytesIO(b)) for k, b in (placed or {}).items()}
    book = recipes()
    for kind in kinds:
        base = f"{prefix}-{kind}"
        out[kind] = _one_solid(
            d, kind, book[kind], built, quality, base, staging, step, on_skin.get(kind)
        )
    return out


def _one_solid(
    d: Design,
    kind: str,
    recipe: SolidRecipe,
    built: dict[str, Any],
    quality: str,
    base: str,
    staging: str,
    step: bool = True,
    placed: Any = None,
) -> SolidResult:
    """One kind built flat (kept in ``built``), placed (unless ``placed`` is given),
    checked, and written as ``BASE.step`` (unless ``step`` is False) and ``BASE.stl`` into
    ``staging`` (see :func:`build_solids`)."""
    import time

    from ductgen.solids.check import CHECK_MESH, CHECK_MESH_CURVED
    from ductgen.solids.deform import place

    curved = d.placement.curvature != 0.0
    check_mesh = CHECK_MESH_CURVED if curved else CHECK_MESH
    times: dict[str, float] = {}
    t0 = time.perf_counter()
    stage(kind)
    flat = built[kind] if kind in built else recipe.build(d, built)
    built[kind] = flat
    solid = place(flat, d, kind) if placed is None else placed
    times["build_s"] = time.perf_counter() - t0
    t0 = time.perf_counter()
    stage(f"{kind} check")
    fn = d.placement.plug_map if kind == "plug" else d.placement.solid_map
    res, design_mesh = _checked(d, kind, recipe, flat, solid, fn)
    times["check_s"] = time.perf_counter() - t0
    step_name = f"{base}.step"
    if step:
        t0 = time.perf_counter()
        stage(f"{kind} STEP")
        write_step(kind, solid, base, staging)
        times["step_s"] = time.perf_counter() - t0
    t0 = time.perf_counter()
    stage(f"{kind} STL")
    verts, faces = _stl_mesh(
        d, flat, solid, res.mesh, fn, STL_QUALITY[quality], check_mesh, design_mesh
    )
    vol = _write_stl(kind, verts, faces, base, staging)
    times["stl_s"] = time.perf_counter() - t0
    wetted = _cutter_wetted_area(d, design_mesh or res.mesh) if kind == "cutter" else None
    return SolidResult(
        volume_mm3=res.volume_mm3,
        expected_volume_mm3=res.expected_volume_mm3,
        stl_volume_mm3=vol,
        area_mm2=res.area_mm2,
        faces=res.faces,
        check_mesh=check_mesh,
        step_file=step_name,
        stl_file=f"{base}.stl",
        mesh=Mesh(verts.astype("float32"), faces.astype("int32")),
        seconds=times,
        wetted_area_mm2=wetted,
    )


def _checked(
    d: Design, kind: str, recipe: SolidRecipe, flat: Any, solid: Any, fn: Any
) -> tuple[SolidCheck, tuple[Any, Any] | None]:
    """The placed ``solid``'s check against its expected volume (mm³): on a flat skin the
    recipe's independent integral, on a curved one the volume of the flat design's
    triangulation mapped through ``fn`` (independent of the mapped B-rep). Returns the
    check and that design triangulation (None on a flat skin), made once for the expected
    volume, the STL and the wetted area."""
    from ductgen.solids.check import CHECK_MESH, CHECK_MESH_CURVED, check_solid
    from ductgen.solids.mesh import triangulate

    curved = d.placement.curvature != 0.0
    check_mesh = CHECK_MESH_CURVED if curved else CHECK_MESH
    design_mesh = triangulate(flat, *CHECK_MESH) if curved else None
    expected = (
        mapped_volume_mm3(flat, fn, expected_step_mm(d.placement.curvature), design_mesh)
        if curved
        else recipe.expected(d)
    )
    res = check_solid(
        solid,
        kind,
        expected,
        DEFAULT_TOLERANCES,
        recipe.volume_rel,
        check_mesh,
        exact_volume=curved,
    )
    return res, design_mesh


def write_step(kind: str, solid: Any, base: str, staging: str) -> str:
    """Write ``BASE.step`` (healed, every edge laid on its faces: see
    :func:`~ductgen.solids.heal.heal`) into ``staging``; returns its name. The healed insert
    is kept in memory for its split."""
    from ductgen.atomic import write_atomic
    from ductgen.solids.cad_io import step_bytes_healed

    step_name = f"{base}.step"
    data, healed = step_bytes_healed(solid, base)
    write_atomic(Path(staging) / step_name, data)
    if kind == "insert":
        import cadquery as cq

        from ductgen.solids.split import keep_for_split

        keep_for_split(str(Path(staging) / step_name), cq.Shape.cast(healed))
    return step_name


def _write_stl(kind: str, verts: np.ndarray, faces: np.ndarray, base: str, staging: str) -> float:
    """Write ``BASE.stl`` into ``staging`` after checking the triangulation is closed and
    consistently wound; returns its enclosed volume (mm³)."""
    from ductgen.atomic import write_atomic
    from ductgen.meshstats import mesh_stats
    from ductgen.solids.cad_io import stl_bytes

    tight, winding, vol, _ = mesh_stats(verts, faces)
    if not (tight and winding):
        from ductgen.errors import GeometryError

        raise GeometryError(f"{kind} STL", "the STL triangulation is not closed")
    write_atomic(Path(staging) / f"{base}.stl", stl_bytes(verts, faces, base))
    return vol


def _stl_mesh(
    d: Design,
    flat: Any,
    solid: Any,
    check: tuple[Any, Any] | None,
    fn: Any,
    deflection: tuple[float, float],
    check_mesh: tuple[float, float],
    design_mesh: tuple[Any, Any] | None = None,
) -> tuple[Any, Any]:
    """The STL's triangulation (vertices mm, faces) at ``deflection`` (mm, rad): on a curved
    skin the design mesh refined for the curvature and mapped (see :func:`mapped_mesh`;
    ``design_mesh``, ``flat``'s triangulation at ``CHECK_MESH``, is reused at that
    deflection); else the check's own mesh when it was made at the same deflection, or a
    new closed one (:func:`~ductgen.solids.mesh.closed_mesh`)."""
    from ductgen.solids.check import CHECK_MESH
    from ductgen.solids.mesh import closed_mesh

    lin, ang = deflection
    if d.placement.curvature != 0.0:
        same = design_mesh if (lin, ang) == CHECK_MESH else None
        return mapped_mesh(flat, fn, lin, ang, d.placement.curvature, same)
    if (lin, ang) == check_mesh and check is not None:
        return check
    return closed_mesh(solid, lin, ang)


def _cutter_wetted_area(d: Design, mesh: tuple[Any, Any] | None) -> float:
    """The cutter's wetted area (mm², :func:`wetted_area_mm2`) from its design-coordinate
    triangulation at ``CHECK_MESH`` (the check's on a flat skin; on a curved one the flat
    design's, mapped)."""
    curved = d.placement.curvature != 0.0
    if mesh is None:
        from ductgen.errors import GeometryError

        raise GeometryError("cutter check", "the check gave no triangulation")
    from ductgen.solids.mesh import wetted_area_mm2

    return wetted_area_mm2(mesh[0], mesh[1], d.geometry, d.placement.solid_map if curved else None)


def cutter_mesh_job(d: Design) -> Mesh:
    """The cutter's triangulation (vertices mm, faces) for the preview, when the build
    made no solids (``--only sheet``)."""
    from ductgen.solids.cutter import make_cutter
    from ductgen.solids.mesh import triangulate

    stage("preview cutter")
    verts, faces = triangulate(make_cutter(d), *STL_QUALITY["draft"])
    return Mesh(verts.astype("float32"), faces.astype("int32"))
