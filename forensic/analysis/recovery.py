"""Acceleration and recovery: the time-cost trade-off on the remaining work.

Which remaining activities should be shortened, and by how many whole
working days, so that the completion is met by a target date at the least
cost (or by the fewest activities shortened, with cost as the tie-breaker)?
This is the project time-cost trade-off of Kelley and Walker (1959), Kelley
(1961) and Fulkerson (1961), which they solved as a linear program; with
whole days of crashing and several calendars it becomes a mixed-integer
program, solved here exactly by ``scipy.optimize.milp`` (HiGHS branch and
bound with a zero optimality gap) within a time limit.

The model
---------
Time in the program is the engine's own (:mod:`forensic.core.engine`). Each
unfinished activity that can reach the completion has a start variable
``e``, a boundary of its own calendar's working days (the start of its
remaining work), and each activity that may be shortened an integer ``x`` in
``0 .. limit``; its finish boundary is ``e + D - x``. A link passes a
calendar day, as the engine does: the predecessor's start date (SS, SF) or
the day after its finish date (FS, FF); the successor takes the first of its
own working days on or after that day and adds the lag in its own working
days. Each link is then one inequality, FS ``e_j >= map(f_i) + lag``, SS
``e_j >= map(e_i) + lag``, FF ``f_j >= map(f_i) + lag``, SF
``f_j >= map(e_i) + lag``, where ``map`` is the identity when both
activities share a calendar and otherwise a non-decreasing step function of
the predecessor's boundary (weekends and holidays the two calendars do not
share). A step function is written exactly over the range its boundary can
take (lowest by a forward pass with durations at their longest or shortest,
highest by a backward pass from the current completion): one binary
``u_a`` per step that is not a plain "+1", with ``u_a = 1`` exactly when the
boundary is at or past ``a``. The completion bound ``T`` is a calendar day,
reached the same way from the completion's finish (the project's completion
milestone, or every activity when none is named). The engine's progress
rules are kept (a finished activity is a constant; the remaining work of an
activity in progress ignores its SS links under retained logic and every
link under override), no remaining work before the data date, and the
early-date constraints (start/finish on or after, start/finish on).

Because every rule is the engine's and the engine's early dates are the least
solution of these inequalities, a plan is feasible in the program exactly
when the engine's completion of it meets the target, on one calendar or
many, so the optimum is the cheapest plan whose engine completion meets the
target (Kelley and Walker 1959; Kelley 1961 for the least-cost curve). Every
plan is still rescheduled by the engine, and the completion reported is the
engine's; ``solves`` stays 1 (a tightening loop remains only as a safety net).

Only remaining work is shortened: the duration of work not started, the
remaining duration of work in progress. Finished work and milestones are
never shortened, an activity never by more than its ``crash_days``, and
never below one working day of remaining work. An activity with
``crash_days`` but no ``crash_cost`` cannot be priced and is not shortened
(a warning says so).

Days recovered, the curve's steps and ``days`` in the ``working-days`` delay
unit are working days of the completion activity's calendar (named in the
result), since that is the calendar its date moves on.

Time limit
----------
All the solves of one analysis share ``time_limit`` seconds. When it is
reached, a solve returns the best plan it has found (HiGHS' incumbent), or,
with none, the cheapest plan already confirmed that meets the target (at
worst every shortening); such a plan meets its target in the engine but is
marked ``proven`` false ("not proven least-cost"). The curve is then made
non-decreasing by carrying a cheaper plan for more days back to fewer.
Anything the solver writes is kept off standard output (discarded).

Note that in a precedence network shortening an activity can delay the
completion (an FF or SF link on a shortened successor pushes its start
later, and its SS successors with it); the program sees this, so the most
that can be recovered is found by minimising the completion, not by
shortening everything.

References
----------
Kelley, J. E. (1961). Critical-path planning and scheduling: mathematical
basis. *Operations Research* 9(3), 296-320.
Fulkerson, D. R. (1961). A network flow computation for project cost
curves. *Management Science* 7(2), 167-178.
Kelley, J. E. and Walker, M. R. (1959). Critical-path planning and
scheduling. *Proceedings of the Eastern Joint Computer Conference*, 160-173.
Wiest, J. D. (1981). Precedence diagramming method: some unusual
characteristics and their implications for project managers. *Journal of
Operations Management* 1(3), 121-130 (from memory).
"""

from __future__ import annotations

import contextlib
import math
import os
import sys
import time
from collections.abc import Mapping
from dataclasses import dataclass, replace
from datetime import date, timedelta
from typing import Any

import numpy as np

from forensic.core.calendars import WorkdayIndex, day_number, from_day_number, workday_index
from forensic.core.engine import ScheduleResult, schedule
from forensic.core.errors import NotFoundError, RecoveryError
from forensic.core.model import Activity, Calendar, Casefile, Project, Snapshot, frozen_mapping
from forensic.core.tables import Table

__all__ = [
    "DEFAULT_TIME_LIMIT",
    "MAX_SOLVES",
    "MAX_TIME_LIMIT",
    "OBJECTIVES",
    "CurvePoint",
    "RecoveryPlan",
    "RecoveryResult",
    "Shortening",
    "apply_plan",
    "recover",
    "recovery_curve_table",
    "recovery_json",
    "recovery_plan_table",
]

OBJECTIVES = ("cost", "count")
MAX_SOLVES = 12  # safety net: program solves per target before giving up on the engine's confirmation
DEFAULT_TIME_LIMIT = 60.0  # seconds for every solve of one analysis together (recover --time-limit)
MAX_TIME_LIMIT = 86400.0  # a day: a larger limit is refused as a mistake


@dataclass(frozen=True, slots=True)
class Shortening:
    """One activity shortened by a plan: by ``days`` working days of its calendar, at ``cost``."""

    id: str
    name: str
    status: str  # not-started | in-progress
    days: int
    limit: int  # the most it could be shortened (crash_days, less one day of remaining work)
    cost_per_day: float
    cost: float
    remaining_before: int
    remaining_after: int


@dataclass(frozen=True, slots=True)
class RecoveryPlan:
    """A plan to meet ``target``: the shortenings, their cost, and the engine's new completion.

    ``working_days_recovered`` is in working days of the completion
    activity's calendar (those from the new completion, included, to the
    current one, excluded) and ``calendar_days_recovered`` in calendar days.
    ``solves`` counts the programs solved until the engine confirmed the
    target. ``proven`` is false when the time limit cut the search: the plan
    meets the target but is not proven least-cost.
    """

    target: date
    completion: date
    working_days_recovered: int
    calendar_days_recovered: int
    cost: float
    shortenings: tuple[Shortening, ...]
    solves: int
    proven: bool = True

    @property
    def activities(self) -> tuple[str, ...]:
        return tuple(s.id for s in self.shortenings)


@dataclass(frozen=True, slots=True)
class CurvePoint:
    """One point of the time-cost curve: the least cost to recover ``working_days`` days (completion's calendar)."""

    working_days: int
    plan: RecoveryPlan


@dataclass(frozen=True, slots=True)
class RecoveryResult:
    """The recovery analysis of one snapshot: the plan for the target, and the time-cost curve.

    ``earliest_completion`` is the engine's completion of the plan that
    finishes soonest; ``max_working_days`` the working days it recovers, on
    ``working_days_calendar`` (the completion activity's calendar). ``curve``
    holds one point per working day from 1 to ``max_working_days`` (empty
    when the curve was not asked for). ``proven`` is false when the time limit
    (``time_limit`` seconds) left any plan not proven least-cost.
    """

    snapshot_id: str
    data_date: date
    objective: str
    completion_id: str
    current_completion: date
    earliest_completion: date
    max_working_days: int
    plan: RecoveryPlan
    curve: tuple[CurvePoint, ...]
    warnings: tuple[str, ...] = ()
    working_days_calendar: str = ""
    time_limit: float = DEFAULT_TIME_LIMIT
    proven: bool = True


# --------------------------------------------------------------------------- the program


@dataclass(frozen=True, slots=True)
class _Crashable:
    act: Activity
    limit: int
    cost: float
    remaining: int


_BIG = 1 << 40  # "no bound" for a working-day boundary


class _Node:
    """One unfinished activity as the program sees it (the engine's quantities, module notes)."""

    __slots__ = ("act", "ix", "status", "dur", "fl", "lim", "lbe", "ube", "lbf", "ubf", "var", "crash")

    def __init__(self, act: Activity, ix: WorkdayIndex, status: int, dur: int, fl: bool):
        self.act, self.ix, self.status, self.dur, self.fl = act, ix, status, dur, fl
        self.lim = 0
        self.crash: int | None = None  # position in the crashable list
        self.var = -1
        self.lbe = self.lbf = 0
        self.ube = self.ubf = _BIG

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
            return day_number(self.act.actual_start)
        days = self.ix.days
        return days[k] if kd == "d" else days[k - 1] + 1

    def last_boundary(self, end: str, day: int) -> int:
        """The largest boundary ``k`` of ``end`` whose day is on or before ``day``."""
        ix = self.ix
        if day < ix.lo:
            return -_BIG
        if day + 1 >= ix.hi:
            return _BIG
        if self.kind(end) == "d":
            return ix.first_at[day + 1 - ix.lo] - 1
        return ix.first_at[day - ix.lo]

    def bounds(self, end: str) -> tuple[int, int]:
        return (self.lbe, self.ube) if end == "s" or self.dur == 0 else (self.lbf, self.ubf)


class _Program:
    """The mixed-integer program of one snapshot, built once and solved for many targets.

    Time is the engine's: each activity's start and finish are boundaries of
    its own calendar's working days, and a link passes a calendar day from
    the predecessor to the successor, who takes the first of its working
    days on or after that day and adds the lag (:mod:`forensic.core.engine`).
    Between activities on one calendar this is the identity plus the lag;
    between two calendars it is a non-decreasing step function of the
    predecessor's boundary, written exactly over the range the boundary can
    take with one binary per step that is not a plain "+1" (a weekend, a
    holiday: ``u_a = 1`` when the boundary is at or past ``a``). The
    completion bound ``T`` is a calendar day, reached the same way from the
    completion's own calendar. So a plan is feasible in the program exactly
    when the engine's completion of it meets the target.
    """

    def __init__(self, snapshot: Snapshot, calendars: Mapping[str, Calendar], project: Project, current: date):
        self.snapshot = snapshot
        self.project = project
        self.warnings: list[str] = []
        acts = list(snapshot.activities.values())
        self.dd = dd = day_number(snapshot.data_date)
        days = [dd, day_number(current)] + [
            day_number(d)
            for a in acts
            for d in (a.actual_start, a.actual_finish, a.constraint_date)
            if d is not None
        ]
        pad = sum(a.duration + (a.remaining or 0) for a in acts)
        pad += sum(abs(link.lag) for link in snapshot.links) + 10
        margin = 7 * pad + 400
        self.lo, self.hi = lo, hi = min(days) - margin, max(max(days) + margin, dd + 800)

        def index_of(a: Activity) -> WorkdayIndex:
            cid = a.calendar or project.default_calendar
            try:
                cal = calendars[cid]
            except KeyError:
                msg = f"snapshot {snapshot.id}, activity {a.id}: unknown calendar {cid!r}"
                raise NotFoundError(msg) from None
            return workday_index(cal, lo, hi)

        self.index_of = index_of
        self.default = workday_index(calendars[project.default_calendar], lo, hi)

        # Status, durations and the days finished work passes on, as the engine computes them.
        nodes: dict[str, _Node] = {}
        done_s: dict[str, int] = {}
        done_f: dict[str, int] = {}
        done_finish_day: dict[str, int] = {}
        status: dict[str, int] = {}
        for a in acts:
            zero = a.kind != "task" or a.duration == 0
            start_ms = a.kind == "opening-milestone"
            if a.actual_finish is not None or (zero and a.actual_start is not None):
                status[a.id] = 2
                s_day = day_number(a.actual_start or a.actual_finish)
                f_day = day_number(a.actual_finish or a.actual_start)
                done_s[a.id] = s_day if start_ms or not zero else f_day + 1
                done_f[a.id] = s_day if start_ms else f_day + 1
                done_finish_day[a.id] = f_day
                continue
            st = 1 if a.actual_start is not None else 0
            status[a.id] = st
            dur = 0 if (zero and st == 0) else a.remaining_duration
            node = nodes[a.id] = _Node(a, index_of(a), st, dur, start_ms)
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
                node.lim = limit

        comp = project.completion if project.completion in status else None
        self.completion_finished = comp is not None and status[comp] == 2
        targets = [comp] if comp is not None else list(nodes)
        targets = [t for t in targets if t in nodes]
        self.t_floor = -math.inf  # unnamed completion: finished work already sets a floor
        if comp is None and done_finish_day:
            self.t_floor = float(max(done_finish_day.values()) - dd)

        # Links the engine's forward pass uses (module notes of forensic.core.engine).
        logic = project.progress_logic
        into: dict[str, list] = {aid: [] for aid in nodes}
        for link in snapshot.links:
            p, j = link.pred, link.succ
            if p not in status or j not in status:
                msg = f"snapshot {snapshot.id}: link {p} -> {j} names an unknown activity"
                raise NotFoundError(msg)
            if status[j] == 2 or (status[j] == 1 and (logic == "override" or link.type == "SS")):
                continue
            into[j].append(link)

        # The activities whose timing can reach the completion (through an end that can move).
        def pred_end(link) -> str:
            return "s" if link.type in ("SS", "SF") else "f"

        def moves(link) -> bool:
            return link.pred in nodes and nodes[link.pred].kind(pred_end(link)) != "c"

        relevant: set[str] = set(targets)
        stack = list(targets)
        while stack:
            j = stack.pop()
            for link in into[j]:
                if moves(link) and link.pred not in relevant:
                    relevant.add(link.pred)
                    stack.append(link.pred)
        outs: dict[str, list] = {aid: [] for aid in relevant}
        indeg = dict.fromkeys(relevant, 0)
        for j in relevant:
            for link in into[j]:
                if moves(link):
                    outs[link.pred].append(link)
                    indeg[j] += 1
        order = [aid for aid in nodes if aid in relevant and indeg[aid] == 0]
        for aid in order:  # Kahn's algorithm, file order (the engine has refused loops already)
            for link in outs[aid]:
                indeg[link.succ] -= 1
                if indeg[link.succ] == 0:
                    order.append(link.succ)

        # The range of boundaries any plan can give, forward: the engine's early start is the
        # largest of the start candidates A (data date, start constraint, SS/FS links) and the
        # finish candidates V (finish constraint, FF/SF links) less the duration, so with the
        # duration between D - limit and D: e in [max(A) , max(A, V - D + limit)] at the extremes
        # of the predecessors' own ranges, and f = max(A + duration, V).
        def link_value(link, k_pred: int) -> int:
            succ = nodes[link.succ]
            if link.pred in nodes:
                t = nodes[link.pred].day(pred_end(link), k_pred)
            else:
                t = done_s[link.pred] if link.type in ("SS", "SF") else done_f[link.pred]
            return succ.ix.first_at[t - lo] + link.lag

        idle: set[int] = set()  # links that never bind
        for aid in order:
            nd = nodes[aid]
            a = nd.act
            fa = nd.ix.first_at
            start_c = fa[dd - lo]
            finish_c = -_BIG
            if a.constraint is not None and a.constraint_date is not None:
                cday = day_number(a.constraint_date)
                s_late = (a.kind == "task" and a.duration != 0) or nd.fl  # the engine's instant kinds
                if a.constraint in ("start-from", "start-fixed") and nd.status == 0:
                    start_c = max(start_c, fa[cday - lo] + (0 if s_late else 1))
                elif a.constraint in ("finish-from", "finish-fixed"):
                    finish_c = fa[cday - lo] + (0 if (nd.dur == 0 and nd.fl) else 1)
            la = ua = start_c
            lv = uv = finish_c
            ranges = []
            for link in into[aid]:
                if link.pred in nodes and moves(link):
                    pn = nodes[link.pred]
                    end = pred_end(link)
                    lo_k, hi_k = (pn.lbe, pn.ube) if end == "s" or pn.dur == 0 else (pn.lbf, pn.ubf)
                    v_lo, v_hi = link_value(link, lo_k), link_value(link, hi_k)
                    ranges.append((link, v_lo, v_hi))
                else:
                    v_lo = v_hi = link_value(link, 0)
                if link.type in ("FF", "SF"):
                    lv, uv = max(lv, v_lo), max(uv, v_hi)
                else:
                    la, ua = max(la, v_lo), max(ua, v_hi)
            nd.lbe = max(la, lv - nd.dur)
            nd.lbf = max(la + nd.dur - nd.lim, lv)
            nd.ube = max(ua, uv - nd.dur + nd.lim)
            nd.ubf = max(ua + nd.dur, uv)
            # A link whose highest value cannot pass what the other candidates already
            # guarantee never binds (in any plan) and is left out of the program.
            for k, (link, _v_lo, v_hi) in enumerate(ranges):
                on_finish = link.type in ("FF", "SF")
                others_a, others_v = start_c, finish_c
                for k2, (l2, w_lo, _) in enumerate(ranges):
                    if k2 != k:
                        if l2.type in ("FF", "SF"):
                            others_v = max(others_v, w_lo)
                        else:
                            others_a = max(others_a, w_lo)
                for l2 in into[aid]:
                    if not (l2.pred in nodes and moves(l2)):
                        if l2.type in ("FF", "SF"):
                            others_v = max(others_v, link_value(l2, 0))
                        else:
                            others_a = max(others_a, link_value(l2, 0))
                if on_finish:
                    floor = max(others_a + nd.dur - nd.lim, others_v)
                else:
                    floor = max(others_a, others_v - nd.dur)
                if v_hi <= floor:
                    idle.add(id(link))

        # ... and backward: no plan meeting the current completion has a boundary past these.
        cur = day_number(current)
        for aid in targets:
            nd = nodes[aid]
            nd.ubf = min(nd.ubf, nd.last_boundary("f", cur + (0 if nd.dur == 0 and nd.fl else 1)))
        for aid in reversed(order):
            nd = nodes[aid]
            for link in outs[aid]:
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
            if nd.ube >= _BIG // 2 or nd.ubf >= _BIG // 2:  # cannot happen for a relevant activity
                nd.ube = nd.ubf = nd.ix.size - 1

        # Variables: e per relevant activity, then x and y per crashable one, u per step, and T.
        self.nodes = nodes
        self.crashable: list[_Crashable] = []
        lb: list[float] = []
        ub: list[float] = []
        integ: list[int] = []

        def new_var(lo_: float, hi_: float, integer: int) -> int:
            lb.append(lo_)
            ub.append(hi_)
            integ.append(integer)
            return len(lb) - 1

        self.infeasible = False
        for aid in order:
            nd = nodes[aid]
            lo_e = max(nd.lbe, nd.lbf - nd.dur)
            hi_e = min(nd.ube, nd.ubf - nd.dur + nd.lim)
            if lo_e > hi_e:
                self.infeasible = True
            nd.var = new_var(lo_e, hi_e, 0)
        x_vars: list[int] = []
        for aid in order:
            nd = nodes[aid]
            if nd.lim > 0:
                nd.crash = len(self.crashable)
                self.crashable.append(_Crashable(nd.act, nd.lim, float(nd.act.crash_cost), nd.dur))
                x_vars.append(new_var(0.0, float(nd.lim), 1))
        y_vars = [new_var(0.0, 1.0, 1) for _ in self.crashable]
        self.x_vars, self.y_vars = x_vars, y_vars

        rows: list[tuple[dict[int, float], float, float]] = []  # (coefs, lower, upper)

        def boundary(nd: _Node, end: str) -> tuple[dict[int, float], float]:
            """The boundary of an end as a linear expression (coefs, constant)."""
            if end == "s" or nd.dur == 0:
                return {nd.var: 1.0}, 0.0
            coefs = {nd.var: 1.0}
            if nd.crash is not None:
                coefs[x_vars[nd.crash]] = -1.0
            return coefs, float(nd.dur)

        steps: dict[tuple[str, str, int], int] = {}

        def mapped(nd: _Node, end: str, to) -> tuple[dict[int, float], float]:
            """The boundary of ``to``'s calendar (or, for ``None``, the day less the data date) an end passes."""
            coefs, const = boundary(nd, end)
            if to is nd.ix:
                return coefs, const
            L, U = nd.bounds(end)

            def phi(k: int) -> int:
                t = nd.day(end, k)
                return t - dd if to is None else to.first_at[t - lo]

            out = dict(coefs)
            base = phi(L)
            k0 = float(L)
            const_out = const - k0 + base
            prev = base
            for a_ in range(L + 1, U + 1):
                cur_v = phi(a_)
                jump = cur_v - prev - 1
                prev = cur_v
                if jump == 0:
                    continue
                key = (nd.act.id, end, a_)
                u = steps.get(key)
                if u is None:
                    u = steps[key] = new_var(0.0, 1.0, 1)
                    integ[nd.var] = 1
                    # u = 1 exactly when the boundary is at or past a_ (over L..U).
                    r1 = dict(coefs)
                    r1[u] = r1.get(u, 0.0) - (a_ - L)
                    rows.append((r1, L - const, math.inf))
                    r2 = dict(coefs)
                    r2[u] = r2.get(u, 0.0) - (U - a_ + 1)
                    rows.append((r2, -math.inf, a_ - 1 - const))
                out[u] = out.get(u, 0.0) + jump
            return out, const_out

        def add_ge(left: tuple[dict[int, float], float], right: tuple[dict[int, float], float], lag: float) -> None:
            """left >= right + lag."""
            (cl, kl), (cr, kr) = left, right
            coefs = dict(cl)
            for v, c in cr.items():
                coefs[v] = coefs.get(v, 0.0) - c
            coefs = {v: c for v, c in coefs.items() if c != 0.0}
            if coefs:
                rows.append((coefs, lag + kr - kl, math.inf))

        for aid in order:
            nd = nodes[aid]
            if nd.crash is not None:  # the finish stays within its range
                coefs, const = boundary(nd, "f")
                rows.append((coefs, nd.lbf - const, nd.ubf - const))
            for link in into[aid]:
                if not moves(link) or id(link) in idle:
                    continue  # a constant (already in the lower bounds) or a link that never binds
                succ_end = "f" if link.type in ("FF", "SF") else "s"
                add_ge(boundary(nd, succ_end), mapped(nodes[link.pred], pred_end(link), nd.ix), float(link.lag))

        self.t_var = new_var(self.t_floor, math.inf, 0)
        for aid in targets:
            nd = nodes[aid]
            shift = 0.0 if (nd.dur == 0 and nd.fl) else 1.0  # the finish date is the day before the boundary's
            add_ge(({self.t_var: 1.0}, 0.0), mapped(nd, "f", None), -shift)
        self.targets = targets
        # A valid tightening: at or past a later step of an end means at or past every earlier one.
        prev_key, prev_u = None, None
        for (aid, end, _a), u in sorted(steps.items()):
            if prev_key == (aid, end):
                rows.append(({prev_u: 1.0, u: -1.0}, 0.0, math.inf))
            prev_key, prev_u = (aid, end), u

        for c, xv, yv in zip(self.crashable, x_vars, y_vars, strict=True):  # x <= limit * y
            rows.append(({xv: 1.0, yv: -float(c.limit)}, -math.inf, 0.0))

        self.n_vars = len(lb)
        self.q = len(self.crashable)
        self.n_steps = len(steps)
        data, ri, ci = [], [], []
        lower, upper = [], []
        for k, (coefs, lb_, ub_) in enumerate(rows):
            for v, c in coefs.items():
                ri.append(k)
                ci.append(v)
                data.append(c)
            lower.append(lb_)
            upper.append(ub_)
        from scipy.sparse import coo_array  # imported here: scipy costs half a second at start-up

        self.A = coo_array((data, (ri, ci)), shape=(len(rows), self.n_vars)).tocsr()
        self.row_lb = np.array(lower)
        self.row_ub = np.array(upper)
        self.var_lb = np.array(lb)
        self.var_ub = np.array(ub)
        self.integrality = np.array(integ)
        self.costs = np.array([c.cost for c in self.crashable])

    def target_time(self, target: date) -> float:
        """The program's bound on ``T`` for a completion dated on or before ``target``."""
        return float(day_number(target) - self.dd)

    def _solve(self, c: np.ndarray, extra: list[tuple[np.ndarray, float]], t_ub: float,
               clock: _Clock) -> tuple[np.ndarray | None, bool]:
        """One solve: (the solution or ``None``, proven optimal)."""
        if self.infeasible:
            return None, True
        left = clock.left()
        if left <= 0:
            return None, False
        var_ub = self.var_ub.copy()
        var_ub[self.t_var] = t_ub
        if t_ub < self.var_lb[self.t_var]:
            return None, True
        from scipy.optimize import Bounds, LinearConstraint, milp

        constraints = [LinearConstraint(self.A, self.row_lb, self.row_ub)]
        for row, ub in extra:
            constraints.append(LinearConstraint(row.reshape(1, -1), -math.inf, ub))
        with _quiet_stdout():
            res = milp(
                c,
                constraints=constraints,
                integrality=self.integrality,
                bounds=Bounds(self.var_lb, var_ub),
                options={"mip_rel_gap": 0.0, "presolve": True, "time_limit": max(left, 0.01), "disp": False},
            )
        if res.status == 0 and res.x is not None:
            return res.x, True
        if res.status == 1:  # the time limit: the best plan found so far, if any
            clock.reached = True
            return res.x, False
        return None, True

    def solve(self, t_ub: float, objective: str, clock: _Clock,
              cost_floor: float | None = None) -> tuple[list[int] | None, bool]:
        """The shortenings (days per crashable activity) meeting ``T <= t_ub``, or ``None`` if none.

        Objectives are solved lexicographically: ``cost`` = least cost; ``count`` =
        fewest activities, then least cost; last, when some day costs nothing, the
        fewest days, so that no activity is shortened for nothing. The flag says
        whether every stage was solved to optimality (no time limit reached).
        """
        n, q = self.n_vars, self.q
        xs_idx = np.array(self.x_vars, dtype=np.int64)
        ys_idx = np.array(self.y_vars, dtype=np.int64)
        cost_vec = np.zeros(n)
        count_vec = np.zeros(n)
        days_vec = np.zeros(n)
        if q:
            cost_vec[xs_idx] = self.costs
            count_vec[ys_idx] = 1.0
            days_vec[xs_idx] = 1.0
        stages = [count_vec, cost_vec] if objective == "count" else [cost_vec]
        if q and (self.costs <= 0).any():
            stages.append(days_vec)
        if not q:
            stages = [np.zeros(n)]
        extra: list[tuple[np.ndarray, float]] = []
        if cost_floor is not None and objective == "cost" and q:
            # A proven least cost for a looser target bounds this one from below (the plans
            # meeting this target are among those meeting the looser one): a valid cut that
            # lets the solver stop as soon as it finds a plan at that cost.
            extra.append((-cost_vec, -(cost_floor - 1e-7 * max(1.0, abs(cost_floor)))))
        x = None
        proven = True
        for k, vec in enumerate(stages):
            got, ok = self._solve(vec, extra, t_ub, clock)
            if got is None:
                if x is not None:  # a later stage ran out of time: keep the earlier stage's plan
                    return [round(v) for v in x[xs_idx]] if q else [], False
                return None, ok
            x = got
            proven = proven and ok
            if not ok:
                break
            best = float(vec @ x)
            if k < len(stages) - 1:
                extra.append((vec, best + 1e-7 * max(1.0, abs(best)) + (0.5 if vec is count_vec else 0.0)))
        assert x is not None
        return ([round(v) for v in x[xs_idx]] if q else []), proven

    def earliest(self, t_ub: float, clock: _Clock) -> tuple[list[int] | None, bool]:
        """The shortenings that make the completion earliest (by ``t_ub`` at the latest), at least cost."""
        c = np.zeros(self.n_vars)
        c[self.t_var] = 1.0
        x, ok = self._solve(c, [], t_ub, clock)
        if x is None:
            return None, ok
        xs, ok2 = self.solve(math.ceil(x[self.t_var] - 1e-6), "cost", clock)
        if xs is None:  # no time left for the cost stage: the plan of the first stage
            return [round(v) for v in x[np.array(self.x_vars, dtype=np.int64)]] if self.q else [], False
        return xs, ok and ok2


class _Clock:
    """The time budget of one recovery analysis (``time_limit`` seconds for every solve together)."""

    def __init__(self, seconds: float):
        self.deadline = time.monotonic() + seconds
        self.reached = False

    def left(self) -> float:
        return self.deadline - time.monotonic()


@contextlib.contextmanager
def _quiet_stdout():
    """Keep anything the solver writes to file descriptor 1 off standard output (HiGHS prints
    debugging lines such as ``HighsMipSolverData::transformNewIntegerFeasibleSolution`` when a
    time limit cuts a search); they are discarded."""
    try:
        sys.stdout.flush()
        saved = os.dup(1)
        sink = os.open(os.devnull, os.O_WRONLY)
    except (OSError, ValueError, AttributeError):
        yield
        return
    try:
        os.dup2(sink, 1)
        yield
    finally:
        try:
            sys.stdout.flush()
        except (OSError, ValueError):
            pass
        os.dup2(saved, 1)
        os.close(saved)
        os.close(sink)


# --------------------------------------------------------------------------- plans


def apply_plan(snapshot: Snapshot, shortenings: Mapping[str, int]) -> Snapshot:
    """The snapshot with each named activity's remaining work shortened by the given days.

    Work not started has its duration (and remaining duration, when given)
    reduced; work in progress its remaining duration.
    """
    acts = dict(snapshot.activities)
    for aid, x in shortenings.items():
        if x <= 0:
            continue
        a = acts[aid]
        if a.actual_start is not None:
            acts[aid] = replace(a, remaining=a.remaining_duration - x)
        else:
            rem = None if a.remaining is None else a.remaining - x
            acts[aid] = replace(a, duration=a.duration - x, remaining=rem)
    return replace(snapshot, activities=frozen_mapping(acts))


class _Planner:
    def __init__(self, snapshot: Snapshot, calendars: Mapping[str, Calendar], project: Project, time_limit: float):
        self.snapshot = snapshot
        self.calendars = calendars
        self.project = project
        self.current = schedule(snapshot, calendars, project)  # raises first on a bad network
        self.program = _Program(snapshot, calendars, project, self.current.completion)
        comp_act = snapshot.activities[self.current.completion_id]
        self.comp_index = self.program.index_of(comp_act)
        self.comp_calendar = comp_act.calendar or project.default_calendar
        self.clock = _Clock(time_limit)
        self.found: list[RecoveryPlan] = []  # every plan confirmed so far (fallbacks at the time limit)

    def workdays_before(self, earlier: date, later: date) -> int:
        """Working days of the completion's calendar from ``earlier`` (included) to ``later`` (excluded).

        ``later`` is the current completion, a working day of that calendar,
        so this is the ``k`` of the last target ``back(k)`` that ``earlier`` meets.
        """
        lo = self.program.lo
        f = self.comp_index.first_at
        return f[day_number(later) - lo] - f[day_number(earlier) - lo]

    def back(self, days: int) -> date:
        """The working day (completion's calendar) ``days`` working days before the current completion."""
        lo = self.program.lo
        k = self.comp_index.first_at[day_number(self.current.completion) - lo] - days
        k = max(k, 0)  # far before the data date: no plan can meet it, and the caller says so
        return from_day_number(self.comp_index.days[k])

    def confirm(self, xs: list[int]) -> ScheduleResult:
        plan = {c.act.id: x for c, x in zip(self.program.crashable, xs, strict=True) if x > 0}
        return schedule(apply_plan(self.snapshot, plan), self.calendars, self.project)

    def make_plan(self, target: date, xs: list[int], result: ScheduleResult, solves: int,
                  proven: bool = True) -> RecoveryPlan:
        items = []
        for c, x in zip(self.program.crashable, xs, strict=True):
            if x > 0:
                items.append(
                    Shortening(
                        c.act.id, c.act.name, c.act.status, x, c.limit, c.cost, x * c.cost,
                        c.remaining, c.remaining - x,
                    )
                )
        plan = RecoveryPlan(
            target=target,
            completion=result.completion,
            working_days_recovered=self.workdays_before(result.completion, self.current.completion),
            calendar_days_recovered=(self.current.completion - result.completion).days,
            cost=float(sum(s.cost for s in items)),
            shortenings=tuple(items),
            solves=solves,
            proven=proven,
        )
        self.found.append(plan)
        return plan

    def nothing(self, target: date) -> RecoveryPlan:
        return self.make_plan(target, [0] * self.program.q, self.current, 0)

    def fallback(self, target: date) -> RecoveryPlan | None:
        """The cheapest plan already confirmed that meets ``target`` (marked not proven), or ``None``."""
        fits = [p for p in self.found if p.completion <= target]
        if not fits:
            xs = [c.limit for c in self.program.crashable]  # every shortening: a last resort
            result = self.confirm(xs)
            if result.completion > target:
                return None
            fits = [self.make_plan(target, xs, result, 0, proven=False)]
        best = min(fits, key=lambda p: (p.cost, sum(s.days for s in p.shortenings)))
        return replace(best, target=target, proven=False)

    def plan_for(self, target: date, objective: str,
                 cost_floor: float | None = None) -> tuple[RecoveryPlan | None, bool]:
        """The least-cost plan whose engine completion meets ``target``.

        Returns ``(plan, settled)``: ``plan`` is ``None`` when no plan meets
        the target; ``settled`` is false when the time limit was reached
        before that was decided (then ``plan`` is the best found, if any).
        """
        if target >= self.current.completion:
            return self.nothing(target), True
        t_ub = self.program.target_time(target)
        for solve_no in range(1, MAX_SOLVES + 1):
            xs, proven = self.program.solve(t_ub, objective, self.clock, cost_floor)
            if xs is None:
                if proven:
                    return None, True
                return self.fallback(target), False
            result = self.confirm(xs)
            if result.completion <= target:
                return self.make_plan(target, xs, result, solve_no, proven=proven and solve_no == 1), True
            # The program is exact (module notes), so this is a safety net only: tighten and solve again.
            t_ub = min(t_ub - 1, self.program.target_time(target) - (result.completion - target).days)
        return self.fallback(target), False

    def earliest(self) -> tuple[RecoveryPlan, bool]:
        """The plan that finishes soonest, at least cost; the flag is false when not proven (time limit)."""
        xs, proven = self.program.earliest(self.program.target_time(self.current.completion), self.clock)
        if xs is None:  # the time limit before any plan: every shortening, if that helps
            xs = [c.limit for c in self.program.crashable]
            proven = False
        result = self.confirm(xs)
        if result.completion >= self.current.completion:
            return self.nothing(self.current.completion), proven
        return self.make_plan(result.completion, xs, result, 1, proven=proven), proven


def recover(
    casefile: Casefile,
    snapshot_id: str,
    *,
    target: date | None = None,
    days: int | None = None,
    objective: str = "cost",
    curve: bool = True,
    time_limit: float = DEFAULT_TIME_LIMIT,
) -> RecoveryResult:
    """Plan the cheapest acceleration of a snapshot to meet a target completion.

    Parameters
    ----------
    casefile : Casefile
        Supplies the snapshot, the calendars and the project settings.
    snapshot_id : str
        The snapshot (usually the latest update) whose remaining work is shortened.
    target : date, optional
        Completion wanted on or before this date.
    days : int, optional
        Days to recover instead of a date, in the project's ``delay_unit``
        (calendar days, or working days of the completion activity's
        calendar) counted back from the current completion. Give exactly
        one of the two.
    objective : {"cost", "count"}
        ``cost``: least total cost. ``count``: fewest activities shortened,
        then least cost.
    curve : bool
        Also compute the time-cost curve (least cost for each working day of
        the completion's calendar recovered, 1 to the most that can be
        recovered).
    time_limit : float
        Seconds for all the solves of the analysis together. When it is
        reached the best plan found is reported with ``proven`` false
        ("not proven least-cost").

    Returns
    -------
    RecoveryResult

    Raises
    ------
    RecoveryError
        When the target cannot be met by shortening remaining work within
        its limits (the message and ``earliest`` give the earliest
        achievable completion), or an option is out of range.
    NotFoundError
        When the snapshot does not exist.

    References
    ----------
    Kelley and Walker (1959), Kelley (1961) and Fulkerson (1961), the project
    time-cost trade-off; see the module notes for the program.
    """
    if objective not in OBJECTIVES:
        msg = f"objective {objective!r} is not one of {', '.join(OBJECTIVES)}"
        raise ValueError(msg)
    if (target is None) == (days is None):
        msg = "give exactly one of a target date and a number of days to recover"
        raise ValueError(msg)
    if not (isinstance(time_limit, (int, float)) and math.isfinite(time_limit) and 0 < time_limit <= MAX_TIME_LIMIT):
        msg = f"the time limit must be a number of seconds above 0 and at most {MAX_TIME_LIMIT:g} (got {time_limit!r})"
        raise RecoveryError(msg)
    if days is not None and days < 1:
        msg = f"days to recover must be at least 1 (got {days})"
        raise RecoveryError(msg)
    snap = casefile.snapshot(snapshot_id)
    planner = _Planner(snap, casefile.calendars, casefile.project, float(time_limit))
    current = planner.current
    if planner.program.completion_finished:
        msg = f"snapshot {snap.id}: the completion {current.completion_id} is already finished; nothing to recover"
        raise RecoveryError(msg, earliest=current.completion)
    earliest_plan, earliest_proven = planner.earliest()
    earliest = earliest_plan.completion
    max_days = planner.workdays_before(earliest, current.completion)
    unit = f"working days of the completion's calendar {planner.comp_calendar}"

    def unreachable(what: str) -> RecoveryError:
        return RecoveryError(
            f"snapshot {snap.id}: {what} cannot be met by shortening the remaining work within its limits; "
            f"the earliest achievable completion is {earliest.isoformat()} ({max_days} {unit} before the "
            f"current {current.completion.isoformat()})",
            earliest=earliest,
        )

    if days is not None:
        span = (current.completion - snap.data_date).days
        if days > span:  # before the data date (and beyond any date): nothing remaining can finish there
            raise unreachable(f"{days} days back from {current.completion.isoformat()} (before the data date)")
        if casefile.project.delay_unit == "working-days":
            target = planner.back(days)
        else:
            target = current.completion - timedelta(days=days)
    assert target is not None
    if target < earliest and earliest_proven:
        raise unreachable(f"the target {target.isoformat()}")
    plan, _ = planner.plan_for(target, objective)
    if plan is None:
        raise unreachable(f"the target {target.isoformat()}")
    points: list[CurvePoint] = []
    if curve:
        floor = None
        for k in range(1, max_days + 1):
            p, _ = planner.plan_for(planner.back(k), "cost", floor)
            if p is not None and p.proven:
                floor = p.cost
            if p is not None:
                points.append(CurvePoint(k, p))
        # The curve never gets cheaper as days grow: a plan for more days meets every
        # earlier point's target too (only a plan cut short by the time limit can need this).
        for i in range(len(points) - 2, -1, -1):
            later = points[i + 1].plan
            if later.cost < points[i].plan.cost - 1e-9:
                points[i] = CurvePoint(points[i].working_days, replace(later, target=points[i].plan.target, proven=False))
    if objective == "cost" and not plan.proven:
        better = planner.fallback(target)
        if better is not None and better.cost < plan.cost - 1e-9:
            plan = better
    proven = earliest_proven and plan.proven and all(pt.plan.proven for pt in points)
    return RecoveryResult(
        snapshot_id=snap.id,
        data_date=snap.data_date,
        objective=objective,
        completion_id=current.completion_id,
        current_completion=current.completion,
        earliest_completion=earliest,
        max_working_days=max_days,
        plan=plan,
        curve=tuple(points),
        warnings=tuple(planner.program.warnings),
        working_days_calendar=planner.comp_calendar,
        time_limit=float(time_limit),
        proven=proven,
    )


# --------------------------------------------------------------------------- tables and JSON

PLAN_COLUMNS = (
    "id", "name", "status", "days", "limit", "cost_per_day", "cost", "remaining_before", "remaining_after",
)
CURVE_COLUMNS = (
    "working_days", "target", "completion", "calendar_days", "cost", "activities_shortened", "shortenings",
)


def recovery_plan_table(result: RecoveryResult) -> Table:
    """One row per activity the plan shortens."""
    rows = tuple(
        (s.id, s.name, s.status, s.days, s.limit, s.cost_per_day, s.cost, s.remaining_before, s.remaining_after)
        for s in result.plan.shortenings
    )
    return Table(f"recovery-plan-{result.snapshot_id}", PLAN_COLUMNS, rows)


def recovery_curve_table(result: RecoveryResult) -> Table:
    """The time-cost curve: one row per working day recovered."""
    rows = tuple(
        (
            pt.working_days,
            pt.plan.target,
            pt.plan.completion,
            pt.plan.calendar_days_recovered,
            pt.plan.cost,
            len(pt.plan.shortenings),
            tuple(f"{s.id}:{s.days}" for s in pt.plan.shortenings),
        )
        for pt in result.curve
    )
    return Table(f"recovery-curve-{result.snapshot_id}", CURVE_COLUMNS, rows)


def _plan_json(plan: RecoveryPlan) -> dict[str, Any]:
    return {
        "target": plan.target,
        "completion": plan.completion,
        "working_days_recovered": plan.working_days_recovered,
        "calendar_days_recovered": plan.calendar_days_recovered,
        "cost": plan.cost,
        "activities_shortened": len(plan.shortenings),
        "shortenings": [
            {
                "id": s.id,
                "name": s.name,
                "status": s.status,
                "days": s.days,
                "limit": s.limit,
                "cost_per_day": s.cost_per_day,
                "cost": s.cost,
                "remaining_before": s.remaining_before,
                "remaining_after": s.remaining_after,
            }
            for s in plan.shortenings
        ],
        "solves": plan.solves,
        "proven_least_cost": plan.proven,
    }


def recovery_json(result: RecoveryResult) -> dict[str, Any]:
    """The ``forensic recover --json`` object (keys documented in docs/recovery.md; a contract)."""
    return {
        "snapshot": result.snapshot_id,
        "data_date": result.data_date,
        "objective": result.objective,
        "completion_activity": result.completion_id,
        "current_completion": result.current_completion,
        "earliest_completion": result.earliest_completion,
        "max_working_days": result.max_working_days,
        "working_days_calendar": result.working_days_calendar,
        "time_limit": result.time_limit,
        "proven_least_cost": result.proven,
        "plan": _plan_json(result.plan),
        "curve": [{"working_days": pt.working_days, **_plan_json(pt.plan)} for pt in result.curve],
        "warnings": list(result.warnings),
    }
