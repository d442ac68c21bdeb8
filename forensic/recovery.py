"""Acceleration and recovery: the time-cost trade-off on the remaining work.

Which remaining activities should be shortened, and by how many whole
working days, so that the completion is met by a target date at the least
cost (or by the fewest activities shortened, with cost as the tie-breaker)?
This is the project time-cost trade-off of Kelley (1961) and Fulkerson
(1961), which they solved as a linear program; with whole days of crashing
it becomes a mixed-integer program, solved here exactly by
``scipy.optimize.milp`` (HiGHS branch and bound with a zero optimality gap).

The model
---------
Time in the program is the working day of the project's default calendar,
counted from the data date (boundary 0 is the start of the first working day
on or after it). For every activity not yet finished there is a start
variable ``s`` (the start of its remaining work), and for every activity
that may be shortened an integer ``x`` in ``0 .. limit``, so that its finish
is ``s + D - x``. Each link is one inequality, as in the engine
(:mod:`forensic.engine`): FS ``s_j >= f_i + lag``, SS ``s_j >= s_i + lag``,
FF ``f_j >= f_i + lag``, SF ``f_j >= s_i + lag``, with the same progress
rules (a finished activity is a constant; the remaining work of an activity
in progress ignores its SS links under retained logic and every link under
override), no remaining work before the data date, and the early-date
constraints (start/finish on or after, start/finish on). The completion
(the project's completion milestone, or every activity when none is named)
must finish by the target.

Only remaining work is shortened: the duration of work not started, the
remaining duration of work in progress. Finished work and milestones are
never shortened, an activity never by more than its ``crash_days``, and
never below one working day of remaining work. An activity with
``crash_days`` but no ``crash_cost`` cannot be priced and is not shortened
(a warning says so).

Confirmation by the engine
--------------------------
Every plan is applied to the snapshot (durations reduced with
:func:`dataclasses.replace`) and rescheduled by :func:`forensic.engine.schedule`;
the completion reported is the engine's. On a network whose activities all
use the default calendar the program is the engine's own arithmetic and the
first solve is confirmed. Where activities use other calendars, their
durations and lags are scaled into default-calendar days by the ratio of
working days per week, which is an approximation: when the engine's
completion misses the target, the program's target is tightened by the
shortfall and the program solved again, until the engine confirms (at most
``MAX_SOLVES`` solves); the plan is then the cheapest the program found, not
proven cheapest.

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

import math
from collections.abc import Mapping
from dataclasses import dataclass, replace
from datetime import date, timedelta
from typing import Any

import numpy as np

from .calendars import WorkdayIndex, day_number, from_day_number, workday_index
from .engine import ScheduleResult, schedule
from .errors import NotFoundError, RecoveryError
from .model import Activity, Calendar, Casefile, Project, Snapshot, frozen_mapping
from .tables import Table

__all__ = [
    "MAX_SOLVES",
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
MAX_SOLVES = 12  # program solves per target before giving up on the engine's confirmation


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

    ``working_days_recovered`` is on the project's default calendar and
    ``calendar_days_recovered`` in calendar days, both from the current
    completion to the engine's new one. ``solves`` counts the programs solved
    until the engine confirmed the target.
    """

    target: date
    completion: date
    working_days_recovered: int
    calendar_days_recovered: int
    cost: float
    shortenings: tuple[Shortening, ...]
    solves: int

    @property
    def activities(self) -> tuple[str, ...]:
        return tuple(s.id for s in self.shortenings)


@dataclass(frozen=True, slots=True)
class CurvePoint:
    """One point of the time-cost curve: the least cost to recover ``working_days`` days."""

    working_days: int
    plan: RecoveryPlan


@dataclass(frozen=True, slots=True)
class RecoveryResult:
    """The recovery analysis of one snapshot: the plan for the target, and the time-cost curve.

    ``earliest_completion`` is the engine's completion of the plan that
    finishes soonest; ``max_working_days`` the working days (default
    calendar) it recovers. ``curve`` holds one point per working day from 1
    to ``max_working_days`` (empty when the curve was not asked for).
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


# --------------------------------------------------------------------------- the program


@dataclass(frozen=True, slots=True)
class _Crashable:
    act: Activity
    limit: int
    cost: float
    remaining: int


class _Program:
    """The mixed-integer program of one snapshot, built once and solved for many targets.

    Variables, in order: ``s`` per unfinished activity, ``x`` per crashable
    activity, ``y`` (binary, "is shortened") per crashable activity, and
    ``T`` the completion bound.
    """

    def __init__(self, snapshot: Snapshot, calendars: Mapping[str, Calendar], project: Project):
        self.snapshot = snapshot
        self.project = project
        self.calendars = calendars
        self.warnings: list[str] = []
        acts = list(snapshot.activities.values())
        dd = day_number(snapshot.data_date)
        days = [dd] + [
            day_number(d)
            for a in acts
            for d in (a.actual_start, a.actual_finish, a.constraint_date)
            if d is not None
        ]
        pad = sum(a.duration + (a.remaining or 0) for a in acts)
        pad += sum(abs(link.lag) for link in snapshot.links) + 10
        margin = 7 * pad + 400
        self.lo, hi = min(days) - margin, max(max(days) + margin, dd + 800)
        self.default = workday_index(calendars[project.default_calendar], self.lo, hi)
        self.base = self.default.first_at[dd - self.lo]
        logic = project.progress_logic

        def cal_of(a: Activity) -> WorkdayIndex:
            cid = a.calendar or project.default_calendar
            try:
                cal = calendars[cid]
            except KeyError:
                msg = f"snapshot {snapshot.id}, activity {a.id}: unknown calendar {cid!r}"
                raise NotFoundError(msg) from None
            return workday_index(cal, self.lo, hi)

        # Scale from an activity's working days to default-calendar days: the
        # ratio of working days over two years from the data date (1 on the default).
        def ratio(ix: WorkdayIndex) -> float:
            if ix.calendar == self.default.calendar:
                return 1.0
            span = (dd - self.lo, dd + 730 - self.lo)
            own = ix.first_at[span[1]] - ix.first_at[span[0]]
            dflt = self.default.first_at[span[1]] - self.default.first_at[span[0]]
            return dflt / own if own else 1.0

        self.crashable: list[_Crashable] = []
        var_s: dict[str, int] = {}
        var_x: dict[str, int] = {}
        status: dict[str, int] = {}  # 0 not started, 1 in progress, 2 finished (as the engine)
        dur: dict[str, float] = {}
        r: dict[str, float] = {}
        kinds: dict[str, tuple[bool, bool]] = {}  # (start is late-type, finish is late-type)
        const_s: dict[str, float] = {}
        const_f: dict[str, float] = {}
        for a in acts:
            milestone = a.kind != "task" or a.duration == 0
            if a.kind == "opening-milestone":
                kinds[a.id] = (True, True)
            elif milestone:
                kinds[a.id] = (False, False)
            else:
                kinds[a.id] = (True, False)
            if a.actual_finish is not None or (milestone and a.actual_start is not None):
                status[a.id] = 2
                s_day = day_number(a.actual_start or a.actual_finish)
                f_day = day_number(a.actual_finish or a.actual_start)
                if a.kind == "opening-milestone":
                    const_s[a.id] = const_f[a.id] = self.model_time(s_day)
                elif milestone:
                    const_s[a.id] = const_f[a.id] = self.model_time(f_day + 1)
                else:
                    const_s[a.id] = self.model_time(s_day)
                    const_f[a.id] = self.model_time(f_day + 1)
                continue
            status[a.id] = 1 if a.actual_start is not None else 0
            if status[a.id] == 1:
                const_s[a.id] = self.model_time(day_number(a.actual_start))
            ix = cal_of(a)
            r[a.id] = ratio(ix)
            d = 0 if (milestone and status[a.id] == 0) else a.remaining_duration
            dur[a.id] = d
            var_s[a.id] = len(var_s)
            if milestone or not a.crash_days or a.crash_days <= 0:
                continue
            limit = min(a.crash_days, d - 1)
            if status[a.id] == 0:
                limit = min(limit, a.duration - 1)
            if a.crash_cost is None:
                self.warnings.append(
                    f"snapshot {snapshot.id}: activity {a.id} has crash_days but no crash_cost; "
                    "it cannot be priced and is not shortened"
                )
                continue
            if limit <= 0:
                continue
            var_x[a.id] = len(self.crashable)
            self.crashable.append(_Crashable(a, limit, float(a.crash_cost), d))

        m, q = len(var_s), len(self.crashable)
        self.m, self.q = m, q
        self.n_vars = m + 2 * q + 1
        self.t_var = m + 2 * q
        self.var_x = var_x

        def start_term(aid: str) -> tuple[dict[int, float], float]:
            if status[aid] == 0:
                return {var_s[aid]: 1.0}, 0.0
            return {}, const_s[aid]

        def finish_term(aid: str) -> tuple[dict[int, float], float]:
            if status[aid] == 2:
                return {}, const_f[aid]
            coefs = {var_s[aid]: 1.0}
            if aid in var_x:
                coefs[m + var_x[aid]] = -r[aid]
            return coefs, dur[aid] * r[aid]

        rows: list[tuple[dict[int, float], float, float]] = []  # (coefs, lower, upper)

        def add_row(succ_term, pred_term, lag: float) -> None:
            (cs, ks), (cp, kp) = succ_term, pred_term
            coefs = dict(cs)
            for v, c in cp.items():
                coefs[v] = coefs.get(v, 0.0) - c
            coefs = {v: c for v, c in coefs.items() if c != 0.0}
            if coefs:
                rows.append((coefs, lag + kp - ks, math.inf))

        s_lower = [0.0] * m  # no remaining work before the data date
        for link in snapshot.links:
            p, j = link.pred, link.succ
            if p not in status or j not in status:
                msg = f"snapshot {snapshot.id}: link {p} -> {j} names an unknown activity"
                raise NotFoundError(msg)
            if status[j] == 2:
                continue
            if status[j] == 1 and (logic == "override" or link.type == "SS"):
                continue
            pred = start_term(p) if link.type in ("SS", "SF") else finish_term(p)
            succ = finish_term(j) if link.type in ("FF", "SF") else start_term(j)
            if status[j] == 1 and link.type in ("FS",):
                succ = ({var_s[j]: 1.0}, 0.0)  # the remaining work's start
            lag = link.lag * r[j]
            if not succ[0]:
                continue
            if not pred[0] and len(succ[0]) == 1 and link.type in ("FS", "SS"):
                (v,) = succ[0]
                s_lower[v] = max(s_lower[v], lag + pred[1] - succ[1])
                continue
            add_row(succ, pred, lag)

        for a in acts:
            if status[a.id] == 2 or a.constraint is None or a.constraint_date is None:
                continue
            t = self.model_time(day_number(a.constraint_date))
            s_late, f_late = kinds[a.id]
            if a.constraint in ("start-from", "start-fixed") and status[a.id] == 0:
                v = var_s[a.id]
                s_lower[v] = max(s_lower[v], t + (0 if s_late else 1))
            elif a.constraint in ("finish-from", "finish-fixed"):
                late = f_late if dur[a.id] == 0 else False
                add_row(finish_term(a.id), ({}, 0.0), t + (0 if late else 1))

        # The completion must finish by T; a start milestone's date is its boundary's own day.
        comp = project.completion if project.completion in status else None
        self.completion_id = comp
        targets = [comp] if comp is not None else [a.id for a in acts if status[a.id] != 2]
        for aid in targets:
            if status[aid] == 2:
                continue
            coefs, k = finish_term(aid)
            coefs = dict(coefs)
            coefs[self.t_var] = -1.0
            shift = 1.0 if kinds[aid][1] and dur[aid] == 0 else 0.0
            rows.append((coefs, -math.inf, -k - shift))
        self.completion_finished = comp is not None and status[comp] == 2

        for i, c in enumerate(self.crashable):  # x <= limit * y
            rows.append(({m + i: 1.0, m + q + i: -float(c.limit)}, -math.inf, 0.0))

        data, ri, ci = [], [], []
        lower, upper = [], []
        for k, (coefs, lb, ub) in enumerate(rows):
            for v, c in coefs.items():
                ri.append(k)
                ci.append(v)
                data.append(c)
            lower.append(lb)
            upper.append(ub)
        from scipy.sparse import coo_array  # imported here: scipy costs half a second at start-up

        self.A = coo_array((data, (ri, ci)), shape=(len(rows), self.n_vars)).tocsr()
        self.row_lb = np.array(lower)
        self.row_ub = np.array(upper)
        self.var_lb = np.array(s_lower + [0.0] * (2 * q) + [-math.inf])
        self.var_ub = np.array([math.inf] * m + [c.limit for c in self.crashable] + [1.0] * q + [math.inf])
        self.integrality = np.array([0] * m + [1] * (2 * q) + [0])
        self.costs = np.array([c.cost for c in self.crashable])

    def model_time(self, day: int) -> float:
        """Default-calendar working days from the data date to the start of ``day``."""
        return float(self.default.first_at[day - self.lo] - self.base)

    def target_time(self, target: date) -> float:
        """The program's bound for a completion dated on or before ``target``."""
        return self.model_time(day_number(target) + 1)

    def _solve(self, c: np.ndarray, extra: list[tuple[np.ndarray, float]], t_ub: float) -> np.ndarray | None:
        var_ub = self.var_ub.copy()
        var_ub[self.t_var] = t_ub
        from scipy.optimize import Bounds, LinearConstraint, milp

        constraints = [LinearConstraint(self.A, self.row_lb, self.row_ub)]
        for row, ub in extra:
            constraints.append(LinearConstraint(row.reshape(1, -1), -math.inf, ub))
        res = milp(
            c,
            constraints=constraints,
            integrality=self.integrality,
            bounds=Bounds(self.var_lb, var_ub),
            options={"mip_rel_gap": 0.0, "presolve": True},
        )
        if res.status != 0 or res.x is None:
            return None
        return res.x

    def solve(self, t_ub: float, objective: str) -> list[int] | None:
        """The shortenings (days per crashable activity) meeting ``T <= t_ub``, or ``None`` if none.

        Objectives are solved lexicographically: ``cost`` = least cost; ``count`` =
        fewest activities, then least cost; last, when some day costs nothing, the
        fewest days, so that no activity is shortened for nothing.
        """
        m, q, n = self.m, self.q, self.n_vars
        cost_vec = np.zeros(n)
        cost_vec[m : m + q] = self.costs
        count_vec = np.zeros(n)
        count_vec[m + q : m + 2 * q] = 1.0
        days_vec = np.zeros(n)
        days_vec[m : m + q] = 1.0
        stages = [count_vec, cost_vec] if objective == "count" else [cost_vec]
        if q and (self.costs <= 0).any():
            stages.append(days_vec)
        if not q:
            stages = [np.zeros(n)]
        extra: list[tuple[np.ndarray, float]] = []
        x = None
        for k, vec in enumerate(stages):
            x = self._solve(vec, extra, t_ub)
            if x is None:
                return None
            best = float(vec @ x)
            if k < len(stages) - 1:
                extra.append((vec, best + 1e-7 * max(1.0, abs(best)) + (0.5 if vec is count_vec else 0.0)))
        assert x is not None
        return [round(v) for v in x[m : m + q]]

    def earliest(self) -> list[int] | None:
        """The shortenings that make the completion earliest, at least cost."""
        c = np.zeros(self.n_vars)
        c[self.t_var] = 1.0
        x = self._solve(c, [], math.inf)
        if x is None:
            return None
        return self.solve(math.ceil(x[self.t_var] - 1e-6), "cost")


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
    def __init__(self, snapshot: Snapshot, calendars: Mapping[str, Calendar], project: Project):
        self.snapshot = snapshot
        self.calendars = calendars
        self.project = project
        self.current = schedule(snapshot, calendars, project)  # raises first on a bad network
        self.program = _Program(snapshot, calendars, project)
        self.default = self.program.default

    def workdays_before(self, earlier: date, later: date) -> int:
        """Default-calendar working days recovered from ``later`` to ``earlier``."""
        lo = self.program.lo
        f = self.default.first_at
        return f[day_number(later) + 1 - lo] - f[day_number(earlier) + 1 - lo]

    def back(self, days: int) -> date:
        """The working day (default calendar) ``days`` working days before the current completion."""
        lo = self.program.lo
        k = self.default.first_at[day_number(self.current.completion) + 1 - lo] - 1 - days
        k = max(k, 0)  # far before the data date: no plan can meet it, and the caller says so
        return from_day_number(self.default.days[k])

    def confirm(self, xs: list[int]) -> tuple[dict[str, int], ScheduleResult]:
        plan = {c.act.id: x for c, x in zip(self.program.crashable, xs, strict=True) if x > 0}
        snap = apply_plan(self.snapshot, plan)
        return plan, schedule(snap, self.calendars, self.project)

    def make_plan(self, target: date, xs: list[int], result: ScheduleResult, solves: int) -> RecoveryPlan:
        items = []
        for c, x in zip(self.program.crashable, xs, strict=True):
            if x > 0:
                items.append(
                    Shortening(
                        c.act.id, c.act.name, c.act.status, x, c.limit, c.cost, x * c.cost,
                        c.remaining, c.remaining - x,
                    )
                )
        return RecoveryPlan(
            target=target,
            completion=result.completion,
            working_days_recovered=self.workdays_before(result.completion, self.current.completion),
            calendar_days_recovered=(self.current.completion - result.completion).days,
            cost=float(sum(s.cost for s in items)),
            shortenings=tuple(items),
            solves=solves,
        )

    def plan_for(self, target: date, objective: str) -> RecoveryPlan | None:
        """The plan confirmed by the engine to finish by ``target``; ``None`` when none is found."""
        if target >= self.current.completion:
            return self.make_plan(target, [0] * self.program.q, self.current, 0)
        t_ub = self.program.target_time(target)
        for solve_no in range(1, MAX_SOLVES + 1):
            xs = self.program.solve(t_ub, objective)
            if xs is None:
                return None
            _, result = self.confirm(xs)
            if result.completion <= target:
                return self.make_plan(target, xs, result, solve_no)
            t_ub -= max(1, self.workdays_before(target, result.completion))
        return None

    def earliest(self) -> tuple[RecoveryPlan, date]:
        xs = self.program.earliest()
        if xs is None:  # unreachable for a schedulable network; kept for safety
            return self.make_plan(self.current.completion, [0] * self.program.q, self.current, 1), self.current.completion
        _, result = self.confirm(xs)
        if result.completion >= self.current.completion:
            return self.make_plan(self.current.completion, [0] * self.program.q, self.current, 1), self.current.completion
        return self.make_plan(result.completion, xs, result, 1), result.completion


def recover(
    casefile: Casefile,
    snapshot_id: str,
    *,
    target: date | None = None,
    days: int | None = None,
    objective: str = "cost",
    curve: bool = True,
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
        (calendar days, or working days of the default calendar) counted
        back from the current completion. Give exactly one of the two.
    objective : {"cost", "count"}
        ``cost``: least total cost. ``count``: fewest activities shortened,
        then least cost.
    curve : bool
        Also compute the time-cost curve (least cost for each working day
        recovered, 1 to the most that can be recovered).

    Returns
    -------
    RecoveryResult

    Raises
    ------
    RecoveryError
        When the target cannot be met by shortening remaining work within
        its limits; the message and ``earliest`` give the earliest
        achievable completion.
    NotFoundError
        When the snapshot does not exist.

    References
    ----------
    Kelley (1961) and Fulkerson (1961), the project time-cost trade-off; see
    the module notes for the program and its confirmation by the engine.
    """
    if objective not in OBJECTIVES:
        msg = f"objective {objective!r} is not one of {', '.join(OBJECTIVES)}"
        raise ValueError(msg)
    if (target is None) == (days is None):
        msg = "give exactly one of a target date and a number of days to recover"
        raise ValueError(msg)
    snap = casefile.snapshot(snapshot_id)
    planner = _Planner(snap, casefile.calendars, casefile.project)
    current = planner.current
    if planner.program.completion_finished:
        msg = f"snapshot {snap.id}: the completion {current.completion_id} is already finished; nothing to recover"
        raise RecoveryError(msg, earliest=current.completion)
    if days is not None:
        if days < 1:
            msg = f"days to recover must be at least 1 (got {days})"
            raise ValueError(msg)
        if casefile.project.delay_unit == "working-days":
            target = planner.back(days)
        else:
            target = current.completion - timedelta(days=days)
    assert target is not None
    earliest_plan, earliest = planner.earliest()
    max_days = planner.workdays_before(earliest, current.completion)
    plan = None if target < earliest else planner.plan_for(target, objective)
    if plan is None:
        unit = "working days of the default calendar"
        msg = (
            f"snapshot {snap.id}: the target {target.isoformat()} cannot be met by shortening the "
            f"remaining work within its limits; the earliest achievable completion is "
            f"{earliest.isoformat()} ({max_days} {unit} before the current {current.completion.isoformat()})"
        )
        raise RecoveryError(msg, earliest=earliest)
    points = []
    if curve:
        for k in range(1, max_days + 1):
            p = planner.plan_for(planner.back(k), "cost")
            if p is None and k == max_days:
                p = earliest_plan
            if p is None:  # the engine could not confirm this day (calendar approximation)
                continue
            points.append(CurvePoint(k, p))
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
        "plan": _plan_json(result.plan),
        "curve": [{"working_days": pt.working_days, **_plan_json(pt.plan)} for pt in result.curve],
        "warnings": list(result.warnings),
    }
