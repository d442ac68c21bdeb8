"""The command line: one module per command group, all registered on :data:`main`.

Each command parses its options, calls one library function, and formats
the result; library errors reach the user as ``Error: ...`` with exit 1.
"""

from . import batch as _batch  # noqa: F401
from . import check as _check  # noqa: F401  (registers commands)
from . import compare as _compare  # noqa: F401
from . import demo as _demo  # noqa: F401
from . import eot as _eot  # noqa: F401
from . import export as _export  # noqa: F401
from . import impact as _impact  # noqa: F401
from . import importer as _importer  # noqa: F401
from . import recover as _recover  # noqa: F401
from . import report as _report  # noqa: F401
from . import schedule as _schedule  # noqa: F401
from . import synth as _synth  # noqa: F401
from . import windows as _windows  # noqa: F401
from ._base import main

__all__ = ["main"]
