"""Imports every command module so each registers itself on :data:`ductgen.cli.app.app`."""

from ductgen.cli import build_cmd, cfd_cmd, check_cmd, size_cmd, sweep_cmd  # noqa: F401
