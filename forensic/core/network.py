"""The network of one snapshot compiled to arrays: activity columns, links, topological levels.

The engine (:mod:`forensic.core.engine`) schedules a snapshot on numpy
arrays. This module builds them once per snapshot: each activity's
calendar, durations, progress and constraint as columns; each link's
predecessor, successor, type and lag; and the topological level of every
activity (Kahn's algorithm, one frontier at a time), so that each level of
the forward and backward passes is one vectorised step (Kelley and Walker
1959; the level-by-level order is common practice for array CPM).

Two small caches keep the compiled links and activity columns of the last
few networks: the half-step of a window and the but-for variants of the
concurrency test share most of a snapshot, so only what differs is read
again. :func:`clear_caches` empties them (tests and benchmarks).
"""

from __future__ import annotations

from collections.abc import Mapping

import numpy as np

from forensic.core.calendars import day_number
from forensic.core.errors import LogicLoopError, ScheduleError
from forensic.core.model import Calendar, Project, Snapshot

__all__ = ["BIG", "TYPE_CODE", "Network", "clear_caches", "group_by_key", "topological_levels"]


TYPE_CODE = {"FS": 0, "SS": 1, "FF": 2, "SF": 3}


BIG = 1 << 40


def topological_levels(n: int, lp: np.ndarray, ls: np.ndarray) -> np.ndarray:
    """Topological level of every activity (Kahn's algorithm, one frontier at a time); -1 in a loop.

    ``lp`` and ``ls`` are the positions of each link's ends. A level holds
    activities whose predecessors all lie on earlier levels, so each level
    can be scheduled as one vectorised step; an activity on or after a logic
    loop is never placed and keeps -1 (the loader uses this to prove a
    network loop-free before naming loops the slow way).
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
        total = int(counts.sum())
        if not total:
            break
        succ = succ_sorted[np.repeat(hi_ - counts.cumsum(), counts) + np.arange(total)]
        hit, times = np.unique(succ, return_counts=True)
        indeg[hit] -= times
        frontier = hit[indeg[hit] == 0]
        depth += 1
    return level


def _levels(n: int, lp: np.ndarray, ls: np.ndarray, ids: list[str], where: str) -> np.ndarray:
    """:func:`topological_levels`, refusing a logic loop with an error that names it."""
    level = topological_levels(n, lp, ls)
    if (level < 0).any():
        import networkx as nx  # only to name the loop

        left = set(np.flatnonzero(level < 0).tolist())
        graph = nx.DiGraph(
            (ids[p], ids[s]) for p, s in zip(lp.tolist(), ls.tolist(), strict=True) if p in left and s in left
        )
        cycle = nx.find_cycle(graph)
        raise LogicLoopError([u for u, _ in cycle], where)
    return level


def group_by_key(keys: np.ndarray, nlevels: int) -> tuple[np.ndarray, np.ndarray]:
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
_ACT_CACHE: dict[tuple[int, str, int], tuple] = {}


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


def _mostly_shared(acts: list, old_acts: list) -> bool:
    """Whether a sample of 64 rows says most records are the same objects (worth the full comparison)."""
    step = max(1, len(acts) // 64)
    sample = range(0, len(acts), step)
    return sum(acts[i] is old_acts[i] for i in sample) * 4 >= 3 * len(sample)


def _cached_columns(acts: list, ids: list[str], calendars: Mapping[str, Calendar], default: str) -> dict | None:
    """The input columns from a cached network whose records mostly are these very objects, or ``None``.

    The cache holds the last few networks (a window's two updates, its
    slices and the concurrency test's variants are families that share most
    records); the most recent one that shares three quarters of its rows is
    used, re-reading only the rows that differ.
    """
    for key in reversed(list(_ACT_CACHE)):
        cals, old_acts, old_ids, cached_numbers, cached_cols, cached_cals = _ACT_CACHE[key]
        if cals is not calendars or key[1] != default or len(old_acts) != len(acts) or old_ids != ids:
            continue
        if not _mostly_shared(acts, old_acts):
            continue
        changed = [i for i, (a, b) in enumerate(zip(acts, old_acts, strict=True)) if a is not b]
        if len(changed) * 4 >= len(acts) or not all((acts[i].calendar or default) in cached_numbers for i in changed):
            continue
        out = {k: v.copy() for k, v in cached_cols.items()}
        if changed:
            fresh = _read_rows([acts[i] for i in changed], cached_numbers, default)
            for k in _COLUMN_NAMES:
                out[k][changed] = fresh[k]
        out["calendars"] = cached_cals
        return out
    return None


_ACT_SEQ = [0]  # the cache's keys: (calendars' identity, default calendar, a running number)


def _activity_columns(acts: list, ids: list[str], calendars: Mapping[str, Calendar], default: str, sid: str) -> dict:
    """The activities' input columns, re-reading only the records that differ from a cached network."""
    out = _cached_columns(acts, ids, calendars, default)
    if out is not None:
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
    _ACT_SEQ[0] += 1
    _ACT_CACHE[(id(calendars), default, _ACT_SEQ[0])] = (calendars, acts, ids, numbers, cols, cal_list)
    out = dict(cols)
    out["calendars"] = cal_list
    return out


class Network:
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
            self.nlev, self.node_order, self.node_starts = hit[3]
        else:
            try:
                self.lp = np.array([pos[k.pred] for k in links], dtype=np.int64)
                self.lsu = np.array([pos[k.succ] for k in links], dtype=np.int64)
            except KeyError as exc:
                msg = f"snapshot {snapshot.id}: a link names an unknown activity {exc.args[0]!r}"
                raise ScheduleError(msg) from None
            self.ltyp = np.array([TYPE_CODE[k.type] for k in links], dtype=np.int64)
            self.lag = np.array([k.lag for k in links], dtype=np.int64)
            self.level = _levels(n, self.lp, self.lsu, ids, f"snapshot {snapshot.id}")
            if len(_LINK_CACHE) >= _LINK_CACHE_SIZE:
                _LINK_CACHE.pop(next(iter(_LINK_CACHE)))
            self.nlev = int(self.level.max()) + 1
            self.node_order, self.node_starts = group_by_key(self.level, self.nlev)
            for arr in (self.lp, self.lsu, self.ltyp, self.lag, self.level, self.node_order, self.node_starts):
                arr.flags.writeable = False
            _LINK_CACHE[key] = (links, ids, (self.lp, self.lsu, self.ltyp, self.lag, self.level),
                                (self.nlev, self.node_order, self.node_starts))
        self.m = len(links)
        self.start_type = (self.ltyp == 1) | (self.ltyp == 3)  # timed from the predecessor's start
        self.on_finish = (self.ltyp == 2) | (self.ltyp == 3)  # holds the successor's finish
        self.extent = int(durations.sum() + remaining.sum() + np.abs(self.lag).sum()) + 10


_OTHER_CACHES: list[dict] = []


def register_cache(cache: dict) -> None:
    """Let :func:`clear_caches` empty ``cache`` too (the other engine steps' caches)."""
    _OTHER_CACHES.append(cache)


def clear_caches() -> None:
    """Forget the compiled links and activity columns of earlier networks, and the other steps' caches."""
    _LINK_CACHE.clear()
    _ACT_CACHE.clear()
    for cache in _OTHER_CACHES:
        cache.clear()
