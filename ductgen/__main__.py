"""``python -m ductgen`` runs the command line."""

from ductgen.cli import main

main()
