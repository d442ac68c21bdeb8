"""Solving the recovery program: HiGHS branch and bound, lexicographic objectives, the time limit.

Each solve is ``scipy.optimize.milp`` (HiGHS branch and bound with a zero
optimality gap) on the program of :mod:`.program`. Objectives are solved
lexicographically: ``cost`` is the least total cost; ``count`` the fewest
activities shortened, then the least cost; last, when some day costs
nothing, the fewest days, so that no activity is shortened for nothing.
The earliest completion is found by minimising ``T`` first, then the cost
(Kelley 1961: the far end of the time-cost curve).

Time limit
----------
All the solves of one analysis share ``time_limit`` seconds (a
:class:`Clock`). When it is reached, a solve returns the best plan it has
found (HiGHS' incumbent), flagged not proven; the planner
(:mod:`.planner`) then falls back, with none, on the cheapest plan already
confirmed that meets the target. Anything the solver writes is kept off
standard output (discarded).
"""

from __future__ import annotations

import contextlib
import math
import os
import sys
import time

import numpy as np

from .program import Program

__all__ = ["Clock", "quiet_stdout", "solve_earliest", "solve_least", "solve_once"]


class Clock:
    """The time budget of one recovery analysis (``time_limit`` seconds for every solve together)."""

    def __init__(self, seconds: float):
        self.deadline = time.monotonic() + seconds
        self.reached = False

    def left(self) -> float:
        return self.deadline - time.monotonic()


@contextlib.contextmanager
def quiet_stdout():
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


def solve_once(program: Program, c: np.ndarray, extra: list[tuple[np.ndarray, float]], t_ub: float,
               clock: Clock) -> tuple[np.ndarray | None, bool]:
    """One solve: (the solution or ``None``, proven optimal)."""
    if program.infeasible:
        return None, True
    left = clock.left()
    if left <= 0:
        return None, False
    var_ub = program.var_ub.copy()
    var_ub[program.t_var] = t_ub
    if t_ub < program.var_lb[program.t_var]:
        return None, True
    from scipy.optimize import Bounds, LinearConstraint, milp

    constraints = [LinearConstraint(program.A, program.row_lb, program.row_ub)]
    for row, ub in extra:
        constraints.append(LinearConstraint(row.reshape(1, -1), -math.inf, ub))
    with quiet_stdout():
        res = milp(
            c,
            constraints=constraints,
            integrality=program.integrality,
            bounds=Bounds(program.var_lb, var_ub),
            options={"mip_rel_gap": 0.0, "presolve": True, "time_limit": max(left, 0.01), "disp": False},
        )
    if res.status == 0 and res.x is not None:
        return res.x, True
    if res.status == 1:  # the time limit: the best plan found so far, if any
        clock.reached = True
        return res.x, False
    return None, True


def solve_least(program: Program, t_ub: float, objective: str, clock: Clock,
                cost_floor: float | None = None) -> tuple[list[int] | None, bool]:
    """The shortenings (days per crashable activity) meeting ``T <= t_ub``, or ``None`` if none.

    Objectives are solved lexicographically: ``cost`` = least cost; ``count`` =
    fewest activities, then least cost; last, when some day costs nothing, the
    fewest days, so that no activity is shortened for nothing. The flag says
    whether every stage was solved to optimality (no time limit reached).
    """
    n, q = program.n_vars, program.q
    xs_idx = np.array(program.x_vars, dtype=np.int64)
    ys_idx = np.array(program.y_vars, dtype=np.int64)
    cost_vec = np.zeros(n)
    count_vec = np.zeros(n)
    days_vec = np.zeros(n)
    if q:
        cost_vec[xs_idx] = program.costs
        count_vec[ys_idx] = 1.0
        days_vec[xs_idx] = 1.0
    stages = [count_vec, cost_vec] if objective == "count" else [cost_vec]
    if q and (program.costs <= 0).any():
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
        got, ok = solve_once(program, vec, extra, t_ub, clock)
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


def solve_earliest(program: Program, t_ub: float, clock: Clock) -> tuple[list[int] | None, bool]:
    """The shortenings that make the completion earliest (by ``t_ub`` at the latest), at least cost."""
    c = np.zeros(program.n_vars)
    c[program.t_var] = 1.0
    x, ok = solve_once(program, c, [], t_ub, clock)
    if x is None:
        return None, ok
    xs, ok2 = solve_least(program, math.ceil(x[program.t_var] - 1e-6), "cost", clock)
    if xs is None:  # no time left for the cost stage: the plan of the first stage
        return [round(v) for v in x[np.array(program.x_vars, dtype=np.int64)]] if program.q else [], False
    return xs, ok and ok2
