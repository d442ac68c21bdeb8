"""Plans confirmed by the engine: the least-cost plan for a target, the earliest plan, the fallbacks.

Every plan the program (:mod:`.program`, solved by :mod:`.solver`) gives is
applied to the snapshot (:func:`apply_plan`: only remaining work is
shortened) and rescheduled by the engine, and the completion reported is
the engine's. The program is exact, so the first plan meets its target
(``solves`` stays 1; a tightening loop remains only as a safety net). When
the time limit cuts a search, the cheapest plan already confirmed that meets
the target (at worst every shortening) is used, marked not proven
least-cost (Kelley and Walker 1959; Kelley 1961).
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import replace
from datetime import date

from forensic.core.calendars import day_number, from_day_number
from forensic.core.engine import ScheduleResult, schedule
from forensic.core.model import Calendar, Project, Snapshot, frozen_mapping

from .program import Program
from .results import MAX_SOLVES, RecoveryPlan, Shortening
from .solver import Clock, solve_earliest, solve_least

__all__ = ["Planner", "apply_plan"]


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


class Planner:
    """The recovery of one snapshot: its current schedule, its program, the clock and the plans confirmed."""

    def __init__(self, snapshot: Snapshot, calendars: Mapping[str, Calendar], project: Project, time_limit: float):
        self.snapshot = snapshot
        self.calendars = calendars
        self.project = project
        self.current = schedule(snapshot, calendars, project)  # raises first on a bad network
        self.program = Program(snapshot, calendars, project, self.current.completion)
        comp_act = snapshot.activities[self.current.completion_id]
        self.comp_index = self.program.index_of(comp_act)
        self.comp_calendar = comp_act.calendar or project.default_calendar
        self.clock = Clock(time_limit)
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
            xs, proven = solve_least(self.program, t_ub, objective, self.clock, cost_floor)
            if xs is None:
                if proven:
                    return None, True
                return self.fallback(target), False
            result = self.confirm(xs)
            if result.completion <= target:
                return self.make_plan(target, xs, result, solve_no, proven=proven and solve_no == 1), True
            # The program is exact (forensic.analysis.recovery.program), so this is a safety net only: tighten and solve again.
            t_ub = min(t_ub - 1, self.program.target_time(target) - (result.completion - target).days)
        return self.fallback(target), False

    def earliest(self) -> tuple[RecoveryPlan, bool]:
        """The plan that finishes soonest, at least cost; the flag is false when not proven (time limit)."""
        xs, proven = solve_earliest(self.program, self.program.target_time(self.current.completion), self.clock)
        if xs is None:  # the time limit before any plan: every shortening, if that helps
            xs = [c.limit for c in self.program.crashable]
            proven = False
        result = self.confirm(xs)
        if result.completion >= self.current.completion:
            return self.nothing(self.current.completion), proven
        return self.make_plan(result.completion, xs, result, 1, proven=proven), proven
