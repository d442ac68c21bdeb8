"""The steps of a time impact analysis before the reschedule (AACE RP 52R-06).

The unimpacted schedule (:func:`unimpacted_snapshot`: the last update on or
before the event), progress brought forward to the event's start as
planned (:func:`progress_to`), the fragnet inserted with its ties
(:func:`insert_fragnet`: unknown ties, clashing ids and loops refused by
name), and, for an event without a fragnet, its days added to the
activities it hit (:func:`apply_hold_up`). The rules are in the notes of
:mod:`forensic.analysis.impact`.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import replace
from datetime import date, timedelta

from forensic.analysis.event_cost import Representation
from forensic.analysis.impact_results import HoldUp
from forensic.core.calendars import workdays_between
from forensic.core.engine import schedule, topological_order
from forensic.core.errors import FragnetError, NotFoundError
from forensic.core.model import (
    Activity,
    Calendar,
    Casefile,
    Event,
    Fragnet,
    Project,
    Snapshot,
    frozen_mapping,
)

__all__ = ["apply_hold_up", "insert_fragnet", "progress_to", "unimpacted_snapshot"]

_DAY = timedelta(days=1)


def unimpacted_snapshot(casefile: Casefile, event: Event) -> Snapshot:
    """The snapshot whose data date is the last on or before the event's start (AACE RP 52R-06).

    Raises
    ------
    NotFoundError
        When every snapshot's data date is after the event's start.
    """
    chosen = None
    for snap in casefile.snapshots:
        if snap.data_date <= event.start:
            chosen = snap
    if chosen is None:
        first = casefile.snapshots[0]
        msg = (
            f"event {event.id} starts on {event.start.isoformat()}, before the data date of every "
            f"snapshot (the first, {first.id}, is {first.data_date.isoformat()}); name one with --into"
        )
        raise NotFoundError(msg)
    return chosen


def progress_to(
    snapshot: Snapshot, calendars: Mapping[str, Calendar], project: Project, when: date
) -> Snapshot:
    """Bring a snapshot forward to ``when``, assuming work proceeds as planned in it.

    Every activity is progressed by its early dates in ``snapshot``: finished
    when its early finish is before ``when``; in progress, from its early
    start (or its actual start), when its early start is before ``when``,
    with the working days from ``when`` to its early finish remaining; not
    started otherwise. A milestone dated before ``when`` is reached on its
    date. The data date becomes ``when``. A ``when`` on or before the data
    date returns the snapshot unchanged.

    References
    ----------
    AACE RP 52R-06, on updating the unimpacted schedule to the event's start.
    """
    if when <= snapshot.data_date:
        return snapshot
    r = schedule(snapshot, calendars, project)
    acts: dict[str, Activity] = {}
    for aid, a in snapshot.activities.items():
        x = r[aid]
        if a.is_finished:
            acts[aid] = a
        elif a.is_milestone or a.duration == 0:
            day = x.early_finish
            acts[aid] = replace(a, actual_start=day, actual_finish=day, remaining=0) if day < when else a
        elif x.early_finish < when:
            acts[aid] = replace(a, actual_start=a.actual_start or x.early_start,
                                actual_finish=x.early_finish, remaining=0)
        elif x.early_start < when:
            cal = calendars[a.calendar or project.default_calendar]
            left = workdays_between(cal, when, x.early_finish + _DAY)
            if a.is_started:
                left = min(left, a.remaining_duration)
            acts[aid] = replace(a, actual_start=a.actual_start or x.early_start, remaining=max(left, 1))
        else:
            acts[aid] = a
    return replace(snapshot, data_date=when, activities=frozen_mapping(acts))


def insert_fragnet(snapshot: Snapshot, fragnet: Fragnet) -> tuple[Snapshot, tuple[str, ...]]:
    """The snapshot with the fragnet's activities and links added, and any warnings.

    Raises
    ------
    FragnetError
        When a fragnet activity's id is already in the snapshot, or a link
        names an activity that is in neither; every offending id is named.
    LogicLoopError
        When the fragnet's links close a loop with the snapshot's logic; the
        error names the activities in the loop.

    References
    ----------
    AACE RP 52R-06, on inserting the fragnet and its ties into the unimpacted schedule.
    """
    where = f"fragnet {fragnet.id} inserted into snapshot {snapshot.id}"
    clash = [a for a in fragnet.activities if a in snapshot.activities]
    if clash:
        msg = (f"{where}: activities {', '.join(clash)} are already in the snapshot; a fragnet adds "
               "new activities (choose a snapshot from before the event was recorded with --into)")
        raise FragnetError(msg)
    known = set(snapshot.activities) | set(fragnet.activities)
    src = fragnet.sources.get("links", f"fragnets/{fragnet.id}/links.csv")
    bad = []
    for link in fragnet.links:
        for aid in (link.pred, link.succ):
            if aid not in known:
                line = f", line {link.line}" if link.line is not None else ""
                bad.append(f"{src}{line}: link {link.pred} -> {link.succ} ties to unknown activity {aid!r}")
    if bad:
        msg = f"{where}: " + "; ".join(bad) + " (expected an activity of the fragnet or of the snapshot)"
        raise FragnetError(msg)
    acts = {**snapshot.activities, **fragnet.activities}
    links = (*snapshot.links, *fragnet.links)
    ids = list(acts)
    pos = {a: i for i, a in enumerate(ids)}
    succs: list[list[int]] = [[] for _ in ids]
    for link in links:
        succs[pos[link.pred]].append(pos[link.succ])
    topological_order(ids, succs, where=where)
    warnings = []
    for link in fragnet.links:
        s = snapshot.activities.get(link.succ)
        if s is not None and s.is_finished:
            warnings.append(f"{where}: the tie {link.pred} -> {link.succ} has no effect ({link.succ} is finished)")
    new = replace(snapshot, activities=frozen_mapping(acts), links=links)
    return new, tuple(warnings)


def apply_hold_up(
    snapshot: Snapshot, rep: Representation
) -> tuple[Snapshot, tuple[HoldUp, ...], tuple[str, ...]]:
    """Represent an event without a fragnet by the working days it cost each activity it hit.

    Each activity of ``rep.days`` that is a task not finished in
    ``snapshot`` gains its days on its duration and its remaining duration:
    the work takes longer by what the event cost it (a stated
    ``days_lost`` or the estimate from the record), never by the whole of
    the event's period, since an event that slows work is not a total
    stoppage of it. Milestones, finished work and activities not in the
    snapshot are passed over with a warning.

    References
    ----------
    AACE RP 29R-03, sec. 3.6, on modelling an event as an added or extended
    activity; AACE RP 52R-06, on quantifying the event in the fragnet.
    """
    acts = dict(snapshot.activities)
    holds = []
    warnings = []
    for aid, days in rep.days:
        a = acts.get(aid)
        if a is None:
            warnings.append(f"event {rep.event}: activity {aid} is not in snapshot {snapshot.id}; "
                            f"its {days} working days are not added")
            continue
        if a.is_finished or a.is_milestone or a.duration == 0:
            warnings.append(f"event {rep.event}: activity {aid} is finished or a milestone in snapshot "
                            f"{snapshot.id}; its {days} working days are not added")
            continue
        if days > 0:
            acts[aid] = replace(a, duration=a.duration + days, remaining=a.remaining_duration + days)
        holds.append(HoldUp(rep.event, aid, days))
    return replace(snapshot, activities=frozen_mapping(acts)), tuple(holds), tuple(warnings)
