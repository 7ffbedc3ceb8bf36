"""``python -m ptaconstrain.cli`` runs the command-line interface."""

from . import main

main()
