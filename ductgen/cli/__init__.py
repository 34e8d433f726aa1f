"""Command-line interface (typer). Each command parses, calls one library function and
formats the result; heavy imports happen inside the commands."""

from ductgen.cli.app import app, main

__all__ = ["app", "main"]
