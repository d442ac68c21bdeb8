"""The passes of the critical path method over a compiled network, on one horizon.

Each function is one named step of :func:`forensic.core.engine.schedule`,
with the rule it implements in its docstring: the calendars stacked on a
horizon (:func:`horizon_grid`), which links hold in each pass
(:func:`holding_links`), the date constraints as bounds
(:func:`constraint_bounds`), the forward pass (:func:`forward_pass`), the
completion (:func:`completion_position`), the backward pass capped at the
project finish (:func:`backward_pass`) and the floats and late dates
(:func:`float_columns`). The time model (boundaries on each activity's own
working-day index, a calendar day passed through each link) is in the
notes of :mod:`forensic.core.engine`.

A pass that runs off the horizon raises :class:`HorizonTooShort`; the
engine widens the horizon and runs the passes again.

References
----------
Kelley, J. E. and Walker, M. R. (1959). Critical-path planning and
scheduling. AACE International RP 49R-06 (the backward pass from the
project finish); RP 29R-03 sec. 2.2 (retained logic and progress override).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from forensic.core.calendars import WorkdayIndex, day_number, workday_index
from forensic.core.model import Project
from forensic.core.network import BIG, Network, group_by_key, register_cache

__all__ = [
    "EarlyDates",
    "Grid",
    "HorizonTooShort",
    "backward_pass",
    "completion_position",
    "constraint_bounds",
    "float_columns",
    "forward_pass",
    "holding_links",
    "horizon_grid",
]


class HorizonTooShort(Exception):
    """A pass ran off the end of its horizon: the engine widens it and runs again."""


@dataclass(slots=True)
class Grid:
    """The calendars of one horizon as stacked arrays.

    ``first_at[c, t - lo]`` is the first working-day boundary of calendar
    ``c`` on or after calendar day ``t``; ``days[c, k]`` the calendar day of
    its working day ``k``. Past the horizon ``days`` holds ``sentinel``, a day
    far beyond it: a pass that reads it fails its look-up, which widens the
    horizon (:func:`schedule`).
    """

    lo: int
    indices: list[WorkdayIndex]
    days: np.ndarray
    first_at: np.ndarray
    width: int
    sentinel: int


@dataclass(slots=True)
class EarlyDates:
    """The forward pass: early boundaries and dates of every activity.

    ``es``/``ef`` are the early start and finish boundaries of the work still
    to do (its remaining work for an activity in progress); ``S``/``F`` the
    boundaries its links are timed from and ``start_day``/``finish_day`` its
    reported dates (actual where known). ``cand`` holds, per link, the start
    boundary that link asks of its successor; ``dd_k`` the data date's first
    boundary on each activity's calendar.
    """

    es: np.ndarray
    ef: np.ndarray
    S: np.ndarray
    F: np.ndarray
    start_day: np.ndarray
    finish_day: np.ndarray
    cand: np.ndarray
    dd_k: np.ndarray


_GRID_CACHE: dict[tuple, tuple] = {}
_GRID_CACHE_SIZE = 4
register_cache(_GRID_CACHE)


def horizon_grid(net: Network, lo: int, hi: int) -> Grid:
    """Stack the working-day indices of the network's calendars on one horizon.

    The grid of the last few (calendars, horizon) pairs is kept, checked by
    the calendars' identity, with its arrays read-only: the daily slices of
    a window and the concurrency reruns schedule many networks on the same
    calendars and horizon.
    """
    key = (tuple(id(c) for c in net.calendars), lo, hi)
    hit = _GRID_CACHE.get(key)
    if hit is not None and all(a is b for a, b in zip(hit[0], net.calendars, strict=True)):
        return hit[1]
    grid = _stacked_grid(net, lo, hi)
    grid.days.setflags(write=False)
    grid.first_at.setflags(write=False)
    if len(_GRID_CACHE) >= _GRID_CACHE_SIZE:
        _GRID_CACHE.pop(next(iter(_GRID_CACHE)))
    _GRID_CACHE[key] = (tuple(net.calendars), grid)
    return grid


def _stacked_grid(net: Network, lo: int, hi: int) -> Grid:
    """The working-day indices of the network's calendars stacked on one horizon (uncached)."""
    indices = [workday_index(c, lo, hi) for c in net.calendars]
    width = max(ix.size for ix in indices) + 1
    sentinel = hi + 10**7  # a day far past the horizon: using it fails the look-up, widening it
    days = np.full((len(indices), width), sentinel, dtype=np.int64)
    first_at = np.empty((len(indices), hi - lo + 1), dtype=np.int64)
    for c, ix in enumerate(indices):
        days[c, : ix.size] = ix.days_array
        first_at[c] = ix.first_at if ix.first_at_array is None else ix.first_at_array
    return Grid(lo, indices, days, first_at, width, sentinel)


def holding_links(net: Network, logic: str) -> tuple[np.ndarray, np.ndarray]:
    """Which links hold in the forward pass and which in the backward pass.

    Forward pass: a link into work not started always holds. Into an
    activity in progress, under ``retained`` logic FS, FF and SF links still
    hold its remaining work (an SS link is satisfied by its actual start);
    under ``override`` none does (AACE RP 29R-03, sec. 2.2; common practice).
    A link into finished work holds nothing.

    Backward pass: the forward-pass links, less those from finished work
    (which constrain nothing) and the start-type links (SS, SF) from work
    already started, which its actual start satisfies, so they do not pull
    the late finish of its remaining work (AACE RP 49R-06; common CPM
    practice for progress).
    """
    status, lp, lsu, ltyp = net.status, net.lp, net.lsu, net.ltyp
    succ_status = status[lsu]
    held = succ_status == 1
    if logic == "override":
        active = succ_status == 0
    else:
        active = (succ_status == 0) | (held & (ltyp != 1))
    back_active = active & (status[lp] != 2) & ~(net.start_type & (status[lp] == 1))
    return active, back_active


def constraint_bounds(net: Network, grid: Grid) -> tuple[np.ndarray, np.ndarray]:
    """The lowest start boundary and highest finish boundary each date constraint allows.

    The "-from" and "-fixed" kinds bound the early dates, the "-by" and
    "-fixed" kinds the late dates; a start constraint on work already started
    binds nothing, and finished work is fixed at its actual dates (the six
    constraint kinds of the casefile format; common CPM practice).
    """
    status, dur, cal = net.status, net.dur, net.cal
    early_bound = np.full(net.n, -BIG, dtype=np.int64)
    late_bound = np.full(net.n, BIG, dtype=np.int64)
    for i in net.constrained:
        if status[i] == 2:
            continue
        ix = grid.indices[cal[i]]
        args = (net.acts[i], int(status[i]), int(dur[i]), ix, grid.lo, bool(net.s_late[i]), bool(net.f_late[i]))
        early_bound[i] = _early_constraint_bound(*args)
        lb = _late_constraint_bound(*args)
        if lb is not None:
            late_bound[i] = lb
    return early_bound, late_bound


def forward_pass(net: Network, grid: Grid, active: np.ndarray, early_bound: np.ndarray, dd: int) -> EarlyDates:
    """Early dates, one topological level at a time (Kelley and Walker 1959).

    Finished work keeps its actual dates. Every other activity starts at the
    latest of: the data date's first working day on its calendar, its
    early-date constraint, and what each holding link asks. A link passes
    the calendar day of its predecessor's start (SS, SF) or the day after its
    finish (FS, FF); the successor takes its first working day on or after it
    and adds the lag in its own working days, less its duration when the link
    holds its finish (FF, SF). Work in progress reports its actual start.
    """
    n, m, lo = net.n, net.m, grid.lo
    cal, status, dur, f_late = net.cal, net.status, net.dur, net.f_late
    act_start, act_finish = net.act_start, net.act_finish
    lp, lsu, lag, start_type, on_finish = net.lp, net.lsu, net.lag, net.start_type, net.on_finish
    node_order, node_starts, nlev = net.node_order, net.node_starts, net.nlev
    days, first_at = grid.days, grid.first_at
    dd_k = first_at[cal, dd - lo]  # first boundary of remaining work, per activity

    # Finished work: fixed at its actual dates.
    S = np.zeros(n, dtype=np.int64)
    F = np.zeros(n, dtype=np.int64)
    start_day = np.zeros(n, dtype=np.int64)
    finish_day = np.zeros(n, dtype=np.int64)
    done, zero_task, start_ms = net.done, net.zero, net.start_ms
    S[done] = np.where(start_ms[done], act_start[done], np.where(zero_task[done], act_finish[done] + 1, act_start[done]))
    F[done] = np.where(start_ms[done], act_start[done], act_finish[done] + 1)
    start_day[done] = act_start[done]
    finish_day[done] = act_finish[done]

    es = np.zeros(n, dtype=np.int64)
    cand = np.full(m, -BIG, dtype=np.int64)
    fwd = np.flatnonzero(active)
    fwd_order, fwd_starts = group_by_key(net.level[lsu[fwd]], nlev)
    fwd = fwd[fwd_order]
    for L in range(nlev):
        nodes = node_order[node_starts[L] : node_starts[L + 1]]
        nodes = nodes[status[nodes] != 2]
        if nodes.size == 0:
            continue
        es[nodes] = np.maximum(dd_k[nodes], early_bound[nodes])
        links = fwd[fwd_starts[L] : fwd_starts[L + 1]]
        if links.size:
            p = lp[links]
            s = lsu[links]
            t = np.where(start_type[links], S[p], F[p])
            k = first_at[cal[s], t - lo] + lag[links] - np.where(on_finish[links], dur[s], 0)
            cand[links] = k
            np.maximum.at(es, s, k)
        e = es[nodes]
        if e.min() < 1:
            raise HorizonTooShort
        c = cal[nodes]
        dn = dur[nodes]
        day_e = days[c, e]
        day_before = days[c, e - 1]
        day_last = days[c, e + dn - 1]
        zero = dn == 0
        prog = status[nodes] == 1
        fl = f_late[nodes]
        inst = np.where(fl, day_e, day_before + 1)
        report = np.where(fl, day_e, day_before)
        F[nodes] = np.where(zero, inst, day_last + 1)
        finish_day[nodes] = np.where(zero, report, day_last)
        S[nodes] = np.where(prog, act_start[nodes], np.where(zero, inst, day_e))
        start_day[nodes] = np.where(prog, act_start[nodes], np.where(zero, report, day_e))
    ef = es + dur
    if (F > grid.sentinel // 2).any() or (finish_day > grid.sentinel // 2).any():
        raise HorizonTooShort
    return EarlyDates(es, ef, S, F, start_day, finish_day, cand, dd_k)


def completion_position(net: Network, project: Project, early: EarlyDates) -> int:
    """The completion: the project's named milestone, else the activity finishing last (first in file order)."""
    comp = net.pos.get(project.completion) if project.completion else None
    if comp is None:
        key = np.lexsort((np.arange(net.n), -early.finish_day, -early.F))
        comp = int(key[0])
    return comp


def backward_pass(
    net: Network, grid: Grid, back_active: np.ndarray, late_bound: np.ndarray, early: EarlyDates, t_end: int
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Late finish boundaries, latest level first; also each activity's free-float limit.

    The pass starts from the project finish ``t_end`` (the completion's
    early finish) and caps every late finish there, as the
    precedence-diagramming backward pass does, so a dangling finish gets no
    late finish after the project's (AACE RP 49R-06; common CPM practice).
    Each holding link inverts the forward mapping exactly: from the
    successor's late start (FS, SS) or late finish (FF, SF) less the lag, to
    the predecessor's finish, plus its duration for a start-type link. A
    late-date constraint lowers the late finish further. The same mapping
    from the successors' early dates gives ``early_f``, the limit of free
    float. Returns ``(lf, early_f, ls)`` as boundaries.
    """
    n, lo, nlev = net.n, grid.lo, net.nlev
    cal, status, dur, s_late, f_late = net.cal, net.status, net.dur, net.s_late, net.f_late
    lp, lsu, lag, start_type, on_finish = net.lp, net.lsu, net.lag, net.start_type, net.on_finish
    node_order, node_starts = net.node_order, net.node_starts
    days, first_at = grid.days, grid.first_at
    es, ef = early.es, early.ef
    lf = np.full(n, BIG, dtype=np.int64)
    early_f = np.full(n, BIG, dtype=np.int64)
    has_succ = np.bincount(lp[back_active], minlength=n) > 0
    k_end = np.where(f_late, first_at[cal, t_end + 1 - lo] - 1, first_at[cal, t_end - lo])
    bwd = np.flatnonzero(back_active)
    bwd_order, bwd_starts = group_by_key(net.level[lp[bwd]], nlev)
    bwd = bwd[bwd_order]
    ls_ = np.zeros(n, dtype=np.int64)
    for L in range(nlev - 1, -1, -1):
        nodes = node_order[node_starts[L] : node_starts[L + 1]]
        nodes = nodes[status[nodes] != 2]
        if nodes.size == 0:
            continue
        open_end = ~has_succ[nodes]
        lf[nodes] = np.where(open_end, k_end[nodes], BIG)
        early_f[nodes] = lf[nodes]
        links = bwd[bwd_starts[L] : bwd_starts[L + 1]]
        if links.size:
            p = lp[links]
            s = lsu[links]
            fin = on_finish[links]
            m_late = np.where(fin, lf[s], ls_[s]) - lag[links]
            m_early = np.where(fin, ef[s], es[s]) - lag[links]
            if min(m_late.min(), m_early.min()) < 0:
                raise HorizonTooShort
            t_late = days[cal[s], m_late]
            t_early = days[cal[s], m_early]
            st = start_type[links]
            late_type = np.where(st, s_late[p], f_late[p])
            off = np.where(st, dur[p], 0)
            cp = cal[p]
            k_late = np.where(late_type, first_at[cp, t_late + 1 - lo] - 1, first_at[cp, t_late - lo]) + off
            k_early = np.where(late_type, first_at[cp, t_early + 1 - lo] - 1, first_at[cp, t_early - lo]) + off
            np.minimum.at(lf, p, k_late)
            np.minimum.at(early_f, p, k_early)
        lf[nodes] = np.minimum(np.minimum(lf[nodes], k_end[nodes]), late_bound[nodes])
        ls_[nodes] = lf[nodes] - dur[nodes]
        if ls_[nodes].min() < 1:
            raise HorizonTooShort
    return lf, early_f, ls_


def float_columns(
    net: Network, grid: Grid, early: EarlyDates, lf: np.ndarray, early_f: np.ndarray, ls_: np.ndarray, crit: int
) -> dict[str, np.ndarray]:
    """Total float, free float, the critical flag and the late dates, as result columns.

    Total float is late finish less early finish and free float the room
    before the earliest successor needs the activity, never more than its
    total float, both in working days of the activity's own calendar; an
    activity is critical when its total float is at most ``crit`` (Kelley
    and Walker 1959; AACE RP 49R-06). Finished work carries no float. An
    activity in progress keeps its actual start as its late start.
    """
    cal, status, dur, f_late, done = net.cal, net.status, net.dur, net.f_late, net.done
    days, width = grid.days, grid.width
    live = ~done
    total_float = np.where(live, lf - early.ef, 0)
    free_float = np.where(live, np.minimum(early_f - early.ef, total_float), 0)
    critical = live & (total_float <= crit)
    zero_all = dur == 0
    lf_c = np.where(live, lf, 1)
    ls_c = np.where(live, ls_, 1)
    late_day = np.where(f_late, days[cal, np.minimum(lf_c, width - 1)], days[cal, lf_c - 1])
    late_start_day = np.where(status == 0, np.where(zero_all, late_day, days[cal, ls_c]), early.start_day)
    late_finish_day = np.where(zero_all, late_day, days[cal, lf_c - 1])
    return {
        "status": status,
        "start_day": early.start_day,
        "finish_day": early.finish_day,
        "late_start_day": late_start_day,
        "late_finish_day": late_finish_day,
        "total_float": total_float,
        "free_float": free_float,
        "critical": critical,
    }


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
