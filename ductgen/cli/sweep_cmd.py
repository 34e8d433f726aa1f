"""`ductgen sweep`: variants of one spec in parallel, and the comparison report."""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path
from typing import TYPE_CHECKING, Annotated

import typer

from ductgen.cli.common import NoCacheOption, QualityOption, QuietOption, err_console

if TYPE_CHECKING:
    from ductgen.sweep.results import SweepResult, VariantResult
    from ductgen.sweep.vary import Vary

#: The sweep's progress callback: ``(result or None, done, failed, total)``.
ProgressFn = Callable[["VariantResult | None", int, int, int], None]

__all__ = ["CONFIRM_ABOVE", "SECONDS_PER_VARIANT", "sweep_command"]

#: A sweep of more variants than this needs ``--yes`` (or a ``--max-variants`` at least as
#: large): a typo in a step must not start hours of work silently.
CONFIRM_ABOVE = 50

#: Rough wall-clock seconds of one variant on one worker, for the estimate printed before a
#: sweep starts: one `build` of the club-racer-brake sample measured 12.3 s (all outputs)
#: and 6.6 s (cutter only) on a shared 2-core machine, kernel start included; rounded up.
#: A guide, not a promise.
SECONDS_PER_VARIANT = {"all": 15.0, "cutter": 8.0}


def _announce(
    varies: list[Vary],
    zip_values: bool,
    jobs: int | None,
    kinds: list[str] | None,
    yes: bool,
    max_variants: int | None,
    silent: bool,
) -> None:
    """Say how many variants and roughly how long, and refuse a large sweep without
    ``--yes`` or beyond ``--max-variants`` (exit 2, before anything is built)."""
    from ductgen.errors import SpecError
    from ductgen.sweep.run import default_jobs
    from ductgen.sweep.vary import combinations

    if max_variants is not None and max_variants < 1:
        raise SpecError("--max-variants", max_variants, ">= 1", "a limit on the variant count")
    n = len(combinations(varies, zip_values))
    workers = max(1, min(jobs or default_jobs(), n))
    per = SECONDS_PER_VARIANT["cutter" if kinds == ["cutter"] else "all"]
    est = n * per / workers
    when = f"{est / 60:.0f} min" if est < 5400 else f"{est / 3600:.1f} h"
    line = (
        f"sweep: {n} variants on {workers} worker(s), roughly {when} (unchanged ones are skipped)"
    )
    if max_variants is not None and n > max_variants:
        raise SpecError(
            "--max-variants",
            max_variants,
            f">= {n} for this sweep",
            f"the --vary grid has {n} variants",
        )
    if n > CONFIRM_ABOVE and not yes and max_variants is None:
        raise SpecError(
            "--yes",
            None,
            f"--yes (or --max-variants {n}) to start more than {CONFIRM_ABOVE} variants",
            line,
        )
    if not silent:
        err_console.print(line)


# The command's options (typer reads them from the annotations).
_Spec = Annotated[Path, typer.Argument(help="base spec file (.toml, .yaml, .json)")]
_Vary = Annotated[
    list[str],
    typer.Option(
        "--vary",
        help="KEY=A:B:STEP (B included when on a step) or KEY=v1,v2,...; units allowed, "
        "e.g. throat.width=100mm:140mm:10mm. Repeat for a grid.",
    ),
]
_ZipValues = Annotated[bool, typer.Option("--zip", help="pair the --vary lists instead of a grid")]
_Out = Annotated[
    str | None, typer.Option("-o", "--out", help="sweep folder [default: ./NAME-sweep]")
]
_Jobs = Annotated[
    int | None, typer.Option("-j", "--jobs", help="worker processes [default: all cores]")
]
_Only = Annotated[str | None, typer.Option("--only", help="comma list of outputs [default: all]")]
_Baseline = Annotated[
    str | None,
    typer.Option("--baseline", help="variant id the solids are compared with [default: first]"),
]
_Scheduler = Annotated[
    str | None,
    typer.Option(
        "--scheduler", help="Dask scheduler address (tcp://host:8786): run on that cluster"
    ),
]
_Yes = Annotated[
    bool,
    typer.Option("--yes", "-y", help=f"start a sweep of more than {CONFIRM_ABOVE} variants"),
]
_MaxVariants = Annotated[
    int | None,
    typer.Option("--max-variants", help="refuse a sweep with more variants than this"),
]
_Cfd = Annotated[
    bool, typer.Option("--cfd", help="run the OpenFOAM check (coarse mesh) per variant")
]
_AsJson = Annotated[bool, typer.Option("--json", help="print comparison.json to stdout")]


def sweep_command(
    spec: _Spec,
    vary: _Vary,
    zip_values: _ZipValues = False,
    out: _Out = None,
    jobs: _Jobs = None,
    only: _Only = None,
    quality: QualityOption = "normal",
    baseline: _Baseline = None,
    scheduler: _Scheduler = None,
    yes: _Yes = False,
    max_variants: _MaxVariants = None,
    cfd: _Cfd = False,
    quiet: QuietOption = False,
    as_json: _AsJson = False,
    no_cache: NoCacheOption = False,
) -> None:
    """Build variants of a spec in parallel and compare them side by side."""
    from ductgen.cli.common import out_folder
    from ductgen.pipeline.options import BuildOptions
    from ductgen.spec import load_spec
    from ductgen.sweep import parse_vary, run_sweep

    varies = [parse_vary(v) for v in vary]
    kinds = None if only is None else list(BuildOptions.check(only, quality).kinds)
    _announce(varies, zip_values, jobs, kinds, yes, max_variants, quiet or as_json)
    out_dir = (
        out_folder(out, Path()) if out is not None else Path.cwd() / f"{load_spec(spec).name}-sweep"
    )
    result = _with_progress(
        not (quiet or as_json),
        lambda progress: run_sweep(
            spec,
            varies,
            out_dir,
            zip_values=zip_values,
            jobs=jobs,
            only=kinds,
            quality=quality,
            baseline=baseline,
            scheduler=scheduler,
            progress=progress,
            cfd="coarse" if cfd else None,
            cache=not no_cache,
        ),
    )
    if as_json:
        typer.echo(result.files["json"].read_text(encoding="utf-8"))
    elif not quiet:
        _summary(result, out_dir)
    if result.failed:
        err_console.print(
            f"{len(result.failed)} of {len(result.results)} variants failed",
        )
        for r in result.failed:
            err_console.print(f"  {r.id}: {r.error}", soft_wrap=True, markup=False)
        raise typer.Exit(1)


def _with_progress(show: bool, start: Callable[[ProgressFn], SweepResult]) -> SweepResult:
    """Run ``start(progress)`` under a progress bar on stderr (none unless ``show``): done,
    failed and remaining variants, and each failure's line as it happens."""
    from rich.progress import BarColumn, Progress, TextColumn, TimeElapsedColumn

    with Progress(
        TextColumn("sweep"),
        BarColumn(),
        TextColumn("{task.fields[counts]}"),
        TimeElapsedColumn(),
        console=err_console,
        transient=True,
        disable=not show,
    ) as bar:
        task = bar.add_task("sweep", total=None, counts="validating")

        def progress(result: VariantResult | None, done: int, failed: int, total: int) -> None:
            counts = f"done {done - failed} · failed {failed} · remaining {total - done}"
            bar.update(task, total=total, completed=done, counts=counts)
            if result is not None and result.status == "failed":
                bar.console.print(
                    f"failed {result.id}: {result.error}", soft_wrap=True, markup=False, emoji=False
                )

        return start(progress)


def _summary(result: SweepResult, out_dir: Path) -> None:
    from rich.console import Console
    from rich.table import Table

    t = Table(title=f"sweep: {len(result.rows)} variants (baseline {result.baseline})")
    heads = {
        "variant": "variant",
        "ramp_length_mm": "L mm",
        "cutter_volume_mm3": "cutter cm³",
        "sym_diff_volume_mm3": "Δvol cm³",
        "hausdorff_mm": "Hausdorff mm",
        "volume_flow_m3_s": "flow L/s",
        "status": "status",
    }
    scale = {"cutter_volume_mm3": 1e-3, "sym_diff_volume_mm3": 1e-3, "volume_flow_m3_s": 1e3}
    cols = [
        c
        for c in heads
        if c in ("variant", "status") or any(r.get(c) is not None for r in result.rows)
    ]
    for c in cols:
        t.add_column(
            heads[c], justify="left" if c in ("variant", "status") else "right", overflow="fold"
        )
    for r in result.rows:
        t.add_row(
            *(
                ""
                if r.get(c) is None
                else f"{r[c] * scale.get(c, 1.0):.4g}"
                if isinstance(r[c], float)
                else str(r[c])
                for c in cols
            )
        )
    con = Console(emoji=False, markup=False, highlight=False)
    con.print(t)
    built = sum(r.status == "built" for r in result.results)
    cached = sum(r.status == "cached" for r in result.results)
    con.print(
        f"built {built}, unchanged {cached}, in {result.seconds:.1f} s; "
        f"wrote {out_dir / 'comparison.html'}"
    )
