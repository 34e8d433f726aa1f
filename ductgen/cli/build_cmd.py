"""`ductgen build`, `ductgen init` and `ductgen profiles`."""

from __future__ import annotations

import json
from pathlib import Path
from typing import TYPE_CHECKING, Annotated

import typer

from ductgen.cli.common import (
    NoCacheOption,
    QualityOption,
    QuietOption,
    err_console,
    preload_kernel,
)

if TYPE_CHECKING:
    from ductgen.pipeline import BuildResult

__all__ = ["build_command", "init_command", "profiles_command"]


# The command's options (typer reads them from the annotations).
_Spec = Annotated[Path, typer.Argument(help="spec file (.toml, .yaml, .json)")]
_Out = Annotated[str | None, typer.Option("-o", "--out", help="output folder [default: ./NAME]")]
_Only = Annotated[
    str | None, typer.Option("--only", help="comma list of outputs, e.g. cutter,template")
]
_Force = Annotated[bool, typer.Option("--force", help="replace existing files")]
_Kerf = Annotated[
    float | None,
    typer.Option("--kerf", help="cutter kerf (mm): the template's opening shrinks by kerf/2"),
]
_Paper = Annotated[str | None, typer.Option("--paper", help="template paper: A4 | Letter")]
_AsJson = Annotated[bool, typer.Option("--json", help="print report.json to stdout")]


def build_command(
    spec: _Spec,
    out: _Out = None,
    only: _Only = None,
    force: _Force = False,
    quality: QualityOption = "normal",
    kerf: _Kerf = None,
    paper: _Paper = None,
    quiet: QuietOption = False,
    as_json: _AsJson = False,
    no_cache: NoCacheOption = False,
) -> None:
    """Build solids, files and report.json from a spec."""
    preload_kernel(only)
    from rich.progress import Progress, SpinnerColumn, TextColumn, TimeElapsedColumn

    from ductgen.cli.common import out_folder
    from ductgen.pipeline import build
    from ductgen.pipeline.options import BuildOptions
    from ductgen.spec import load_spec
    from ductgen.spec.template import with_template_options

    s = load_spec(spec)
    s = with_template_options(s, kerf=kerf, paper=paper)
    out_dir = out_folder(out, Path.cwd() / s.name)
    options = BuildOptions.check(only, quality, force, not no_cache)
    show = not (quiet or as_json)
    with Progress(
        SpinnerColumn(),
        TextColumn("{task.description}"),
        TimeElapsedColumn(),
        console=err_console,
        transient=True,
        disable=not show,
    ) as bar:
        task = bar.add_task("building", total=None)
        result = build(
            s,
            out_dir,
            options=options,
            progress=lambda stage: bar.update(task, description=f"building: {stage}"),
        )
    if as_json:
        typer.echo(json.dumps(result.report, indent=2))
        return
    if quiet:
        return
    _summary(result, out_dir)


#: The report numbers the summary shows, in order: (section, key); labels, units and
#: rounding from :data:`ductgen.display.SHOWN`.
SUMMARY: tuple[tuple[str, str], ...] = (
    ("geometry", "throat_width_mm"),
    ("geometry", "throat_depth_mm"),
    ("geometry", "ramp_angle_deg"),
    ("geometry", "ramp_length_mm"),
    ("geometry", "floor_drop_mm"),
    ("geometry", "max_wall_divergence_deg"),
    ("geometry", "cutter_volume_mm3"),
    ("geometry", "insert_volume_mm3"),
    ("geometry", "plug_volume_mm3"),
    ("print", "min_wall_mm"),
    ("print", "mass_g"),
    ("flow", "volume_flow_m3_s"),
)


def _summary(result: BuildResult, out_dir: Path) -> None:
    from rich.console import Console
    from rich.table import Table

    from ductgen.display import SHOWN

    rec = result.record
    sections = {
        "geometry": rec.geometry,
        "print": rec.parts or {},
        "flow": rec.flow.section if rec.flow else {},
    }
    con = Console(emoji=False, markup=False, highlight=False)
    t = Table(title=rec.name, show_header=False, box=None)
    for section, key in SUMMARY:
        value = sections[section].get(key)
        if value is not None:
            t.add_row(SHOWN[key].label, SHOWN[key].text(value))
        if key == "mass_g" and rec.parts and rec.parts.get("material"):
            t.add_row("insert material", str(rec.parts["material"]))
    con.print(t)
    for w in rec.warnings:
        err_console.print(f"warning {w.code}: {w.message}", soft_wrap=True)
    con.print(f"wrote {len(result.files)} files to {out_dir}")


def init_command(
    path: Annotated[Path, typer.Argument(help="spec file to write")] = Path("ductgen.toml"),
    example: Annotated[
        str | None, typer.Option("--example", help="start from a bundled sample (see samples/)")
    ] = None,
    force: Annotated[bool, typer.Option("--force", help="replace an existing file")] = False,
) -> None:
    """Write a commented starter spec."""
    from ductgen.atomic import check_free, write_atomic
    from ductgen.errors import SpecError
    from ductgen.spec.starter import STARTER, example_files, example_names, example_path

    if path.is_dir():
        raise SpecError("PATH", str(path), "a file name", "the path is a folder")
    suffix = path.suffix.lower()
    if suffix not in (".toml", ".yaml", ".yml", ".json"):
        raise SpecError(
            "PATH", str(path), "a .toml, .yaml, .yml or .json file", "spec format is by suffix"
        )

    if example is not None:
        if example not in example_names():
            raise SpecError(
                "--example", example, "one of " + ", ".join(example_names()), "unknown sample"
            )
        data = example_path(example).read_bytes()
        companions = {path.parent / n: b for n, b in example_files(example).items()}
    else:
        data, companions = STARTER.encode(), {}
    if suffix != ".toml":  # same content in the format the suffix names (comments are lost)
        data = _convert_toml(data, suffix)
    check_free([path, *companions], force)  # all or nothing: refuse before writing any
    written: list[Path] = []
    try:
        for target, content in companions.items():
            written.append(write_atomic(target, content, force=force))
        write_atomic(path, data, force=force)
    except BaseException:
        for done in written:
            done.unlink(missing_ok=True)
        raise
    also = "".join(f" and {p.name}" for p in written)
    err_console.print(f"wrote {path}{also}; next: ductgen build {path}")


def _convert_toml(data: bytes, suffix: str) -> bytes:
    """TOML spec text re-written as YAML or JSON."""
    from ductgen.spec.load import tomllib

    values = tomllib.loads(data.decode())
    head = "ductgen spec (from the TOML starter; see README for every key)"
    if suffix == ".json":
        return (json.dumps(values, indent=2) + "\n").encode()
    import yaml

    return (f"# {head}\n" + yaml.safe_dump(values, sort_keys=False)).encode()


def profiles_command(
    as_json: Annotated[bool, typer.Option("--json", help="machine-readable list")] = False,
) -> None:
    """List the wall-curve tables with their sources."""
    from rich.console import Console
    from rich.table import Table

    from ductgen.geometry.profile import available_profiles

    profs = available_profiles()
    if as_json:
        typer.echo(
            json.dumps(
                [
                    {
                        "name": p.name,
                        "title": p.title,
                        "source": p.source,
                        "note": p.note,
                        "stations": len(p.x),
                    }
                    for p in profs
                ],
                indent=2,
            )
        )
        return
    t = Table("name", "stations", "source", "note")
    for p in profs:
        t.add_row(p.name, str(len(p.x)), p.source, p.note)
    Console(emoji=False, markup=False, highlight=False).print(t)
