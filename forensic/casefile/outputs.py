"""Writing outputs safely: atomically, whole, and never inside a casefile folder.

The rules (docs/robustness.md, "Outputs"):

- A target is followed through symbolic links (``os.path.realpath``) and the
  rules apply to where it really lands. A link that cannot be followed (a
  loop) is refused.
- Nothing is written inside a casefile folder: a folder holding
  ``casefile.toml``, at any level above the real target (or the target
  folder itself). The message says so and names the folder.
- A regular file (or a new name) is written to a short hidden temporary
  file ``.forensic-XXXXXXXX.part`` beside it, flushed to disk and renamed
  over it (``os.replace``, atomic on POSIX and Windows), so an interrupted
  run leaves the old file or the new one, never a mix. The temporary name
  is short so that any legal name (up to 255 bytes) can be written.
- A FIFO or a character device (``/dev/null``, a terminal) is opened and
  written directly: never replaced, never renamed.
- A folder, a socket, a block device or any other kind of file is refused.
- Any operating-system failure (read-only folder, full disk, name too long,
  permission denied) becomes ``cannot write FILE: reason``; the old file is
  kept and no temporary file is left.
- A multi-file output (:func:`staged_folder`) is built in a hidden
  temporary folder beside the target and renamed into place whole, or not
  at all; every refusal is decided before anything is written.
"""

from __future__ import annotations

import contextlib
import os
import shutil
import stat
import tempfile
from collections.abc import Callable, Iterable, Iterator
from pathlib import Path

from forensic.core.errors import ForensicError, OutputError

__all__ = ["MANIFEST", "atomic_write", "casefile_folder_of", "check_folder", "check_output",
           "refuse_casefile_paths", "replace_file", "staged_folder", "write_new_file"]

MANIFEST = "casefile.toml"
_PREFIX = ".forensic-"
_SUFFIX = ".part"


def _real(target: Path) -> Path:
    """``target`` with every symbolic link followed (non-strict: a missing tail is kept)."""
    return Path(os.path.realpath(target))


def casefile_folder_of(path: str | os.PathLike) -> Path | None:
    """The casefile folder holding the real ``path`` (or ``path`` itself when it is one), else ``None``.

    A casefile folder is one that holds ``casefile.toml``; every ancestor of
    the real path is looked at, so a file deep inside a casefile's
    ``snapshots/`` is found too.
    """
    real = _real(Path(path))
    for folder in (real, *real.parents):
        if os.path.lexists(folder / MANIFEST):
            return folder
    return None


def _refuse_inside(target: Path, real: Path, protected: Iterable[Path]) -> None:
    folder = casefile_folder_of(real)
    is_input = any(_real(Path(p)) == real for p in protected) or (
        folder is not None and real == folder / MANIFEST)
    if folder is None and not is_input:
        return
    what = ("over a casefile input" if is_input
            else "over a file of a casefile" if os.path.lexists(real) else "inside a casefile folder")
    where = f" ({folder})" if folder is not None else ""
    shown = f"{target} (leads to {real})" if Path(os.path.abspath(target)) != real else f"{target}"
    msg = (f"{shown}: refusing to write {what}: nothing is written inside a casefile folder{where}; "
           "choose an output path outside it")
    raise OutputError(msg)


def refuse_casefile_paths(target: Path, protected: Iterable[Path]) -> None:
    """Raise :class:`OutputError` when ``target`` is a ``protected`` file or lies inside a casefile folder.

    Paths are compared after following links, so a link or a ``..`` path
    into a casefile is refused too.
    """
    _refuse_inside(Path(target), _real(Path(target)), protected)


def _kind(real: Path, shown: Path) -> str:
    """``new``, ``file``, ``direct`` (FIFO or character device), or raise for anything else."""
    try:
        st = os.lstat(real)
    except FileNotFoundError:
        return "new"
    except OSError as exc:
        raise OutputError(f"cannot write {shown}: {_reason(exc)}") from None
    mode = st.st_mode
    if stat.S_ISREG(mode):
        return "file"
    if stat.S_ISFIFO(mode) or stat.S_ISCHR(mode):
        return "direct"
    if stat.S_ISLNK(mode):
        raise OutputError(f"{shown}: a symbolic link that cannot be followed (a loop); nothing written")
    if stat.S_ISDIR(mode):
        raise OutputError(f"{shown}: is a folder; give a file name")
    raise OutputError(f"{shown}: is not a regular file, a FIFO or a character device "
                      "(a socket or block device); it is never written to")


def check_output(target: str | os.PathLike, protected: Iterable[Path] = ()) -> Path:
    """Decide, before anything is written, whether ``target`` may be written; return its real path.

    Raises :class:`OutputError` for a target inside a casefile folder, a
    ``protected`` file, a folder, a socket or block device, a link loop, or
    a missing parent folder.
    """
    path = Path(target)
    real = _real(path)
    _refuse_inside(path, real, protected)
    if _kind(real, path) == "new" and not real.parent.is_dir():
        msg = f"{path}: the folder {path.parent if str(path.parent) else '.'} does not exist"
        raise OutputError(msg)
    return real


def _umask() -> int:
    """The process umask (read by setting and restoring it; there is no getter)."""
    mask = os.umask(0o022)
    os.umask(mask)
    return mask


def _reason(exc: OSError) -> str:
    return exc.strerror or str(exc) or type(exc).__name__


def replace_file(real: Path, payload: bytes) -> None:
    """Write ``payload`` to a short temporary name beside ``real``, then rename it over ``real``.

    No policy is applied (see :func:`atomic_write`); ``OSError`` propagates
    and the temporary file is removed.
    """
    fd, tmp = tempfile.mkstemp(prefix=_PREFIX, suffix=_SUFFIX, dir=real.parent)
    try:
        with os.fdopen(fd, "wb") as fh:
            # mkstemp creates the file 0600; give it the mode a plain open() would.
            if hasattr(os, "fchmod"):
                os.fchmod(fh.fileno(), 0o666 & ~_umask())
            fh.write(payload)
            fh.flush()
            os.fsync(fh.fileno())
        os.replace(tmp, real)
    except BaseException:
        with contextlib.suppress(FileNotFoundError):
            os.unlink(tmp)
        raise


def _write_direct(real: Path, payload: bytes) -> None:
    """Write to a FIFO or character device in place (opening a FIFO waits for a reader, as a shell does)."""
    fd = os.open(real, os.O_WRONLY | getattr(os, "O_NOCTTY", 0))
    try:
        mode = os.fstat(fd).st_mode
        if not (stat.S_ISFIFO(mode) or stat.S_ISCHR(mode)):
            raise OutputError(f"{real}: changed while being opened; nothing written")
        view = memoryview(payload)
        while view:
            view = view[os.write(fd, view):]
    finally:
        os.close(fd)


def atomic_write(target: str | os.PathLike, data: bytes | str, protected: Iterable[Path] = ()) -> Path:
    """Write ``data`` to ``target`` by the rules of this module; return ``target`` as a path.

    ``protected`` lists files that must never be overwritten (the casefile's
    inputs) besides everything inside a casefile folder. Text is written as
    UTF-8 with ``\\n`` line endings.
    """
    path = Path(target)
    real = check_output(path, protected)
    payload = data.encode("utf-8") if isinstance(data, str) else data
    try:
        if _kind(real, path) == "direct":
            _write_direct(real, payload)
        else:
            replace_file(real, payload)
    except ForensicError:
        raise
    except OSError as exc:
        raise OutputError(f"cannot write {path}: {_reason(exc)}") from None
    return path


# --- multi-file outputs --------------------------------------------------------


def check_folder(target: str | os.PathLike, *, replaceable: Callable[[list[os.DirEntry]], bool] | None = None,
                 protected: Iterable[Path] = (), what: str = "output folder") -> Path:
    """Decide whether the folder ``target`` may be written whole; return its real path.

    The folder must not lie inside (or be) a casefile folder; it must be
    new, empty, or hold only what ``replaceable`` accepts (an earlier
    output of the same kind, replaced whole); its parent must exist.
    """
    path = Path(target)
    real = _real(path)
    if casefile_folder_of(real) == real:
        raise OutputError(f"{path}: the folder exists and is not empty: it is a casefile folder, and nothing is "
                          f"written inside a casefile folder ({real}); give a new or empty folder for the {what}")
    _refuse_inside(path, real, protected)
    try:
        st = os.lstat(real)
    except FileNotFoundError:
        st = None
    except OSError as exc:
        raise OutputError(f"cannot write {path}: {_reason(exc)}") from None
    if st is not None:
        if stat.S_ISLNK(st.st_mode):
            raise OutputError(f"{path}: a symbolic link that cannot be followed (a loop); nothing written")
        if not stat.S_ISDIR(st.st_mode):
            raise OutputError(f"{path}: exists and is not a folder; give a new or empty folder for the {what}")
        try:
            with os.scandir(real) as it:
                entries = list(it)
        except OSError as exc:
            raise OutputError(f"cannot write {path}: {_reason(exc)}") from None
        if entries and (replaceable is None or not replaceable(entries)):
            raise OutputError(f"{path}: the folder exists and is not empty; give a new or empty folder "
                              f"for the {what}")
    if not real.parent.is_dir():
        raise OutputError(f"{path}: the folder {path.parent if str(path.parent) else '.'} does not exist")
    return real


def write_new_file(path: Path, data: bytes | str) -> None:
    """Create the new file ``path`` (never over an existing one) with the umask's mode, flushed to disk."""
    payload = data.encode("utf-8") if isinstance(data, str) else data
    fd = os.open(path, os.O_WRONLY | os.O_CREAT | os.O_EXCL, 0o666)
    with os.fdopen(fd, "wb") as fh:
        fh.write(payload)
        fh.flush()
        os.fsync(fh.fileno())


@contextlib.contextmanager
def staged_folder(target: str | os.PathLike, *, replaceable: Callable[[list[os.DirEntry]], bool] | None = None,
                  protected: Iterable[Path] = (), what: str = "output folder") -> Iterator[Path]:
    """Build a multi-file output in a temporary folder; rename it into place whole when the block ends.

    Yields the temporary folder (``.forensic-XXXXXXXX.part`` beside the
    real target, with the umask's mode). When the block raises, the
    temporary folder is removed and nothing is left. An existing target
    folder (empty, or accepted by ``replaceable``) is replaced: an empty
    one by one atomic rename, a non-empty one by renaming it aside first,
    so a failure puts it back. ``OSError`` becomes ``cannot write TARGET: reason``.
    """
    path = Path(target)
    real = check_folder(path, replaceable=replaceable, protected=protected, what=what)
    try:
        tmp = Path(tempfile.mkdtemp(prefix=_PREFIX, suffix=_SUFFIX, dir=real.parent))
    except OSError as exc:
        raise OutputError(f"cannot write {path}: {_reason(exc)}") from None
    try:
        os.chmod(tmp, 0o777 & ~_umask())  # mkdtemp makes it 0700; a plain mkdir follows the umask
        yield tmp
        _swap_in(tmp, real)
    except ForensicError:
        shutil.rmtree(tmp, ignore_errors=True)
        raise
    except OSError as exc:
        shutil.rmtree(tmp, ignore_errors=True)
        raise OutputError(f"cannot write {path}: {_reason(exc)}") from None
    except BaseException:
        shutil.rmtree(tmp, ignore_errors=True)
        raise


def _swap_in(tmp: Path, real: Path) -> None:
    """Rename ``tmp`` to ``real``; an existing non-empty ``real`` is moved aside first and restored on failure."""
    try:
        os.replace(tmp, real)  # a new name, or an empty folder: one atomic rename (POSIX rename(2))
        return
    except OSError as exc:
        if not real.is_dir() or not any(real.iterdir()):
            raise exc from None
    aside = Path(tempfile.mkdtemp(prefix=_PREFIX, suffix=".old", dir=real.parent))
    os.replace(real, aside)
    try:
        os.replace(tmp, real)
    except BaseException:
        os.replace(aside, real)
        raise
    shutil.rmtree(aside, ignore_errors=True)
