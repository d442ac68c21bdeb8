"""The demo casefile shipped with the project, and copying it for a user.

The demo's editable copy is the source tree's ``casefiles/riverside/`` (an
invented project; its README tells the story); an installed package carries
a copy as package data (:mod:`forensic.casefile.shipped`). ``forensic demo`` copies it to a
folder of the user's choice and runs the main job there, so nothing is ever
written inside the installed package.
"""

from __future__ import annotations

import hashlib
import shutil
from pathlib import Path

from forensic.casefile.shipped import shipped
from forensic.core.errors import NotFoundError, OutputError

__all__ = ["DEMO_NAME", "copy_demo", "demo_source"]

DEMO_NAME = "riverside"


def demo_source() -> Path:
    """The folder of the demo casefile: the package's copy, or ``casefiles/`` of a source tree."""
    here = shipped(f"casefiles/{DEMO_NAME}")
    if here is None or not (here / "casefile.toml").is_file():
        msg = (
            "the demo casefile was not found in the installed package nor in a source tree; "
            "reinstall forensic from a wheel or from its source folder (pip install .)"
        )
        raise NotFoundError(msg)
    return here


def _digest(folder: Path) -> dict[str, str]:
    return {
        str(p.relative_to(folder)): hashlib.sha256(p.read_bytes()).hexdigest()
        for p in sorted(folder.rglob("*"))
        if p.is_file() and "__pycache__" not in p.parts
    }


def copy_demo(out: Path) -> Path:
    """Copy the demo casefile to ``out/<name>`` and return that folder.

    A folder that already holds an unchanged copy is reused; one that holds
    anything else is never overwritten (an :class:`OutputError` says so).
    """
    src = demo_source()
    dest = out / DEMO_NAME
    if dest.exists():
        if _digest(dest) == _digest(src):
            return dest
        msg = f"{dest} already exists and is not an unchanged copy of the demo; choose another --out"
        raise OutputError(msg)
    out.mkdir(parents=True, exist_ok=True)
    tmp = out / f".{DEMO_NAME}.part"
    if tmp.exists():
        shutil.rmtree(tmp)
    shutil.copytree(src, tmp, ignore=shutil.ignore_patterns("__pycache__", "*.pyc"))
    tmp.rename(dest)
    return dest
