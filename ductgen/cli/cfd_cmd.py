"""`ductgen cfd`: an OpenFOAM cross-check of the airflow estimate.

A plain function (registered by the CLI's command table); of the other CLI modules it
imports only the shared helpers, so it adds no import cycle whichever way the commands are
registered.
"""

from __future__ import annotations

from pathlib import Path
from typing import Annotated, Any

import typer
from rich.console import Console

from ductgen.cli.common import preload_kernel

__all__ = ["cfd_command"]

#: stderr console (user text is never read as markup or emoji codes).
_err = Console(stderr=True, highlight=False, emoji=False, markup=False)


_Turbulence = Annotated[
    str,
    typer.Option(
        "--turbulence", help="RAS model: kOmegaSST | kOmega (Wilcox; a model-sensitivity check)"
    ),
]


def cfd_command(
    spec: Annotated[Path, typer.Argument(help="spec file with a [flow] section")],
    out: Annotated[
        str | None, typer.Option("-o", "--out", help="output folder [default: ./NAME-cfd]")
    ] = None,
    mesh: Annotated[
        str,
        typer.Option("--mesh", help="coarse | medium | fine | study (all three, with the GCI)"),
    ] = "coarse",
    n_procs: Annotated[int, typer.Option("--np", help="MPI ranks for the solver")] = 1,
    turbulence: _Turbulence = "kOmegaSST",
    write_only: Annotated[
        bool, typer.Option("--write-only", help="write the OpenFOAM case(s) without running")
    ] = False,
    keep_case: Annotated[
        bool, typer.Option("--keep-case", help="keep the case folders after the run")
    ] = False,
    force: Annotated[bool, typer.Option("--force", help="replace existing files")] = False,
    quiet: Annotated[bool, typer.Option("--quiet", "-q", help="print nothing on success")] = False,
) -> None:
    """Cross-check the airflow with OpenFOAM (simpleFoam) and compare with the 1-D estimate."""
    preload_kernel("cutter")
    from rich.progress import BarColumn, Progress, TextColumn, TimeElapsedColumn

    from ductgen.cfd.run import check_inputs, run_cfd
    from ductgen.errors import SpecError
    from ductgen.spec import load_spec

    s = load_spec(spec)
    check_inputs(s, mesh, n_procs, write_only, turbulence)
    if out is not None and not out.strip():
        raise SpecError("-o/--out", out, "a folder path", "the path is empty")
    out_dir = Path(out) if out is not None else Path.cwd() / f"{s.name}-cfd"
    with Progress(
        TextColumn("{task.description}"),
        BarColumn(),
        TextColumn("{task.completed}/{task.total} it"),
        TimeElapsedColumn(),
        console=_err,
        transient=True,
        disable=quiet,
    ) as bar:
        task = bar.add_task("cfd", total=None)

        def progress(stage: str, done: int, total: int) -> None:
            bar.update(task, description=stage, completed=done, total=total or None)

        section = run_cfd(
            s,
            out_dir,
            mesh=mesh,
            n_procs=n_procs,
            write_only=write_only,
            keep_case=keep_case,
            force=force,
            progress=progress,
            turbulence=turbulence,
        )
    if not quiet:
        _summary(section, out_dir)


def _summary(section: dict[str, Any], out_dir: Path) -> None:
    from rich.console import Console

    con = Console(emoji=False, markup=False, highlight=False)
    if "result" not in section:
        con.print(f"wrote the OpenFOAM case(s) to {out_dir} (run each with its Allrun script)")
        return
    r, one = section["result"], section["one_d"]
    con.print(
        f"CFD ({r['mesh']}, {r['cells']} cells, {r['iterations']} iterations"
        f"{', plateau' if r['plateau'] else ', NO plateau (iteration cap)'}):"
    )
    con.print(
        f"  flow {r['volume_flow_m3_s'] * 1000:.2f} L/s (1-D {one['volume_flow_m3_s'] * 1000:.2f}"
        f" L/s, {one.get('flow_difference', float('nan')) * 100:+.1f} %), IVR "
        f"{r['inlet_velocity_ratio']:.3f}"
    )
    con.print(
        f"  ram recovery {r['ram_recovery_flow_avg']:.3f} flow-avg, "
        f"{r['ram_recovery_area_avg']:.3f} area-avg (1-D {one['ram_recovery']:.3f}); "
        f"y+ {section['y_plus_range'][0]:.1f} to {section['y_plus_range'][1]:.0f}"
    )
    st = section.get("study")
    if st:
        for key, label in (("volume_flow_m3_s", "flow"), ("ram_recovery_flow_avg", "recovery")):
            g = st[key]
            con.print(
                f"  {label}: mesh uncertainty ±{(g['uncertainty_rel'] or 0.0) * 100:.1f} % "
                f"({g['uncertainty_basis']}"
                + (f"; extrapolated {g['extrapolated']:.4g}" if g["extrapolated"] else "")
                + (f"; {g['note']}" if g["note"] else "")
                + ")"
            )
    con.print(f"wrote cfd.json and report.json to {out_dir}")
