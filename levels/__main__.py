"""``python -m levels`` runs the command line."""

from levels.cli import main

main()
