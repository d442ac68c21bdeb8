"""The recovery analysis as tables and as the ``forensic recover --json`` object.

The plan table has one row per activity the plan shortens; the curve table
one row per working day recovered (the time-cost curve of Kelley 1961).
The JSON keys are documented in docs/recovery.md and are a contract.
"""

from __future__ import annotations

from typing import Any

from forensic.core.tables import Table

from .results import RecoveryPlan, RecoveryResult

__all__ = ["CURVE_COLUMNS", "PLAN_COLUMNS", "recovery_curve_table", "recovery_json", "recovery_plan_table"]

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
