"""Where the files shipped with the package are: the demo casefile and the report templates.

Their one editable copy is in the source tree (``casefiles/riverside/`` and
``report_templates/``). A built package (a wheel, ``pip install .``, pipx)
carries a copy made at build time by ``setup.py`` in ``forensic/_data/``,
found with :mod:`importlib.resources`; a source checkout or an editable
install has no such copy and reads the source tree beside the package.
"""

from __future__ import annotations

from importlib import resources
from pathlib import Path

__all__ = ["shipped"]

_SOURCE_TREE = Path(__file__).resolve().parents[2]


def shipped(relative: str) -> Path | None:
    """The folder ``relative`` (``"casefiles/riverside"``, ``"report_templates"``) or None.

    The package's own copy comes first; the source tree is the fallback.
    Installed packages are plain folders on disk, so the resource is a real
    path (a zipped package would not be, and is not supported).
    """
    packaged = resources.files("forensic").joinpath("_data", *relative.split("/"))
    if isinstance(packaged, Path) and packaged.is_dir():
        return packaged
    tree = _SOURCE_TREE.joinpath(*relative.split("/"))
    return tree if tree.is_dir() else None
