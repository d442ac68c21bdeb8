"""Windows analysis and the half-step (bifurcated) split.

A contemporaneous windows analysis measures, for each period between two
consecutive schedule updates, how far the forecast completion moved (AACE
RP 29R-03, method implementation protocols 3.3 and 3.4, "observational /
dynamic / contemporaneous"; the SCL Delay and Disruption Protocol, 2nd ed.,
para. 11.6 and Appendix A, "time slice windows analysis").

The half-step (bifurcated) split separates what the *work* did in the window
from what the *changes to the plan* did (AACE RP 29R-03, protocol 3.4,
"bifurcated" or "half-step" updates). The half-step schedule is

* the earlier update's activities, links, durations, calendars and constraints,
* with the later update's progress (actual start and finish, remaining
  duration, percent complete) applied at the later data date.

Its completion splits the window's slip exactly in two::

    slip          = completion_after   - completion_before
    progress_slip = half_step_complete - completion_before
    revision_slip = completion_after   - half_step_complete

Rules for the half-step
-----------------------
* An activity in both updates takes the later update's actual dates and
  percent complete. Its remaining duration is taken from the later update
  only when the later update shows it started (remaining work of an activity
  in progress is a statement of progress); for an activity still not started
  the earlier update's remaining duration is kept, because changing it is a
  revision of the plan, not progress.
* An activity *added* by the later update is not in the half-step: bringing
  it in is a revision, and its effect falls in the revision slip.
* An activity *deleted* by the later update stays in the half-step as the
  earlier update had it (the later update reports no progress for it), so
  its removal is also measured in the revision slip. Both lists are reported.

Slip is counted in the casefile's ``delay_unit``: calendar days, or working
days of the project's default calendar. A gain is a negative slip. Every
count is a difference of one cumulative day count, so slips add up exactly
from window to window.

References
----------
AACE International Recommended Practice 29R-03, Forensic Schedule Analysis
(2011), sections 3.3 and 3.4.
Society of Construction Law, Delay and Disruption Protocol, 2nd ed. (2017).
"""

from __future__ import annotations

from collections.abc import Iterator, Sequence
from dataclasses import dataclass, replace
from datetime import date
from functools import partial

from forensic.analysis.runcache import RunCache
from forensic.analysis.slices import slice_cuts, slice_snapshot
from forensic.core.engine import ScheduleResult, schedule
from forensic.core.errors import NotFoundError, WindowSpecError
from forensic.core.model import Casefile, Snapshot, frozen_mapping
from forensic.core.tables import Table
from forensic.core.units import unit_counter

__all__ = [
    "HalfStep",
    "Window",
    "WindowRun",
    "WindowsAnalysis",
    "analyse_windows",
    "auto_boundaries",
    "half_step",
    "iter_window_runs",
    "slice_cuts",
    "slice_snapshot",
    "window_boundaries",
    "window_run",
    "windows_analysis",
    "windows_table",
]


@dataclass(frozen=True, slots=True)
class HalfStep:
    """The half-step snapshot of a window and what it left out or kept.

    ``added`` are activities of the later update absent from the earlier one
    (left out of the half-step); ``deleted`` are activities of the earlier
    update absent from the later one (kept, without progress).
    """

    snapshot: Snapshot
    added: tuple[str, ...]
    deleted: tuple[str, ...]


def half_step(earlier: Snapshot, later: Snapshot) -> HalfStep:
    """Build the half-step snapshot: the earlier plan with the later progress.

    Parameters
    ----------
    earlier, later : Snapshot
        Two updates (or the baseline and an update), earlier first.

    Returns
    -------
    HalfStep
        A new snapshot (id ``"<earlier>+<later>"``) dated at the later data
        date, and the lists of added and deleted activities.

    References
    ----------
    AACE RP 29R-03, protocol 3.4 (bifurcated, "half-step" update).
    """
    acts = {}
    for aid, a in earlier.activities.items():
        b = later.activities.get(aid)
        if b is None:
            acts[aid] = a
            continue
        remaining = b.remaining if b.is_started else a.remaining
        if (
            a.actual_start == b.actual_start
            and a.actual_finish == b.actual_finish
            and a.remaining == remaining
            and a.percent_complete == b.percent_complete
        ):
            acts[aid] = a  # no progress in the window: the earlier record as it is
            continue
        acts[aid] = replace(
            a,
            actual_start=b.actual_start,
            actual_finish=b.actual_finish,
            remaining=remaining,
            percent_complete=b.percent_complete,
        )
    snap = Snapshot(
        id=f"{earlier.id}+{later.id}",
        data_date=later.data_date,
        activities=frozen_mapping(acts),
        links=earlier.links,
        role="update",
    )
    added = tuple(a for a in later.activities if a not in earlier.activities)
    deleted = tuple(a for a in earlier.activities if a not in later.activities)
    return HalfStep(snap, added, deleted)


@dataclass(frozen=True, slots=True)
class Window:
    """One analysis window: the figures a report quotes about it.

    ``start`` and ``end`` are the two data dates; slips are in the
    casefile's delay unit (a gain is negative) and ``slip ==
    progress_slip + revision_slip`` always. ``path_joined`` and
    ``path_left`` say where the critical (longest) path moved.
    """

    from_id: str
    to_id: str
    start: date
    end: date
    completion_before: date
    completion_after: date
    half_step_completion: date
    slip: int
    progress_slip: int
    revision_slip: int
    critical_path_before: tuple[str, ...]
    critical_path_after: tuple[str, ...]
    half_step_path: tuple[str, ...]
    path_joined: tuple[str, ...]
    path_left: tuple[str, ...]
    added: tuple[str, ...]
    deleted: tuple[str, ...]
    path_left_open: tuple[str, ...] = ()
    path_joined_old: tuple[str, ...] = ()

    @property
    def label(self) -> str:
        return f"{self.from_id}-{self.to_id}"

    @property
    def path_switched(self) -> tuple[str, ...]:
        """Unfinished work that left or joined the critical path inside the window (empty: stable).

        Activities of the earlier update's longest path still on the later
        update's path are the same path; those that left it without being
        finished, and those that joined it from work the earlier update
        already had, mean the driving path switched inside the window, so a
        grouping of windows there is not stable (common practice:
        AACE RP 29R-03 protocol 3.3 windows drawn where the critical path
        changes; from memory).
        """
        return tuple(a for a in (*self.path_left_open, *self.path_joined_old))


@dataclass(frozen=True, slots=True)
class WindowRun:
    """A window with the snapshots and schedules behind it (for attribution)."""

    window: Window
    earlier: Snapshot
    later: Snapshot
    half: Snapshot
    before: ScheduleResult
    half_result: ScheduleResult
    after: ScheduleResult
    revision_start: date | None = None  # a window's last slice: revisions of events from the window's start


@dataclass(frozen=True, slots=True)
class WindowsAnalysis:
    """Every window of a casefile, in order, and the slip over all of them.

    ``runs`` holds each window's snapshots and schedules; an analysis that
    did not keep them (``keep_runs=False``: the memory of a few snapshots,
    however many updates) has ``runs == ()`` and its windows in ``figures``.
    """

    unit: str
    runs: tuple[WindowRun, ...]
    baseline_completion: date
    last_completion: date
    total_slip: int
    figures: tuple[Window, ...] = ()

    @property
    def windows(self) -> tuple[Window, ...]:
        return self.figures or tuple(r.window for r in self.runs)


def window_boundaries(casefile: Casefile, ids: Sequence[str] | None = None, *,
                      cache: RunCache | None = None) -> tuple[str, ...]:
    """The snapshot ids that bound the windows, oldest first.

    With no ``ids`` (and no manifest ``windows``) every snapshot is a
    boundary. Otherwise the given ids are used, with the baseline and the
    last update added at the ends so the windows cover the whole record.
    ``["auto"]`` asks for :func:`auto_boundaries` (``cache``: one call's window runs).
    """
    order = list(casefile.snapshot_ids)
    if ids is not None and list(ids) == ["auto"]:
        return auto_boundaries(casefile, cache=cache)
    chosen = list(ids) if ids else list(casefile.windows)
    if not chosen:
        return tuple(order)
    for sid in chosen:
        if sid not in order:
            msg = f"--windows: no snapshot {sid!r} (known: {', '.join(order)})"
            raise NotFoundError(msg)
    ranks = [order.index(s) for s in chosen]
    if any(b <= a for a, b in zip(ranks, ranks[1:], strict=False)):
        msg = f"--windows: snapshots must be listed oldest first, each once (value: {','.join(chosen)})"
        raise WindowSpecError(msg)
    if chosen[0] != casefile.baseline.id:
        chosen.insert(0, casefile.baseline.id)
    if chosen[-1] != order[-1]:
        chosen.append(order[-1])
    return tuple(chosen)


def auto_boundaries(casefile: Casefile, *, cache: RunCache | None = None) -> tuple[str, ...]:
    """Window boundaries at the updates where the driving path changes (``--windows auto``).

    Every monthly window is run; an update closes a window when the monthly
    window ending there has its critical path switched (:attr:`Window.path_switched`),
    so each grouped window keeps one driving path (AACE RP 29R-03 protocol
    3.3, windows drawn at changes of the critical path; from memory).
    ``cache`` (one call's :class:`~forensic.analysis.runcache.RunCache`)
    hands out the monthly windows already run.
    """
    order = list(casefile.snapshot_ids)
    an = analyse_windows(casefile, order, cache=cache, keep_runs=False)
    cut = [w.to_id for w in an.windows if w.path_switched]
    chosen = [order[0], *(c for c in cut if c != order[0])]
    if chosen[-1] != order[-1]:
        chosen.append(order[-1])
    return tuple(chosen)


def _moved(before: Sequence[str], after: Sequence[str]) -> tuple[tuple[str, ...], tuple[str, ...]]:
    b, a = set(before), set(after)
    return tuple(x for x in after if x not in b), tuple(x for x in before if x not in a)


def window_run(casefile: Casefile, earlier: Snapshot, later: Snapshot, sched=None) -> WindowRun:
    """One window's three schedules and figures (earlier, half-step, later)."""
    count = unit_counter(casefile)
    sched = sched or (lambda snap: schedule(snap, casefile.calendars, casefile.project))
    hs = half_step(earlier, later)
    before, after = sched(earlier), sched(later)
    mid = schedule(hs.snapshot, casefile.calendars, casefile.project)
    joined, left = _moved(before.longest_path, after.longest_path)
    left_open = tuple(a for a in left if a in after.activities and after[a].status != "finished")
    joined_old = tuple(a for a in joined if a in before.activities and before[a].status != "finished")
    c0, c1, ch = count(before.completion), count(after.completion), count(mid.completion)
    w = Window(
        from_id=earlier.id,
        to_id=later.id,
        start=earlier.data_date,
        end=later.data_date,
        completion_before=before.completion,
        completion_after=after.completion,
        half_step_completion=mid.completion,
        slip=c1 - c0,
        progress_slip=ch - c0,
        revision_slip=c1 - ch,
        critical_path_before=before.longest_path,
        critical_path_after=after.longest_path,
        half_step_path=mid.longest_path,
        path_joined=joined,
        path_left=left,
        added=hs.added,
        deleted=hs.deleted,
        path_left_open=left_open,
        path_joined_old=joined_old,
    )
    return WindowRun(w, earlier, later, hs.snapshot, before, mid, after)


def analyse_windows(casefile: Casefile, windows: Sequence[str] | None = None, *,
                    cache: RunCache | None = None, keep_runs: bool = True) -> WindowsAnalysis:
    """Run the windows analysis with the half-step split over a casefile.

    Parameters
    ----------
    casefile : Casefile
        Baseline and updates, oldest first.
    windows : sequence of snapshot ids, optional
        Window boundaries (see :func:`window_boundaries`); default: one
        window per pair of consecutive snapshots.
    cache : RunCache, optional
        One call's cache (:mod:`forensic.analysis.runcache`): each window
        run, and each snapshot's schedule, is computed once for the call.
    keep_runs : bool, default True
        ``False`` keeps each window's figures only (:attr:`WindowsAnalysis.figures`),
        not its snapshots and schedules, so memory does not grow with the
        number of updates.

    Returns
    -------
    WindowsAnalysis

    Notes
    -----
    Three schedules per window (earlier, half-step, later), all by
    :func:`forensic.core.engine.schedule`; each snapshot is scheduled once.

    References
    ----------
    AACE RP 29R-03, protocols 3.3 and 3.4; SCL Protocol 2nd ed., Appendix A.
    """
    runs = []
    figures = []
    for run in iter_window_runs(casefile, windows, cache=cache):
        figures.append(run.window)
        if keep_runs:
            runs.append(run)
    return windows_analysis(casefile, figures, tuple(runs))


def windows_analysis(casefile: Casefile, figures: Sequence[Window], runs: tuple[WindowRun, ...] = ()) -> WindowsAnalysis:
    """The :class:`WindowsAnalysis` of windows in order (``runs``: their runs, when they are kept)."""
    count = unit_counter(casefile)
    first, last = figures[0].completion_before, figures[-1].completion_after
    return WindowsAnalysis(
        unit=casefile.project.delay_unit,
        runs=runs,
        baseline_completion=first,
        last_completion=last,
        total_slip=count(last) - count(first),
        figures=() if runs else tuple(figures),
    )


def iter_window_runs(casefile: Casefile, windows: Sequence[str] | None = None, *,
                     cache: RunCache | None = None) -> Iterator[WindowRun]:
    """Each window's run in order, one at a time (the arguments are :func:`analyse_windows`'s).

    Without a ``cache`` only the last snapshot and its schedule are held
    between windows (the next window starts from them): a caller that
    drops each run once it is used holds a few snapshots at a time.
    """
    ids = window_boundaries(casefile, windows, cache=cache)
    if len(ids) < 2:
        msg = "a windows analysis needs a baseline and at least one update"
        raise WindowSpecError(msg)
    last: list = []  # [snapshot, its schedule]: the boundary shared with the next window

    def sched(snap: Snapshot) -> ScheduleResult:
        if cache is not None:
            return cache.schedule(casefile, snap)
        if not last or last[0] is not snap:
            last[:] = [snap, schedule(snap, casefile.calendars, casefile.project)]
        return last[1]

    a = casefile.snapshot(ids[0])
    for b_id in ids[1:]:
        b = casefile.snapshot(b_id)
        if cache is None:
            run = window_run(casefile, a, b, sched)
        else:
            run = cache.get(casefile, "window run", (a, b), partial(window_run, casefile, a, b, sched))
        yield run
        del run
        a = b


WINDOW_COLUMNS = (
    "window",
    "from",
    "to",
    "start",
    "end",
    "completion_before",
    "half_step_completion",
    "completion_after",
    "slip",
    "progress_slip",
    "revision_slip",
    "added",
    "deleted",
    "path_joined",
    "path_left",
)


def windows_table(analysis: WindowsAnalysis) -> Table:
    """One row per window: the completions, the slip and its half-step split."""
    rows = tuple(
        (
            w.label, w.from_id, w.to_id, w.start, w.end, w.completion_before,
            w.half_step_completion, w.completion_after, w.slip, w.progress_slip,
            w.revision_slip, w.added, w.deleted, w.path_joined, w.path_left,
        )
        for w in analysis.windows
    )
    return Table("windows", WINDOW_COLUMNS, rows)
