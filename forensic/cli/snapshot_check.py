"""The other snapshots of a large casefile checked in second processes while a command works on one.

Every loading command refuses a casefile with a problem in any snapshot
(tests/test_corpus.py), so ``forensic schedule`` reads every snapshot, not
only the one it schedules. On a large casefile that check costs about as
much as reading the snapshot scheduled, and on a casefile of many snapshots
far more; it needs nothing from the command's own work, so on a machine with
a second core it runs in forked processes (they inherit the loaded casefile;
nothing is pickled but the answers) while the command reads, schedules and
formats its snapshot. The snapshots to check are cut into consecutive runs
of about equal size, one a process, as many as there are cores and never
one of less than :data:`ASIDE_FROM_BYTES`. The command writes nothing until
every run has answered, and refuses the casefile with the same error as the
check in its own process would have raised
(:meth:`forensic.core.model.SnapshotSequence.check_rest`: every problem of
every bad snapshot, in snapshot order; a ceiling hit alone). Where the
check cannot run aside (one core, no ``fork``, a small casefile, a worker
that died) it runs in the command's process, as before.
"""

from __future__ import annotations

import multiprocessing
import os
import sys
from bisect import bisect_left
from collections.abc import Collection, Iterator, Sequence
from contextlib import contextmanager, suppress
from itertools import accumulate

from forensic.core.errors import CasefileError, LimitExceeded
from forensic.core.model import Casefile, SnapshotSequence

__all__ = ["ASIDE_FROM_BYTES", "SnapshotCheck", "runs_by_size", "start_check"]

ASIDE_FROM_BYTES = 4 * 1024 * 1024
"""The other snapshots' files are checked aside from this many bytes up, and a run of them is no smaller.

Below it a fork costs about as much as the check it takes away."""


def _cores() -> int:
    try:
        return len(os.sched_getaffinity(0))
    except (AttributeError, OSError):
        return os.cpu_count() or 1


def runs_by_size(ids: Sequence[str], sizes: Sequence[int], k: int) -> list[list[str]]:
    """``ids`` cut into ``k`` consecutive runs, none empty, of about equal total size.

    (``windows --jobs`` cuts its windows by count instead:
    :func:`forensic.cli.windows_jobs.consecutive_runs`.)

    Run ``j`` ends at the first id whose running total of ``sizes`` reaches
    ``j/k`` of the whole (each run keeps at least one id, and leaves one for
    each run after it). ``k`` is at least 1 and at most ``len(ids)``.
    """
    n = len(ids)
    if not 1 <= k <= n or len(sizes) != n:
        msg = f"cannot cut {n} ids into {k} runs"
        raise ValueError(msg)
    totals = list(accumulate(sizes))
    cuts, prev = [], 0
    for j in range(1, k):
        cut = bisect_left(totals, totals[-1] * j / k) + 1
        prev = min(max(cut, prev + 1), n - (k - j))
        cuts.append(prev)
    return [list(ids[a:b]) for a, b in zip([0, *cuts], [*cuts, n], strict=True)]


def _check_these(conn, snapshots: SnapshotSequence, run: list[str]) -> None:
    """In a forked process: check the snapshots of ``run`` and send their ids, or the error."""
    try:
        wanted = set(run)
        snapshots.note_checked([h.id for h in snapshots.heads if h.id not in wanted])
        snapshots.check_rest()
        answer: tuple = ("checked", run)
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


def _merged(answers: list[tuple]) -> CasefileError | None:
    """The error the check in one process raises, from every run's ``("checked" | "refused", ...)`` answer.

    The runs are consecutive and in snapshot order, so their problems, run
    after run, are the one-process check's problems in its order; a ceiling
    hit is raised alone, the first in order, as that check does.
    """
    refusals = [a[1] for a in answers if a[0] == "refused"]
    for exc in refusals:
        if isinstance(exc, LimitExceeded):
            return exc
    if len(refusals) == 1:
        return refusals[0]
    if refusals:
        return CasefileError([p for exc in refusals for p in exc.problems])
    return None


class SnapshotCheck:
    """The check of a casefile's other snapshots, running aside or to be run at :meth:`finish`."""

    def __init__(self, casefile: Casefile, besides: str | Sequence[str] | None) -> None:
        self.casefile = casefile
        self._procs: list = []
        self._conns: list = []
        snaps = casefile.snapshots
        if not isinstance(snaps, SnapshotSequence) or not len(snaps):
            return  # read eagerly (checked whole at load), or nothing to check
        if besides is None:
            besides = snaps.heads[-1].id  # the latest, the one a command uses by default
        used = (besides,) if isinstance(besides, str) else tuple(besides)
        if not set(used) <= set(snaps.ids):
            return  # an unknown id is the command's to refuse
        runs = self._runs(snaps, set(used))
        if not runs:
            return  # a small casefile, one core, no fork: checked at finish
        try:
            ctx = multiprocessing.get_context("fork")
            for stream in (sys.stdout, sys.stderr):  # nothing buffered here is written twice by a child
                with suppress(Exception):
                    stream.flush()
            for run in runs:
                parent, child = ctx.Pipe(duplex=False)
                proc = ctx.Process(target=_check_these, args=(child, snaps, run), daemon=True)
                proc.start()
                child.close()
                self._procs.append(proc)
                self._conns.append(parent)
        except (OSError, ValueError):  # no fork here, or no process to be had: check at finish
            self.cancel()

    @staticmethod
    def _runs(snaps: SnapshotSequence, used: Collection[str]) -> list[list[str]]:
        """The runs of other snapshots to check aside, one a process; none where it does not pay."""
        if not sys.platform.startswith("linux") or _cores() < 2:
            return []
        size = getattr(snaps.read, "size", None)
        if size is None:
            return []
        others = [h.id for h in snaps.heads if h.id not in used]
        sizes = [size(i) for i in others]
        total = sum(sizes)
        if not others or total < ASIDE_FROM_BYTES:
            return []
        k = min(_cores(), len(others))
        if ASIDE_FROM_BYTES:
            k = min(k, max(1, total // ASIDE_FROM_BYTES))
        return runs_by_size(others, sizes, k)

    @property
    def aside(self) -> bool:
        """Whether the check runs in other processes."""
        return self.processes > 0

    @property
    def processes(self) -> int:
        """How many processes the check runs in besides the command's (0: it runs at :meth:`finish`)."""
        return len(self._procs)

    def finish(self) -> None:
        """Wait for the check (or run it here); raise its error, or count the snapshots checked.

        With an answer from every run, their error is merged as the check in
        one process would raise it (:func:`_merged`). If a run gave none (its
        process died or failed otherwise), only the runs found clean count as
        checked, and the rest is checked here, so the error is this
        process's own. (The commands word a refusal by reading the casefile
        whole: :func:`forensic.cli._common.whole_read_on_error`.)
        """
        snaps = self.casefile.snapshots
        if not isinstance(snaps, SnapshotSequence):
            return
        answers = []
        for conn in self._conns:
            try:
                answers.append(conn.recv())
            except (EOFError, OSError):  # the process died without answering
                answers.append(("failed", "no answer"))
        self._close()
        if all(a[0] in ("checked", "refused") for a in answers):
            error = _merged(answers)
            if error is not None:
                raise error
        for answer in answers:
            if answer[0] == "checked":
                snaps.note_checked(answer[1])
        snaps.check_rest()  # here: whatever was not checked aside (all of it without a second process)

    @contextmanager
    def cancelled_on_error(self) -> Iterator[None]:
        """A block whose error ends the command first (reading the snapshots asked for): the check is stopped."""
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
        for proc in self._procs:
            with suppress(Exception):
                proc.terminate()
        self._close()

    def _close(self) -> None:
        for conn in self._conns:
            with suppress(Exception):
                conn.close()
        for proc in self._procs:
            with suppress(Exception):
                proc.join(5)
        self._procs, self._conns = [], []


def start_check(casefile: Casefile, besides: str | Sequence[str] | None) -> SnapshotCheck:
    """Start checking every snapshot of ``casefile`` but ``besides`` (the latest if ``None``), aside where it pays.

    ``besides`` is the id of the snapshot the command reads itself, or the
    ids of those it reads (``compare`` reads two).
    """
    return SnapshotCheck(casefile, besides)
