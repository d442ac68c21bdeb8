"""The command line: one module per command group, registered on :data:`main` when first used.

Each command parses its options, calls one library function, and formats
the result; library errors reach the user as ``Error: ...`` with exit 1.
The group (:mod:`forensic.cli._base`) imports a command's module only
when that command runs (``COMMANDS`` names them), so ``forensic --help``
starts without the scientific libraries.
"""

from ._base import COMMANDS, main

__all__ = ["COMMANDS", "main"]
