"""``python -m forensic`` runs the command line."""

from .cli import main

main(prog_name="forensic")
