"""`ductgen design`: the interactive design page, served on this computer."""

from __future__ import annotations

from pathlib import Path
from typing import Annotated

import typer

from ductgen.cli.common import err_console

__all__ = ["DEFAULT_PORT", "design_command"]

#: Port of the design page unless ``--port`` is given.
DEFAULT_PORT = 8765


def design_command(
    spec: Annotated[
        Path | None, typer.Argument(help="spec file to start from [default: the starter]")
    ] = None,
    port: Annotated[
        int, typer.Option("--port", help="port to serve on; 0 = any free port")
    ] = DEFAULT_PORT,
    host: Annotated[
        str | None,
        typer.Option(
            "--host",
            help="address to listen on [default: 127.0.0.1, this computer only]; anything "
            "else opens the page, and writing files, to your network",
        ),
    ] = None,
    out: Annotated[
        str | None, typer.Option("-o", "--out", help="build folder [default: ./NAME]")
    ] = None,
    no_browser: Annotated[
        bool, typer.Option("--no-browser", help="print the address, do not open a browser")
    ] = False,
) -> None:
    """Edit a spec in a local web page: drawings, numbers, airflow and warnings as you type."""
    import tomllib

    from ductgen.cli.common import out_folder
    from ductgen.page.server import DesignApp, is_loopback, make_server
    from ductgen.spec import read_spec_data
    from ductgen.spec.starter import STARTER

    if spec is not None:
        data = read_spec_data(spec)  # a file that cannot be read is exit 2, before serving
        spec_path = spec.absolute()
    else:
        data, spec_path = tomllib.loads(STARTER), (Path.cwd() / "ductgen.toml")
    out_dir = out_folder(out, Path()) if out is not None else None
    page = DesignApp(data=data, spec_path=spec_path, out_dir=out_dir)
    bind = host if host is not None else "127.0.0.1"
    server = make_server(page, bind, port, allow_remote=host is not None)
    bound = server.server_address[1]
    shown = "127.0.0.1" if bind in ("0.0.0.0", "::") else bind
    url = f"http://{'[' + shown + ']' if ':' in shown else shown}:{bound}/"
    if not is_loopback(bind):
        err_console.print(
            f"warning: listening on {bind}, not only this computer: anyone who can reach "
            "it can use the page and make it write files; there is no login",
            soft_wrap=True,
        )
    typer.echo(f"ductgen design: {url}  (Ctrl-C stops the server)")
    if not no_browser:
        import webbrowser

        webbrowser.open(url)
    try:
        server.serve_forever(poll_interval=0.25)
    finally:
        server.server_close()
