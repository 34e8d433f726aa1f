"""Imports every command module so each registers itself on :data:`ductgen.cli.app.app`."""

from ductgen.cli import build_cmd, cfd_cmd, check_cmd, size_cmd, sweep_cmd  # noqa: F401
from ductgen.cli.app import app

app.command("cfd")(cfd_cmd.cfd_command)
