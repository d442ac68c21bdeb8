"""The time-cost curve: the least cost to recover each working day, 1 to the most recoverable.

One plan per working day of the completion's calendar recovered (Kelley
1961; Fulkerson 1961, the project cost curve), each the least-cost plan
for the working day that many days before the current completion. A
proven least cost for fewer days is a valid lower bound for more days and
is passed on to the solver as a cut. The curve is then made non-decreasing
by carrying a cheaper plan for more days back to fewer (only a plan cut
short by the time limit can need this; such a point is marked not proven).
"""

from __future__ import annotations

from dataclasses import replace

from .planner import Planner
from .results import CurvePoint

__all__ = ["time_cost_curve"]


def time_cost_curve(planner: Planner, max_days: int) -> list[CurvePoint]:
    """The curve's points for 1 to ``max_days`` working days recovered (a day no plan meets is left out)."""
    points: list[CurvePoint] = []
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
    return points
