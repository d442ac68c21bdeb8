"""Slices of a window: progress reconstructed day by day, cut at event dates and path switches.

A window is an observation period, not a measure of "at the same time"
(SCL Delay and Disruption Protocol, 2nd ed., core principle 10 and the
Part B guidance on concurrency: concurrency needs two delays of roughly the
same time). So a window is cut into *slices*, each attributed on its own:

* where the delay events acting in it stop overlapping (:func:`slice_cuts`):
  delays in different slices are sequential, never concurrent;
* where the driving path switches inside it (:func:`path_switch_cuts`):
  each slice is walked along the path that drove completion on its days
  (AACE RP 29R-03, protocol 3.3: windows drawn where the critical path
  changes; the same idea applied inside one update period).

The progress of a day ``t`` between two updates is rebuilt by
:func:`slice_snapshot` from the two updates' records; what the updates do
not say (how fast work went on between them) is interpolated at one
uniform rate per activity, so no slice is charged with more of an
activity's slowness, or given more of its gain, than its share of the days
the activity worked (rule below, worked by hand in
``tests/test_slices.py``).
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass, field, replace
from datetime import date, timedelta
from fractions import Fraction
from math import floor

from forensic.core.calendars import workdays_between
from forensic.core.engine import ScheduleResult
from forensic.core.model import Activity, Calendar, Casefile, Snapshot, frozen_mapping

__all__ = [
    "DailyProgress",
    "daily_progress",
    "path_work",
    "path_switch_cuts",
    "slice_cuts",
    "slice_snapshot",
    "working_rate_remaining",
]

ONE_DAY = timedelta(days=1)


def event_days(casefile: Casefile, aid: str, cal, lo: date, hi: date) -> int:
    """Working days of ``cal`` in ``[lo, hi)`` on which an event listing ``aid`` acts."""
    spans = [(ev.start, ev.finish) for ev in casefile.events if aid in ev.activities]
    return _event_days_in(spans, cal, lo, hi)


def _event_days_in(spans: Sequence[tuple[date, date]], cal, lo: date, hi: date) -> int:
    """Working days of ``cal`` in ``[lo, hi)`` inside any of the inclusive date ``spans`` (overlaps once)."""
    days = 0
    reach = lo
    for start, finish in sorted(spans):
        a, b = max(start, reach), min(finish + ONE_DAY, hi)
        if a < b:
            days += workdays_between(cal, a, b)
            reach = b
    return days


def working_rate_remaining(r0: int, r_end: int, worked: int, available: int) -> int:
    """The remaining duration after ``worked`` of ``available`` working days, at one uniform rate.

    The activity had ``r0`` days of work left at the start of the stretch
    and ``r_end`` at its end (0 when it finished); it could work on
    ``available`` days (working days of its calendar on which no event
    listing it stops it). The updates say nothing of when in between the
    work was done, so it is spread evenly over those days: after ``worked``
    of them, ``r0 - round((r0 - r_end) * worked / available)`` days are
    left (halves round up, towards more work done). With no available day
    nothing was done. Example: 10 days left, 12 days available, finished at
    the end (a slow activity): after 6 days, 10 - 5 = 5 are left, where the
    planned rate would say 4 and "planned rate from the cut" would say 6.
    """
    if available <= 0:
        return r0
    done = floor(Fraction((r0 - r_end) * worked, available) + Fraction(1, 2))
    return r0 - done


@dataclass(frozen=True, slots=True)
class _Stretch:
    """One activity's work between two updates, as the two records state it (rule of :func:`slice_snapshot`)."""

    plan: Activity  # the earlier update's record
    started: date  # the later update's actual start
    finished: Activity | None  # the record once finished (the later update's actual dates), or None
    cal: Calendar
    s0: date  # the stretch begins: the earlier data date, or the actual start
    r0: int  # work left then
    r_end: int  # work left at the stretch's end (0: finished)
    available: int  # working days it could work
    stops: tuple[tuple[date, date], ...]  # event spans that stop it (empty: the events did not)

    def on(self, t: date) -> Activity:
        """The record of day ``t``."""
        if self.started >= t:
            return self.plan
        if self.finished is not None and self.finished.actual_finish is not None and self.finished.actual_finish < t:
            return self.finished
        a = self.plan
        if a.is_milestone or a.duration == 0:
            return replace(a, actual_start=self.started, actual_finish=None, remaining=0)
        worked = 0
        if t > self.s0:
            worked = workdays_between(self.cal, self.s0, t) - _event_days_in(self.stops, self.cal, self.s0, t)
        rem = working_rate_remaining(self.r0, self.r_end, max(0, min(worked, self.available)), self.available)
        return replace(a, actual_start=self.started, actual_finish=None, remaining=max(1, min(rem, self.r0)))


def _stretch(casefile: Casefile, a: Activity, b: Activity, start: date, end: date,
             spans: Sequence[tuple[date, date]]) -> _Stretch:
    """Activity ``a`` of the earlier plan, started per the later record ``b``, between ``start`` and ``end``."""
    cal = casefile.calendars[a.calendar or casefile.project.default_calendar]
    started = b.actual_start or start
    if a.is_started:
        s0, r0 = start, a.remaining_duration
    else:
        s0, r0 = max(started, start), a.duration
    finished = None
    if b.actual_finish is not None:
        e, r_end = b.actual_finish + ONE_DAY, 0
        finished = replace(a, actual_start=b.actual_start, actual_finish=b.actual_finish,
                           remaining=0, percent_complete=b.percent_complete)
    else:
        e, r_end = end, b.remaining_duration
    days = workdays_between(cal, s0, e)
    avail = days - _event_days_in(spans, cal, s0, e)
    stops = tuple(spans)
    if r0 - r_end > avail:
        # more work done than the days free of events allow at the planned rate: the events
        # did not stop it (an event's own work, or broad event dates), so every day counts
        avail, stops = days, ()
    return _Stretch(a, started, finished, cal, s0, r0, r_end, avail, stops)


@dataclass(frozen=True, slots=True)
class DailyProgress:
    """The progress of every day between two updates, rebuilt from their records (:func:`slice_snapshot`).

    Built once per window (:func:`daily_progress`); :meth:`on` gives the
    snapshot of one day, re-reading only the work the later update shows
    started.
    """

    earlier: Snapshot
    stretches: tuple[_Stretch, ...]
    days: dict[date, Snapshot] = field(default_factory=dict, compare=False)  # each day built once

    def on(self, t: date) -> Snapshot:
        """The snapshot of day ``t`` (the same object each time it is asked for)."""
        if t not in self.days:
            self.days[t] = self._build(t)
        return self.days[t]

    def _build(self, t: date) -> Snapshot:
        acts = dict(self.earlier.activities)
        for st in self.stretches:
            if st.started < t:
                acts[st.plan.id] = st.on(t)
        return Snapshot(
            id=f"{self.earlier.id}@{t.isoformat()}",
            data_date=t,
            activities=frozen_mapping(acts),
            links=self.earlier.links,
            role="update",
        )


def daily_progress(casefile: Casefile, earlier: Snapshot, later: Snapshot) -> DailyProgress:
    """The model of :func:`slice_snapshot` for one pair of updates, built once for every day probed."""
    spans: dict[str, list[tuple[date, date]]] = {}
    for ev in casefile.events:
        for aid in ev.activities:
            spans.setdefault(aid, []).append((ev.start, ev.finish))
    stretches = []
    for aid, a in earlier.activities.items():
        b = later.activities.get(aid)
        if b is None or b.actual_start is None:
            continue
        stretches.append(_stretch(casefile, a, b, earlier.data_date, later.data_date, spans.get(aid, ())))
    return DailyProgress(earlier, tuple(stretches))


def slice_snapshot(casefile: Casefile, earlier: Snapshot, later: Snapshot, t: date) -> Snapshot:
    """The earlier plan with the progress of day ``t`` reconstructed from the later update's record.

    Rules (daily reconstruction of progress between two updates):

    * work the later update shows finished before ``t`` is finished, at its
      actual dates; work it shows started before ``t`` is in progress at
      ``t``; anything else keeps the earlier update's record;
    * the remaining duration at ``t`` of work in progress is interpolated at
      one uniform rate (:func:`working_rate_remaining`) between what was
      left when the stretch began (the earlier update's remaining duration,
      or the whole duration on the actual start) and what was left at its
      end (0 on the actual finish, or the later update's remaining duration
      at the later data date), over the working days on which no event
      listing the activity acts: an event stops the work on its days, and
      the rest of the slowness (or gain) is spread evenly over the days
      worked, because the updates do not say when it happened; at least 1
      day is left (it is not finished yet) and never more than at the start.
      Where the records show more work done than the days free of events
      allow at the planned rate (an event's own work, such as the design of
      a change, or event dates broader than the stoppage), the events did
      not stop the work and every working day counts;
    * logic, durations and calendars are the earlier update's (a revision
      is not progress; AACE RP 29R-03 protocol 3.4), so a chain of these
      snapshots telescopes to the half-step schedule.

    Where work went on at its planned rate apart from the event days, the
    uniform rate is the planned rate and both readings agree (the
    sequential worked example of docs/windows.md). To probe many days of one
    window, build :func:`daily_progress` once and ask it for each day.

    References
    ----------
    AACE RP 29R-03, protocols 3.3 and 3.4 (windows, half-step); SCL Protocol
    2nd ed., Appendix A (time slice windows).
    """
    return daily_progress(casefile, earlier, later).on(t)


def slice_cuts(casefile: Casefile, start: date, end: date) -> tuple[date, ...]:
    """The dates inside ``(start, end)`` that split a window into slices of overlapping events.

    The events that act in the window (their dates overlap it and they list
    activities) are grouped where their dates overlap, chained; each group
    after the first begins a new slice on its first day. Delays in
    different slices are sequential, never concurrent (SCL Protocol 2nd
    ed., core principle 10: concurrency needs delays of roughly the same
    time).
    """
    spans = sorted(
        (max(ev.start, start), min(ev.finish, end - ONE_DAY))
        for ev in casefile.events
        if ev.activities and ev.start < end and ev.finish >= start
    )
    cuts = []
    reach = None
    for lo, hi in spans:
        if reach is not None and lo > reach and start < lo < end:
            cuts.append(lo)
        reach = hi if reach is None else max(reach, hi)
    return tuple(cuts)


def path_work(casefile: Casefile, snap: Snapshot, result: ScheduleResult,
              preds: dict[str, tuple[str, ...]]) -> frozenset[str]:
    """The work driving completion on the day of ``snap``: its longest path, and the finished work that held it.

    The longest path is the unfinished work from the data date on (AACE RP
    49R-06). Work that finished on the last working day before the data
    date and precedes an activity of that path held it up to the data date,
    so it was driving until it finished; it is counted too, so a path that
    took over and finished before the later update is still seen.
    """
    on_path = frozenset(result.longest_path)
    held = set()
    for aid in on_path:
        for p in preds.get(aid, ()):
            a = snap.activities.get(p)
            if a is None or a.actual_finish is None or p in on_path:
                continue
            cal = casefile.calendars[a.calendar or casefile.project.default_calendar]
            if workdays_between(cal, a.actual_finish + ONE_DAY, snap.data_date) == 0:
                held.add(p)
    return on_path | held


def _taken_over(before: frozenset[str], after: frozenset[str]) -> bool:
    """Whether other work took over driving completion between two days.

    Work that joined the driving work (:func:`path_work`) means a
    different path now drives; work that dropped off it (it finished, or a
    path tied with the one that still drives fell behind) does not: what
    drives now was driving already.
    """
    return bool(after - before)


def path_switch_cuts(casefile: Casefile, earlier: Snapshot, later: Snapshot,
                     sched: Callable[[Snapshot], ScheduleResult], *,
                     first: ScheduleResult, last: ScheduleResult, half: Snapshot,
                     on_day: Callable[[date], Snapshot] | None = None) -> tuple[date, ...]:
    """The days inside a window on which other work takes over driving completion (bisection over the days).

    ``first`` is the schedule of the window's start (the earlier update) and
    ``last`` that of its end on the earlier logic (the half-step
    ``half``), so only a switch made by progress and delay counts here; a
    switch made by a revision of the plan is the later update's and falls
    in the window's last slice. The day ``t`` is probed by scheduling
    :func:`slice_snapshot` at ``t``. A stretch is stable when no work
    joins the driving work between its two ends (:func:`_taken_over`);
    otherwise it is halved until the first day on which the new work
    drives, which becomes a cut. A switch and a switch back inside one
    stable-ended stretch is not looked for (``tests/test_slices.py``
    compares the result with probing every day on the demo). A window
    costs about ``k * log2(days)`` schedules for ``k`` switches, none
    when it has no switch.
    """
    preds: dict[str, list[str]] = {}
    for link in earlier.links:
        preds.setdefault(link.succ, []).append(link.pred)
    frozen = {k: tuple(v) for k, v in preds.items()}
    cuts: list[date] = []

    day = on_day or daily_progress(casefile, earlier, later).on

    def work_on(t: date) -> frozenset[str]:
        snap = day(t)
        return path_work(casefile, snap, sched(snap), frozen)

    def search(lo: date, p_lo: frozenset[str], hi: date, p_hi: frozenset[str]) -> None:
        if not _taken_over(p_lo, p_hi):
            return
        if (hi - lo).days <= 1:
            cuts.append(hi)
            return
        mid = lo + timedelta(days=(hi - lo).days // 2)
        p_mid = work_on(mid)
        search(lo, p_lo, mid, p_mid)
        search(mid, p_mid, hi, p_hi)

    search(earlier.data_date, path_work(casefile, earlier, first, frozen),
           later.data_date, path_work(casefile, half, last, frozen))
    return tuple(d for d in cuts if earlier.data_date < d < later.data_date)
