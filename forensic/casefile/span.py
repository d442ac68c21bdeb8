"""The span ceiling: no schedule may need more than a century past its data date.

A lower bound of every early finish, in calendar days after the data date,
is propagated along the links in topological order (the forward pass of
the critical path method, Kelley and Walker 1959, on start and finish
events), with each remaining duration and lag at the fewest calendar days
it can take on its calendar (:func:`min_calendar_days`). A network whose
bound passes :data:`MAX_SPAN_DAYS` is refused on loading
(:func:`check_span`), before the engine builds any working-day index.
"""

from __future__ import annotations

from collections.abc import Mapping
from functools import lru_cache
from itertools import repeat
from operator import attrgetter

import numpy as np

from forensic.casefile.csvread import Problems
from forensic.core.calendars import DAY_NAMES
from forensic.core.model import Activity, Calendar, Link

__all__ = ["MAX_SPAN_DAYS", "MAX_SPAN_YEARS", "check_span", "min_calendar_days", "span_bounds"]


# The scheduling horizon's ceiling: no snapshot may need more than a century
# of calendar days after its data date. The engine's working-day indices
# cover the whole span (several lists of one entry a day per calendar), so
# an absurd span (seven calendars of one working day a week and tasks of
# 36,500 days reach the year 9999) would cost gigabytes; this is checked on
# loading, before any array is built. A century is far beyond any real
# programme (common practice: the longest capital projects run for decades).
MAX_SPAN_YEARS = 100
MAX_SPAN_DAYS = 36_525  # 100 years of 365.25 days


def min_calendar_days(work: int, cal: Calendar | None) -> int:
    """The fewest calendar days that ``work`` working days of ``cal`` can take (a lower bound).

    At most one working day falls on a calendar day; at most ``w`` a week
    with ``w`` working weekdays, apart from the calendar's extra working
    dates (each may add one). Holidays only lengthen the span and are left
    out, so the bound never exceeds the true span. With ``r`` regular
    working days needed (``work`` less the extra dates), the first and the
    last are at least ``7 * ((r - 1) // w)`` days apart.

    Examples (worked by hand, five-day week, no extra dates): 6 working days
    take at least 7 * (5 // 5) + 1 = 8 days (Monday to the next Monday: 8,
    exact); 11 take 7 * (10 // 5) + 1 = 15 (exact); 10 take at least 10
    (the count itself; truly 12, Monday to the next Friday).
    """
    if work <= 0:
        return 0
    week = len(cal.workdays) if cal is not None and cal.workdays else 7
    regular = work - (len(cal.extra_workdays) if cal is not None else 0)
    if regular <= 0:
        return work
    return max(work, 7 * ((regular - 1) // week) + 1)


def _work(a: Activity) -> int | None:
    """Working days still to do after the data date; ``None`` when finished (it fixes nothing later)."""
    if a.actual_finish is not None or (a.actual_start is not None and (a.kind != "task" or a.duration == 0)):
        return None
    if a.remaining is not None:
        return a.remaining
    return a.duration


def check_span(
    activities: Mapping[str, Activity],
    links: list[Link],
    calendars: Mapping[str, Calendar],
    default_calendar: str | None,
    rel: str,
    problems: Problems,
    *,
    link_columns: tuple[np.ndarray, ...] | None = None,
) -> None:
    """Refuse a network whose schedule must run more than :data:`MAX_SPAN_YEARS` past its data date.

    A lower bound of the early dates, in calendar days after the data date,
    is propagated along the links in topological order (the forward pass of
    the critical path method, Kelley and Walker 1959, on start and finish
    events): each activity's remaining work takes at least
    :func:`min_calendar_days` on its calendar, each positive lag the same on
    the successor's calendar (the engine counts a lag in the successor's
    working days). Whatever could make a date earlier than this bound is
    left out, so the bound is never above the engine's dates: finished
    activities, links into started activities (under progress override
    they hold nothing), SS and SF links from started ones (their start is
    history), negative lags and every constraint (constraints only push
    early dates later); an instant dated on the working day before its
    boundary (a finish milestone) and an FF or SF link with no lag are
    lowered by the calendar's longest run of non-working days. Over the ceiling, the first activity (in logic
    order) whose finish is beyond it is named, with its line.
    """
    bounds = span_bounds(activities, links, calendars, default_calendar, link_columns=link_columns)
    if bounds is None:
        return
    finish, span, work, cal, i = bounds
    if i >= 0:
        acts = list(activities.values())
        _span_problem(acts[i], int(finish[i]), int(span[i]), int(work[i]), cal[i], rel, problems)


def span_bounds(
    activities: Mapping[str, Activity],
    links: list[Link],
    calendars: Mapping[str, Calendar],
    default_calendar: str | None,
    *,
    skip_under: int | None = MAX_SPAN_DAYS,
    link_columns: tuple[np.ndarray, ...] | None = None,
) -> tuple[np.ndarray, np.ndarray, np.ndarray, list, int] | None:
    """Lower bounds of the early finishes, in calendar days after the data date (see :func:`check_span`).

    Returns ``(finish, span, work, calendar)`` per activity in file order
    (``work`` is -1 for finished work) and the position of the first
    activity, in logic order, whose bound is over the ceiling (-1: none), or ``None`` when even every
    activity and lag end to end fit under ``skip_under`` days (nothing to
    check; ``None`` always computes). A finish bound counts the calendar days
    from the data date through the finish date; a start bound those before
    the start date. ``link_columns`` (the loader's arrays of the links: end
    positions in file order, types as 0-3 for FS, SS, FF, SF, and lags)
    spares reading them from the records again.
    """
    acts = list(activities.values())
    n = len(acts)
    if n == 0:
        return None
    cal_list = list(calendars.values())
    cal_at = {c.id: k for k, c in enumerate(cal_list)}
    week = np.array([len(c.workdays) or 7 for c in cal_list] + [7], dtype=np.int64)
    extra = np.array([len(c.extra_workdays) for c in cal_list] + [0], dtype=np.int64)
    none = len(cal_list)
    calendar, started, kind, work = _span_columns(acts)
    fallback = default_calendar or ""
    ck = np.fromiter(map(cal_at.get, [c or fallback for c in calendar], repeat(none)), np.int64, n)
    span = np.where(work < 0, 0, _min_days(work, week[ck], extra[ck]))
    gap = np.array([_longest_gap(c) for c in cal_list] + [0], dtype=np.int64)
    # A finish-type instant (a finish milestone, a task with no work left) is
    # dated on the working day before its boundary, which may lie up to the
    # longest run of non-working days of its calendar earlier (engine notes).
    opening = kind == "opening-milestone"
    instant = (work == 0) & ~opening
    back = np.where(instant, gap[ck], 0)
    if link_columns is not None:  # already read by the loader: positions in file order, type codes, lags
        lp, ls, typ, lag = link_columns
    else:
        pos = {a.id: i for i, a in enumerate(acts)}
        m = len(links)
        lp = np.fromiter((pos.get(x.pred, -1) for x in links), np.int64, m)
        ls = np.fromiter((pos.get(x.succ, -1) for x in links), np.int64, m)
        typ = np.fromiter((_CODE[x.type] for x in links), np.int64, m)
        lag = np.fromiter((x.lag for x in links), np.int64, m)
    keep = (lp >= 0) & (ls >= 0) & (lag >= 0)
    lp, ls, typ, lag = lp[keep], ls[keep], typ[keep], lag[keep]
    from_start = (typ == 1) | (typ == 3)  # SS, SF: timed from the predecessor's start
    keep = (work[lp] >= 0) & (work[ls] >= 0) & ~started[ls] & ~(started[lp] & from_start)
    lp, ls, typ, lag, from_start = lp[keep], ls[keep], typ[keep], lag[keep], from_start[keep]
    w = _min_days(lag, week[ck[ls]], extra[ck[ls]])
    # An FF or SF link with no lag holds the successor's finish boundary; its
    # finish date, the working day before, may lie a run of non-working days earlier.
    w = np.where((lag == 0) & ~((typ == 0) | (typ == 1)), -gap[ck[ls]], w)
    if skip_under is not None and int(span.sum()) + int(np.maximum(w, 0).sum()) <= skip_under:
        return None
    to_start = (typ == 0) | (typ == 1)  # FS, SS: hold the successor's start
    # Kahn's algorithm one frontier at a time, pushing the bound along each
    # link once every predecessor of its activity is done.
    order = np.argsort(lp, kind="stable")
    lp, ls, w, from_start, to_start = lp[order], ls[order], w[order], from_start[order], to_start[order]
    first = np.searchsorted(lp, np.arange(n + 1))
    indeg = np.bincount(ls, minlength=n)
    start = np.zeros(n, dtype=np.int64)
    finish = np.full(n, -(1 << 40), dtype=np.int64)  # set from the start; FF and SF links may raise it
    frontier = np.flatnonzero(indeg == 0)
    first_over = -1  # the first activity, in logic order (frontier by frontier), over the ceiling
    while frontier.size:
        finish[frontier] = np.maximum(finish[frontier], start[frontier] + span[frontier] - back[frontier])
        if first_over < 0:
            over = frontier[finish[frontier] > MAX_SPAN_DAYS]
            first_over = int(over.min()) if over.size else -1
        lo, hi = first[frontier], first[frontier + 1]
        counts = hi - lo
        total = int(counts.sum())
        if not total:
            break
        take = np.repeat(hi - counts.cumsum(), counts) + np.arange(total)
        src, dst = lp[take], ls[take]
        # An instant passes one day whatever the link type (engine notes): a
        # finish-type instant's SS and SF links pass its (lowered) finish too.
        value = np.where(from_start[take] & ~instant[src], start[src], finish[src]) + w[take]
        hold_start = to_start[take]
        np.maximum.at(start, dst[hold_start], value[hold_start])
        np.maximum.at(finish, dst[~hold_start], value[~hold_start])
        np.subtract.at(indeg, dst, 1)
        cand = _distinct(dst)
        frontier = cand[indeg[cand] == 0]
    cal = [cal_list[k] if k < none else None for k in ck.tolist()]
    return finish, span, work, cal, first_over


_CODE = {"FS": 0, "SS": 1, "FF": 2, "SF": 3}


def _distinct(values: np.ndarray) -> np.ndarray:
    """The distinct values, sorted (``np.unique`` without its import of ``numpy.ma``)."""
    ordered = np.sort(values)
    return ordered[np.concatenate(([True], ordered[1:] != ordered[:-1]))] if ordered.size else ordered
_SPAN_FIELDS = ("calendar", "actual_start", "actual_finish", "kind", "duration", "remaining")


def _span_columns(acts: list[Activity]) -> tuple[tuple, np.ndarray, np.ndarray, np.ndarray]:
    """Each activity's calendar, whether it started, its kind, and its work as :func:`_work` (-1 for ``None``)."""
    calendar, start, finish, kinds, durations, remainings = (list(map(attrgetter(f), acts)) for f in _SPAN_FIELDS)
    started = np.array([s is not None for s in start], dtype=bool)
    finished = np.array([f is not None for f in finish], dtype=bool)
    kind = np.array(kinds, dtype=object)
    duration = np.array(durations, dtype=np.int64)
    has_remaining = np.array([r is not None for r in remainings], dtype=bool)
    remaining = np.array([0 if r is None else r for r in remainings], dtype=np.int64)
    done = finished | (started & ((kind != "task") | (duration == 0)))
    work = np.where(done, -1, np.where(has_remaining, remaining, duration))
    return tuple(calendar), started, kind, work


@lru_cache(maxsize=256)
def _longest_gap(cal: Calendar) -> int:
    """The longest run of non-working days of ``cal`` (its weekly pattern with its holidays and extra dates).

    Computed with numpy's business-day functions over the years its
    holidays span (at most 1900-2200, about 110,000 days), once per calendar.
    """
    mask = [name in cal.workdays for name in DAY_NAMES]
    if not any(mask) and not cal.extra_workdays:
        return 0  # refused elsewhere: a calendar needs a working day
    weekly = 0
    if any(mask):
        run = best = 0
        for works in mask * 2:  # the week twice: a run may wrap from Sunday to Monday
            run = 0 if works else run + 1
            best = max(best, run)
        weekly = best
    if not cal.holidays:
        return weekly
    lo = np.datetime64(min(cal.holidays), "D") - 14
    hi = np.datetime64(max(cal.holidays), "D") + 15
    days = np.arange(lo, hi, dtype="datetime64[D]")
    if any(mask):
        working = np.is_busday(days, weekmask=[int(m) for m in mask],
                               holidays=np.array(cal.holidays, dtype="datetime64[D]"))
    else:  # extra working dates only
        working = np.zeros(days.size, dtype=bool)
    if cal.extra_workdays:
        extra = np.array(cal.extra_workdays, dtype="datetime64[D]")
        extra = extra[(extra >= lo) & (extra < hi)]
        working[(extra - lo).astype(np.int64)] = True
    # Runs of False: the gaps between working days.
    idx = np.flatnonzero(np.concatenate(([True], working, [True])))
    return max(weekly, int(np.diff(idx).max()) - 1)


def _min_days(work: np.ndarray, week: np.ndarray, extra: np.ndarray) -> np.ndarray:
    """:func:`min_calendar_days` over arrays (0 for no work)."""
    regular = work - extra
    bound = np.maximum(work, 7 * ((regular - 1) // week) + 1)
    return np.where(work <= 0, 0, np.where(regular <= 0, work, bound))


def _span_problem(a: Activity, finish: int, span: int, work: int, cal: Calendar | None, rel: str,
                  problems: Problems) -> None:
    per_week = len(cal.workdays) if cal is not None else 7
    plural = "day" if per_week == 1 else "days"
    cal_text = "" if cal is None else f" on calendar {cal.id} ({per_week} working {plural} a week)"
    if span > MAX_SPAN_DAYS:
        why = f"activity {a.id} alone needs at least {span} calendar days ({work} working days{cal_text})"
    else:
        why = (f"activity {a.id} cannot finish sooner than {finish} calendar days after the data date "
               f"({work} working days{cal_text} after its predecessors)")
    problems.add(rel, a.line, "duration", work,
                 f"{why}; over the ceiling of {MAX_SPAN_YEARS} years ({MAX_SPAN_DAYS} days) on the span of a schedule")

