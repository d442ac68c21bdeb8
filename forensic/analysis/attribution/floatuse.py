"""The float ledger: float used on the paths near the critical path, per window, by party.

The delay ledger (:mod:`forensic.analysis.attribution.ledger`) counts only
the days that moved the completion. A delay that float absorbs costs no
completion days, yet it uses a resource that the parties share, and whose
delay used it is what an expert is asked next (who consumed the float
before the contractor's delay became critical?). This module records it.

Rule
----
For each window (the whole window, not its slices):

* **The paths near the critical path** are the earlier update's work not
  finished and not critical whose total float is at most the critical float
  plus ``margin`` working days (10 by default), grouped where links join
  them (the grouping of :func:`forensic.analysis.nearcritical.path_groups`;
  GAO-16-89G best practice 6 on near-critical paths; AACE RP 49R-06; the
  10-day margin is common practice).
* Each path is read at its **most delayed activity** ``x`` (largest finish
  variance ``v(x)`` from the earlier update to the half-step, in the delay
  unit; ties: the latest planned finish, the furthest along the path, so
  the walk back from it passes every delay upstream; then id). Its float before is
  ``F = count(late finish) - count(early finish)`` of ``x`` in the earlier
  update, in the delay unit.
* ``v(x)`` is handed back along the driving path by the same walk as the
  window's progress slip (:func:`forensic.analysis.attribution.contributors.split_slip`):
  each activity keeps its own share. Shares kept by work that was
  *critical* in the earlier update are the shift of the whole programme
  with the completion, not a use of this path's float, and are left out;
  gains (negative shares) are left out too.
* The remaining shares, in date order along the path (first come, first
  served: the delay that came first used the float first), use the float
  up to ``F``; what lies beyond ``F`` is critical delay, which the delay
  ledger already has. Each used share goes to the events covering it or
  to the performing party by the contributor rule
  (:func:`forensic.analysis.attribution.contributors.attribute_days`).

So an owner delay absorbed by float is recorded even when it costs no
completion days, and every path's ``by_party`` adds up to its ``used``.
Per window and cumulative, ``by_party`` sums the paths: they are
*float-days on near-critical paths*, so a delay that used the float of two
paths counts on each.

References
----------
AACE International RP 29R-03, sec. 4.2 (float and its ownership, from
memory); SCL Delay and Disruption Protocol 2nd ed., core principle 8 and
paras. 8.1-8.4 (float ownership; from memory); US GAO-16-89G, best
practice 6 (near-critical paths and total float).
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from forensic.analysis.attribution.contributors import attribute_days, split_slip, window_context
from forensic.analysis.attribution.results import (
    DelayAnalysis,
    FloatDelay,
    PathFloatUse,
    WindowContext,
    sum_counts,
)
from forensic.analysis.nearcritical import path_groups
from forensic.analysis.windows import WindowRun
from forensic.core.model import Casefile, frozen_mapping
from forensic.core.tables import Table
from forensic.core.units import unit_counter

__all__ = [
    "FLOAT_MARGIN",
    "FLOAT_USED_COLUMNS",
    "FloatDelay",
    "FloatLedger",
    "FloatLedgerRow",
    "PathFloatUse",
    "float_ledger",
    "float_ledger_json",
    "float_used_json",
    "float_used_table",
    "window_float_use",
]

FLOAT_MARGIN = 10  # working days above the critical float (common practice; GAO-16-89G bp 6)


@dataclass(frozen=True, slots=True)
class FloatLedgerRow:
    """One window's float-days used on near-critical paths, by party."""

    window: str
    by_party: Mapping[str, int]
    total: int


@dataclass(frozen=True, slots=True)
class FloatLedger:
    """The float ledger: each window's row and the cumulative float-days by party."""

    margin: int
    windows: tuple[FloatLedgerRow, ...]
    cumulative: Mapping[str, int]

    @property
    def total(self) -> int:
        return sum(self.cumulative.values())


def _near_paths(ctx: WindowContext, margin: int) -> list[set[str]]:
    """The earlier update's unfinished, non-critical work within ``margin`` of critical, grouped by links."""
    crit = ctx.casefile.project.critical_float
    table = ctx.before.activities
    if hasattr(table, "column"):  # the engine's arrays: no record is built for the other activities
        tf = table.column("total_float")
        mask = (table.column("status") != 2) & ~table.column("critical") & (tf > crit) & (tf <= crit + margin)
        ids = list(table)
        candidates = [ids[i] for i in np.flatnonzero(mask).tolist()]
    else:
        candidates = [
            a for a, x in table.items()
            if x.status != "finished" and not x.critical and x.total_float is not None
            and crit < x.total_float <= crit + margin
        ]
    near = {a for a in candidates if a in ctx.v}
    return path_groups(near, ctx.run.earlier) if near else []


def _path_use(ctx: WindowContext, group: set[str], count) -> PathFloatUse | None:
    before = ctx.before
    x = min(group, key=lambda a: (-ctx.v[a], -before[a].early_finish.toordinal(), a))
    vx = ctx.v[x]
    if vx <= 0:
        return None
    bx = before[x]
    room = count(bx.late_finish) - count(bx.early_finish)
    if room <= 0:
        return None
    steps = split_slip(ctx, x, vx, local=False)
    delays: list[FloatDelay] = []
    left = room
    for aid, days in reversed(steps):  # date order along the path
        if days <= 0 or left == 0:
            continue
        if aid in before.activities and before[aid].critical:
            continue  # the shift of the whole programme with the completion
        take = min(days, left)
        left -= take
        delays.extend(FloatDelay(c.activity, c.event, c.party, c.days) for c in attribute_days(ctx, aid, take))
    used = room - left
    if used == 0:
        return None
    by_party: dict[str, int] = {}
    for d in delays:
        by_party[d.party] = by_party.get(d.party, 0) + d.days
    order = sorted(group, key=lambda a: (before[a].early_start, before[a].early_finish, a))
    return PathFloatUse(x, tuple(order), room, used, frozen_mapping(by_party), tuple(delays))


def window_float_use(casefile: Casefile, run: WindowRun, margin: int = FLOAT_MARGIN, *,
                     ctx: WindowContext | None = None) -> tuple[PathFloatUse, ...]:
    """The float each near-critical path used in one window (rule in the module notes).

    Paths come in the order of their first activity's planned start, then id.
    ``ctx`` is the window's context when the caller already built it.
    """
    ctx = ctx or window_context(casefile, run)
    count = unit_counter(casefile)
    uses = [u for g in _near_paths(ctx, margin) if (u := _path_use(ctx, g, count)) is not None]
    return tuple(sorted(uses, key=lambda u: (ctx.before[u.activities[0]].early_start, u.activities)))


def float_ledger(analysis: DelayAnalysis, margin: int = FLOAT_MARGIN) -> FloatLedger:
    """Each window's float-days by party and the cumulative total (sums of the paths)."""
    rows = []
    for w, att in zip(analysis.windows.windows, analysis.attributions, strict=True):
        by_party = sum_counts([u.by_party for u in att.float_used])
        rows.append(FloatLedgerRow(w.label, frozen_mapping(by_party), sum(by_party.values())))
    return FloatLedger(margin, tuple(rows), frozen_mapping(sum_counts([r.by_party for r in rows])))


def float_used_json(uses: Sequence[PathFloatUse], margin: int = FLOAT_MARGIN) -> dict[str, Any]:
    """A window's ``float_used`` object of ``windows --json`` (docs/windows.md)."""
    return {
        "margin": margin,
        "by_party": sum_counts([u.by_party for u in uses]),
        "paths": [
            {
                "activity": u.activity,
                "path": list(u.activities),
                "float_before": u.float_before,
                "used": u.used,
                "by_party": dict(u.by_party),
                "delays": [{"activity": d.activity, "event": d.event, "party": d.party, "days": d.days} for d in u.delays],
            }
            for u in uses
        ],
    }


def float_ledger_json(ledger: FloatLedger, unit: str) -> dict[str, Any]:
    """The ``float_ledger`` object of ``windows --json`` (docs/windows.md)."""
    return {
        "unit": unit,
        "margin": ledger.margin,
        "windows": [{"window": r.window, "by_party": dict(r.by_party), "total": r.total} for r in ledger.windows],
        "cumulative": {"by_party": dict(ledger.cumulative), "total": ledger.total},
    }



FLOAT_USED_COLUMNS = ("window", "path_at", "float_before", "used", "activity", "event", "party", "days")


def float_used_table(analysis: DelayAnalysis) -> Table:
    """One row per delay that used float on a near-critical path, window by window."""
    rows = []
    for w, att in zip(analysis.windows.windows, analysis.attributions, strict=True):
        for u in att.float_used:
            for d in u.delays:
                rows.append((w.label, u.activity, u.float_before, u.used, d.activity, d.event, d.party, d.days))
    return Table("float-used", FLOAT_USED_COLUMNS, tuple(rows))
