"""Time impact analysis: a delay event's fragnet inserted into an unimpacted schedule.

A time impact analysis (TIA) asks, prospectively, how far one delay event
moves completion. It takes the schedule current when the event began (the
*unimpacted* schedule), optionally brings it forward to the event's start,
inserts a fragment network (*fragnet*) that models the event, reschedules
it, and compares the two (AACE RP 52R-06; AACE RP 29R-03, method
implementation protocols 3.6 and 3.7, modelled additive single and multiple
base; SCL Delay and Disruption Protocol, 2nd ed., on time impact analysis).

The steps, as this module does them
-----------------------------------
1. **Unimpacted schedule.** By default the snapshot whose data date is the
   last one on or before the event's start (:func:`unimpacted_snapshot`);
   the caller may name another.
2. **Progress to the event** (optional, :func:`progress_to`). Progress up to
   the event's start is assumed to be *as planned in the unimpacted
   schedule*: every activity whose early finish falls before the event's
   start is made finished at its early dates, every activity whose early
   start falls before it is made in progress from its early start with the
   working days from the event's start to its early finish remaining, and
   the data date becomes the event's start.
3. **Insert the fragnet** (:func:`insert_fragnet`): its new activities and
   its links, including the ties to existing activities. A tie to an
   activity that is neither in the fragnet nor in the schedule, an id the
   schedule already has, or a loop, is refused with an error that names
   them. An event without a fragnet is represented instead by added
   duration on the activities it hit: its stated ``days_lost``, else the
   days estimated from the record (:func:`estimate_days`: each activity's
   overrun on working days inside the event's period), never the whole
   period as a stoppage (:func:`apply_hold_up`, :func:`represent`); an
   event with nothing to estimate is ``not-represented`` and adds nothing.
4. **Reschedule** with :func:`forensic.core.engine.schedule` and report the
   completion and every milestone before and after, the time impact in the
   project's delay unit, the float consumed on the paths the fragnet
   touches, and the longest path of the impacted schedule.

Several events are analysed each alone against its own unimpacted schedule,
in a contemporaneous series each into its own update with the result carried
forward (:func:`time_impact_series`, MIP 3.7), and cumulatively, in date
order, into one schedule (:func:`time_impacts`);
the sum of the individual impacts is generally not the cumulative impact,
because events on parallel paths overlap in time and each alone first has
to consume the float that the other's path leaves (common practice; SCL
Protocol 2nd ed., on concurrency).

References
----------
AACE International Recommended Practice 52R-06, Time Impact Analysis - As
Applied in Construction.
AACE International Recommended Practice 29R-03, Forensic Schedule Analysis,
MIP 3.6 (modelled / additive / single base) and MIP 3.7 (modelled /
additive / multiple base).
Society of Construction Law, Delay and Disruption Protocol, 2nd edition (2017).
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass, replace
from datetime import date, timedelta

import networkx as nx

from forensic.analysis.runcache import RunCache, cached_schedule
from forensic.core.calendars import workdays_between
from forensic.core.engine import ScheduleResult, schedule, topological_order
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
from forensic.core.tables import Table

__all__ = [
    "ContemporaneousSeries",
    "CumulativeStep",
    "FloatChange",
    "HoldUp",
    "ImpactResult",
    "Representation",
    "SeriesStep",
    "ImpactSeries",
    "MilestoneChange",
    "apply_hold_up",
    "contemporaneous_json",
    "contemporaneous_table",
    "delay_between",
    "estimate_days",
    "float_table",
    "fragnet_of",
    "impact_json",
    "insert_fragnet",
    "milestones_table",
    "planned_duration",
    "progress_to",
    "record_span",
    "represent",
    "series_json",
    "series_table",
    "time_impact",
    "time_impact_series",
    "time_impacts",
    "unimpacted_snapshot",
]

_DAY = timedelta(days=1)


@dataclass(frozen=True, slots=True)
class MilestoneChange:
    """One milestone's date in the unimpacted and the impacted schedule; ``impact`` in the delay unit."""

    id: str
    name: str
    before: date
    after: date
    impact: int


@dataclass(frozen=True, slots=True)
class FloatChange:
    """Total float of one activity on a touched path, before and after; ``consumed`` = before - after.

    Floats are working days of the activity's own calendar.
    """

    id: str
    name: str
    before: int
    after: int
    consumed: int


@dataclass(frozen=True, slots=True)
class HoldUp:
    """Working days added to an activity to represent an event that has no fragnet."""

    event: str
    activity: str
    days: int


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


@dataclass(frozen=True, slots=True)
class ImpactResult:
    """The time impact of one event (or several inserted together) on one schedule.

    ``event`` is the event id (ids joined by ``+`` when several are inserted
    together); ``into`` the id of the unimpacted snapshot; ``progressed_to``
    the date progress was brought to first (``None`` when it was not).
    ``impact`` is the completion's move in ``unit`` (the project's delay
    unit). ``inserted`` lists the fragnet activities added; ``hold_ups`` the
    added durations of events without a fragnet. ``critical_path`` is the
    longest path of the impacted schedule (AACE RP 49R-06).
    """

    event: str
    into: str
    progressed_to: date | None
    completion_id: str
    completion_before: date
    completion_after: date
    impact: int
    unit: str
    milestones: tuple[MilestoneChange, ...]
    float_consumed: tuple[FloatChange, ...]
    critical_path: tuple[str, ...]
    inserted: tuple[str, ...]
    hold_ups: tuple[HoldUp, ...] = ()
    warnings: tuple[str, ...] = ()
    represented: tuple[Representation, ...] = ()

    @property
    def represented_as(self) -> str:
        """The representation of the event (kinds joined by ``+`` when several were inserted together)."""
        return "+".join(r.how for r in self.represented)

    @property
    def days(self) -> dict[str, int]:
        """Working days each activity was given (fragnet activities: their durations), summed over the events."""
        out: dict[str, int] = {}
        for rep in self.represented:
            for aid, n in rep.days:
                out[aid] = out.get(aid, 0) + n
        return out


@dataclass(frozen=True, slots=True)
class CumulativeStep:
    """One step of a cumulative analysis: the completion before and after this event was added."""

    event: str
    start: date
    completion_before: date
    completion_after: date
    impact: int


@dataclass(frozen=True, slots=True)
class ImpactSeries:
    """Several events: each alone, and cumulatively in date order.

    ``individual`` holds each event alone against its own unimpacted
    schedule; ``cumulative`` all of them inserted in date order into the
    snapshot ``cumulative.into``, with ``steps`` the increment each added.
    ``non_additivity`` is ``sum_of_individual - cumulative.impact``.
    """

    individual: tuple[ImpactResult, ...]
    cumulative: ImpactResult
    steps: tuple[CumulativeStep, ...]
    sum_of_individual: int
    non_additivity: int
    unit: str
    warnings: tuple[str, ...] = ()


@dataclass(frozen=True, slots=True)
class SeriesStep:
    """One step of the contemporaneous series: one event inserted into its own unimpacted update.

    ``carried`` is true when the event went into the impacted result of the
    step before (both events' unimpacted update is the same); ``running_total``
    is the sum of the impacts so far, in the delay unit.
    """

    event: str
    into: str
    completion_before: date
    completion_after: date
    impact: int
    represented_as: str
    running_total: int
    carried: bool


@dataclass(frozen=True, slots=True)
class ContemporaneousSeries:
    """Every event in date order, each inserted into the last update before it (AACE RP 29R-03, MIP 3.7).

    ``total`` is the sum of the steps' impacts; ``windows_total`` the slip
    the windows analysis measures over the whole record (the last update's
    completion against the baseline's); ``difference_from_windows`` is
    ``total - windows_total``: the slip the modelled events do not explain
    (negative), or the modelled delay the record did not show (positive).
    """

    unit: str
    steps: tuple[SeriesStep, ...]
    total: int
    windows_total: int
    difference_from_windows: int
    warnings: tuple[str, ...] = ()


# --- the steps ---------------------------------------------------------------


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


# --- what an event cost ------------------------------------------------------


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
    if a.is_finished:
        start = a.actual_start or a.actual_finish
        return start, a.actual_finish, workdays_between(cal, start, a.actual_finish + _DAY)
    if a.is_started:
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


def _unit(project: Project) -> str:
    return "working days" if project.delay_unit == "working-days" else "calendar days"


# --- the analysis ------------------------------------------------------------


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


def _impose(
    casefile: Casefile, snapshot: Snapshot, events: Sequence[Event], progress: bool,
    record: ScheduleResult | None = None,
) -> tuple[Snapshot, list[str], list[HoldUp], list[str], list[Representation]]:
    """Insert each event in turn (progressing to its start first, if asked)."""
    inserted: list[str] = []
    holds: list[HoldUp] = []
    warnings: list[str] = []
    reps: list[Representation] = []
    cals, project = casefile.calendars, casefile.project
    if record is None and any(fragnet_of(casefile, ev) is None and not ev.days_lost for ev in events):
        record = schedule(casefile.snapshots[-1], cals, project)
    for ev in events:
        if progress:
            snapshot = progress_to(snapshot, cals, project, ev.start)
        rep = represent(casefile, ev, record)
        reps.append(rep)
        w: tuple[str, ...] = ()
        if rep.how == "fragnet":
            frag = fragnet_of(casefile, ev)
            snapshot, w = insert_fragnet(snapshot, frag)
            inserted.extend(frag.activities)
        elif rep.how == "not-represented":
            w = (f"event {ev.id} is not represented: {rep.why}",)
        else:
            snapshot, h, w = apply_hold_up(snapshot, rep)
            holds.extend(h)
        warnings.extend(w)
    return snapshot, inserted, holds, warnings, reps


def _touched(snapshot: Snapshot, seeds: Iterable[str]) -> set[str]:
    """Activities on a path through any seed: its ancestors and descendants."""
    g = nx.DiGraph()
    g.add_nodes_from(snapshot.activities)
    g.add_edges_from((lk.pred, lk.succ) for lk in snapshot.links)
    out: set[str] = set()
    for s in seeds:
        if s in g:
            out |= {s} | nx.ancestors(g, s) | nx.descendants(g, s)
    return out


def _compare(
    casefile: Casefile,
    label: str,
    into: Snapshot,
    progressed_to: date | None,
    before_snap: Snapshot,
    after_snap: Snapshot,
    inserted: Sequence[str],
    holds: Sequence[HoldUp],
    warnings: Sequence[str],
    reps: Sequence[Representation] = (),
    cache: RunCache | None = None,
) -> ImpactResult:
    cals, project = casefile.calendars, casefile.project
    before = cached_schedule(cache, casefile, before_snap)
    after = cached_schedule(cache, casefile, after_snap)
    comp = before.completion_id
    comp_after = after[comp].early_finish
    milestones = []
    for aid in before.order:
        a = before_snap.activities[aid]
        if a.is_milestone:
            b, f = before[aid].early_finish, after[aid].early_finish
            milestones.append(MilestoneChange(aid, a.name, b, f, delay_between(project, cals, b, f)))
    touched = _touched(after_snap, [*inserted, *(h.activity for h in holds if h.days)])
    floats = []
    for aid in before.order:
        if aid not in touched:
            continue
        fb, fa = before[aid].total_float, after[aid].total_float
        if fb is not None and fa is not None and fb != fa:
            floats.append(FloatChange(aid, before_snap.activities[aid].name, fb, fa, fb - fa))
    floats.sort(key=lambda c: -c.consumed)
    impact = delay_between(project, cals, before.completion, comp_after)
    warnings = list(warnings)
    if impact < 0:
        # Never below the as-planned: inserting a delay cannot bring completion earlier (AACE RP 52R-06).
        acts = [*inserted, *(h.activity for h in holds)]
        warnings.append(f"event {label}: the time impact shortens the schedule ({impact} {_unit(project)}; "
                        f"activities {' '.join(acts) or 'none'}); check the fragnet's logic and durations")
    return ImpactResult(
        event=label,
        into=into.id,
        progressed_to=progressed_to,
        completion_id=comp,
        completion_before=before.completion,
        completion_after=comp_after,
        impact=impact,
        unit=_unit(project),
        milestones=tuple(milestones),
        float_consumed=tuple(floats),
        critical_path=after.longest_path,
        inserted=tuple(inserted),
        hold_ups=tuple(holds),
        warnings=tuple(warnings),
        represented=tuple(reps),
    )


def time_impact(
    casefile: Casefile,
    event_id: str | Sequence[str],
    *,
    into: str | None = None,
    progress_to_event: bool = False,
    record: ScheduleResult | None = None,
    cache: RunCache | None = None,
) -> ImpactResult:
    """The time impact of one event (or several, inserted together in date order).

    Parameters
    ----------
    casefile : Casefile
    event_id : str or sequence of str
        The event; several ids are inserted together, in date order, and
        reported as one result labelled ``"EV1+EV2"``.
    into : str, optional
        The unimpacted snapshot's id; by default the snapshot whose data
        date is the last on or before the (first) event's start.
    progress_to_event : bool
        Bring the unimpacted schedule to the event's start first, assuming
        work proceeds as planned in it (:func:`progress_to`).
    record : ScheduleResult, optional
        The last update's schedule, when the caller has it.
    cache : RunCache, optional
        One call's schedules (:mod:`forensic.analysis.runcache`).

    Returns
    -------
    ImpactResult
        Compared with the unimpacted schedule *after* any progress step, so
        that the impact is the fragnet's alone.

    Raises
    ------
    NotFoundError, FragnetError, LogicLoopError

    References
    ----------
    AACE RP 52R-06; AACE RP 29R-03, MIP 3.6; SCL Protocol 2nd ed.
    """
    ids = [event_id] if isinstance(event_id, str) else list(event_id)
    events = sorted((casefile.event(e) for e in ids), key=lambda e: (e.start, e.id))
    snap = casefile.snapshot(into) if into else unimpacted_snapshot(casefile, events[0])
    cals, project = casefile.calendars, casefile.project
    base = progress_to(snap, cals, project, events[0].start) if progress_to_event else snap
    after, inserted, holds, warnings, reps = _impose(casefile, base, events, progress_to_event, record)
    if progress_to_event and len(events) > 1:
        # Later events progress the impacted schedule; the unimpacted one is
        # progressed to the same final date, as planned, for a like comparison.
        base = progress_to(snap, cals, project, events[-1].start)
    label = "+".join(e.id for e in events)
    when = events[-1].start if progress_to_event and events[-1].start > snap.data_date else None
    return _compare(casefile, label, snap, when, base, after, inserted, holds, warnings, reps, cache)


def time_impacts(
    casefile: Casefile,
    event_ids: Sequence[str] | None = None,
    *,
    into: str | None = None,
    progress_to_event: bool = False,
    cache: RunCache | None = None,
) -> ImpactSeries:
    """Several events, each alone and cumulatively in date order (AACE RP 29R-03, MIP 3.6/3.7).

    Each event alone is inserted into its own unimpacted schedule (or
    ``into``). The cumulative analysis inserts them one after another, in
    order of their start dates, into ``into`` or else the unimpacted
    schedule of the earliest event; each step's increment is the move of
    completion that event added to those before it. With
    ``progress_to_event`` each step first brings the schedule impacted so
    far to that event's start. ``event_ids`` defaults to every event that
    has a fragnet or names activities.

    The difference ``sum_of_individual - cumulative.impact`` is the
    non-additivity: events on parallel paths each consume the float of the
    other's path when alone, and overlap in time when together (common
    practice; SCL Protocol 2nd ed.). When the individual analyses use
    different snapshots, the difference also holds the change of schedule
    between those snapshots; name one with ``into`` to keep only the first.
    ``cache``: one call's schedules (:mod:`forensic.analysis.runcache`).
    """
    if event_ids is None:
        event_ids = [e.id for e in casefile.events if e.fragnet or e.activities]
    if not event_ids:
        msg = "no event with a fragnet or with activities it hit; there is nothing to analyse"
        raise NotFoundError(msg)
    events = sorted((casefile.event(e) for e in event_ids), key=lambda e: (e.start, e.id))
    cals, project = casefile.calendars, casefile.project
    record = cached_schedule(cache, casefile, casefile.snapshots[-1])
    individual = tuple(
        time_impact(casefile, e.id, into=into, progress_to_event=progress_to_event, record=record, cache=cache)
        for e in events
    )
    snap = casefile.snapshot(into) if into else unimpacted_snapshot(casefile, events[0])
    steps = []
    current = progress_to(snap, cals, project, events[0].start) if progress_to_event else snap
    for ev in events:
        if progress_to_event:
            current = progress_to(current, cals, project, ev.start)
        before = cached_schedule(cache, casefile, current)
        current, _, _, _, _ = _impose(casefile, current, [ev], False, record)
        after = cached_schedule(cache, casefile, current)
        done = after[before.completion_id].early_finish
        steps.append(CumulativeStep(ev.id, ev.start, before.completion, done,
                                    delay_between(project, cals, before.completion, done)))
    cumulative = time_impact(casefile, [e.id for e in events], into=snap.id, progress_to_event=progress_to_event,
                             record=record, cache=cache)
    total = sum(r.impact for r in individual)
    # The cumulative run puts every event into one update; an event that
    # starts after a later update exists is then inserted into a schedule
    # older than its own unimpacted one: an impacted as-planned, not a time
    # impact analysis (AACE RP 52R-06; RP 29R-03, MIP 3.6 against 3.7).
    late = []
    for e in events:
        own = [x for x in casefile.snapshots if x.data_date <= e.start]
        if own and own[-1].data_date > snap.data_date:
            late.append((e.id, own[-1].id))
    warnings = []
    if late:
        warnings.append(
            f"cumulative into {snap.id} (data date {snap.data_date.isoformat()}): events "
            + ", ".join(f"{e} (its own update {u})" for e, u in late)
            + " start after later updates exist; inserted into the older update they model an impacted "
            "as-planned, not a time impact analysis (use --series to insert each into its own update)")
    return ImpactSeries(individual, cumulative, tuple(steps), total, total - cumulative.impact, _unit(project),
                        tuple(warnings))


def time_impact_series(
    casefile: Casefile,
    event_ids: Sequence[str] | None = None,
    *,
    progress_to_event: bool = False,
    cache: RunCache | None = None,
) -> ContemporaneousSeries:
    """The contemporaneous time impact series (AACE RP 29R-03, MIP 3.7, modelled / additive / multiple base).

    The events, in order of their start dates, are each inserted into the
    last update on or before their start, their own unimpacted schedule
    (:func:`unimpacted_snapshot`; AACE RP 52R-06). When the event before
    went into the same update, the event goes into that impacted result,
    carried forward, so events in one period add up in it; when a later
    update exists it is taken as it stands, since it already records the
    earlier events as they happened. Each step reports the completion
    before and after and its impact; ``total`` is their sum, compared with
    the windows analysis's slip over the record.

    ``event_ids`` defaults to every event. With ``progress_to_event`` each
    step first brings its schedule to the event's start, as planned.
    ``cache``: one call's schedules (:mod:`forensic.analysis.runcache`).

    References
    ----------
    AACE RP 29R-03, MIP 3.7; AACE RP 52R-06, on the unimpacted schedule and
    a series of time impact analyses; SCL Protocol 2nd ed., on time impact
    analysis.
    """
    ids = list(event_ids) if event_ids is not None else [e.id for e in casefile.events]
    if not ids:
        msg = "the casefile has no event; there is nothing to analyse"
        raise NotFoundError(msg)
    events = sorted((casefile.event(e) for e in ids), key=lambda e: (e.start, e.id))
    cals, project = casefile.calendars, casefile.project
    record = cached_schedule(cache, casefile, casefile.snapshots[-1])
    steps: list[SeriesStep] = []
    warnings: list[str] = []
    current: Snapshot | None = None
    into: str | None = None
    total = 0
    for ev in events:
        snap = unimpacted_snapshot(casefile, ev)
        carried = snap.id == into and current is not None
        base = current if carried else snap
        if progress_to_event:
            base = progress_to(base, cals, project, ev.start)
        before = cached_schedule(cache, casefile, base)
        current, _, _, w, reps = _impose(casefile, base, [ev], False, record)
        after = cached_schedule(cache, casefile, current)
        done = after[before.completion_id].early_finish
        impact = delay_between(project, cals, before.completion, done)
        total += impact
        warnings.extend(w)
        if impact < 0:
            warnings.append(f"event {ev.id}: the time impact shortens the schedule ({impact}); check its representation")
        steps.append(SeriesStep(ev.id, snap.id, before.completion, done, impact,
                                "+".join(r.how for r in reps), total, carried))
        into = snap.id
    first = cached_schedule(cache, casefile, casefile.baseline)
    windows_total = delay_between(project, cals, first.completion, record[first.completion_id].early_finish
                                  if first.completion_id in record.activities else record.completion)
    return ContemporaneousSeries(_unit(project), tuple(steps), total, windows_total, total - windows_total,
                                 tuple(warnings))


# --- tables and JSON ---------------------------------------------------------


def milestones_table(result: ImpactResult) -> Table:
    """Every milestone before and after the event, with its impact in the delay unit."""
    return Table(
        f"impact-{result.event}-milestones",
        ("id", "name", "before", "after", "impact"),
        tuple((m.id, m.name, m.before, m.after, m.impact) for m in result.milestones),
    )


def float_table(result: ImpactResult) -> Table:
    """Total float consumed or gained on the paths the event touched (working days of each activity's calendar).

    ``consumed`` is the float used up (0 when the activity gained float) and
    ``gained`` the float won (0 when it lost), so that a gain reads as a gain
    and never as a negative consumption.
    """
    return Table(
        f"impact-{result.event}-float",
        ("id", "name", "float_before", "float_after", "consumed", "gained"),
        tuple((c.id, c.name, c.before, c.after, max(0, c.consumed), max(0, -c.consumed)) for c in result.float_consumed),
    )


def series_table(series: ImpactSeries) -> Table:
    """One row per event: its impact alone, and its increment in the cumulative analysis."""
    step = {s.event: s for s in series.steps}
    return Table(
        "impact-series",
        ("event", "start", "into", "impact_alone", "cumulative_increment", "completion_alone", "completion_cumulative"),
        tuple(
            (r.event, step[r.event].start, r.into, r.impact, step[r.event].impact,
             r.completion_after, step[r.event].completion_after)
            for r in series.individual
        ),
    )


def impact_json(result: ImpactResult) -> dict:
    """The ``forensic impact --json`` object; its keys are a contract (docs/impact-and-butfor.md)."""
    return {
        "event": result.event,
        "into": result.into,
        "completion_before": result.completion_before,
        "completion_after": result.completion_after,
        "impact": result.impact,
        "milestones": [
            {"id": m.id, "name": m.name, "before": m.before, "after": m.after, "impact": m.impact}
            for m in result.milestones
        ],
        "critical_path": list(result.critical_path),
        "represented_as": result.represented_as,
        "days": result.days,
        "events": [
            {"event": r.event, "represented_as": r.how, "days": dict(r.days), "why": r.why}
            for r in result.represented
        ],
        "warnings": list(result.warnings),
    }


def series_json(series: ImpactSeries) -> dict:
    """The ``forensic impact --cumulative --json`` object (docs/impact-and-butfor.md)."""
    c = series.cumulative
    return {
        "unit": series.unit.replace(" ", "-"),  # the manifest's spelling, as in every JSON output
        "individual": [impact_json(r) for r in series.individual],
        "cumulative": {
            **impact_json(c),
            "steps": [
                {"event": s.event, "start": s.start, "completion_before": s.completion_before,
                 "completion_after": s.completion_after, "impact": s.impact}
                for s in series.steps
            ],
        },
        "sum_of_individual": series.sum_of_individual,
        "non_additivity": series.non_additivity,
        "into": c.into,
        "warnings": list(series.warnings),
    }


def contemporaneous_table(series: ContemporaneousSeries) -> Table:
    """One row per step of the contemporaneous series, with the running total."""
    return Table(
        "impact-contemporaneous",
        ("event", "into", "represented_as", "completion_before", "completion_after", "impact", "running_total"),
        tuple((s.event, s.into, s.represented_as, s.completion_before, s.completion_after, s.impact, s.running_total)
              for s in series.steps),
    )


def contemporaneous_json(series: ContemporaneousSeries) -> dict:
    """The ``forensic impact --series --json`` object (docs/impact-and-butfor.md)."""
    return {
        "unit": series.unit.replace(" ", "-"),
        "steps": [
            {"event": s.event, "into": s.into, "completion_before": s.completion_before,
             "completion_after": s.completion_after, "impact": s.impact, "represented_as": s.represented_as,
             "running_total": s.running_total, "carried_forward": s.carried}
            for s in series.steps
        ],
        "total": series.total,
        "windows_total": series.windows_total,
        "difference_from_windows": series.difference_from_windows,
        "warnings": list(series.warnings),
    }
