"""``recover``: the cheapest acceleration of a snapshot's remaining work to meet a target completion.

Which remaining activities should be shortened, and by how many whole
working days, so that the completion is met by a target date at the least
cost (or by the fewest activities shortened, with cost as the
tie-breaker)? This is the project time-cost trade-off of Kelley and Walker
(1959), Kelley (1961) and Fulkerson (1961), solved exactly as a
mixed-integer program (:mod:`.program`, :mod:`.solver`), every plan
confirmed by the engine (:mod:`.planner`), with the time-cost curve
(:mod:`.curve`). A target given as days to recover is counted back from the
current completion in the project's ``delay_unit``.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from datetime import date, timedelta

from forensic.core.errors import RecoveryError
from forensic.core.model import Casefile

from .curve import time_cost_curve
from .planner import Planner
from .results import DEFAULT_TIME_LIMIT, MAX_TIME_LIMIT, OBJECTIVES, CurvePoint, RecoveryResult

__all__ = ["recover"]


def _check_options(objective: str, target: date | None, days: int | None, time_limit: float) -> None:
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


def _unreachable(planner: Planner, what: str, earliest: date, max_days: int) -> RecoveryError:
    """The error for a target no plan meets, naming the earliest achievable completion."""
    current = planner.current
    unit = f"working days of the completion's calendar {planner.comp_calendar}"
    return RecoveryError(
        f"snapshot {planner.snapshot.id}: {what} cannot be met by shortening the remaining work within its limits; "
        f"the earliest achievable completion is {earliest.isoformat()} ({max_days} {unit} before the "
        f"current {current.completion.isoformat()})",
        earliest=earliest,
    )


def _days_back(planner: Planner, days: int, delay_unit: str,
               unreachable: Callable[[str], RecoveryError]) -> date:
    """The target ``days`` back from the current completion, in the project's delay unit."""
    current = planner.current
    span = (current.completion - planner.snapshot.data_date).days
    if days > span:  # before the data date (and beyond any date): nothing remaining can finish there
        raise unreachable(f"{days} days back from {current.completion.isoformat()} (before the data date)")
    if delay_unit == "working-days":
        return planner.back(days)
    return current.completion - timedelta(days=days)


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
    time-cost trade-off; see forensic.analysis.recovery.program for the program.
    """
    _check_options(objective, target, days, time_limit)
    snap = casefile.snapshot(snapshot_id)
    planner = Planner(snap, casefile.calendars, casefile.project, float(time_limit))
    current = planner.current
    if planner.program.completion_finished:
        msg = f"snapshot {snap.id}: the completion {current.completion_id} is already finished; nothing to recover"
        raise RecoveryError(msg, earliest=current.completion)
    earliest_plan, earliest_proven = planner.earliest()
    earliest = earliest_plan.completion
    max_days = planner.workdays_before(earliest, current.completion)

    def unreachable(what: str) -> RecoveryError:
        return _unreachable(planner, what, earliest, max_days)

    if days is not None:
        target = _days_back(planner, days, casefile.project.delay_unit, unreachable)
    assert target is not None
    if target < earliest and earliest_proven:
        raise unreachable(f"the target {target.isoformat()}")
    plan, _ = planner.plan_for(target, objective)
    if plan is None:
        raise unreachable(f"the target {target.isoformat()}")
    points: list[CurvePoint] = time_cost_curve(planner, max_days) if curve else []
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
