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

from collections.abc import Iterable, Sequence
from datetime import date, timedelta

import networkx as nx

from forensic.analysis.event_cost import (
    Representation,
    calendars_of,
    delay_between,
    estimate_days,
    fragnet_of,
    planned_duration,
    record_span,
    represent,
)
from forensic.analysis.impact_results import (
    ContemporaneousSeries,
    CumulativeStep,
    FloatChange,
    HoldUp,
    ImpactResult,
    ImpactSeries,
    MilestoneChange,
    SeriesStep,
)
from forensic.analysis.impact_steps import (
    apply_hold_up,
    insert_fragnet,
    progress_to,
    unimpacted_snapshot,
)
from forensic.analysis.runcache import RunCache, cached_schedule
from forensic.core.engine import ScheduleResult, schedule
from forensic.core.errors import NotFoundError
from forensic.core.model import (
    Casefile,
    Event,
    Project,
    Snapshot,
)

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
    "calendars_of",
    "delay_between",
    "estimate_days",
    "fragnet_of",
    "insert_fragnet",
    "planned_duration",
    "progress_to",
    "record_span",
    "represent",
    "time_impact",
    "time_impact_series",
    "time_impacts",
    "unimpacted_snapshot",
]

_DAY = timedelta(days=1)


def _unit(project: Project) -> str:
    return "working days" if project.delay_unit == "working-days" else "calendar days"


# --- the analysis ------------------------------------------------------------


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
            assert frag is not None  # represent() says "fragnet" only for an event that names one
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
    if cache is None:
        return _time_impact(casefile, ids, into, progress_to_event, record, None)
    # A result is plain data (no schedule), computed once a call: a report and its delay summary share it.
    # The record it was given is part of the key (by identity): the cache's own schedule of the last update.
    return cache.get(casefile, "time impact", () if record is None else (record,),
                     extra=(tuple(ids), into, progress_to_event),
                     compute=lambda: _time_impact(casefile, ids, into, progress_to_event, record, cache))


def _time_impact(casefile: Casefile, ids: list[str], into: str | None, progress_to_event: bool,
                 record: ScheduleResult | None, cache: RunCache | None) -> ImpactResult:
    """:func:`time_impact` computed (``record`` only saves scheduling the last update again)."""
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
        base = current if carried and current is not None else snap
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
