"""What changed between two snapshots (usually consecutive updates).

A forensic scheduler reviews each update against the one before it: work
added or deleted, durations, calendars and constraints edited, logic
revised, actual dates rewritten after they were reported, progress that
went backwards, finished work reopened, and what those changes did to the
critical path and the forecast completion (AACE RP 29R-03, sec. 2.3 on
update review and the "bifurcation" of progress from revisions; SCL Delay
and Disruption Protocol 2nd ed., para. 4 on updating the programme; GAO
Schedule Assessment Guide, best practice 9). Some of these changes are
easy to hide inside a routine update; listing every one, with its before and
after values, is what makes them visible.

Dates, floats and the longest path come from the scheduling engine
(:func:`forensic.core.engine.schedule`); nothing here re-implements it.

References
----------
AACE International Recommended Practice 29R-03, Forensic Schedule Analysis
(2011), sec. 2.3 (enhancing the source schedules; identifying changes).
Society of Construction Law, Delay and Disruption Protocol, 2nd ed. (2017).
GAO-16-89G, Schedule Assessment Guide (2015), best practice 9.
AACE International Recommended Practice 49R-06, Identifying the Critical Path.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from datetime import date, timedelta
from typing import Any

from forensic.analysis.quality.sequence import out_of_sequence_links
from forensic.core.calendars import workdays_between
from forensic.core.engine import ScheduleResult, schedule
from forensic.core.model import Casefile, Link, Snapshot
from forensic.core.tables import Table

__all__ = [
    "CHANGE_KINDS",
    "Change",
    "Comparison",
    "compare_json",
    "compare_snapshots",
    "compare_table",
]

# The kinds of change, in the order they are reported (a stable contract).
CHANGE_KINDS = (
    "activity-added",
    "activity-deleted",
    "name",
    "duration",
    "remaining",
    "calendar",
    "constraint",
    "party",
    "area",
    "link-added",
    "link-deleted",
    "link-changed",
    "actual-revised",
    "progress-backwards",
    "reopened",
    "out-of-sequence",
    "longest-path-joined",
    "longest-path-left",
    "completion-moved",
    "completion-float",
)

# Plain attribute edits: the kind, then the Activity attribute(s) it watches.
_FIELDS = (
    ("name", ("name",)),
    ("duration", ("duration",)),
    ("remaining", ("remaining_duration",)),
    ("calendar", ("calendar",)),
    ("constraint", ("constraint", "constraint_date")),
    ("party", ("party",)),
    ("area", ("area",)),
)


@dataclass(frozen=True, slots=True)
class Change:
    """One change between the two snapshots.

    ``activity`` is the activity changed (for a link, its successor, whose
    logic changed; ``pred`` and ``succ`` then name the link). ``field`` is
    the attribute (``duration``, ``actual_finish``, ``lag`` ...), ``before``
    and ``after`` its values (``None`` when absent). ``longest_path`` is true
    when the activity is on the longest path of either snapshot, or the link
    touches such an activity.
    """

    kind: str
    activity: str
    field: str
    before: Any
    after: Any
    longest_path: bool
    pred: str | None = None
    succ: str | None = None
    note: str = ""


@dataclass(frozen=True, slots=True)
class Comparison:
    """Two snapshots side by side: their schedules' headlines and every change."""

    old_id: str
    new_id: str
    old_data_date: date
    new_data_date: date
    old_completion: date
    new_completion: date
    completion_id: str
    completion_change_days: int  # calendar days, later is positive
    completion_change_workdays: int  # working days of the completion's calendar (new snapshot)
    old_completion_float: int | None
    new_completion_float: int | None
    old_longest_path: tuple[str, ...]
    new_longest_path: tuple[str, ...]
    old_critical: tuple[str, ...]
    new_critical: tuple[str, ...]
    changes: tuple[Change, ...]
    old_longest_paths: tuple[tuple[str, ...], ...] = ()  # the longest path as chains (engine's longest_paths)
    new_longest_paths: tuple[tuple[str, ...], ...] = ()

    def of_kind(self, kind: str) -> tuple[Change, ...]:
        return tuple(c for c in self.changes if c.kind == kind)

    @property
    def joined(self) -> tuple[str, ...]:
        return tuple(c.activity for c in self.of_kind("longest-path-joined"))

    @property
    def left(self) -> tuple[str, ...]:
        return tuple(c.activity for c in self.of_kind("longest-path-left"))


def _match_links(old: Sequence[Link], new: Sequence[Link]) -> tuple[list, list, list]:
    """Pair links by (pred, succ): same type first, then in file order.

    Returns (pairs of old/new links, deleted links, added links).
    """
    by_pair_old: dict[tuple[str, str], list[Link]] = {}
    by_pair_new: dict[tuple[str, str], list[Link]] = {}
    for link in old:
        by_pair_old.setdefault((link.pred, link.succ), []).append(link)
    for link in new:
        by_pair_new.setdefault((link.pred, link.succ), []).append(link)
    pairs, deleted, added = [], [], []
    for pair in {**by_pair_old, **by_pair_new}:
        olds = list(by_pair_old.get(pair, []))
        news = list(by_pair_new.get(pair, []))
        for o in list(olds):
            same = next((n for n in news if n.type == o.type), None)
            if same is not None:
                pairs.append((o, same))
                olds.remove(o)
                news.remove(same)
        for o, n in zip(olds, news, strict=False):
            pairs.append((o, n))
        deleted.extend(olds[len(news):])
        added.extend(news[len(olds):])
    return pairs, deleted, added


def compare_snapshots(casefile: Casefile, old_id: str, new_id: str) -> Comparison:
    """List every change from snapshot ``old_id`` to snapshot ``new_id``.

    Parameters
    ----------
    casefile : Casefile
        Holds both snapshots, their calendars and the project settings.
    old_id, new_id : str
        The earlier and the later snapshot (any two; usually consecutive).

    Returns
    -------
    Comparison
        Changes in :data:`CHANGE_KINDS` order, then by activity in the new
        snapshot's file order (deleted activities in the old one's).

    Notes
    -----
    * An actual date is *revised* when the old snapshot reported it and the
      new one reports another (or none: a start withdrawn; a finish
      withdrawn is reported as ``reopened``).
    * Progress is *out of sequence* when an actual date in the new snapshot
      breaks a link that was not broken in the old one (the successor
      started, or finished, before the predecessor it waits for); ``before``
      is then ``None`` and ``after`` the successor's actual date.
    * Progress goes *backwards* when the remaining duration rises while the
      original duration (the scope) is unchanged, or the percent complete
      falls.
    * The critical path compared is the longest path traced back from the
      completion through driving links (AACE RP 49R-06). An activity that
      leaves it because it finished is noted so.
    * Completion change is in calendar days and in working days of the
      completion's calendar; completion float is the engine's.

    References
    ----------
    AACE RP 29R-03 (2011), sec. 2.3; AACE RP 49R-06; SCL Protocol 2nd ed.
    """
    old_s, new_s = casefile.snapshot(old_id), casefile.snapshot(new_id)
    old_r = schedule(old_s, casefile.calendars, casefile.project)
    new_r = schedule(new_s, casefile.calendars, casefile.project)
    on_path = set(old_r.longest_path) | set(new_r.longest_path)
    changes = _activity_changes(old_s, new_s, on_path)
    changes += _link_changes(old_s, new_s, on_path)
    changes += _progress_changes(old_s, new_s, on_path)
    changes += _sequence_changes(old_s, new_s, on_path)
    changes += _path_changes(old_r, new_r, new_s)
    cal_id = new_s.activities[new_r.completion_id].calendar or casefile.project.default_calendar
    one = timedelta(days=1)
    wd = workdays_between(casefile.calendars[cal_id], old_r.completion + one, new_r.completion + one)
    if new_r.completion != old_r.completion:
        changes.append(Change("completion-moved", new_r.completion_id, "finish", old_r.completion,
                              new_r.completion, True,
                              note=f"{(new_r.completion - old_r.completion).days} calendar days, {wd} working days"))
    if new_r.completion_float != old_r.completion_float:
        changes.append(Change("completion-float", new_r.completion_id, "total_float", old_r.completion_float,
                              new_r.completion_float, True))
    rank = {k: i for i, k in enumerate(CHANGE_KINDS)}
    changes.sort(key=lambda c: rank[c.kind])  # stable: keeps the activity order within a kind
    return Comparison(
        old_id=old_s.id,
        new_id=new_s.id,
        old_data_date=old_s.data_date,
        new_data_date=new_s.data_date,
        old_completion=old_r.completion,
        new_completion=new_r.completion,
        completion_id=new_r.completion_id,
        completion_change_days=(new_r.completion - old_r.completion).days,
        completion_change_workdays=wd,
        old_completion_float=old_r.completion_float,
        new_completion_float=new_r.completion_float,
        old_longest_path=old_r.longest_path,
        new_longest_path=new_r.longest_path,
        old_critical=old_r.critical_ids,
        new_critical=new_r.critical_ids,
        changes=tuple(changes),
        old_longest_paths=old_r.longest_paths,
        new_longest_paths=new_r.longest_paths,
    )


def _activity_changes(old_s: Snapshot, new_s: Snapshot, on_path: set[str]) -> list[Change]:
    olds, news = old_s.activities, new_s.activities
    out: list[Change] = []
    for aid, a in news.items():
        if aid not in olds:
            out.append(Change("activity-added", aid, "name", None, a.name, aid in on_path))
    for aid, a in olds.items():
        if aid not in news:
            out.append(Change("activity-deleted", aid, "name", a.name, None, aid in on_path))
    for aid, n in news.items():
        o = olds.get(aid)
        if o is None:
            continue
        # A rise in remaining duration that is really a reopening or a step
        # backwards is reported once, under that kind (see _progress_changes).
        backwards = (o.is_finished and not n.is_finished) or (
            n.duration == o.duration and n.remaining_duration > o.remaining_duration
        )
        for kind, attrs in _FIELDS:
            for attr in attrs:
                before, after = getattr(o, attr), getattr(n, attr)
                if attr == "remaining_duration" and backwards:
                    continue
                if before != after:
                    field = "remaining" if attr == "remaining_duration" else attr
                    out.append(Change(kind, aid, field, before, after, aid in on_path))
    return out


def _link_changes(old_s: Snapshot, new_s: Snapshot, on_path: set[str]) -> list[Change]:
    pairs, deleted, added = _match_links(old_s.links, new_s.links)
    out: list[Change] = []

    def touches(link: Link) -> bool:
        return link.pred in on_path or link.succ in on_path

    def show(link: Link) -> str:
        return f"{link.type} lag {link.lag}"

    for link in added:
        out.append(Change("link-added", link.succ, "link", None, show(link), touches(link), link.pred, link.succ))
    for link in deleted:
        out.append(Change("link-deleted", link.succ, "link", show(link), None, touches(link), link.pred, link.succ))
    for o, n in pairs:
        for field in ("type", "lag"):
            if getattr(o, field) != getattr(n, field):
                out.append(Change("link-changed", n.succ, field, getattr(o, field), getattr(n, field),
                                  touches(n), n.pred, n.succ))
    return out


def _progress_changes(old_s: Snapshot, new_s: Snapshot, on_path: set[str]) -> list[Change]:
    out: list[Change] = []
    for aid, n in new_s.activities.items():
        o = old_s.activities.get(aid)
        if o is None:
            continue
        p = aid in on_path
        if o.actual_start is not None and n.actual_start != o.actual_start:
            out.append(Change("actual-revised", aid, "actual_start", o.actual_start, n.actual_start, p))
        if o.actual_finish is not None and n.actual_finish is not None and n.actual_finish != o.actual_finish:
            out.append(Change("actual-revised", aid, "actual_finish", o.actual_finish, n.actual_finish, p))
        if o.actual_finish is not None and n.actual_finish is None:
            out.append(Change("reopened", aid, "actual_finish", o.actual_finish, None, p))
        elif n.duration == o.duration and n.remaining_duration > o.remaining_duration:
            out.append(Change("progress-backwards", aid, "remaining", o.remaining_duration,
                              n.remaining_duration, p, note="remaining duration up with the duration unchanged"))
        if (o.percent_complete is not None and n.percent_complete is not None
                and n.percent_complete < o.percent_complete):
            out.append(Change("progress-backwards", aid, "percent_complete", o.percent_complete,
                              n.percent_complete, p, note="percent complete down"))
    return out


def _sequence_changes(old_s: Snapshot, new_s: Snapshot, on_path: set[str]) -> list[Change]:
    """Links out of sequence in the new snapshot that were not in the old one."""
    before = {(k.pred, k.succ, k.type) for k in out_of_sequence_links(old_s)}
    out: list[Change] = []
    for link in out_of_sequence_links(new_s):
        if link.key in before:
            continue
        s = new_s.activities[link.succ]
        field = "actual_start" if link.type in ("FS", "SS") else "actual_finish"
        waits_for = "finish" if link.type in ("FS", "FF") else "start"
        out.append(Change("out-of-sequence", link.succ, field, None, getattr(s, field) or s.actual_start,
                          link.pred in on_path or link.succ in on_path, link.pred, link.succ,
                          note=f"{link.type} link: came before {link.pred}'s {waits_for}"))
    return out


def _path_changes(old_r: ScheduleResult, new_r: ScheduleResult, new_s: Snapshot) -> list[Change]:
    old_p, new_p = set(old_r.longest_path), set(new_r.longest_path)
    out = [
        Change("longest-path-joined", aid, "longest_path", False, True, True)
        for aid in new_r.longest_path if aid not in old_p
    ]
    for aid in old_r.longest_path:
        if aid in new_p:
            continue
        a = new_s.activities.get(aid)
        note = "deleted" if a is None else "finished" if a.is_finished else ""
        out.append(Change("longest-path-left", aid, "longest_path", True, False, True, note=note))
    return out


# -- tables ----------------------------------------------------------------

COMPARE_COLUMNS = ("kind", "activity", "pred", "succ", "field", "before", "after", "longest_path", "note")


def compare_table(comparison: Comparison) -> Table:
    """One row per change (the ``forensic compare --csv`` table)."""
    rows = tuple(
        (c.kind, c.activity, c.pred, c.succ, c.field, c.before, c.after, c.longest_path, c.note)
        for c in comparison.changes
    )
    return Table(f"compare-{comparison.old_id}-{comparison.new_id}", COMPARE_COLUMNS, rows)


def compare_json(comparison: Comparison) -> dict[str, Any]:
    """The ``forensic compare --json`` object (keys in docs/quality-and-compare.md)."""
    c = comparison
    counts = {k: 0 for k in CHANGE_KINDS}
    for ch in c.changes:
        counts[ch.kind] += 1
    return {
        "old": {"snapshot": c.old_id, "data_date": c.old_data_date, "completion": c.old_completion,
                "completion_float": c.old_completion_float, "longest_path": list(c.old_longest_path),
                "longest_paths": [list(x) for x in c.old_longest_paths], "critical": list(c.old_critical)},
        "new": {"snapshot": c.new_id, "data_date": c.new_data_date, "completion": c.new_completion,
                "completion_float": c.new_completion_float, "longest_path": list(c.new_longest_path),
                "longest_paths": [list(x) for x in c.new_longest_paths], "critical": list(c.new_critical)},
        "completion_activity": c.completion_id,
        "completion_change_days": c.completion_change_days,
        "completion_change_workdays": c.completion_change_workdays,
        "completion_float_change": (
            None if c.old_completion_float is None or c.new_completion_float is None
            else c.new_completion_float - c.old_completion_float
        ),
        "longest_path_joined": list(c.joined),
        "longest_path_left": list(c.left),
        "counts": counts,
        "changes": [
            {"kind": ch.kind, "activity": ch.activity, "pred": ch.pred, "succ": ch.succ, "field": ch.field,
             "before": ch.before, "after": ch.after, "longest_path": ch.longest_path, "note": ch.note}
            for ch in c.changes
        ],
    }
