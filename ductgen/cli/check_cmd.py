"""`ductgen check FILE`: health of an STL or STEP file (closed, manifold, volume, bbox, walls)."""

from __future__ import annotations

import json
from pathlib import Path
from typing import Annotated, Any

import typer

from ductgen.cli.app import app, err_console
from ductgen.errors import DuctgenError

__all__ = ["UnhealthyFileError", "check_command", "check_file"]


class UnhealthyFileError(DuctgenError):
    """The checked file is not a sound solid (exit 1)."""

    exit_code = 1


def _read_mesh(path: Path) -> tuple[Any, Any]:
    """Vertices (N, 3) mm and faces (M, 3) of an STL (any) or STEP (via the CAD kernel)."""
    from ductgen.errors import SpecError

    suffix = path.suffix.lower()
    if not path.is_file():
        raise SpecError("FILE", str(path), "an existing .stl, .step or .stp file", "file not found")
    if suffix == ".stl":
        import numpy as np
        import trimesh

        m = trimesh.load(str(path), file_type="stl", force="mesh", process=False)
        return np.asarray(m.vertices, dtype=float), np.asarray(m.faces, dtype=np.int64)
    if suffix in (".step", ".stp"):
        from ductgen.export.cad import read_step  # needs the CAD kernel: import here only
        from ductgen.solids.mesh import triangulate

        return triangulate(read_step(path), 0.05, 0.2)
    raise SpecError("FILE", str(path), ".stl, .step or .stp", "unknown file type")


def check_file(path: str | Path, min_wall_mm: float = 0.0) -> dict[str, Any]:
    """Health report of one mesh/CAD file; ``healthy`` is closed, manifold, positive
    volume and (when ``min_wall_mm`` > 0) no wall thinner than ``min_wall_mm``."""
    from ductgen.printability import mesh_health
    from ductgen.printability import min_wall_mm as measure

    verts, faces = _read_mesh(Path(path))
    health = mesh_health(verts, faces)
    report: dict[str, Any] = {"file": str(path), **health}
    report["manifold"] = bool(health["watertight"] and health["winding_consistent"])
    problems = []
    if not health["watertight"]:
        problems.append("not closed: some edges are not shared by exactly two triangles")
    elif not health["winding_consistent"]:
        problems.append("inconsistent triangle orientation")
    if health["volume_mm3"] <= 0:
        problems.append("non-positive volume (inverted or open)")
    if report["manifold"] and len(faces):
        wall = measure(verts, faces)
        report["min_wall_mm"] = wall["min_wall_mm"]
        report["min_wall_at_mm"] = wall["at_mm"]
        if (
            min_wall_mm > 0
            and wall["min_wall_mm"] is not None
            and wall["min_wall_mm"] < min_wall_mm
        ):
            problems.append(
                f"thin wall {wall['min_wall_mm']:.2f} mm < {min_wall_mm:g} mm at {wall['at_mm']}"
            )
    report["problems"] = problems
    report["healthy"] = not problems
    return report


@app.command("check")
def check_command(
    file: Annotated[Path, typer.Argument(help="STL or STEP file")],
    min_wall: Annotated[
        float, typer.Option("--min-wall", help="flag walls thinner than this (mm); 0 = report only")
    ] = 0.0,
    as_json: Annotated[bool, typer.Option("--json", help="machine-readable report")] = False,
) -> None:
    """Check a mesh or CAD file: closed, manifold, volume, bounding box, thin walls."""
    rep = check_file(file, min_wall)
    if as_json:
        typer.echo(json.dumps(rep, indent=2))
    else:
        size = " × ".join(f"{v:.2f}" for v in rep["bbox_size_mm"])
        typer.echo(f"{file}: {'healthy' if rep['healthy'] else 'NOT healthy'}")
        typer.echo(
            f"  closed {rep['watertight']}, manifold {rep['manifold']}, "
            f"triangles {rep['triangles']}"
        )
        typer.echo(f"  volume {rep['volume_mm3']:.1f} mm³, bounding box {size} mm")
        if rep.get("min_wall_mm") is not None:
            typer.echo(f"  thinnest wall {rep['min_wall_mm']:.2f} mm at {rep['min_wall_at_mm']}")
        for p in rep["problems"]:
            err_console.print(f"problem {p}")
    if not rep["healthy"]:
        raise UnhealthyFileError(f"{file} is not healthy: " + "; ".join(rep["problems"]))
