"""The mixed-integer program of the time-cost trade-off on one snapshot's remaining work.

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
highest by a backward pass from the current completion: :mod:`.network`):
one binary ``u_a`` per step that is not a plain "+1", with ``u_a = 1``
exactly when the boundary is at or past ``a``. The completion bound ``T`` is
a calendar day, reached the same way from the completion's finish (the
project's completion milestone, or every activity when none is named). The
engine's progress rules are kept (a finished activity is a constant; the
remaining work of an activity in progress ignores its SS links under
retained logic and every link under override), no remaining work before the
data date, and the early-date constraints (start/finish on or after,
start/finish on). Each activity that may be shortened also has a binary
``y`` with ``x <= limit * y`` (for the ``count`` objective).

Because every rule is the engine's and the engine's early dates are the least
solution of these inequalities, a plan is feasible in the program exactly
when the engine's completion of it meets the target, on one calendar or
many, so the optimum is the cheapest plan whose engine completion meets the
target (Kelley and Walker 1959; Kelley 1961 for the least-cost curve).

Note that in a precedence network shortening an activity can delay the
completion (an FF or SF link on a shortened successor pushes its start
later, and its SS successors with it; Wiest 1981); the program sees this,
so the most that can be recovered is found by minimising the completion,
not by shortening everything.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from datetime import date
from itertools import pairwise

import numpy as np

from forensic.core.calendars import WorkdayIndex, day_number
from forensic.core.model import Calendar, Project, Snapshot

from .network import Crashable, Network, NetworkNode, pred_end

__all__ = ["Program"]

Expression = tuple[dict[int, float], float]  # a linear expression: (coefficients by variable, constant)


class Program:
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
        net = self.network = Network(snapshot, calendars, project, current)
        self.snapshot = snapshot
        self.project = project
        self.warnings = net.warnings
        self.dd, self.lo, self.hi = net.dd, net.lo, net.hi
        self.index_of = net.index_of
        self.default = net.default
        self.nodes = net.nodes
        self.completion_finished = net.completion_finished
        self.t_floor = net.t_floor
        self.targets = net.targets
        self.crashable: list[Crashable] = []
        self._lb: list[float] = []
        self._ub: list[float] = []
        self._integ: list[int] = []
        self._rows: list[tuple[dict[int, float], float, float]] = []  # (coefs, lower, upper)
        self._steps: dict[tuple[str, str, int], int] = {}
        self.infeasible = False
        # Variables: e per relevant activity, then x and y per crashable one, u per step, and T.
        self._add_activity_variables()
        self._add_link_rows()
        self._add_completion_rows()
        self._add_tightening_rows()
        self._assemble()

    def _new_var(self, lo_: float, hi_: float, integer: int) -> int:
        self._lb.append(lo_)
        self._ub.append(hi_)
        self._integ.append(integer)
        return len(self._lb) - 1

    def _add_activity_variables(self) -> None:
        """``e`` per relevant activity, then ``x`` and ``y`` per activity that may be shortened."""
        net = self.network
        for aid in net.order:
            nd = net.nodes[aid]
            lo_e = max(nd.lbe, nd.lbf - nd.dur)
            hi_e = min(nd.ube, nd.ubf - nd.dur + nd.lim)
            if lo_e > hi_e:
                self.infeasible = True
            nd.var = self._new_var(lo_e, hi_e, 0)
        x_vars: list[int] = []
        for aid in net.order:
            nd = net.nodes[aid]
            if nd.lim > 0:
                nd.crash = len(self.crashable)
                self.crashable.append(Crashable(nd.act, nd.lim, nd.cost, nd.dur))
                x_vars.append(self._new_var(0.0, float(nd.lim), 1))
        y_vars = [self._new_var(0.0, 1.0, 1) for _ in self.crashable]
        self.x_vars, self.y_vars = x_vars, y_vars

    def _boundary(self, nd: NetworkNode, end: str) -> Expression:
        """The boundary of an end as a linear expression (coefs, constant)."""
        if end == "s" or nd.dur == 0:
            return {nd.var: 1.0}, 0.0
        coefs = {nd.var: 1.0}
        if nd.crash is not None:
            coefs[self.x_vars[nd.crash]] = -1.0
        return coefs, float(nd.dur)

    def _mapped(self, nd: NetworkNode, end: str, to: WorkdayIndex | None) -> Expression:
        """The boundary of ``to``'s calendar (or, for ``None``, the day less the data date) an end passes."""
        coefs, const = self._boundary(nd, end)
        if to is nd.ix:
            return coefs, const
        L, U = nd.bounds(end)
        dd, lo = self.dd, self.lo

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
            u = self._steps.get(key)
            if u is None:
                u = self._steps[key] = self._new_var(0.0, 1.0, 1)
                self._integ[nd.var] = 1
                # u = 1 exactly when the boundary is at or past a_ (over L..U).
                r1 = dict(coefs)
                r1[u] = r1.get(u, 0.0) - (a_ - L)
                self._rows.append((r1, L - const, math.inf))
                r2 = dict(coefs)
                r2[u] = r2.get(u, 0.0) - (U - a_ + 1)
                self._rows.append((r2, -math.inf, a_ - 1 - const))
            out[u] = out.get(u, 0.0) + jump
        return out, const_out

    def _add_ge(self, left: Expression, right: Expression, lag: float) -> None:
        """left >= right + lag."""
        (cl, kl), (cr, kr) = left, right
        coefs = dict(cl)
        for v, c in cr.items():
            coefs[v] = coefs.get(v, 0.0) - c
        coefs = {v: c for v, c in coefs.items() if c != 0.0}
        if coefs:
            self._rows.append((coefs, lag + kr - kl, math.inf))

    def _add_link_rows(self) -> None:
        """The finish range of each shortened activity, and one inequality per link that can bind."""
        net = self.network
        for aid in net.order:
            nd = net.nodes[aid]
            if nd.crash is not None:  # the finish stays within its range
                coefs, const = self._boundary(nd, "f")
                self._rows.append((coefs, nd.lbf - const, nd.ubf - const))
            for link in net.into[aid]:
                if not net.moves(link) or id(link) in net.idle:
                    continue  # a constant (already in the lower bounds) or a link that never binds
                succ_end = "f" if link.type in ("FF", "SF") else "s"
                self._add_ge(self._boundary(nd, succ_end), self._mapped(net.nodes[link.pred], pred_end(link), nd.ix),
                             float(link.lag))

    def _add_completion_rows(self) -> None:
        """The completion bound ``T``: on or after the finish date of every completion activity."""
        self.t_var = self._new_var(self.t_floor, math.inf, 0)
        for aid in self.targets:
            nd = self.nodes[aid]
            shift = 0.0 if (nd.dur == 0 and nd.fl) else 1.0  # the finish date is the day before the boundary's
            self._add_ge(({self.t_var: 1.0}, 0.0), self._mapped(nd, "f", None), -shift)

    def _add_tightening_rows(self) -> None:
        """Valid cuts: the steps of an end in order, and ``x <= limit * y``."""
        # At or past a later step of an end means at or past every earlier one.
        for ((aid, end, _a), u), ((next_aid, next_end, _b), next_u) in pairwise(sorted(self._steps.items())):
            if (aid, end) == (next_aid, next_end):
                self._rows.append(({u: 1.0, next_u: -1.0}, 0.0, math.inf))
        for c, xv, yv in zip(self.crashable, self.x_vars, self.y_vars, strict=True):  # x <= limit * y
            self._rows.append(({xv: 1.0, yv: -float(c.limit)}, -math.inf, 0.0))

    def _assemble(self) -> None:
        """The sparse constraint matrix, the bounds and the integrality of the program."""
        self.n_vars = len(self._lb)
        self.q = len(self.crashable)
        self.n_steps = len(self._steps)
        data, ri, ci = [], [], []
        lower, upper = [], []
        for k, (coefs, lb_, ub_) in enumerate(self._rows):
            for v, c in coefs.items():
                ri.append(k)
                ci.append(v)
                data.append(c)
            lower.append(lb_)
            upper.append(ub_)
        from scipy.sparse import coo_array  # imported here: scipy costs half a second at start-up

        self.A = coo_array((data, (ri, ci)), shape=(len(self._rows), self.n_vars)).tocsr()
        self.row_lb = np.array(lower)
        self.row_ub = np.array(upper)
        self.var_lb = np.array(self._lb)
        self.var_ub = np.array(self._ub)
        self.integrality = np.array(self._integ)
        self.costs = np.array([c.cost for c in self.crashable])

    def target_time(self, target: date) -> float:
        """The program's bound on ``T`` for a completion dated on or before ``target``."""
        return float(day_number(target) - self.dd)
