"""What a delay event cost: how it is represented in an analysis, and its days.

Time impact analysis (:mod:`forensic.analysis.impact`) and but-for analysis
(:mod:`forensic.analysis.butfor`) both need each event in the network: as
its fragnet (the work it added or changed), as the working days it cost
each activity it hit (``days_lost`` in events.csv), or, where neither is
given, as those days estimated from the record, the activity's overrun on
the working days inside the event's period (:func:`estimate_days`). An
event that can be none of these is *not represented*, with the reason
(AACE RP 52R-06, the fragnet; RP 29R-03 sec. 3, on quantifying events from
the record; common practice).
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from datetime import date, timedelta

from forensic.core.calendars import workdays_between
from forensic.core.engine import ScheduleResult, schedule
from forensic.core.errors import NotFoundError
from forensic.core.model import Activity, Calendar, Casefile, Event, Fragnet, Project

__all__ = [
    "Representation",
    "calendars_of",
    "delay_between",
    "estimate_days",
    "fragnet_of",
    "planned_duration",
    "record_span",
    "represent",
]

_DAY = timedelta(days=1)


@dataclass(frozen=True, slots=True)
class Representation:
    """How one event is represented in an analysis, and what it cost each activity.

    ``how`` is ``"fragnet"`` (its fragnet's work: ``days`` the working days
    of each fragnet activity), ``"days-lost"`` (events.csv ``days_lost``),
    ``"estimated"`` (from the record, see :func:`estimate_days`) or
    ``"not-represented"``; ``why`` says how the figure was found, or why
    there is none.
    """

    event: str
    how: str
    days: tuple[tuple[str, int], ...] = ()
    why: str = ""

    @property
    def total(self) -> int:
        return sum(n for _, n in self.days)


def planned_duration(casefile: Casefile, activity_id: str, when: date | None = None) -> int | None:
    """The planned duration of an activity as the plan stood on ``when`` (the plan an event disrupted).

    Its duration in the last snapshot whose data date is on or before
    ``when`` and that holds it (the event's unimpacted schedule, AACE RP
    52R-06); else in the first snapshot that holds it; ``None`` when none
    does. With ``when`` omitted, the baseline's (the as-planned).
    """
    found = None
    for snap in casefile.snapshots:
        a = snap.activities.get(activity_id)
        if a is None:
            continue
        if found is None or (when is not None and snap.data_date <= when):
            found = a.duration
    if when is None:
        a = casefile.baseline.activities.get(activity_id)
        return a.duration if a is not None else found
    return found


def record_span(a: Activity, x, data_date: date, cal: Calendar) -> tuple[date, date, int]:
    """An activity's dates and duration in the record: as built when finished, else as forecast.

    ``x`` is its scheduled record (:class:`forensic.core.engine.ScheduledActivity`)
    in the snapshot whose data date is ``data_date``. A finished task runs
    from its actual start to its actual finish; one in progress from its
    actual start to its forecast finish, worked without a break (the working
    days to the data date plus its remaining duration); one not started as
    forecast. The duration is in working days of its calendar.
    """
    if a.actual_finish is not None:  # finished
        start = a.actual_start or a.actual_finish
        return start, a.actual_finish, workdays_between(cal, start, a.actual_finish + _DAY)
    if a.actual_start is not None:  # in progress
        return a.actual_start, x.early_finish, workdays_between(cal, a.actual_start, data_date) + a.remaining_duration
    return x.early_start, x.early_finish, a.remaining_duration


def estimate_days(casefile: Casefile, event: Event, record: ScheduleResult | None = None) -> Representation:
    """What an event with neither a fragnet nor ``days_lost`` cost, estimated from the record.

    For each activity the event hit, the working days (its own calendar)
    by which its as-built, or forecast, duration exceeds its planned
    duration as the plan stood when the event began (:func:`planned_duration`,
    its duration in the event's unimpacted update), counted only on working days of
    its dates that fall inside the event's period: ``min(overrun, days
    worked inside the period)``, and so never more than the event's working
    days nor the activity's overrun. An activity not worked inside the
    period gives no estimate; when none does, the event is
    ``not-represented``.

    ``record`` is the schedule of the snapshot read as the record (by
    default the last snapshot, the fullest record).

    References
    ----------
    AACE RP 29R-03, sec. 3.6 and 3.8, and AACE RP 52R-06, on quantifying an
    event from the contemporaneous record; casefile format 2, events.csv
    (the rule itself). The overrun measure is common practice.
    """
    cals, project = casefile.calendars, casefile.project
    if record is None:
        record = schedule(casefile.snapshots[-1], cals, project)
    snap = casefile.snapshot(record.snapshot_id)
    days: list[tuple[str, int]] = []
    notes: list[str] = []
    if not event.activities:
        return Representation(event.id, "not-represented", (),
                              "it has no fragnet, no days_lost and names no activity it hit")
    for aid in event.activities:
        a = snap.activities.get(aid)
        planned = planned_duration(casefile, aid, event.start)
        if a is None or planned is None:
            notes.append(f"{aid} is not in the record ({snap.id})")
            continue
        if a.is_milestone or a.duration == 0:
            notes.append(f"{aid} is a milestone")
            continue
        cal = calendars_of(casefile, a)
        start, finish, dur = record_span(a, record[aid], snap.data_date, cal)
        lo, hi = max(start, event.start), min(finish, event.finish)
        inside = workdays_between(cal, lo, hi + _DAY) if lo <= hi else 0
        if inside <= 0:
            notes.append(f"{aid} was not worked inside the event's period ({start.isoformat()} to {finish.isoformat()} "
                         f"in {snap.id})")
            continue
        over = max(0, dur - planned)
        days.append((aid, min(over, inside)))
        notes.append(f"{aid} took {dur} working days against {planned} planned, {inside} of them inside the "
                     f"event's period")
    if not days:
        why = ("it has no fragnet and no days_lost, and the record gives no estimate: " + "; ".join(notes))
        return Representation(event.id, "not-represented", (), why)
    return Representation(event.id, "estimated", tuple(days), "estimated from the record: " + "; ".join(notes))


def calendars_of(casefile: Casefile, a: Activity) -> Calendar:
    """The calendar an activity works to."""
    return casefile.calendars[a.calendar or casefile.project.default_calendar]


def represent(casefile: Casefile, event: Event, record: ScheduleResult | None = None) -> Representation:
    """How a time impact analysis represents an event: fragnet, then ``days_lost``, then the estimate.

    A fragnet is inserted as it is (``days``: each fragnet activity's
    duration); else the stated ``days_lost``; else :func:`estimate_days`;
    else the event is ``not-represented`` and adds nothing.

    References
    ----------
    AACE RP 52R-06, on the fragnet as the model of an event; casefile
    format 2, events.csv (the order).
    """
    frag = fragnet_of(casefile, event)
    if frag is not None:
        return Representation(event.id, "fragnet", tuple((a.id, a.duration) for a in frag.activities.values()),
                              f"fragnet {frag.id} inserted")
    if event.days_lost:
        return Representation(event.id, "days-lost", event.days_lost, "days_lost stated in events.csv")
    return estimate_days(casefile, event, record)


def delay_between(project: Project, calendars: Mapping[str, Calendar], before: date, after: date) -> int:
    """The move from ``before`` to ``after`` in the project's delay unit.

    Calendar days by default; with ``delay_unit = "working-days"`` the
    working days of the default calendar in ``(before, after]`` (negative
    when ``after`` is earlier), so a finish moving from a Friday to the next
    Monday on a five-day week is one working day (common practice).
    """
    if project.delay_unit == "working-days":
        cal = calendars[project.default_calendar]
        return workdays_between(cal, before + _DAY, after + _DAY)
    return (after - before).days


def fragnet_of(casefile: Casefile, event: Event) -> Fragnet | None:
    """The fragnet an event names (``None`` when it names none); ``NotFoundError`` when it is missing."""
    if event.fragnet is None:
        return None
    # Fragnets are keyed by folder name; events.csv may give the folder as
    # "fragnets/EV03" or as "EV03".
    frag = casefile.fragnets.get(event.fragnet) or casefile.fragnets.get(event.fragnet.rstrip("/").split("/")[-1])
    if frag is None:
        known = ", ".join(casefile.fragnets) or "none"
        msg = f"event {event.id} names fragnet {event.fragnet!r}, which is not in the casefile (known: {known})"
        raise NotFoundError(msg)
    return frag
