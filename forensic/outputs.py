"""Writing outputs safely: atomically, and never over a casefile's own files.

Every file the tool writes goes to a temporary file in the destination
folder and is then renamed into place (``os.replace`` is atomic on POSIX and
Windows), so an interrupted run leaves either the old file or the new one,
never a half-written file.
"""

from __future__ import annotations

import os
import tempfile
from collections.abc import Iterable
from pathlib import Path

from .errors import OutputError

__all__ = ["atomic_write", "refuse_casefile_paths"]


def refuse_casefile_paths(target: Path, protected: Iterable[Path]) -> None:
    """Raise :class:`OutputError` when ``target`` is one of the ``protected`` input files.

    Inputs are compared by resolved path, so a link or a relative path to an
    input is refused too.
    """
    resolved = target.resolve()
    for p in protected:
        if p.resolve() == resolved:
            msg = f"{target}: refusing to write over a casefile input; choose another output path"
            raise OutputError(msg)


def _umask() -> int:
    """The process umask (read by setting and restoring it; there is no getter)."""
    mask = os.umask(0o022)
    os.umask(mask)
    return mask


def atomic_write(target: str | os.PathLike, data: bytes | str, protected: Iterable[Path] = ()) -> Path:
    """Write ``data`` to ``target`` atomically; return the path written.

    ``protected`` lists files that must never be overwritten (the casefile's
    inputs). Text is written as UTF-8 with ``\\n`` line endings.
    """
    path = Path(target)
    refuse_casefile_paths(path, protected)
    payload = data.encode("utf-8") if isinstance(data, str) else data
    folder = path.parent if str(path.parent) else Path(".")
    if not folder.is_dir():
        msg = f"{path}: the folder {folder} does not exist"
        raise OutputError(msg)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".part", dir=folder)
    try:
        with os.fdopen(fd, "wb") as fh:
            # mkstemp creates the file 0600; give it the mode a plain open() would.
            if hasattr(os, "fchmod"):
                os.fchmod(fh.fileno(), 0o666 & ~_umask())
            fh.write(payload)
            fh.flush()
            os.fsync(fh.fileno())
        os.replace(tmp, path)
    except BaseException:
        try:
            os.unlink(tmp)
        except FileNotFoundError:
            pass
        raise
    return path
