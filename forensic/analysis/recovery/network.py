"""The remaining network as the recovery program sees it: the engine's own quantities.

For each unfinished activity that can reach the completion: its status,
its remaining duration, how far it may be shortened (``crash_days``, never
below one working day of remaining work, and only when it has a
``crash_cost``), the links the engine's forward pass uses under the
project's progress logic (retained logic or override), and the range of
working-day boundaries its start and finish can take in any plan: lowest
by a forward pass with durations at their longest or shortest, highest by
a backward pass from the current completion. A link whose highest value
cannot pass what the other candidates already guarantee never binds and
is left out of the program (:mod:`.program`). The rules are those of
:mod:`forensic.core.engine`, so that the program is exact (Kelley and
Walker 1959; Kelley 1961; Wiest 1981 on the precedence links).
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass
from datetime import date

from forensic.core.calendars import WorkdayIndex, day_number, workday_index
from forensic.core.errors import NotFoundError
from forensic.core.model import Activity, Calendar, Project, Snapshot

__all__ = ["BIG", "Crashable", "Network", "NetworkNode", "pred_end", "time_range"]

BIG = 1 << 40  # "no bound" for a working-day boundary


@dataclass(frozen=True, slots=True)
class Crashable:
    """An activity the program may shorten: by up to ``limit`` days at ``cost`` a day, of ``remaining``."""

    act: Activity
    limit: int
    cost: float
    remaining: int


class NetworkNode:
    """One unfinished activity as the program sees it (the engine's quantities, module notes)."""

    __slots__ = ("act", "ix", "status", "dur", "fl", "lim", "cost", "lbe", "ube", "lbf", "ubf", "var", "crash")

    def __init__(self, act: Activity, ix: WorkdayIndex, status: int, dur: int, fl: bool):
        self.act, self.ix, self.status, self.dur, self.fl = act, ix, status, dur, fl
        self.lim = 0
        self.cost = 0.0  # the crash cost a day, set with a limit above 0
        self.crash: int | None = None  # position in the crashable list
        self.var = -1
        self.lbe = self.lbf = 0
        self.ube = self.ubf = BIG

    def kind(self, end: str) -> str:
        """How the day an end passes to a link depends on its boundary ``k``.

        ``c``: a constant (the actual start of work in progress); ``d``: the
        day of working day ``k`` (a start, a start milestone); ``a``: the day
        after working day ``k - 1`` (a finish, a finish milestone).
        """
        if end == "s" and self.status == 1:
            return "c"
        if self.dur == 0:
            return "d" if self.fl else "a"
        return "d" if end == "s" else "a"

    def day(self, end: str, k: int) -> int:
        kd = self.kind(end)
        if kd == "c":
            started = self.act.actual_start
            assert started is not None  # kind "c" is the start of work in progress (status 1)
            return day_number(started)
        days = self.ix.days
        return days[k] if kd == "d" else days[k - 1] + 1

    def last_boundary(self, end: str, day: int) -> int:
        """The largest boundary ``k`` of ``end`` whose day is on or before ``day``."""
        ix = self.ix
        if day < ix.lo:
            return -BIG
        if day + 1 >= ix.hi:
            return BIG
        if self.kind(end) == "d":
            return ix.first_at[day + 1 - ix.lo] - 1
        return ix.first_at[day - ix.lo]

    def bounds(self, end: str) -> tuple[int, int]:
        return (self.lbe, self.ube) if end == "s" or self.dur == 0 else (self.lbf, self.ubf)


def pred_end(link) -> str:
    """The end of its predecessor a link passes on: the start (SS, SF) or the finish (FS, FF)."""
    return "s" if link.type in ("SS", "SF") else "f"


def time_range(snapshot: Snapshot, current: date) -> tuple[int, int]:
    """The day numbers ``[lo, hi)`` the working-day indexes cover: every date of any plan, with room."""
    acts = list(snapshot.activities.values())
    dd = day_number(snapshot.data_date)
    days = [dd, day_number(current)] + [
        day_number(d)
        for a in acts
        for d in (a.actual_start, a.actual_finish, a.constraint_date)
        if d is not None
    ]
    pad = sum(a.duration + (a.remaining or 0) for a in acts)
    pad += sum(abs(link.lag) for link in snapshot.links) + 10
    margin = 7 * pad + 400
    return min(days) - margin, max(max(days) + margin, dd + 800)


class Network:
    """The unfinished activities of one snapshot that can reach the completion, in link order.

    ``nodes`` holds every unfinished activity, ``order`` those whose timing
    can reach the completion (``targets``) in a topological order, ``into``
    the links the engine's forward pass uses into each, ``idle`` the ids of
    the links that never bind; each node carries the range of its start and
    finish boundaries (``lbe .. ube``, ``lbf .. ubf``).
    """

    def __init__(self, snapshot: Snapshot, calendars: Mapping[str, Calendar], project: Project, current: date):
        self.snapshot = snapshot
        self.calendars = calendars
        self.project = project
        self.warnings: list[str] = []
        self.dd = day_number(snapshot.data_date)
        self.lo, self.hi = time_range(snapshot, current)
        self.default = workday_index(calendars[project.default_calendar], self.lo, self.hi)
        self.nodes: dict[str, NetworkNode] = {}
        self.done_s: dict[str, int] = {}  # the day finished work passes to an SS or SF link
        self.done_f: dict[str, int] = {}  # ... and to an FS or FF link
        self.status: dict[str, int] = {}  # 0 not started, 1 in progress, 2 finished
        done_finish_day = self._read_activities()

        comp = project.completion if project.completion in self.status else None
        self.completion_finished = comp is not None and self.status[comp] == 2
        targets = [comp] if comp is not None else list(self.nodes)
        self.targets = [t for t in targets if t in self.nodes]
        self.t_floor = -math.inf  # unnamed completion: finished work already sets a floor
        if comp is None and done_finish_day:
            self.t_floor = float(max(done_finish_day.values()) - self.dd)

        self.into = self._links_into()
        self.order, self.outs = self._relevant_order()
        self.idle = self._forward()
        self._backward(day_number(current))

    def index_of(self, a: Activity) -> WorkdayIndex:
        """The working-day index of an activity's calendar (the project's default when it names none)."""
        cid = a.calendar or self.project.default_calendar
        try:
            cal = self.calendars[cid]
        except KeyError:
            msg = f"snapshot {self.snapshot.id}, activity {a.id}: unknown calendar {cid!r}"
            raise NotFoundError(msg) from None
        return workday_index(cal, self.lo, self.hi)

    def _read_activities(self) -> dict[str, int]:
        """Status, durations and the days finished work passes on, as the engine computes them.

        Returns the finish day of each finished activity.
        """
        snapshot, nodes, status = self.snapshot, self.nodes, self.status
        done_finish_day: dict[str, int] = {}
        for a in snapshot.activities.values():
            zero = a.kind != "task" or a.duration == 0
            start_ms = a.kind == "opening-milestone"
            first = a.actual_start or a.actual_finish  # None when neither actual date is given
            last = a.actual_finish or a.actual_start
            # Done: an actual finish, or a milestone (zero) with an actual date.
            if first is not None and last is not None and (a.actual_finish is not None or zero):
                status[a.id] = 2
                s_day = day_number(first)
                f_day = day_number(last)
                self.done_s[a.id] = s_day if start_ms or not zero else f_day + 1
                self.done_f[a.id] = s_day if start_ms else f_day + 1
                done_finish_day[a.id] = f_day
                continue
            st = 1 if a.actual_start is not None else 0
            status[a.id] = st
            dur = 0 if (zero and st == 0) else a.remaining_duration
            node = nodes[a.id] = NetworkNode(a, self.index_of(a), st, dur, start_ms)
            if zero or not a.crash_days or a.crash_days <= 0:
                continue
            limit = min(a.crash_days, dur - 1)
            if st == 0:
                limit = min(limit, a.duration - 1)
            if a.crash_cost is None:
                self.warnings.append(
                    f"snapshot {snapshot.id}: activity {a.id} has crash_days but no crash_cost; "
                    "it cannot be priced and is not shortened"
                )
                continue
            if limit > 0:
                node.lim, node.cost = limit, float(a.crash_cost)
        return done_finish_day

    def _links_into(self) -> dict[str, list]:
        """The links the engine's forward pass uses (module notes of forensic.core.engine)."""
        logic = self.project.progress_logic
        status = self.status
        into: dict[str, list] = {aid: [] for aid in self.nodes}
        for link in self.snapshot.links:
            p, j = link.pred, link.succ
            if p not in status or j not in status:
                msg = f"snapshot {self.snapshot.id}: link {p} -> {j} names an unknown activity"
                raise NotFoundError(msg)
            if status[j] == 2 or (status[j] == 1 and (logic == "override" or link.type == "SS")):
                continue
            into[j].append(link)
        return into

    def moves(self, link) -> bool:
        """Whether a link passes an end that can move (of an unfinished predecessor, not a constant)."""
        return link.pred in self.nodes and self.nodes[link.pred].kind(pred_end(link)) != "c"

    def _relevant_order(self) -> tuple[list[str], dict[str, list]]:
        """The activities whose timing can reach the completion (through an end that can move).

        Returns them in a topological order (Kahn's algorithm, file order),
        and the links out of each.
        """
        into, moves = self.into, self.moves
        relevant: set[str] = set(self.targets)
        stack = list(self.targets)
        while stack:
            j = stack.pop()
            for link in into[j]:
                if moves(link) and link.pred not in relevant:
                    relevant.add(link.pred)
                    stack.append(link.pred)
        # File order, never the set's (string hashing varies between runs):
        # the order of the links out of each activity orders the program.
        ordered = [aid for aid in self.nodes if aid in relevant]
        ordered += sorted(relevant.difference(ordered))
        outs: dict[str, list] = {aid: [] for aid in ordered}
        indeg = dict.fromkeys(ordered, 0)
        for j in ordered:
            for link in into[j]:
                if moves(link):
                    outs[link.pred].append(link)
                    indeg[j] += 1
        order = [aid for aid in self.nodes if aid in relevant and indeg[aid] == 0]
        for aid in order:  # Kahn's algorithm, file order (the engine has refused loops already)
            for link in outs[aid]:
                indeg[link.succ] -= 1
                if indeg[link.succ] == 0:
                    order.append(link.succ)
        return order, outs

    def link_value(self, link, k_pred: int) -> int:
        """The successor's boundary a link asks for when its predecessor's end is at boundary ``k_pred``."""
        succ = self.nodes[link.succ]
        if link.pred in self.nodes:
            t = self.nodes[link.pred].day(pred_end(link), k_pred)
        else:
            t = self.done_s[link.pred] if link.type in ("SS", "SF") else self.done_f[link.pred]
        return succ.ix.first_at[t - self.lo] + link.lag

    def _constraint_candidates(self, nd: NetworkNode) -> tuple[int, int]:
        """The start and finish candidates of the data date and the early-date constraint."""
        a = nd.act
        fa = nd.ix.first_at
        start_c = fa[self.dd - self.lo]
        finish_c = -BIG
        if a.constraint is not None and a.constraint_date is not None:
            cday = day_number(a.constraint_date)
            s_late = (a.kind == "task" and a.duration != 0) or nd.fl  # the engine's instant kinds
            if a.constraint in ("start-from", "start-fixed") and nd.status == 0:
                start_c = max(start_c, fa[cday - self.lo] + (0 if s_late else 1))
            elif a.constraint in ("finish-from", "finish-fixed"):
                finish_c = fa[cday - self.lo] + (0 if (nd.dur == 0 and nd.fl) else 1)
        return start_c, finish_c

    def _forward(self) -> set[int]:
        """The range of boundaries any plan can give, forward; returns the ids of the links that never bind.

        The engine's early start is the largest of the start candidates A
        (data date, start constraint, SS/FS links) and the finish candidates
        V (finish constraint, FF/SF links) less the duration, so with the
        duration between D - limit and D: e in [max(A) , max(A, V - D +
        limit)] at the extremes of the predecessors' own ranges, and f =
        max(A + duration, V).
        """
        idle: set[int] = set()
        for aid in self.order:
            nd = self.nodes[aid]
            start_c, finish_c = self._constraint_candidates(nd)
            la = ua = start_c
            lv = uv = finish_c
            ranges = []
            for link in self.into[aid]:
                if link.pred in self.nodes and self.moves(link):
                    pn = self.nodes[link.pred]
                    end = pred_end(link)
                    lo_k, hi_k = (pn.lbe, pn.ube) if end == "s" or pn.dur == 0 else (pn.lbf, pn.ubf)
                    v_lo, v_hi = self.link_value(link, lo_k), self.link_value(link, hi_k)
                    ranges.append((link, v_lo, v_hi))
                else:
                    v_lo = v_hi = self.link_value(link, 0)
                if link.type in ("FF", "SF"):
                    lv, uv = max(lv, v_lo), max(uv, v_hi)
                else:
                    la, ua = max(la, v_lo), max(ua, v_hi)
            nd.lbe = max(la, lv - nd.dur)
            nd.lbf = max(la + nd.dur - nd.lim, lv)
            nd.ube = max(ua, uv - nd.dur + nd.lim)
            nd.ubf = max(ua + nd.dur, uv)
            self._mark_idle(aid, ranges, start_c, finish_c, idle)
        return idle

    def _mark_idle(self, aid: str, ranges: list, start_c: int, finish_c: int, idle: set[int]) -> None:
        """Add to ``idle`` the links into ``aid`` that never bind in any plan.

        A link whose highest value cannot pass what the other candidates
        already guarantee never binds and is left out of the program.
        """
        nd = self.nodes[aid]
        for k, (link, _v_lo, v_hi) in enumerate(ranges):
            on_finish = link.type in ("FF", "SF")
            others_a, others_v = start_c, finish_c
            for k2, (l2, w_lo, _) in enumerate(ranges):
                if k2 != k:
                    if l2.type in ("FF", "SF"):
                        others_v = max(others_v, w_lo)
                    else:
                        others_a = max(others_a, w_lo)
            for l2 in self.into[aid]:
                if not (l2.pred in self.nodes and self.moves(l2)):
                    if l2.type in ("FF", "SF"):
                        others_v = max(others_v, self.link_value(l2, 0))
                    else:
                        others_a = max(others_a, self.link_value(l2, 0))
            if on_finish:
                floor = max(others_a + nd.dur - nd.lim, others_v)
            else:
                floor = max(others_a, others_v - nd.dur)
            if v_hi <= floor:
                idle.add(id(link))

    def _backward(self, cur: int) -> None:
        """... and backward: no plan meeting the current completion (day ``cur``) has a boundary past these."""
        nodes, lo = self.nodes, self.lo
        for aid in self.targets:
            nd = nodes[aid]
            nd.ubf = min(nd.ubf, nd.last_boundary("f", cur + (0 if nd.dur == 0 and nd.fl else 1)))
        for aid in reversed(self.order):
            nd = nodes[aid]
            for link in self.outs[aid]:
                sn = nodes[link.succ]
                bound = (sn.ubf if link.type in ("FF", "SF") else sn.ube) - link.lag
                if bound >= sn.ix.size:
                    continue
                last_day = sn.ix.days[bound] if bound >= 0 else lo - 1
                k = nd.last_boundary(pred_end(link), last_day)
                if pred_end(link) == "s" or nd.dur == 0:
                    nd.ube = min(nd.ube, k)
                else:
                    nd.ubf = min(nd.ubf, k)
            nd.ube = min(nd.ube, nd.ubf - nd.dur + nd.lim)
            nd.ubf = min(nd.ubf, nd.ube + nd.dur)
            if nd.ube >= BIG // 2 or nd.ubf >= BIG // 2:  # cannot happen for a relevant activity
                nd.ube = nd.ubf = nd.ix.size - 1
