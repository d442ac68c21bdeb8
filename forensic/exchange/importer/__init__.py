"""The importer: a casefile from the user's CSV or XLSX exports and a mapping.

``mapping`` reads and checks the mapping TOML; ``sources`` reads the
source tables safely; ``conversion`` turns source rows into the casefile
format's vocabulary and records what was dropped or defaulted; ``origins``
maps problems found on reloading back to the user's files and rows;
``importing`` runs the whole import (``import_casefile``).
"""

from forensic.core.faces import lazy_face

__all__ = ["ImportReport", "import_casefile", "read_mapping"]

__getattr__, __dir__ = lazy_face(__name__, {
    "ImportReport": ".importing",
    "import_casefile": ".importing",
    "read_mapping": ".importing",
})
