"""``python -m ptaconstrain`` runs the command-line interface."""

from .cli import main

main(prog_name="ptaconstrain")
