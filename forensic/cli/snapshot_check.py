"""The other snapshots of a large casefile checked in a second process while a command works on one.

Every loading command refuses a casefile with a problem in any snapshot
(tests/test_corpus.py), so ``forensic schedule`` reads every snapshot, not
only the one it schedules. On a large casefile that check costs about as
much as reading the snapshot scheduled; it needs nothing from the
command's own work, so on a machine with a second core it runs in a forked
process (it inherits the loaded casefile; nothing is pickled but the answer)
while the command reads, schedules and formats its snapshot. The command
writes nothing until the check has answered, and refuses the casefile with
the same error as the check in its own process would have raised
(:meth:`forensic.core.model.SnapshotSequence.check_rest`). Where the check
cannot run aside (one core, no ``fork``, a small casefile, a worker that
died) it runs in the command's process, as before.
"""

from __future__ import annotations

import multiprocessing
import os
import sys
from collections.abc import Iterator
from contextlib import contextmanager, suppress

from forensic.core.errors import CasefileError
from forensic.core.model import Casefile, SnapshotSequence

__all__ = ["ASIDE_FROM_BYTES", "SnapshotCheck", "start_check"]

ASIDE_FROM_BYTES = 4 * 1024 * 1024
"""The other snapshots' files are checked aside from this many bytes up: below it a fork costs about as much."""


def _cores() -> int:
    try:
        return len(os.sched_getaffinity(0))
    except (AttributeError, OSError):
        return os.cpu_count() or 1


def _check_besides(conn, snapshots: SnapshotSequence, besides: str) -> None:
    """In the forked process: check every snapshot but ``besides`` and send the ids checked, or the error."""
    try:
        snapshots.note_checked([besides])
        snapshots.check_rest()
        answer: tuple = ("checked", [h.id for h in snapshots.heads if h.id != besides])
    except CasefileError as exc:  # LimitExceeded among them
        answer = ("refused", exc)
    except BaseException as exc:  # anything else: the command checks again in its own process
        answer = ("failed", repr(exc))
    try:
        conn.send(answer)
    except Exception:  # an answer that cannot be sent is no answer: the parent checks itself
        with suppress(Exception):
            conn.send(("failed", "the answer could not be sent"))
    finally:
        conn.close()


class SnapshotCheck:
    """The check of a casefile's other snapshots, running aside or to be run at :meth:`finish`."""

    def __init__(self, casefile: Casefile, besides: str | None) -> None:
        self.casefile = casefile
        self._proc = None
        self._conn = None
        snaps = casefile.snapshots
        if not isinstance(snaps, SnapshotSequence) or not len(snaps):
            return  # read eagerly (checked whole at load), or nothing to check
        if besides is None:
            besides = snaps.heads[-1].id  # the latest, the one a command uses by default
        if besides not in snaps.ids or not self._worth_it(snaps, besides):
            return  # an unknown id is the command's to refuse; a small casefile is checked at finish
        try:
            ctx = multiprocessing.get_context("fork")
            parent, child = ctx.Pipe(duplex=False)
            for stream in (sys.stdout, sys.stderr):  # nothing buffered here is written twice by the child
                with suppress(Exception):
                    stream.flush()
            proc = ctx.Process(target=_check_besides, args=(child, snaps, besides), daemon=True)
            proc.start()
            child.close()
        except (OSError, ValueError):  # no fork here, or no process to be had: check at finish
            return
        self._proc, self._conn = proc, parent

    @staticmethod
    def _worth_it(snaps: SnapshotSequence, besides: str) -> bool:
        if not sys.platform.startswith("linux") or _cores() < 2:
            return False
        size = getattr(snaps.read, "size", None)
        if size is None:
            return False
        others = [h.id for h in snaps.heads if h.id != besides]
        return bool(others) and sum(size(i) for i in others) >= ASIDE_FROM_BYTES

    @property
    def aside(self) -> bool:
        """Whether the check runs in a second process."""
        return self._proc is not None

    def finish(self) -> None:
        """Wait for the check (or run it here); raise its error, or count the snapshots checked."""
        snaps = self.casefile.snapshots
        if not isinstance(snaps, SnapshotSequence):
            return
        answer = None
        if self._conn is not None:
            try:
                answer = self._conn.recv()
            except (EOFError, OSError):  # the process died without answering
                answer = None
            self._close()
        if answer is not None and answer[0] == "refused":
            raise answer[1]
        if answer is not None and answer[0] == "checked":
            snaps.note_checked(answer[1])
        snaps.check_rest()  # here: whatever was not checked aside (all of it without a second process)

    @contextmanager
    def cancelled_on_error(self) -> Iterator[None]:
        """A block whose error ends the command first (reading the snapshot asked for): the check is stopped."""
        try:
            yield
        except BaseException:
            self.cancel()
            raise

    @contextmanager
    def finished_on_leaving(self) -> Iterator[None]:
        """A block after which the check must have answered; its error comes before the block's own.

        As when the check ran before the block: a casefile with a bad
        snapshot is refused with that problem even if the block failed too.
        An interrupt stops the check.
        """
        try:
            yield
        except (KeyboardInterrupt, SystemExit):
            self.cancel()
            raise
        except BaseException:
            self.finish()
            raise
        self.finish()

    def cancel(self) -> None:
        """Stop the check: the command ended with an error of its own first."""
        if self._proc is not None:
            with suppress(Exception):
                self._proc.terminate()
        self._close()

    def _close(self) -> None:
        if self._conn is not None:
            with suppress(Exception):
                self._conn.close()
        if self._proc is not None:
            with suppress(Exception):
                self._proc.join(5)
        self._proc = self._conn = None


def start_check(casefile: Casefile, besides: str | None) -> SnapshotCheck:
    """Start checking every snapshot of ``casefile`` but ``besides`` (the latest if ``None``), aside where it pays."""
    return SnapshotCheck(casefile, besides)
