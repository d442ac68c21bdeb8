"""A plain scalar implementation of the engine's rules, kept as the tests' reference implementation.

This was the first version of :mod:`forensic.core.engine`: one Python loop per
pass, link by link. The production engine now works level by level on numpy
arrays; the two are independent codings of the same rules, so the property
tests in ``tests/test_engine_reference.py`` compare them on random networks
with every link type, several calendars, progress and constraints.
"""

from __future__ import annotations

from collections.abc import Mapping

from forensic.core.calendars import (
    MAX_DAY,
    MIN_DAY,
    WorkdayIndex,
    day_number,
    from_day_number,
    workday_index,
)
from forensic.core.engine import ScheduledActivity, ScheduleResult, topological_order
from forensic.core.errors import ScheduleError
from forensic.core.model import Calendar, Casefile, Project, Snapshot

__all__ = [
    "ScheduleResult",
    "ScheduledActivity",
    "schedule",
    "schedule_snapshot",
    "topological_order",
]

_START_TYPES = ("SS", "SF")  # links timed from the predecessor's start
_FINISH_ON_SUCC = ("FF", "SF")  # links that hold the successor's finish


class _HorizonTooShort(Exception):
    pass


def _horizon(snapshot: Snapshot, pad_workdays: int) -> tuple[int, int]:
    days = [day_number(snapshot.data_date)]
    for act in snapshot.activities.values():
        for d in (act.actual_start, act.actual_finish, act.constraint_date):
            if d is not None:
                days.append(day_number(d))
    # Seven calendar days per working day covers a one-day week; a year of
    # margin covers holidays.
    margin = 7 * pad_workdays + 400
    lo = max(min(days) - margin, MIN_DAY)
    hi = min(max(days) + margin, MAX_DAY)
    return lo, hi


def schedule(
    snapshot: Snapshot,
    calendars: Mapping[str, Calendar],
    project: Project,
    *,
    progress_logic: str | None = None,
    critical_float: int | None = None,
) -> ScheduleResult:
    """Schedule one snapshot by the critical path method.

    Parameters
    ----------
    snapshot : Snapshot
        The baseline or an update, with its data date and progress.
    calendars : mapping of calendar id to Calendar
        Every calendar the activities name, and the project's default.
    project : Project
        Supplies the default calendar, the completion milestone, and the
        defaults for ``progress_logic`` and ``critical_float``.
    progress_logic : {"retained", "override"}, optional
        How out-of-sequence progress is treated (see the module notes).
    critical_float : int, optional
        An activity is critical when its total float is at most this.

    Returns
    -------
    ScheduleResult

    Raises
    ------
    LogicLoopError
        When the links form a loop; the error names the activities in it.
    ScheduleError
        When the schedule would run beyond the supported dates (years 1-9999).

    Notes
    -----
    Two passes over a topological order, each link visited once per pass:
    O(activities + links) look-ups in precomputed working-day indices
    (Kelley and Walker 1959; AACE RP 49R-06 for the longest path).
    """
    logic = progress_logic or project.progress_logic
    crit = project.critical_float if critical_float is None else critical_float
    # Start with a horizon of some 3,000 working days either side of the
    # dates in the data (enough for almost any project) and widen it only
    # when a pass runs off its end.
    total = sum(a.duration + (a.remaining or 0) for a in snapshot.activities.values())
    total += sum(abs(link.lag) for link in snapshot.links) + 10
    pad = min(total, 3000)
    for _ in range(8):
        lo, hi = _horizon(snapshot, pad)
        try:
            return _schedule(snapshot, calendars, project, logic, crit, lo, hi)
        except (_HorizonTooShort, IndexError):
            if pad >= total:
                break
            pad = min(pad * 4, total)
    msg = f"snapshot {snapshot.id}: the schedule runs beyond the supported dates"
    raise ScheduleError(msg)


def schedule_snapshot(casefile: Casefile, snapshot_id: str, **options) -> ScheduleResult:
    """Schedule the snapshot ``snapshot_id`` of a casefile (see :func:`schedule`)."""
    return schedule(casefile.snapshot(snapshot_id), casefile.calendars, casefile.project, **options)


def _schedule(
    snapshot: Snapshot,
    calendars: Mapping[str, Calendar],
    project: Project,
    logic: str,
    crit: int,
    lo: int,
    hi: int,
) -> ScheduleResult:
    acts = list(snapshot.activities.values())
    ids = [a.id for a in acts]
    pos = {a: i for i, a in enumerate(ids)}
    n = len(acts)
    if n == 0:
        msg = f"snapshot {snapshot.id} has no activities"
        raise ScheduleError(msg)

    index_of: dict[str, WorkdayIndex] = {}
    cal_idx: list[WorkdayIndex] = []
    for a in acts:
        cid = a.calendar or project.default_calendar
        ix = index_of.get(cid)
        if ix is None:
            try:
                cal = calendars[cid]
            except KeyError:
                msg = f"snapshot {snapshot.id}, activity {a.id}: unknown calendar {cid!r}"
                raise ScheduleError(msg) from None
            ix = index_of[cid] = workday_index(cal, lo, hi)
        cal_idx.append(ix)

    # Per-activity plain lists (fast scalar access in the passes).
    status = [0] * n  # 0 not started, 1 in progress, 2 finished
    dur = [0] * n  # working days still to schedule
    # Instant kinds: a task starts "late-type" (day of its first working day)
    # and finishes "early-type" (day after its last working day); a finish
    # milestone is early-type at both ends, a start milestone late-type.
    start_late = [True] * n
    finish_late = [False] * n
    for i, a in enumerate(acts):
        milestone = a.kind != "task" or a.duration == 0
        if a.kind == "opening-milestone":
            start_late[i] = finish_late[i] = True
        elif milestone:
            start_late[i] = finish_late[i] = False
        if a.actual_finish is not None or (milestone and a.actual_start is not None):
            status[i] = 2
        elif a.actual_start is not None:
            status[i] = 1
            dur[i] = a.remaining_duration
        else:
            dur[i] = 0 if milestone else a.remaining_duration

    preds: list[list[tuple[int, str, int]]] = [[] for _ in range(n)]
    succs_pos: list[list[int]] = [[] for _ in range(n)]
    out_links: list[list[tuple[int, str, int]]] = [[] for _ in range(n)]
    for link in snapshot.links:
        p = pos.get(link.pred)
        s = pos.get(link.succ)
        if p is None or s is None:
            msg = f"snapshot {snapshot.id}: link {link.pred} -> {link.succ} names an unknown activity"
            raise ScheduleError(msg)
        preds[s].append((p, link.type, link.lag))
        out_links[p].append((s, link.type, link.lag))
        succs_pos[p].append(s)
    order = topological_order(ids, succs_pos, where=f"snapshot {snapshot.id}")

    dd = day_number(snapshot.data_date)
    S = [0] * n  # start instant (day) passed to SS/SF successors
    F = [0] * n  # finish instant (day) passed to FS/FF successors
    es = [0] * n  # start boundary of the work still to schedule (own calendar)
    ef = [0] * n  # finish boundary
    start_day = [0] * n  # reported start date (day number)
    finish_day = [0] * n  # reported finish date (day number)
    driving: list[tuple[int, ...]] = [()] * n
    warnings: list[str] = []

    for i in order:
        a = acts[i]
        C = cal_idx[i]
        days = C.days
        first_at = C.first_at
        st = status[i]
        if st == 2:
            s_day = day_number(a.actual_start or a.actual_finish)
            f_day = day_number(a.actual_finish or a.actual_start)
            start_day[i], finish_day[i] = s_day, f_day
            if a.kind == "opening-milestone":
                S[i] = F[i] = s_day
            elif a.kind != "task" or a.duration == 0:
                S[i] = F[i] = f_day + 1
            else:
                S[i], F[i] = s_day, f_day + 1
            continue
        d = dur[i]
        best = first_at[dd - lo]  # no remaining work before the data date
        cands: list[tuple[int, int]] = []
        for p, typ, lag in preds[i]:
            if st == 1:
                if logic == "override" or typ == "SS":
                    continue
            t = S[p] if typ in _START_TYPES else F[p]
            k = first_at[t - lo] + lag
            if typ in _FINISH_ON_SUCC:
                k -= d
            cands.append((k, p))
            if k > best:
                best = k
        if a.constraint is not None and a.constraint_date is not None:
            best = max(best, _early_constraint_bound(a, st, d, C, lo, start_late[i], finish_late[i]))
        driving[i] = tuple(
            p for k, p in cands if k == best and (status[p] != 2 or k > first_at[dd - lo])
        )
        es[i] = best
        ef[i] = best + d
        if best < 0:
            raise _HorizonTooShort
        if d == 0:
            inst = days[best] if finish_late[i] else days[best - 1] + 1
            F[i] = inst
            report = days[best] if finish_late[i] else days[best - 1]
            finish_day[i] = report
            if st == 1:
                S[i] = day_number(a.actual_start)
                start_day[i] = S[i]
            else:
                S[i] = inst
                start_day[i] = report
        else:
            F[i] = days[best + d - 1] + 1
            finish_day[i] = F[i] - 1
            if st == 1:
                S[i] = start_day[i] = day_number(a.actual_start)
            else:
                S[i] = start_day[i] = days[best]

    # Completion: the named milestone, else the activity finishing last.
    comp = pos.get(project.completion) if project.completion else None
    if comp is None:
        comp = max(order, key=lambda i: (F[i], finish_day[i], -i))  # ties: first in file order
    t_end = F[comp]  # the project finish: no late finish after the completion's

    # Backward pass over the work still to schedule.
    big = 1 << 60
    lf = [big] * n
    ls = [big] * n
    free = [big] * n
    for i in reversed(order):
        if status[i] == 2:
            continue
        a = acts[i]
        C = cal_idx[i]
        first_at = C.first_at
        d = dur[i]
        late_f = big
        early_f = big  # latest finish boundary allowed by successors' early dates
        any_succ = False
        for j, typ, lag in out_links[i]:
            stj = status[j]
            if stj == 2:
                continue
            if stj == 1 and (logic == "override" or typ == "SS"):
                continue
            if status[i] == 1 and typ in _START_TYPES:
                continue  # satisfied by the predecessor's actual start
            any_succ = True
            Cj = cal_idx[j]
            if typ in _FINISH_ON_SUCC:
                m_late, m_early = lf[j], ef[j]
            else:
                m_late, m_early = ls[j], es[j]
            if typ in _START_TYPES:
                late_type, off = start_late[i], d
            else:
                late_type, off = finish_late[i], 0
            t_late = Cj.days[m_late - lag]
            t_early = Cj.days[m_early - lag]
            if late_type:
                k_late = first_at[t_late + 1 - lo] - 1 + off
                k_early = first_at[t_early + 1 - lo] - 1 + off
            else:
                k_late = first_at[t_late - lo] + off
                k_early = first_at[t_early - lo] + off
            if k_late < late_f:
                late_f = k_late
            if k_early < early_f:
                early_f = k_early
        k_end = (first_at[t_end + 1 - lo] - 1) if finish_late[i] else first_at[t_end - lo]
        if not any_succ:
            late_f = early_f = k_end
        late_f = min(late_f, k_end)  # capped at the project finish
        if a.constraint is not None and a.constraint_date is not None:
            bound = _late_constraint_bound(a, status[i], d, C, lo, start_late[i], finish_late[i])
            if bound is not None and bound < late_f:
                late_f = bound
        if late_f - d < 1:
            raise _HorizonTooShort
        lf[i] = late_f
        ls[i] = late_f - d
        free[i] = early_f - ef[i]

    by_id: dict[str, ScheduledActivity] = {}
    fdn = from_day_number
    for i in range(n):
        a = acts[i]
        st = status[i]
        drivers = tuple(ids[p] for p in driving[i])
        if st == 2:
            by_id[ids[i]] = ScheduledActivity(
                ids[i], "finished", fdn(start_day[i]), fdn(finish_day[i]),
                None, None, None, None, False, drivers,
            )
            continue
        C = cal_idx[i]
        days = C.days
        tf = lf[i] - ef[i]
        ff = min(free[i], tf)
        if dur[i] == 0:
            late_day = days[lf[i]] if finish_late[i] else days[lf[i] - 1]
            late_start_day = late_day if st == 0 else start_day[i]
            late_finish_day = late_day
        else:
            late_start_day = days[ls[i]] if st == 0 else start_day[i]
            late_finish_day = days[lf[i] - 1]
        by_id[ids[i]] = ScheduledActivity(
            ids[i],
            "in-progress" if st == 1 else "not-started",
            fdn(start_day[i]),
            fdn(finish_day[i]),
            fdn(late_start_day),
            fdn(late_finish_day),
            tf,
            ff,
            tf <= crit,
            drivers,
        )

    # Longest path: everything reached back from the completion through driving links.
    on_path = {comp}
    stack = [comp]
    while stack:
        i = stack.pop()
        for p in driving[i]:
            if p not in on_path:
                on_path.add(p)
                stack.append(p)
    # Ties of start date: driving-link depth from the path's first activity, then id.
    depth: dict[int, int] = {}
    for i in order:
        if i in on_path:
            depth[i] = 1 + max((depth[p] for p in driving[i]), default=-1)
    path = sorted(on_path, key=lambda i: (start_day[i], depth[i], ids[i]))

    for i in order:
        if status[i] == 2:
            continue
        if not preds[i] and acts[i].kind != "opening-milestone":
            warnings.append(f"snapshot {snapshot.id}: activity {ids[i]} has no predecessor (open start)")
        if not out_links[i] and i != comp:
            warnings.append(f"snapshot {snapshot.id}: activity {ids[i]} has no successor (open finish)")

    comp_act = by_id[ids[comp]]
    return ScheduleResult(
        snapshot_id=snapshot.id,
        data_date=snapshot.data_date,
        completion_id=ids[comp],
        completion=comp_act.early_finish,
        completion_float=comp_act.total_float,
        activities=by_id,
        longest_path=tuple(ids[i] for i in path),
        order=tuple(ids[i] for i in order),
        warnings=tuple(warnings),
    )


def _date_bound_low(C: WorkdayIndex, lo: int, day: int, late_type: bool) -> int:
    """Smallest boundary whose date is on or after ``day``."""
    k = C.first_at[day - lo]
    return k if late_type else k + 1


def _date_bound_high(C: WorkdayIndex, lo: int, day: int, late_type: bool) -> int:
    """Largest boundary whose date is on or before ``day``."""
    k = C.first_at[day + 1 - lo]
    return k - 1 if late_type else k


def _early_constraint_bound(a, st: int, d: int, C: WorkdayIndex, lo: int, s_late: bool, f_late: bool) -> int:
    """Lowest start boundary that the constraint allows (early dates only)."""
    day = day_number(a.constraint_date)
    kind = a.constraint
    if kind in ("start-from", "start-fixed"):
        if st == 1:
            return -(1 << 60)
        return _date_bound_low(C, lo, day, s_late)
    if kind in ("finish-from", "finish-fixed"):
        # The finish date is the last working day of the work (d >= 1), or the milestone's date.
        if d == 0:
            return _date_bound_low(C, lo, day, f_late)
        return C.first_at[day - lo] - d + 1
    return -(1 << 60)


def _late_constraint_bound(a, st: int, d: int, C: WorkdayIndex, lo: int, s_late: bool, f_late: bool) -> int | None:
    """Highest finish boundary that the constraint allows (late dates only)."""
    day = day_number(a.constraint_date)
    kind = a.constraint
    if kind in ("start-by", "start-fixed"):
        if st == 1:
            return None
        return _date_bound_high(C, lo, day, s_late) + d
    if kind in ("finish-by", "finish-fixed"):
        if d == 0:
            return _date_bound_high(C, lo, day, f_late)
        return C.first_at[day + 1 - lo]
    return None
