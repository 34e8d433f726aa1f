"""`ductgen check FILE`: health of an STL or STEP file (closed, manifold, volume, bbox, walls)."""

from __future__ import annotations

import json
from pathlib import Path
from typing import Annotated

import typer

from ductgen.cli.common import err_console
from ductgen.errors import DuctgenError

__all__ = ["UnhealthyFileError", "check_command"]


class UnhealthyFileError(DuctgenError):
    """The checked file is not a sound solid (exit 1)."""

    exit_code = 1


def check_command(
    file: Annotated[Path, typer.Argument(help="STL or STEP file")],
    min_wall: Annotated[
        float, typer.Option("--min-wall", help="flag walls thinner than this (mm); 0 = report only")
    ] = 0.0,
    as_json: Annotated[bool, typer.Option("--json", help="machine-readable report")] = False,
) -> None:
    """Check a mesh or CAD file: closed, manifold, volume, bounding box, thin walls."""
    from ductgen.printability import check_file

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
