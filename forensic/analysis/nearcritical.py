"""Near-critical trend and key dates against their contractual dates, update by update.

Two readings of every scheduled snapshot that an expert puts beside the
critical path:

* **Near-critical work**: how many activities still to do are within 0, 5
  and 10 working days of being critical (total float at most the critical
  float plus the margin), and how many separate paths they form (groups
  connected by links among themselves). A rising count, or paths merging,
  shows a programme losing its room before the completion moves. The
  thresholds and the reading follow the GAO Schedule Assessment Guide
  (GAO-16-89G, best practice 6, on monitoring near-critical paths and total
  float) and AACE RP 49R-06 (near-critical paths as part of identifying the
  critical path); the 5 and 10 working-day margins are common practice.
* **Key dates**: each milestone that carries a date constraint (a sectional
  completion or another contractual key date: ``finish-by``,
  ``finish-fixed``, ``start-by``, ``start-fixed``), its forecast against
  that date, and its float to the date in working days of its own calendar,
  negative when it is forecast late. This is float measured against the
  contractual date rather than against the network's own completion.

Pure functions over the model and the engine's results; nothing is read or
written here.

References
----------
US GAO, Schedule Assessment Guide, GAO-16-89G (2015), best practice 6.
AACE International Recommended Practice 49R-06, Identifying the Critical Path (2010).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from datetime import date

from forensic.analysis.trend import contract_float
from forensic.core.engine import ScheduleResult
from forensic.core.model import Casefile, Snapshot

__all__ = [
    "DEFAULT_MARGINS",
    "KEY_DATE_CONSTRAINTS",
    "KeyDate",
    "NearCritical",
    "float_to_date",
    "key_dates",
    "near_critical",
    "near_critical_trend",
    "path_groups",
]

# Working days of total float above the critical float (common practice).
DEFAULT_MARGINS: tuple[int, ...] = (0, 5, 10)
# Constraints that carry a contractual key date for a milestone (casefile format, Constraints).
KEY_DATE_CONSTRAINTS = ("finish-by", "finish-fixed", "start-by", "start-fixed")


@dataclass(frozen=True, slots=True)
class NearCritical:
    """One snapshot's near-critical counts: for each margin, activities within it and the paths they form."""

    snapshot_id: str
    data_date: date
    margins: tuple[int, ...]
    counts: tuple[int, ...]
    paths: tuple[int, ...]


@dataclass(frozen=True, slots=True)
class KeyDate:
    """A key milestone at one snapshot: its forecast, its contractual date and the float to it (working days)."""

    snapshot_id: str
    milestone: str
    name: str
    constraint: str
    key_date: date
    forecast: date | None
    float_to_date: int | None  # None when the milestone is finished
    finished: bool


def path_groups(ids: set[str], snap: Snapshot) -> list[set[str]]:
    """Groups of ``ids`` joined by links between members (weakly connected components), by union-find.

    Each group is one near-critical path in the sense of GAO-16-89G best
    practice 6; groups come in the order of their smallest id.
    """
    parent = {a: a for a in ids}

    def find(a: str) -> str:
        while parent[a] != a:
            parent[a] = parent[parent[a]]
            a = parent[a]
        return a

    for link in snap.links:
        if link.pred in ids and link.succ in ids:
            ra, rb = find(link.pred), find(link.succ)
            if ra != rb:
                parent[ra] = rb
    groups: dict[str, set[str]] = {}
    for a in sorted(ids):
        groups.setdefault(find(a), set()).add(a)
    return list(groups.values())


def near_critical(
    result: ScheduleResult, snap: Snapshot, critical_float: int, margins: Sequence[int] = DEFAULT_MARGINS,
) -> NearCritical:
    """Count the activities still to do within each margin of critical, and the separate paths they form.

    An activity is within margin ``m`` when it is not finished and its total
    float is at most ``critical_float + m`` working days (so margin 0 counts
    the critical activities).
    """
    counts, paths = [], []
    for m in margins:
        ids = {
            a for a, x in result.activities.items()
            if x.status != "finished" and x.total_float is not None and x.total_float <= critical_float + m
        }
        counts.append(len(ids))
        paths.append(len(path_groups(ids, snap)) if ids else 0)
    return NearCritical(result.snapshot_id, result.data_date, tuple(margins), tuple(counts), tuple(paths))


def near_critical_trend(
    casefile: Casefile, schedules: Sequence[ScheduleResult], margins: Sequence[int] = DEFAULT_MARGINS,
) -> tuple[NearCritical, ...]:
    """:func:`near_critical` for every snapshot, oldest first (``schedules`` in the casefile's order)."""
    crit = casefile.project.critical_float
    return tuple(near_critical(r, s, crit, margins) for r, s in zip(schedules, casefile.snapshots, strict=True))


def float_to_date(casefile: Casefile, calendar_id: str | None, forecast: date, key_date: date) -> int:
    """Working days from a forecast to a key date on an activity's calendar; negative when the forecast is later.

    The counting is :func:`forensic.analysis.trend.contract_float` (working days after
    the forecast up to and including the key date, the float a finish-by
    constraint gives in the engine's backward pass); this only picks the
    calendar (the activity's own, else the project's default).
    """
    return contract_float(casefile.calendars[calendar_id or casefile.project.default_calendar], forecast, key_date)


def key_dates(casefile: Casefile, schedules: Sequence[ScheduleResult]) -> tuple[tuple[KeyDate, ...], ...]:
    """The key dates of every snapshot, oldest first.

    First the completion against the project's contract completion (when
    the casefile gives one; constraint ``contract-completion``), then the
    milestones with a date constraint, in file order.
    """
    out = []
    contract = casefile.project.contract_completion
    for res, snap in zip(schedules, casefile.snapshots, strict=True):
        rows = []
        comp = snap.activities.get(res.completion_id)
        if contract is not None and comp is not None:
            done = res.activities[res.completion_id].status == "finished"
            rows.append(KeyDate(
                snapshot_id=snap.id, milestone=comp.id, name=comp.name, constraint="contract-completion",
                key_date=contract, forecast=res.completion,
                float_to_date=None if done else float_to_date(casefile, comp.calendar, res.completion, contract),
                finished=done,
            ))
        for act in snap.activities.values():
            if not act.is_milestone or act.constraint not in KEY_DATE_CONSTRAINTS or act.constraint_date is None \
                    or act.id == res.completion_id:
                continue
            x = res.activities.get(act.id)
            if x is None:
                continue
            when = x.early_start if act.constraint.startswith("start") else x.early_finish
            done = x.status == "finished"
            rows.append(KeyDate(
                snapshot_id=snap.id, milestone=act.id, name=act.name, constraint=act.constraint,
                key_date=act.constraint_date, forecast=when,
                float_to_date=None if done else float_to_date(casefile, act.calendar, when, act.constraint_date),
                finished=done,
            ))
        out.append(tuple(rows))
    return tuple(out)
