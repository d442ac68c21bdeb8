"""The result types of the recovery analysis, and its limits.

A plan (:class:`RecoveryPlan`) is the shortenings that meet one target at
the least cost; the time-cost curve is one plan per working day recovered
(:class:`CurvePoint`; Kelley 1961, Fulkerson 1961); :class:`RecoveryResult`
joins the plan for the target and the curve. The other modules of
:mod:`forensic.analysis.recovery` share these and none is imported back.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date

__all__ = [
    "DEFAULT_TIME_LIMIT",
    "MAX_SOLVES",
    "MAX_TIME_LIMIT",
    "OBJECTIVES",
    "CurvePoint",
    "RecoveryPlan",
    "RecoveryResult",
    "Shortening",
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
