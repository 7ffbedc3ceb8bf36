"""``python -m ptaconstrain.cli`` runs the command-line interface."""

from . import main

main(prog_name="ptaconstrain")
