"""`ductgen size`: the smallest throat for a flow target; ``--write-spec`` seeds a spec."""

from __future__ import annotations

import json
from pathlib import Path
from typing import TYPE_CHECKING, Annotated

import typer

from ductgen.cli.common import err_console
from ductgen.spec.model import DEFAULT_RAMP_ANGLE_DEG

if TYPE_CHECKING:
    from rich.table import Table

    from ductgen.flow.record import FlowRecord
    from ductgen.geometry.inlet import InletGeometry
    from ductgen.sizing import SizeResult

__all__ = ["size_command"]


def _quantity(key: str, text: str, dimension: str, unit: str) -> float:
    """A CLI quantity: needs a unit, as in spec files (a bare number could be misread)."""
    from ductgen.errors import SpecError
    from ductgen.units import DIMENSIONS, convert

    try:
        return convert(text, dimension, unit)
    except ValueError as err:
        raise SpecError(
            key, text, f"a {dimension} with a unit, e.g. {DIMENSIONS[dimension][1]}", str(err)
        ) from None


# The command's options (typer reads them from the annotations).
_Flow = Annotated[
    str,
    typer.Option("--flow", help="volume flow needed, with unit: '0.06 m^3/s', '60 L/s', '120 cfm'"),
]
_Speed = Annotated[
    str, typer.Option("--speed", help="vehicle speed, with unit: '160 km/h', '45 m/s'")
]
_Aspect = Annotated[
    float, typer.Option("--aspect", help="throat width/depth W/D (3-5 tested, NACA RM A7I30)")
]
_Angle = Annotated[float, typer.Option("--angle", help="ramp angle, deg (5-7 recommended)")]
_MaxIvr = Annotated[
    float | None,
    typer.Option(
        "--max-ivr", help="largest inlet velocity ratio accepted (default 1, common practice)"
    ),
]
_SpecPath = Annotated[
    Path | None, typer.Option("--spec", help="spec whose lip, outlet and flow losses to use")
]
_Name = Annotated[str | None, typer.Option("--name", help="spec name of the result")]
_WriteSpec = Annotated[
    Path | None, typer.Option("--write-spec", help="write a buildable spec (.toml or .json)")
]
_Force = Annotated[bool, typer.Option("--force", help="replace an existing --write-spec file")]
_AsJson = Annotated[
    bool, typer.Option("--json", help="print the result as JSON (report.json key names)")
]


def size_command(
    flow: _Flow,
    speed: _Speed,
    aspect: _Aspect = 4.0,
    angle: _Angle = DEFAULT_RAMP_ANGLE_DEG,
    max_ivr: _MaxIvr = None,
    spec: _SpecPath = None,
    name: _Name = None,
    write_spec: _WriteSpec = None,
    force: _Force = False,
    as_json: _AsJson = False,
) -> None:
    """Throat W, D and ramp length L that deliver a flow at a speed, through the spec's losses."""
    from ductgen.sizing import SizeRequest, run_size, size_result_dict

    q = _quantity("--flow", flow, "volume_flow", "m^3/s")
    v = _quantity("--speed", speed, "speed", "m/s")
    header = (
        f"written by ductgen size --flow '{flow}' --speed '{speed}'"
        f" --aspect {aspect:g} --angle {angle:g}" + (f" --spec {spec}" if spec is not None else "")
    )
    result = run_size(
        SizeRequest(
            flow_m3_s=q,
            speed_m_s=v,
            aspect=aspect,
            angle_deg=angle,
            max_ivr=max_ivr,
            spec_path=spec,
            name=name,
            write_spec=write_spec,
            force=force,
            header=header,
        )
    )
    if as_json:
        out = size_result_dict(result, write_spec)
        typer.echo(json.dumps(out, indent=2, allow_nan=False))
        return
    _print(result)
    if write_spec is not None:
        err_console.print(f"wrote {write_spec}; next: ductgen build {write_spec}")


def _print(r: SizeResult) -> None:
    from rich.console import Console
    from rich.table import Table

    from ductgen.flow.record import FlowRecord

    con = Console()
    g, f = r.geometry, FlowRecord.of_section(r.flow)
    t = Table(
        title=f"{r.spec.name}: smallest throat for {r.target_m3_s * 1000:.1f} L/s",
        show_header=False,
        box=None,
    )
    rows = [
        (
            "throat W × D",
            f"{g.width_mm:.2f} × {g.depth_mm:.2f} mm (W/D {g.width_mm / g.depth_mm:.2f})",
        ),
        ("throat area", f"{g.throat_area_mm2:.0f} mm²"),
        ("ramp angle / length", f"{g.floor.angle_deg:.2f}° / {g.length_mm:.1f} mm"),
        (
            "boundary layer δ, δ/D",
            f"{f.boundary_layer_thickness_m * 1000:.1f} mm, {f.delta_over_depth:.2f}",
        ),
    ]
    if f.found:
        assert f.volume_flow_m3_s is not None and f.mass_flow_kg_s is not None
        rows += [
            (
                "delivered flow",
                f"{f.volume_flow_m3_s * 1000:.2f} L/s ({f.mass_flow_kg_s:.4f} kg/s)",
            ),
            ("inlet velocity ratio", f"{f.inlet_velocity_ratio:.3f}"),
            ("ram recovery", f"{f.ram_recovery:.3f} ({f.recovery_model})"),
        ]
    wall = _wall_row(g)
    if wall is not None:
        rows.append(wall)
    if r.limited_by == "ivr":
        rows.append(("sized by", f"IVR limit {r.max_ivr:g}: delivers more than asked"))
    for a, b in rows:
        t.add_row(a, b)
    con.print(t)
    if f.found:
        con.print(_budget_table(f))
    for w in r.warnings:
        err_console.print(f"warning {w.code}: {w.message}", soft_wrap=True)


def _wall_row(g: InletGeometry) -> tuple[str, str] | None:
    """The transition's steepest wall (deg) against the stall line, and the length (mm)
    that clears it; None without a transition."""
    from ductgen.design.build import duct_shape
    from ductgen.flow.stall import steepest_wall

    wall = steepest_wall(duct_shape(g))
    if wall is None:
        return None
    under = wall.length_under_stall_line_mm
    return (
        "transition steepest wall",
        f"{wall.name} {wall.angle_deg:.1f}° "
        f"(stall line {wall.stall_line_included_deg:.1f}°); "
        + (
            "under the line"
            if not wall.stalls
            else f"lengthen the transition to ≥ {under:.0f} mm"
            if under is not None
            else "no length within 50× clears the line"
        ),
    )


def _budget_table(f: FlowRecord) -> Table:
    """The pressure budget at the operating point (m/s, K, Pa), summing to the recovered
    pressure."""
    from rich.table import Table

    budget = Table(
        "element",
        "V m/s",
        "K",
        "Δp Pa",
        title="pressure budget (sums to the recovered pressure)",
    )
    for item in f.budget:
        budget.add_row(
            item.element,
            "" if item.velocity_m_s is None else f"{item.velocity_m_s:.2f}",
            "" if item.k is None else f"{item.k:.3f}",
            f"{item.dp_pa:.1f}",
        )
    budget.add_row("recovered", "", "", f"{f.recovered_total_pressure_pa:.1f}")
    return budget
