"""`ductgen design`: the interactive design page, served on this computer."""

from __future__ import annotations

from pathlib import Path
from typing import TYPE_CHECKING, Annotated

import typer

from ductgen.cli.common import err_console, preload_kernel

if TYPE_CHECKING:
    from ductgen.page.server import DesignApp

__all__ = ["DEFAULT_PORT", "design_command"]

#: Port of the design page unless ``--port`` is given.
DEFAULT_PORT = 8765


def design_command(
    spec: Annotated[
        Path | None, typer.Argument(help="spec file to start from [default: the starter]")
    ] = None,
    port: Annotated[
        int,
        typer.Option(
            "--port", min=0, max=65535, help="port to serve on, 0 to 65535; 0 = any free port"
        ),
    ] = DEFAULT_PORT,
    host: Annotated[
        str | None,
        typer.Option(
            "--host",
            help="address to listen on [default: 127.0.0.1, this computer only]; anything "
            "else opens the page, and writing files, to everyone on your network who has "
            "the printed address",
        ),
    ] = None,
    root: Annotated[
        Path | None,
        typer.Option(
            "--root",
            help="work folder: the page opens, saves and builds only inside it "
            "[default: the spec's folder, or the current folder]",
        ),
    ] = None,
    out: Annotated[
        str | None,
        typer.Option("-o", "--out", help="build folder inside the work folder [default: NAME]"),
    ] = None,
    no_browser: Annotated[
        bool, typer.Option("--no-browser", help="print the address, do not open a browser")
    ] = False,
) -> None:
    """Edit a spec in a local web page: drawings, numbers, airflow and warnings as you type."""
    page = _design_app(spec, root, out)
    preload_kernel(None, beside=True)  # the first preview and build need not wait for imports
    _serve(page, host, port, no_browser)


def _design_app(spec: Path | None, root: Path | None, out: str | None) -> DesignApp:
    """The page's state: the spec's data (or the starter), the work folder and the build
    folder inside it.

    Raises:
        SpecError: an unreadable spec, or ``-o/--out`` outside the work folder.
    """
    from ductgen.errors import SpecError
    from ductgen.page.guard import PathRefused, WorkFolder, package_dir
    from ductgen.page.server import DesignApp
    from ductgen.spec import read_spec_data
    from ductgen.spec.load import tomllib
    from ductgen.spec.starter import STARTER

    if spec is not None:
        data = read_spec_data(spec)  # a file that cannot be read is exit 2, before serving
        spec_path: Path | None = spec.absolute()
    else:
        data, spec_path = tomllib.loads(STARTER), None
    work = WorkFolder(_work_root(root, spec_path, package_dir()))
    out_dir = None
    if out is not None:
        try:
            out_dir = work.writable(out, "-o/--out")
        except PathRefused as err:
            raise SpecError("-o/--out", out, f"a folder inside {work.root}", str(err)) from None
    return DesignApp(data=data, work=work, spec_path=spec_path, out_dir=out_dir)


def _serve(page: DesignApp, host: str | None, port: int, no_browser: bool) -> None:
    """Serve the page until Ctrl-C: print its address (with a warning when it listens
    beyond this computer) and open a browser on it."""
    from ductgen.page.server import is_loopback, make_server

    bind = host if host is not None else "127.0.0.1"
    server = make_server(page, bind, port, allow_remote=host is not None)
    bound = server.server_address[1]
    shown = "127.0.0.1" if bind in ("0.0.0.0", "::") else bind
    url = f"http://{'[' + shown + ']' if ':' in shown else shown}:{bound}/?token={page.secret}"
    if not is_loopback(bind):
        err_console.print(
            f"warning: listening on {bind}, not only this computer: anyone on your network "
            "who has the address below can use the page and make it write files in "
            f"{page.work.root}",
            soft_wrap=True,
        )
    typer.echo(f"ductgen design: work folder {page.work.root}; open this address (Ctrl-C stops):")
    typer.echo(url)
    if not no_browser:
        import webbrowser

        webbrowser.open(url)
    try:
        server.serve_forever(poll_interval=0.25)
    finally:
        server.server_close()


def _work_root(root: Path | None, spec_path: Path | None, package: Path) -> Path:
    """The work folder: ``--root``, else the spec's folder unless that is inside the
    installed package (a bundled sample), else the current folder.

    Raises:
        SpecError: ``--root`` is not an existing folder.
    """
    from ductgen.errors import SpecError

    if root is not None:
        if not root.is_dir():
            raise SpecError("--root", str(root), "an existing folder", "the page works inside it")
        return root
    if spec_path is not None:
        folder = spec_path.parent.resolve()
        if not (folder == package or folder.is_relative_to(package)):
            return folder
    return Path.cwd()
