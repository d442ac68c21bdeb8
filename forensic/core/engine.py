"""The scheduling engine: the critical path method over a precedence network.

This is the CPM of Kelley and Walker (1959) in its precedence diagramming
form (four relationship types with lags), with the progress rules of an
update at its data date, several calendars in one network, and the six
date constraints of the casefile format. It computes early and late dates,
total and free float, the critical flag, the driving links, and the longest
path (AACE RP 49R-06, *Identifying the Critical Path*: the longest path is
traced back from the completion through driving relationships).

How time is placed
------------------
Each activity lives on its own calendar's working-day index (see
:mod:`forensic.core.calendars`). Its start is the *boundary* ``ks`` (the moment
before working day ``ks`` begins) and its finish the boundary ``kf = ks + d``
for a duration of ``d`` working days; its start date is working day ``ks``
and its finish date working day ``kf - 1`` (inclusive, as the casefile
format states). A milestone is a single boundary: a finish milestone is
dated on the working day before it, a start milestone on the working day
after it.

Across calendars a link passes a calendar *day*: from the predecessor's
start date (SS, SF) or the day after its finish date (FS, FF); the
successor takes the first of its own working days on or after that day and
adds the lag in its own working days. For milestones the day passed is the
one its date implies (a finish milestone: the day after its date; a start
milestone: its date). The backward pass inverts the same mapping exactly,
so the two passes agree on a network with no constraints (zero float on the
longest path).

Progress at the data date
-------------------------
Finished activities keep their actual dates and carry no float. Work not
started is scheduled no earlier than the data date. The remaining work of an
activity in progress is scheduled from the data date; under ``retained``
logic its FS links still hold the remaining work until the predecessor
finishes and its FF and SF links still hold its finish (SS links are
satisfied by the actual start); under ``override`` no link holds the
remaining work of a started activity. This is the usual meaning of the two
settings (AACE RP 29R-03, sec. 2.2, on progress override versus retained
logic; common practice). In the backward pass a start-type link (SS, SF)
from an activity already started is satisfied by that start, so it does
not pull the late finish of the remaining work.

The backward pass starts from the project finish, the completion's early
finish, and caps every late finish there, as the precedence-diagramming
backward pass does: an activity whose successors are only start-type links
(a dangling finish) gets no late finish after the project's, and the
completion none after its own finish (AACE RP 49R-06; common CPM practice).

References
----------
Kelley, J. E. and Walker, M. R. (1959). Critical-path planning and
scheduling. *Proceedings of the Eastern Joint Computer Conference*, 160-173.
AACE International Recommended Practice 49R-06, Identifying the Critical Path.
AACE International Recommended Practice 29R-03, Forensic Schedule Analysis.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from datetime import date

import numpy as np

from forensic.core.calendars import (
    MAX_DAY,
    MIN_DAY,
    WorkdayIndex,
    day_number,
    from_day_number,
    workday_index,
)
from forensic.core.errors import LogicLoopError, ScheduleError
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


@dataclass(frozen=True, slots=True)
class ScheduledActivity:
    """The engine's result for one activity.

    Dates are inclusive working days. For a finished activity the early dates
    are its actual dates and the late dates, floats are ``None``. For an
    activity in progress the start dates are its actual start and the finish
    dates are those of its remaining work. Floats are whole working days of
    the activity's own calendar.
    """

    id: str
    status: str
    early_start: date
    early_finish: date
    late_start: date | None
    late_finish: date | None
    total_float: int | None
    free_float: int | None
    critical: bool
    driving_predecessors: tuple[str, ...]


@dataclass(frozen=True, slots=True)
class ScheduleResult:
    """A scheduled snapshot.

    ``completion_id`` is the completion milestone (the project's ``completion``
    when the snapshot has it, else the activity that finishes last);
    ``completion`` its finish date and ``completion_float`` its total float.
    ``longest_path`` lists the activities reached back from the completion
    through driving links, in date order (the union of the chains);
    ``longest_paths`` the same activities as separate chains, each running
    from an activity with no driving predecessor to the completion through
    driving links, so tied or parallel paths are never joined (at most
    ``_MAX_CHAINS`` chains, in driving-link order). ``order`` is a
    topological order of the activity ids.
    """

    snapshot_id: str
    data_date: date
    completion_id: str
    completion: date
    completion_float: int | None
    activities: Mapping[str, ScheduledActivity]
    longest_path: tuple[str, ...]
    order: tuple[str, ...]
    warnings: tuple[str, ...] = ()
    longest_paths: tuple[tuple[str, ...], ...] = ()

    def __getitem__(self, activity_id: str) -> ScheduledActivity:
        return self.activities[activity_id]

    @property
    def critical_ids(self) -> tuple[str, ...]:
        return tuple(a for a in self.order if self.activities[a].critical)


class _HorizonTooShort(Exception):
    pass


def topological_order(ids: list[str], succs: list[list[int]], where: str = "") -> list[int]:
    """Kahn's algorithm over positions; a loop raises :class:`LogicLoopError` naming it.

    Ties are broken by file order, so the order (and everything traced
    through it) is deterministic.
    """
    n = len(ids)
    indeg = [0] * n
    for outs in succs:
        for j in outs:
            indeg[j] += 1
    ready = [i for i in range(n - 1, -1, -1) if indeg[i] == 0]
    order: list[int] = []
    while ready:
        i = ready.pop()
        order.append(i)
        for j in succs[i]:
            indeg[j] -= 1
            if indeg[j] == 0:
                ready.append(j)
    if len(order) < n:
        import networkx as nx  # only to name the loop; imported late to keep start-up quick

        left = {i for i in range(n) if indeg[i] > 0}
        graph = nx.DiGraph((ids[i], ids[j]) for i in left for j in succs[i] if j in left)
        cycle = nx.find_cycle(graph)
        raise LogicLoopError([u for u, _ in cycle], where)
    return order


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
    net = _Network(snapshot, calendars, project)
    # Start with a horizon of some 3,000 working days either side of the
    # dates in the data (enough for almost any project) and widen it only
    # when a pass runs off its end.
    pad = min(net.extent, 3000)
    while True:
        margin = 7 * pad + 400  # seven calendar days a working day covers a one-day week
        lo = max(net.first_day - margin, MIN_DAY)
        hi = min(net.last_day + margin, MAX_DAY)
        try:
            return _schedule(snapshot, net, project, logic, crit, lo, hi)
        except (_HorizonTooShort, IndexError):
            if pad >= net.extent:
                break
            pad = min(pad * 4, net.extent)
    msg = f"snapshot {snapshot.id}: the schedule runs beyond the supported dates"
    raise ScheduleError(msg)


def schedule_snapshot(casefile: Casefile, snapshot_id: str, **options) -> ScheduleResult:
    """Schedule the snapshot ``snapshot_id`` of a casefile (see :func:`schedule`)."""
    return schedule(casefile.snapshot(snapshot_id), casefile.calendars, casefile.project, **options)


_TYPE_CODE = {"FS": 0, "SS": 1, "FF": 2, "SF": 3}
_BIG = 1 << 40


class _ActivityTable(Mapping):
    """The per-activity results, built into :class:`ScheduledActivity` records on first use.

    The passes work on numpy arrays; turning 50,000 of them into records
    costs more than the passes, so a record is made only when asked for.
    """

    def __init__(self, ids, cols, driving_of):
        self._ids = ids
        self._pos = {a: i for i, a in enumerate(ids)}
        self._cols = cols  # name -> numpy array, converted to lists on first use
        self._lists = None
        self._driving_of = driving_of
        self._made: dict[str, ScheduledActivity] = {}

    def __getitem__(self, key: str) -> ScheduledActivity:
        rec = self._made.get(key)
        if rec is None:
            rec = self._made[key] = self._make(self._pos[key])
        return rec

    def __iter__(self):
        return iter(self._ids)

    def __len__(self) -> int:
        return len(self._ids)

    def __contains__(self, key) -> bool:
        return key in self._pos

    def column(self, name: str) -> np.ndarray:
        """One result for every activity as an array, in ``ids`` order (no records built)."""
        return self._cols[name]

    def _make(self, i: int) -> ScheduledActivity:
        if self._lists is None:
            self._lists = {k: v.tolist() for k, v in self._cols.items()}
        c = self._lists
        fdn = from_day_number
        drivers = tuple(self._ids[p] for p in self._driving_of(i))
        if c["status"][i] == 2:
            return ScheduledActivity(
                self._ids[i], "finished", fdn(c["start_day"][i]), fdn(c["finish_day"][i]),
                None, None, None, None, False, drivers,
            )
        return ScheduledActivity(
            self._ids[i],
            "in-progress" if c["status"][i] == 1 else "not-started",
            fdn(c["start_day"][i]),
            fdn(c["finish_day"][i]),
            fdn(c["late_start_day"][i]),
            fdn(c["late_finish_day"][i]),
            c["total_float"][i],
            c["free_float"][i],
            bool(c["critical"][i]),
            drivers,
        )


def _levels(n: int, lp: np.ndarray, ls: np.ndarray, ids: list[str], where: str) -> np.ndarray:
    """Topological level of every activity (Kahn's algorithm, one frontier at a time).

    A level holds activities whose predecessors all lie on earlier levels, so
    each level can be scheduled as one vectorised step.
    """
    level = np.full(n, -1, dtype=np.int64)
    indeg = np.bincount(ls, minlength=n)
    order = np.argsort(lp, kind="stable")
    succ_sorted = ls[order]
    starts = np.searchsorted(lp[order], np.arange(n + 1))
    frontier = np.flatnonzero(indeg == 0)
    depth = 0
    while frontier.size:
        level[frontier] = depth
        lo_, hi_ = starts[frontier], starts[frontier + 1]
        counts = hi_ - lo_
        if counts.sum():
            take = np.repeat(hi_ - counts.cumsum(), counts) + np.arange(counts.sum())
            succ = succ_sorted[take]
            np.subtract.at(indeg, succ, 1)
            cand = np.unique(succ)
            frontier = cand[indeg[cand] == 0]
        else:
            frontier = frontier[:0]
        depth += 1
    if (level < 0).any():
        import networkx as nx  # only to name the loop

        left = set(np.flatnonzero(level < 0).tolist())
        graph = nx.DiGraph(
            (ids[p], ids[s]) for p, s in zip(lp.tolist(), ls.tolist(), strict=True) if p in left and s in left
        )
        cycle = nx.find_cycle(graph)
        raise LogicLoopError([u for u, _ in cycle], where)
    return level


def _group(keys: np.ndarray, nlevels: int) -> tuple[np.ndarray, np.ndarray]:
    """Indices sorted by ``keys`` and the start of each key's run (CSR layout)."""
    order = np.argsort(keys, kind="stable")
    starts = np.searchsorted(keys[order], np.arange(nlevels + 1))
    return order, starts


# The compiled links of the last few networks, keyed by the identity of the
# links tuple (and checked against it and the activity ids): the half-step
# of a window and the but-for variants of the concurrency test share the
# links of one snapshot, so their link arrays and topological levels are
# built once. The arrays are never written to after they are built.
_LINK_CACHE: dict[int, tuple] = {}
_LINK_CACHE_SIZE = 8


# The per-activity input columns of the last few networks: a variant of a
# snapshot (the but-for schedules of the concurrency test change the
# remaining durations of a few activities) shares most activity records with
# it, so only the rows of records that differ are read again.
_ACT_CACHE: dict[tuple[int, str], tuple] = {}
_ACT_CACHE_SIZE = 8
_COLUMN_NAMES = (
    "cal", "duration", "start_ms", "milestone", "has_start", "has_finish",
    "remaining", "start_day", "finish_day", "has_constraint", "constraint_day",
)


def _read_rows(acts: list, numbers: dict[str, int], default: str) -> dict[str, np.ndarray]:
    """The input columns of these activity records (calendar ids already numbered)."""
    return {
        "cal": np.array([numbers[a.calendar or default] for a in acts], dtype=np.int64),
        "duration": np.array([a.duration for a in acts], dtype=np.int64),
        "start_ms": np.array([a.kind == "opening-milestone" for a in acts], dtype=bool),
        "milestone": np.array([a.kind != "task" for a in acts], dtype=bool),
        "has_start": np.array([a.actual_start is not None for a in acts], dtype=bool),
        "has_finish": np.array([a.actual_finish is not None for a in acts], dtype=bool),
        "remaining": np.array([a.remaining_duration for a in acts], dtype=np.int64),
        "start_day": np.array([day_number(a.actual_start) if a.actual_start else 0 for a in acts], dtype=np.int64),
        "finish_day": np.array([day_number(a.actual_finish) if a.actual_finish else 0 for a in acts], dtype=np.int64),
        "has_constraint": np.array(
            [a.constraint is not None and a.constraint_date is not None for a in acts], dtype=bool
        ),
        "constraint_day": np.array(
            [day_number(a.constraint_date) if a.constraint_date else 0 for a in acts], dtype=np.int64
        ),
    }


def _activity_columns(acts: list, ids: list[str], calendars: Mapping[str, Calendar], default: str, sid: str) -> dict:
    """The activities' input columns, re-reading only the records that differ from a cached network."""
    key = (id(calendars), default)
    hit = _ACT_CACHE.get(key)
    if hit is not None and hit[0] is calendars and len(hit[1]) == len(acts) and hit[2] == ids:
        _, old_acts, _, cached_numbers, cached_cols, cached_cals = hit
        changed = [i for i, (a, b) in enumerate(zip(acts, old_acts, strict=True)) if a is not b]
        if len(changed) * 4 < len(acts) and all((acts[i].calendar or default) in cached_numbers for i in changed):
            out = {k: v.copy() for k, v in cached_cols.items()}
            if changed:
                fresh = _read_rows([acts[i] for i in changed], cached_numbers, default)
                for k in _COLUMN_NAMES:
                    out[k][changed] = fresh[k]
            out["calendars"] = cached_cals
            return out
    numbers: dict[str, int] = {}
    cal_list: list[Calendar] = []
    for a in acts:
        cid = a.calendar or default
        if cid not in numbers:
            if cid not in calendars:
                msg = f"snapshot {sid}, activity {a.id}: unknown calendar {cid!r}"
                raise ScheduleError(msg)
            numbers[cid] = len(cal_list)
            cal_list.append(calendars[cid])
    cols = _read_rows(acts, numbers, default)
    if len(_ACT_CACHE) >= _ACT_CACHE_SIZE:
        _ACT_CACHE.pop(next(iter(_ACT_CACHE)))
    _ACT_CACHE[key] = (calendars, acts, ids, numbers, cols, cal_list)
    out = dict(cols)
    out["calendars"] = cal_list
    return out


class _Network:
    """A snapshot compiled to arrays once, so a wider horizon re-runs only the passes."""

    def __init__(self, snapshot: Snapshot, calendars: Mapping[str, Calendar], project: Project):
        acts = list(snapshot.activities.values())
        self.acts = acts
        self.ids = ids = [a.id for a in acts]
        self.n = n = len(acts)
        if n == 0:
            msg = f"snapshot {snapshot.id} has no activities"
            raise ScheduleError(msg)
        self.pos = pos = {a: i for i, a in enumerate(ids)}
        raw = _activity_columns(acts, ids, calendars, project.default_calendar, snapshot.id)
        self.calendars = raw["calendars"]
        self.cal = raw["cal"]
        durations = raw["duration"]
        self.start_ms = raw["start_ms"]
        self.zero = raw["milestone"] | (durations == 0)
        # Instant kinds (module notes): a task starts late-type and finishes
        # early-type; a finish milestone is early-type, a start milestone late-type.
        self.s_late = ~self.zero | self.start_ms
        self.f_late = self.start_ms.copy()
        has_s, has_f = raw["has_start"], raw["has_finish"]
        self.done = has_f | (self.zero & has_s)
        self.status = np.where(self.done, 2, np.where(has_s, 1, 0)).astype(np.int64)
        remaining = raw["remaining"]
        self.dur = np.where(self.done | (self.zero & (self.status == 0)), 0, remaining)
        s_day, f_day = raw["start_day"], raw["finish_day"]
        self.act_start = np.where(has_s, s_day, np.where(has_f, f_day, 0))
        self.act_finish = np.where(has_f, f_day, np.where(has_s, s_day, 0))
        has_c = raw["has_constraint"]
        self.constrained = np.flatnonzero(has_c).tolist()
        dates = np.concatenate([s_day[has_s], f_day[has_f], raw["constraint_day"][has_c], [day_number(snapshot.data_date)]])
        self.first_day, self.last_day = int(dates.min()), int(dates.max())

        links = snapshot.links
        key = id(links)
        hit = _LINK_CACHE.get(key)
        if hit is not None and hit[0] is links and hit[1] == ids:
            (self.lp, self.lsu, self.ltyp, self.lag, self.level) = hit[2]
        else:
            try:
                self.lp = np.array([pos[k.pred] for k in links], dtype=np.int64)
                self.lsu = np.array([pos[k.succ] for k in links], dtype=np.int64)
            except KeyError as exc:
                msg = f"snapshot {snapshot.id}: a link names an unknown activity {exc.args[0]!r}"
                raise ScheduleError(msg) from None
            self.ltyp = np.array([_TYPE_CODE[k.type] for k in links], dtype=np.int64)
            self.lag = np.array([k.lag for k in links], dtype=np.int64)
            self.level = _levels(n, self.lp, self.lsu, ids, f"snapshot {snapshot.id}")
            if len(_LINK_CACHE) >= _LINK_CACHE_SIZE:
                _LINK_CACHE.pop(next(iter(_LINK_CACHE)))
            for arr in (self.lp, self.lsu, self.ltyp, self.lag, self.level):
                arr.flags.writeable = False
            _LINK_CACHE[key] = (links, ids, (self.lp, self.lsu, self.ltyp, self.lag, self.level))
        self.m = len(links)
        self.start_type = (self.ltyp == 1) | (self.ltyp == 3)  # timed from the predecessor's start
        self.on_finish = (self.ltyp == 2) | (self.ltyp == 3)  # holds the successor's finish
        self.nlev = int(self.level.max()) + 1
        self.node_order, self.node_starts = _group(self.level, self.nlev)
        self.extent = int(durations.sum() + remaining.sum() + np.abs(self.lag).sum()) + 10


@dataclass(slots=True)
class _Grid:
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
class _Early:
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


def _schedule(
    snapshot: Snapshot,
    net: _Network,
    project: Project,
    logic: str,
    crit: int,
    lo: int,
    hi: int,
) -> ScheduleResult:
    """Schedule a compiled network on the horizon ``lo``..``hi``, one named step after another.

    Raises :class:`_HorizonTooShort` (or ``IndexError``) when a pass runs off
    the horizon; :func:`schedule` then widens it and calls again.
    """
    grid = _grid(net, lo, hi)
    active, back_active = _compile_links(net, logic)
    early_bound, late_bound = _constraint_bounds(net, grid)
    early = _forward_pass(net, grid, active, early_bound, day_number(snapshot.data_date))
    comp = _completion(net, project, early)
    lf, early_f, ls_ = _backward_pass(net, grid, back_active, late_bound, early, int(early.F[comp]))
    cols = _floats(net, grid, early, lf, early_f, ls_, crit)
    driving_of = _driving_links(net, active, early)
    path = _longest_path(net, comp, driving_of, early.start_day)
    ids = net.ids
    table = _ActivityTable(ids, cols, driving_of)
    comp_act = table[ids[comp]]
    return ScheduleResult(
        snapshot_id=snapshot.id,
        data_date=snapshot.data_date,
        completion_id=ids[comp],
        completion=comp_act.early_finish,
        completion_float=comp_act.total_float,
        activities=table,
        longest_path=tuple(ids[i] for i in path),
        order=tuple(ids[i] for i in net.node_order.tolist()),
        warnings=tuple(_open_end_warnings(snapshot.id, net, comp)),
        longest_paths=tuple(tuple(ids[i] for i in c) for c in _chains(comp, driving_of)),
    )


def _grid(net: _Network, lo: int, hi: int) -> _Grid:
    """Stack the working-day indices of the network's calendars on one horizon."""
    indices = [workday_index(c, lo, hi) for c in net.calendars]
    width = max(ix.size for ix in indices) + 1
    sentinel = hi + 10**7  # a day far past the horizon: using it fails the look-up, widening it
    days = np.full((len(indices), width), sentinel, dtype=np.int64)
    first_at = np.empty((len(indices), hi - lo + 1), dtype=np.int64)
    for c, ix in enumerate(indices):
        days[c, : ix.size] = ix.days_array
        first_at[c] = ix.first_at
    return _Grid(lo, indices, days, first_at, width, sentinel)


def _compile_links(net: _Network, logic: str) -> tuple[np.ndarray, np.ndarray]:
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


def _constraint_bounds(net: _Network, grid: _Grid) -> tuple[np.ndarray, np.ndarray]:
    """The lowest start boundary and highest finish boundary each date constraint allows.

    The "-from" and "-fixed" kinds bound the early dates, the "-by" and
    "-fixed" kinds the late dates; a start constraint on work already started
    binds nothing, and finished work is fixed at its actual dates (the six
    constraint kinds of the casefile format; common CPM practice).
    """
    status, dur, cal = net.status, net.dur, net.cal
    early_bound = np.full(net.n, -_BIG, dtype=np.int64)
    late_bound = np.full(net.n, _BIG, dtype=np.int64)
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


def _forward_pass(net: _Network, grid: _Grid, active: np.ndarray, early_bound: np.ndarray, dd: int) -> _Early:
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
    cand = np.full(m, -_BIG, dtype=np.int64)
    fwd = np.flatnonzero(active)
    fwd_order, fwd_starts = _group(net.level[lsu[fwd]], nlev)
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
            raise _HorizonTooShort
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
        raise _HorizonTooShort
    return _Early(es, ef, S, F, start_day, finish_day, cand, dd_k)


def _completion(net: _Network, project: Project, early: _Early) -> int:
    """The completion: the project's named milestone, else the activity finishing last (first in file order)."""
    comp = net.pos.get(project.completion) if project.completion else None
    if comp is None:
        key = np.lexsort((np.arange(net.n), -early.finish_day, -early.F))
        comp = int(key[0])
    return comp


def _backward_pass(
    net: _Network, grid: _Grid, back_active: np.ndarray, late_bound: np.ndarray, early: _Early, t_end: int
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
    lf = np.full(n, _BIG, dtype=np.int64)
    early_f = np.full(n, _BIG, dtype=np.int64)
    has_succ = np.bincount(lp[back_active], minlength=n) > 0
    k_end = np.where(f_late, first_at[cal, t_end + 1 - lo] - 1, first_at[cal, t_end - lo])
    bwd = np.flatnonzero(back_active)
    bwd_order, bwd_starts = _group(net.level[lp[bwd]], nlev)
    bwd = bwd[bwd_order]
    ls_ = np.zeros(n, dtype=np.int64)
    for L in range(nlev - 1, -1, -1):
        nodes = node_order[node_starts[L] : node_starts[L + 1]]
        nodes = nodes[status[nodes] != 2]
        if nodes.size == 0:
            continue
        open_end = ~has_succ[nodes]
        lf[nodes] = np.where(open_end, k_end[nodes], _BIG)
        early_f[nodes] = lf[nodes]
        links = bwd[bwd_starts[L] : bwd_starts[L + 1]]
        if links.size:
            p = lp[links]
            s = lsu[links]
            fin = on_finish[links]
            m_late = np.where(fin, lf[s], ls_[s]) - lag[links]
            m_early = np.where(fin, ef[s], es[s]) - lag[links]
            if min(m_late.min(), m_early.min()) < 0:
                raise _HorizonTooShort
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
            raise _HorizonTooShort
    return lf, early_f, ls_


def _floats(
    net: _Network, grid: _Grid, early: _Early, lf: np.ndarray, early_f: np.ndarray, ls_: np.ndarray, crit: int
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


def _driving_links(net: _Network, active: np.ndarray, early: _Early):
    """The driving predecessors of each activity, as a function of its position.

    A link drives when its timing sets the successor's early start (AACE RP
    49R-06). A link from finished work drives only when it holds the
    successor later than the data date.
    """
    lp, lsu, n = net.lp, net.lsu, net.n
    cand, es, dd_k = early.cand, early.es, early.dd_k
    drv = active & (cand == es[lsu]) & ((net.status[lp] != 2) | (cand > dd_k[lsu]))
    drv_idx = np.flatnonzero(drv)
    d_order = np.argsort(lsu[drv_idx], kind="stable")
    d_succ = lsu[drv_idx][d_order].tolist()
    d_pred = lp[drv_idx][d_order].tolist()
    d_start = np.searchsorted(np.array(d_succ, dtype=np.int64), np.arange(n + 1)).tolist()

    return _DrivingIndex(d_pred, d_start)


class _DrivingIndex:
    """``index(i)``: the positions of activity ``i``'s driving predecessors (a plain object, so results serialise)."""

    __slots__ = ("pred", "start")

    def __init__(self, pred: list[int], start: list[int]) -> None:
        self.pred = pred
        self.start = start

    def __call__(self, i: int) -> list[int]:
        return self.pred[self.start[i] : self.start[i + 1]]

    def __getstate__(self):
        return (self.pred, self.start)

    def __setstate__(self, state) -> None:
        self.pred, self.start = state


def _longest_path(net: _Network, comp: int, driving_of, start_day: np.ndarray) -> list[int]:
    """Every activity reached back from the completion through driving links, in date order.

    The longest path of AACE RP 49R-06 (traced back from the completion
    through driving relationships). Ties of start date are broken by the
    number of driving links from the path's first activity (so a driving
    predecessor comes first), then by activity id: the order does not depend
    on how a topological sort happened to break its own ties.
    """
    on_path = {comp}
    stack = [comp]
    while stack:
        i = stack.pop()
        for p in driving_of(i):
            if p not in on_path:
                on_path.add(p)
                stack.append(p)
    depth: dict[int, int] = {}
    for i in net.node_order.tolist():
        if i in on_path:
            depth[i] = 1 + max((depth[p] for p in driving_of(i)), default=-1)
    sd = start_day.tolist()
    ids = net.ids
    return sorted(on_path, key=lambda i: (sd[i], depth[i], ids[i]))


_MAX_CHAINS = 50  # ties multiply chains; past this many the union alone is the answer


def _chains(comp: int, driving_of) -> list[list[int]]:
    """The longest path as separate chains, each contiguous through driving links.

    Every chain runs from an activity with no driving predecessor to the
    completion, each step a driving link (AACE RP 49R-06: the path is traced
    back from the completion through driving relationships); two tied paths
    are two chains. Depth-first from the completion, predecessors in
    driving-link order, at most ``_MAX_CHAINS`` chains.
    """
    chains: list[list[int]] = []
    stack: list[tuple[int, list[int]]] = [(comp, [comp])]
    while stack and len(chains) < _MAX_CHAINS:
        i, tail = stack.pop()
        preds = [p for p in driving_of(i) if p not in tail]
        if not preds:
            chains.append(tail[::-1])
            continue
        for p in reversed(preds):
            stack.append((p, [*tail, p]))
    return chains


def _open_end_warnings(sid: str, net: _Network, comp: int) -> list[str]:
    """Unfinished activities with no predecessor (other than start milestones) or no successor (other than the completion)."""
    n, live = net.n, ~net.done
    indeg = np.bincount(net.lsu, minlength=n)
    outdeg = np.bincount(net.lp, minlength=n)
    warnings: list[str] = []
    for i in np.flatnonzero(live & (indeg == 0) & ~net.start_ms).tolist():
        warnings.append(f"snapshot {sid}: activity {net.ids[i]} has no predecessor (open start)")
    for i in np.flatnonzero(live & (outdeg == 0)).tolist():
        if i != comp:
            warnings.append(f"snapshot {sid}: activity {net.ids[i]} has no successor (open finish)")
    return warnings


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
