"""``ductgen cfd``: build the cutter, write the case, mesh, solve, read, compare with the
1-D estimate; ``mesh="study"`` runs three meshes and states the grid convergence index.

Outputs in the output folder: the build's ``report.json`` (with a ``cfd`` section added),
the cutter STEP/STL, ``cfd.json``, two pictures (``NAME-cfd-throat.png``,
``NAME-cfd-ramp.png``) and, with ``keep_case`` or ``write_only``, the case folders
``cfd-coarse/`` (``cfd-medium/``, ``cfd-fine/``) with an ``Allrun`` script.
"""

from __future__ import annotations

import json
import shutil
import subprocess
import sys
from collections.abc import Callable
from pathlib import Path
from typing import Any

from ductgen.cfd.case import (
    COARSE_CELLS_PER_DEPTH,
    EXTENSION_DIAMETERS,
    LAYERS,
    MESH_LEVELS,
    REFINEMENT_RATIO,
    case_setup,
)
from ductgen.cfd.case_files import write_case
from ductgen.cfd.curved import curved_surface
from ductgen.cfd.extension import ExtensionPlan, downstream_need, extension_plan
from ductgen.cfd.gci import representative_size
from ductgen.cfd.results import case_numbers, cells_across_depth, layer_report, total_volume_m3
from ductgen.cfd.runner import (
    PLATEAU_SPREAD,
    PLATEAU_TOL,
    PLATEAU_WINDOW,
    CfdError,
    make_mesh,
    require_openfoam,
    solve,
)
from ductgen.cfd.skin_wall import SkinDomain, SkinWallError
from ductgen.cfd.study import compare_one_d, gci_study
from ductgen.cfd.surface import WettedSurface, extend_outlet, wetted_surface
from ductgen.cfd.templates import FLAVOUR, TURBULENCE_MODELS
from ductgen.errors import SpecError
from ductgen.flow.record import FlowRecord
from ductgen.report import BuildRecord
from ductgen.spec.model import Spec

__all__ = ["MESH_CHOICES", "cfd_for_build", "check_inputs", "run_cfd"]

#: Values of ``--mesh``.
MESH_CHOICES = (*MESH_LEVELS, "study")

Progress = Callable[[str, int, int], None]


def check_inputs(
    spec: Spec, mesh: str, n_procs: int, write_only: bool, turbulence: str = "kOmegaSST"
) -> None:
    """Refuse bad input before anything is built (SpecError → exit 2; OpenFOAM missing →
    exit 2 unless only the case is written)."""
    if spec.flow is None:
        raise SpecError(
            "[flow]",
            None,
            "a [flow] section (speed, altitude, run_length, losses)",
            "the CFD case needs the design speed, the air and the duct system behind the inlet",
        )
    if mesh not in MESH_CHOICES:
        raise SpecError("--mesh", mesh, " | ".join(MESH_CHOICES), "mesh refinement")
    if n_procs < 1:
        raise SpecError("--np", n_procs, ">= 1", "number of MPI ranks for the solver")
    if turbulence not in TURBULENCE_MODELS:
        raise SpecError(
            "--turbulence", turbulence, " | ".join(TURBULENCE_MODELS), "the RAS turbulence model"
        )
    if not write_only:
        require_openfoam()


def _allrun(n_procs: int) -> str:
    par = (
        f"decomposePar -force\nmpirun -np {n_procs} simpleFoam -parallel\n"
        "reconstructPar -latestTime\n"
        if n_procs > 1
        else "simpleFoam\n"
    )
    return (
        "#!/bin/sh\n# written by ductgen; Debian's openfoam package needs only this variable\n"
        'export WM_PROJECT_DIR="${WM_PROJECT_DIR:-/usr/share/openfoam}"\n'
        'cd "$(dirname "$0")" || exit 1\nset -e\n'
        "blockMesh\nsurfaceFeatureExtract\nsnappyHexMesh -overwrite\ntopoSet\ncheckMesh\n" + par
    )


def _one_mesh(
    case_dir: Path, setup: Any, surface: Any, n_procs: int, write_only: bool, note: Progress
) -> dict[str, Any]:
    write_case(case_dir, setup, surface, n_procs)
    allrun = case_dir / "Allrun"
    allrun.write_text(_allrun(n_procs))
    allrun.chmod(0o755)
    info: dict[str, Any] = {
        "mesh": setup.mesh,
        "outlet_extension_m": setup.extension_m,
        "outlet_extension_diameters": setup.extension_m / setup.extension_diameter_m,
        "speed_m_s": setup.speed_m_s,
        "base_cell_m": setup.base_cell_m,
        "max_iterations": setup.max_iterations,
    }
    if write_only:
        return {**info, "status": "written", "case": case_dir.name}  # in the output folder
    note(f"{setup.mesh}: meshing", 0, 0)
    stats = make_mesh(case_dir, lambda tool: note(f"{setup.mesh}: {tool}", 0, 0))
    if not stats.usable:
        raise CfdError(
            f"the {setup.mesh} mesh failed checkMesh ({'; '.join(stats.failures)}); the "
            "case is written with --write-only to look at it"
        )
    run = solve(
        case_dir,
        n_procs,
        setup.max_iterations,
        lambda it, cap: note(f"{setup.mesh}: solving", it, cap),
    )
    nums = case_numbers(
        case_dir,
        setup.speed_m_s,
        setup.throat_area_m2,
        setup.density_kg_m3,
        setup.outlet_area_m2,
        setup.transition_ref_area_m2,
    )
    return {
        **info,
        "status": "solved",
        **_mesh_facts(case_dir, setup, stats),
        **_run_facts(run),
        **nums,
    }


def _mesh_facts(case_dir: Path, setup: Any, stats: Any) -> dict[str, Any]:
    """What a level's ``cfd.json`` entry says of its mesh (m, m³, deg)."""
    volume = total_volume_m3(case_dir)
    layers = layer_report(case_dir, LAYERS)
    return {
        "cells": stats.cells,
        "mesh_volume_m3": volume,
        "representative_cell_m": representative_size(volume, stats.cells),
        "check_mesh_ok": stats.ok,
        "check_mesh_failures": list(stats.failures),
        "max_non_orthogonality_deg": stats.max_non_orthogonality,
        "max_skewness": stats.max_skewness,
        "cells_across_throat_depth": cells_across_depth(case_dir),
        "prism_layers": LAYERS,
        "cells_across_throat_depth_core": setup.cells_across_depth_core,
        "layer_coverage": layers.get("duct_cavity", {}).get("coverage"),
        "layer_coverage_all_layers": layers.get("duct_cavity", {}).get("coverage_all_layers"),
        "layers_by_patch": layers,
    }


def _run_facts(run: Any) -> dict[str, Any]:
    """What a level's ``cfd.json`` entry says of its solve (iterations, s)."""
    return {
        "iterations": run.iterations,
        "plateau": run.plateau,
        "flow_iterative_spread": run.flow_spread,
        "solve_s": run.seconds,
    }


def cfd_for_build(
    spec: Spec,
    design: Any,
    record: BuildRecord,
    cutter_stl: Path,
    out_dir: Path,
    *,
    mesh: str = "coarse",
    n_procs: int = 1,
    write_only: bool = False,
    keep_case: bool = False,
    pictures: bool = True,
    progress: Progress | None = None,
    turbulence: str = "kOmegaSST",
) -> dict[str, Any]:
    """Run the CFD check of a finished build (its record and cutter STL); writes
    ``cfd.json``, sets the record's ``cfd`` section and rewrites ``out_dir/report.json``
    from the record; returns the section. ``turbulence``: the RAS model (a key of
    :data:`~ductgen.cfd.templates.TURBULENCE_MODELS`)."""
    import dataclasses

    from ductgen.atomic import write_atomic
    from ductgen.report import report_bytes

    note = progress or (lambda *_a: None)
    check_inputs(spec, mesh, n_procs, write_only, turbulence)
    flow = record.flow
    if flow is None:  # check_inputs refused a spec without [flow]; its build has a record
        raise CfdError("the build's record has no flow section")
    surface, domain, plan, notes = _domain(spec, design, flow, cutter_stl)
    need = downstream_need(spec, design, plan)
    names = list(MESH_LEVELS) if mesh == "study" else [mesh]
    levels = []
    for name in names:
        setup = case_setup(
            spec.name, name, design.geometry, surface, flow, need, plan.diameter_m, domain
        )
        setup = dataclasses.replace(setup, turbulence=turbulence)
        levels.append(_one_mesh(out_dir / f"cfd-{name}", setup, surface, n_procs, write_only, note))
    section = _section(mesh, plan, levels, notes, domain, turbulence)
    if not write_only:
        final = levels[-1]
        section["result"] = {k: v for k, v in final.items() if k not in ("y_plus",)}
        section["y_plus_range"] = [final["y_plus"]["min"], final["y_plus"]["max"]]
        section["y_plus_by_patch"] = final["y_plus"]["by_patch"]
        section["one_d"] = compare_one_d(final, flow)
        if mesh == "study":
            section["study"] = gci_study(levels)
        if pictures:
            section["pictures"] = _pictures(out_dir / f"cfd-{names[-1]}", spec.name, out_dir, final)
        if not keep_case:
            for name in names:
                shutil.rmtree(out_dir / f"cfd-{name}", ignore_errors=True)
    cfd_json = (json.dumps(section, indent=2, allow_nan=False) + "\n").encode()
    write_atomic(out_dir / "cfd.json", cfd_json, force=True)
    record.cfd = section
    write_atomic(out_dir / "report.json", report_bytes(record.to_report()), force=True)
    return section


def _domain(
    spec: Spec, design: Any, flow: FlowRecord, cutter_stl: Path
) -> tuple[WettedSurface, SkinDomain | None, ExtensionPlan, list[str]]:
    """The wetted surface round the cutter with its outlet extended, the skin domain on a
    curved skin or panel (None on a flat one), the extension's plan and notes."""
    import trimesh

    cut = trimesh.load(cutter_stl, force="mesh")
    if not isinstance(cut, trimesh.Trimesh):
        raise CfdError(f"{cutter_stl}: not a triangle mesh")
    if spec.skin.shape != "flat":
        try:
            return curved_surface(
                spec, design, flow, cut.vertices, cut.faces, EXTENSION_DIAMETERS,
                design.geometry.depth_mm * 1e-3 / COARSE_CELLS_PER_DEPTH,
            )  # fmt: skip
        except SkinWallError as err:
            raise SpecError(
                "skin", spec.skin.shape, "a skin the CFD domain can stand on", str(err)
            ) from None
    lo, hi = cut.bounds
    span = float(hi[0] - lo[0])
    surface = wetted_surface(
        cut.vertices,
        cut.faces,
        (lo[0] - 10 * span, -10 * span),
        (hi[0] + 10 * span, 10 * span, 10 * span),
    )
    plan = extension_plan(
        spec, surface.outlet_hydraulic_diameter_m, EXTENSION_DIAMETERS, surface.outlet_area_m2
    )
    return extend_outlet(surface, plan.length_m), None, plan, []


def _section(
    mesh: str,
    plan: ExtensionPlan,
    levels: list[dict[str, Any]],
    notes: list[str],
    domain: SkinDomain | None,
    turbulence: str = "kOmegaSST",
) -> dict[str, Any]:
    """The ``cfd`` section before the results: the solver, the rules, the meshes."""
    warnings = notes + [
        f"{lv['mesh']} mesh: checkMesh: {f} (solved anyway: a quality check, not a broken mesh)"
        for lv in levels
        for f in lv.get("check_mesh_failures", [])
    ]
    section: dict[str, Any] = {
        "solver": f"{FLAVOUR}: simpleFoam, {TURBULENCE_MODELS[turbulence]}, snappyHexMesh",
        "turbulence_model": turbulence,
        "mesh": mesh,
        "refinement_ratio": REFINEMENT_RATIO,
        "plateau_rule": f"mean duct-outlet flow of the last {PLATEAU_WINDOW} iterations "
        f"within {PLATEAU_TOL:g} (relative) of the {PLATEAU_WINDOW} before, spread "
        f"< {PLATEAU_SPREAD:g}",
        "outlet_condition": "fanPressure at the end of a straight extension of the duct "
        f"outlet ({plan.diameters:g} x {plan.diameter_m * 1e3:.1f} mm, {plan.source}): "
        "static pressure of the duct system behind it (1-D model's losses without the "
        "internal transition, less the extension's own friction), so one solve finds the "
        "operating point; recovery and outlet referenced to the far-field ambient p = 0",
        "levels": levels,
        "warnings": warnings,
    }
    if domain is not None:
        section["skin_wall"] = {
            "source": domain.sheet.source,
            "frame": "datum frame: x along the flow in the tangent plane at the ramp start, "
            "z along the outward normal there",
            "datum_origin_mm": [float(c) for c in domain.origin],
            "datum_axes": [[float(c) for c in row] for row in domain.axes],
            "sheet_step_mm": domain.sheet.step_mm,
            "filled_past_panel_edge_mm": domain.sheet.filled_mm,
            "floor_tangent_from_x_mm": domain.sheet.faired_from_x_mm,
            "inlet_profile": "1/7-power layer counted from the skin's height under the "
            "inlet's centreline",
        }
    return section


def _pictures(case: Path, name: str, out_dir: Path, final: dict[str, Any]) -> dict[str, Any]:
    """Render the pictures in a child process (a broken GL stack cannot take the run down)."""
    rho = final["mass_flow_kg_s"] / final["volume_flow_m3_s"]
    p_inf = final["reference_static_pa"] / rho
    cmd = [sys.executable, "-m", "ductgen.cfd.pictures", str(case), str(out_dir), name]
    cmd += [repr(p_inf), repr(final["speed_m_s"])]
    res = subprocess.run(cmd, capture_output=True, text=True, timeout=600)
    if res.returncode != 0:
        return {"error": (res.stderr.strip().splitlines() or ["failed"])[-1]}
    return json.loads(res.stdout)


def _planned(spec: Spec, mesh: str, keep_case: bool, pictures: bool) -> list[str]:
    """Names ``run_cfd`` publishes in the output folder (files and case folders)."""
    from ductgen.pipeline.builder import planned_files

    names = [*planned_files(spec, ["cutter"]), "cfd.json"]
    if pictures:
        names += [f"{spec.name}-cfd-throat.png", f"{spec.name}-cfd-ramp.png"]
    if keep_case:
        names += [f"cfd-{m}" for m in (MESH_LEVELS if mesh == "study" else (mesh,))]
    return names


def run_cfd(
    spec: Spec,
    out_dir: str | Path,
    *,
    mesh: str = "coarse",
    n_procs: int = 1,
    write_only: bool = False,
    keep_case: bool = False,
    force: bool = False,
    pictures: bool = True,
    progress: Progress | None = None,
    turbulence: str = "kOmegaSST",
) -> dict[str, Any]:
    """Build the cutter of ``spec`` and run the CFD check (module doc), all in a staging
    folder inside ``out_dir``: the cutter files, the case folders, ``cfd.json``, the
    pictures and the ``report.json`` with its ``cfd`` section appear in ``out_dir`` together,
    only when the run has finished. An interrupt (Ctrl-C, SIGTERM) or a failure at any
    moment stops the OpenFOAM tools and publishes nothing."""
    from ductgen.atomic import OutputSet, check_free
    from ductgen.pipeline.builder import build

    check_inputs(spec, mesh, n_procs, write_only, turbulence)
    note = progress or (lambda *_a: None)
    out = Path(out_dir)
    keep = keep_case or write_only
    check_free([out / n for n in _planned(spec, mesh, keep, pictures and not write_only)], force)
    with OutputSet(out, force=force) as staged:
        note("building the cutter", 0, 0)
        result = build(spec, staged.staging, only=["cutter"], force=True)
        stl = next(p for p in result.files.values() if str(p).endswith("-cutter.stl"))
        section = cfd_for_build(
            spec,
            result.design,
            result.record,
            Path(stl),
            staged.staging,
            mesh=mesh,
            n_procs=n_procs,
            write_only=write_only,
            keep_case=keep,
            pictures=pictures,
            progress=note,
            turbulence=turbulence,
        )
        for entry in sorted(staged.staging.iterdir()):
            staged.staged_path(entry.name)
        staged.publish()
    return section
