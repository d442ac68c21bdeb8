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
The rules live in named steps, each with its rule in its docstring:
:mod:`forensic.core.network` compiles a snapshot to arrays (activity
columns, links, topological levels); :mod:`forensic.core.passes` holds the
horizon grid, the links that hold in each pass, the constraint bounds, the
forward and backward passes and the floats; :mod:`forensic.core.driving`
the driving links, the longest path and its chains, and the open-end
warnings. This module joins them (:func:`schedule`) and holds the results.

Kelley, J. E. and Walker, M. R. (1959). Critical-path planning and
scheduling. *Proceedings of the Eastern Joint Computer Conference*, 160-173.
AACE International Recommended Practice 49R-06, Identifying the Critical Path.
AACE International Recommended Practice 29R-03, Forensic Schedule Analysis.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, fields
from datetime import date

import numpy as np

from forensic.core.calendars import MAX_DAY, MIN_DAY, day_number, from_day_number
from forensic.core.driving import (
    DrivingIndex,
    driving_links,
    longest_path_positions,
    open_end_warnings,
    path_chains,
)
from forensic.core.errors import LogicLoopError, ScheduleError
from forensic.core.model import Calendar, Casefile, Project, Snapshot
from forensic.core.network import Network
from forensic.core.passes import (
    HorizonTooShort,
    backward_pass,
    completion_position,
    constraint_bounds,
    float_columns,
    forward_pass,
    holding_links,
    horizon_grid,
)

__all__ = [
    "ScheduleResult",
    "ScheduledActivity",
    "activity_columns",
    "schedule",
    "schedule_snapshot",
    "topological_order",
]


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
    net = Network(snapshot, calendars, project)
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
        except (HorizonTooShort, IndexError):
            if pad >= net.extent:
                break
            pad = min(pad * 4, net.extent)
    msg = f"snapshot {snapshot.id}: the schedule runs beyond the supported dates"
    raise ScheduleError(msg)


def schedule_snapshot(casefile: Casefile, snapshot_id: str, **options) -> ScheduleResult:
    """Schedule the snapshot ``snapshot_id`` of a casefile (see :func:`schedule`)."""
    return schedule(casefile.snapshot(snapshot_id), casefile.calendars, casefile.project, **options)


class _ActivityTable(Mapping):
    """The per-activity results, built into :class:`ScheduledActivity` records on first use.

    The passes work on numpy arrays; turning 50,000 of them into records
    costs more than the passes, so a record is made only when asked for.
    """

    def __init__(self, ids, cols, driving_of, order=None):
        self._ids = ids
        self._pos: dict[str, int] | None = None  # id -> position, made on first use
        self._cols = cols  # name -> numpy array, converted to lists on first use
        self._lists = None
        self._driving_of = driving_of
        self._made: dict[str, ScheduledActivity] = {}
        self._order = order  # (the result's order of ids, their positions), or None

    def _at(self) -> dict[str, int]:
        if self._pos is None:
            self._pos = dict(zip(self._ids, range(len(self._ids)), strict=True))
        return self._pos

    def __getitem__(self, key: str) -> ScheduledActivity:
        rec = self._made.get(key)
        if rec is None:
            rec = self._made[key] = self._make(self._at()[key])
        return rec

    def __iter__(self):
        return iter(self._ids)

    def __len__(self) -> int:
        return len(self._ids)

    def __contains__(self, key) -> bool:
        return key in self._at()

    def column(self, name: str) -> np.ndarray:
        """One result for every activity as an array, in ``ids`` order (no records built)."""
        return self._cols[name]

    def columns_at(self, ids: tuple[str, ...]) -> dict[str, list]:
        """The fields of the records of ``ids``, field by field, straight from the arrays (no record built).

        Each list holds what the records' field would (the same dates, ints,
        bools, ``None`` for finished work, tuples of driving predecessors):
        a whole table of results costs a few array operations, not 50,000 records.
        """
        if self._order is not None and ids is self._order[0]:
            pos = self._order[1]
        else:
            pos = np.fromiter(map(self._at().__getitem__, ids), np.int64, len(ids))
        c = {k: v[pos] for k, v in self._cols.items()}
        done = c["status"] == 2
        live = ~done
        status = _STATUS_NAMES[np.where(done, 2, np.where(c["status"] == 1, 1, 0))]
        out: dict[str, list] = {"id": list(ids), "status": status.tolist()}
        out["early_start"] = _dates(c["start_day"], None)
        out["early_finish"] = _dates(c["finish_day"], None)
        out["late_start"] = _dates(c["late_start_day"], live)
        out["late_finish"] = _dates(c["late_finish_day"], live)
        for name in ("total_float", "free_float"):
            values = _as_objects(c[name].tolist())
            values[done] = None
            out[name] = values.tolist()
        out["critical"] = (c["critical"] & live).tolist()
        out["driving_predecessors"] = self._drivers(pos.tolist())
        return out

    def _drivers(self, at: list[int]) -> list[tuple[str, ...]]:
        """The driving predecessors (ids) of each position in ``at``."""
        ids, driving_of = self._ids, self._driving_of
        if not isinstance(driving_of, DrivingIndex):
            return [tuple(ids[p] for p in driving_of(i)) for i in at]
        named = list(map(ids.__getitem__, driving_of.pred))
        start = driving_of.start
        return [tuple(named[start[i]:start[i + 1]]) for i in at]

    def _make(self, i: int) -> ScheduledActivity:
        c = self._lists
        if c is None and len(self._made) >= _LISTS_FROM:
            c = self._lists = {k: v.tolist() for k, v in self._cols.items()}
        elif c is None:  # one of the first few records: its values alone, the arrays not copied to lists
            c = {k: {i: v[i].item()} for k, v in self._cols.items()}
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


_FIELDS = tuple(f.name for f in fields(ScheduledActivity))
_LISTS_FROM = 256
"""A result's arrays become lists (quicker to read a record from) once this many of its records are made.

Many results are asked for a few records only (the completion, a path); copying every column to
Python lists for them held about 7 MB a result of 20,000 activities until the result went."""
_STATUS_NAMES = np.array(["not-started", "in-progress", "finished"], dtype=object)


def activity_columns(result: ScheduleResult) -> dict[str, list]:
    """The :class:`ScheduledActivity` fields of every activity of ``result``, field by field, in ``result.order``.

    ``{field: [value for each activity]}``, equal to reading the records one
    by one; from the engine's own results it is built from its arrays, with
    no record made (the schedule table and ``--json`` of 50,000 activities).
    """
    acts = result.activities
    if isinstance(acts, _ActivityTable):
        return acts.columns_at(result.order)
    records = [acts[a] for a in result.order]
    return {name: [getattr(x, name) for x in records] for name in _FIELDS}


def _as_objects(values: list) -> np.ndarray:
    arr = np.empty(len(values), dtype=object)
    arr[:] = values
    return arr


def _dates(days: np.ndarray, where: np.ndarray | None) -> list:
    """Day numbers as dates (each distinct day converted once); ``None`` outside ``where``."""
    picked = days if where is None else days[where]
    distinct, back = np.unique(picked, return_inverse=True)
    dates = _as_objects(list(map(from_day_number, distinct.tolist())))[back.reshape(-1)]
    if where is None:
        return dates.tolist()
    out = np.full(days.size, None, dtype=object)
    out[where] = dates
    return out.tolist()


def _schedule(
    snapshot: Snapshot,
    net: Network,
    project: Project,
    logic: str,
    crit: int,
    lo: int,
    hi: int,
) -> ScheduleResult:
    """Schedule a compiled network on the horizon ``lo``..``hi``, one named step after another.

    Raises :class:`HorizonTooShort` (or ``IndexError``) when a pass runs off
    the horizon; :func:`schedule` then widens it and calls again.
    """
    grid = horizon_grid(net, lo, hi)
    active, back_active = holding_links(net, logic)
    early_bound, late_bound = constraint_bounds(net, grid)
    early = forward_pass(net, grid, active, early_bound, day_number(snapshot.data_date))
    comp = completion_position(net, project, early)
    lf, early_f, ls_ = backward_pass(net, grid, back_active, late_bound, early, int(early.F[comp]))
    cols = float_columns(net, grid, early, lf, early_f, ls_, crit)
    driving_of = driving_links(net, active, early)
    path = longest_path_positions(net, comp, driving_of, early.start_day)
    ids = net.ids
    order = tuple(map(ids.__getitem__, net.node_order.tolist()))
    table = _ActivityTable(ids, cols, driving_of, (order, net.node_order))
    finished = int(cols["status"][comp]) == 2
    return ScheduleResult(
        snapshot_id=snapshot.id,
        data_date=snapshot.data_date,
        completion_id=ids[comp],
        completion=from_day_number(int(cols["finish_day"][comp])),
        completion_float=None if finished else int(cols["total_float"][comp]),
        activities=table,
        longest_path=tuple(ids[i] for i in path),
        order=order,
        warnings=tuple(open_end_warnings(snapshot.id, net, comp)),
        longest_paths=tuple(tuple(ids[i] for i in c) for c in path_chains(comp, driving_of)),
    )


