"""``forensic windows --jobs N``: the windows of a large casefile attributed in N processes.

Each window's attribution is a pure function of its two snapshots and the
casefile's settings (:func:`forensic.analysis.attribution.delay.attribute_window`),
so the windows are split into ``N`` runs of consecutive windows, each
attributed in a process of its own from the same lazily loaded casefile
(pickled: its reader and the hash of every file, so a file changed since
loading is refused there too), and the figures are put back in order. The
result is the one-process result, byte for byte
(``tests/test_windows_jobs.py``). A problem in a snapshot read by a worker
is raised here as it would be in one process.
"""

from __future__ import annotations

import os
from collections.abc import Sequence
from concurrent.futures import ProcessPoolExecutor

from forensic.analysis.attribution.delay import attribute_window
from forensic.analysis.attribution.ledger import build_ledger
from forensic.analysis.attribution.results import DelayAnalysis, WindowAttribution
from forensic.analysis.windows import Window, window_boundaries, window_run, windows_analysis
from forensic.core.engine import ScheduleResult, schedule
from forensic.core.model import Casefile, Snapshot, SnapshotSequence

__all__ = ["AUTO_FROM_ACTIVITIES", "attribute_in_processes", "consecutive_runs", "jobs_for"]

AUTO_FROM_ACTIVITIES = 5000
"""``--jobs auto`` uses every core from this many activities in the last update (and 4 windows) up."""


def jobs_for(casefile: Casefile, windows: int, asked: str) -> int:
    """How many processes ``--jobs`` means: a number, or ``auto`` (every core for a large casefile, else 1)."""
    if asked != "auto":
        return max(1, int(asked))
    cores = os.cpu_count() or 1
    if cores < 2 or windows < 4 or len(casefile.snapshots[-1].activities) < AUTO_FROM_ACTIVITIES:
        return 1
    return min(cores, windows // 2)


def consecutive_runs(pairs: Sequence[tuple[str, str]], parts: int) -> list[list[tuple[str, str]]]:
    """``pairs`` cut into ``parts`` runs of consecutive windows, as even as they go, in order."""
    size, extra = divmod(len(pairs), parts)
    runs, at = [], 0
    for k in range(parts):
        n = size + (1 if k < extra else 0)
        if n:
            runs.append(list(pairs[at:at + n]))
        at += n
    return runs


def _attribute_windows(casefile: Casefile, pairs: list[tuple[str, str]]) -> tuple[list[tuple[Window, WindowAttribution]], list[str]]:
    """One worker's windows, attributed in order; and the snapshots it read (and so checked)."""
    last: list = []  # the boundary snapshot and its schedule, shared with the next window

    def sched(snap: Snapshot) -> ScheduleResult:
        if not last or last[0] is not snap:
            last[:] = [snap, schedule(snap, casefile.calendars, casefile.project)]
        return last[1]

    out = []
    for a_id, b_id in pairs:
        a, b = casefile.snapshot(a_id), casefile.snapshot(b_id)
        run = window_run(casefile, a, b, sched)
        out.append((run.window, attribute_window(casefile, run)))
        del run
    read = sorted({x for pair in pairs for x in pair})
    return out, read


def attribute_in_processes(casefile: Casefile, windows: Sequence[str] | None, jobs: int) -> DelayAnalysis:
    """The result of ``analyse_delay(casefile, windows, keep_runs=False)``, its windows attributed in ``jobs`` processes."""
    ids = window_boundaries(casefile, windows)
    pairs = list(zip(ids, ids[1:], strict=False))
    runs = consecutive_runs(pairs, min(jobs, len(pairs)))
    figures: list[Window] = []
    atts: list[WindowAttribution] = []
    pool = ProcessPoolExecutor(max_workers=len(runs))
    try:
        futures = [pool.submit(_attribute_windows, casefile, run) for run in runs]
        for fut in futures:
            done, read = fut.result()
            for window, att in done:
                figures.append(window)
                atts.append(att)
            if isinstance(casefile.snapshots, SnapshotSequence):
                casefile.snapshots.note_checked(read)
    except BaseException:
        pool.shutdown(wait=False, cancel_futures=True)
        raise
    pool.shutdown()
    an = windows_analysis(casefile, figures, ())
    found = tuple(atts)
    return DelayAnalysis(an.unit, an, found, build_ledger(found, an), casefile.project.concurrency)
