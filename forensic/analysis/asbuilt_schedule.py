"""The as-built schedule of a but-for analysis (AACE RP 29R-03, MIP 3.8).

A collapsed as-built (but-for) analysis (:mod:`forensic.analysis.butfor`)
starts from an *as-built schedule*: what actually happened, with the logic
of the last update, scheduled by the engine so that the delays in it can be
taken out. This module builds it and records how each delay event is
represented in it.

How the as-built schedule is built (:func:`as_built`)
-----------------------------------------------------
From the last update (or the snapshot named):

1. **Activities** all become not-started activities with no actual dates
   and no constraints, so the engine places every one of them by logic:

   - a finished task takes as its duration its *actual* duration, the
     working days of its calendar from its actual start to its actual
     finish, inclusive (at least 1); its *target* start is its actual start;
   - a finished milestone keeps duration 0; its target is its actual date;
   - a task in progress takes the working days from its actual start to the
     data date plus its remaining duration (it is taken to have worked
     without a break since it started); its target start is its actual start;
   - work not started keeps its remaining duration; its target start is its
     early start in the update's own schedule (the forecast).

2. **Links** are those of the update. A link that the actual dates
   contradict (the engine, with every activity held at its target, would
   have to start the successor later than it really started) is replaced,
   once, by a start-to-start link whose lag is the working days (the
   successor's calendar) from the predecessor's start to the successor's
   start; a start-to-start link that is still contradicted, or any
   contradicted link whose successor started before its predecessor or is
   a milestone, is dropped. Each change is listed in ``AsBuilt.relinked``.

3. **Pins.** Each activity is held by a ``start-from`` constraint at
   its target start only where the logic does not explain that start: the
   network is scheduled with every activity pinned, and the pin is kept only
   on activities that no link drives (the engine's driving predecessors) and
   that start after the as-built data date (the earliest target, or the
   first snapshot's data date when earlier). Removing a delay can therefore
   move work that the logic drives, never work whose start the logic does
   not explain (the collapse is by logic alone).

The schedule so built reproduces every target start; any that it does not
is reported in ``AsBuilt.warnings``.

References
----------
AACE International Recommended Practice 29R-03, Forensic Schedule Analysis,
MIP 3.8 (modelled / subtractive / single simulation).
Society of Construction Law, Delay and Disruption Protocol, 2nd edition (2017).
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass, replace
from datetime import date, timedelta

from forensic.analysis.event_cost import (
    Representation,
    calendars_of,
    estimate_days,
    fragnet_of,
    record_span,
)
from forensic.analysis.runcache import RunCache, cached_schedule
from forensic.core.calendars import next_workday, workdays_between
from forensic.core.engine import ScheduleResult, schedule
from forensic.core.model import Activity, Casefile, Event, Link, Snapshot, frozen_mapping

__all__ = ["DAY", "AsBuilt", "EventDelay", "as_built"]

DAY = timedelta(days=1)


@dataclass(frozen=True, slots=True)
class EventDelay:
    """How one event's delay is represented in the as-built schedule.

    ``how`` is ``"fragnet"`` (``activities`` are its fragnet's activities in
    the as-built, ``days`` their as-built durations), ``"days-lost"`` (the
    working days events.csv states it cost each activity it hit),
    ``"estimated"`` (those days estimated from the record,
    :func:`forensic.analysis.impact.estimate_days`) or ``"not-represented"``;
    ``why`` says how the figure was found, or why there is none.
    """

    event: str
    party: str
    how: str
    activities: tuple[str, ...] = ()
    days: tuple[tuple[str, int], ...] = ()
    why: str = ""


@dataclass(frozen=True, slots=True)
class AsBuilt:
    """The as-built schedule built from one snapshot (see the module notes).

    ``snapshot`` is the as-built network (every activity not started, pinned
    where logic does not explain its start); ``pins`` the ids pinned;
    ``relinked`` each link changed, as ``(pred, succ, old type, new type or
    "dropped", new lag)``; ``targets`` the start each activity must keep
    (its actual start, or its forecast start); ``events`` how each event is
    represented.
    """

    source: str
    snapshot: Snapshot
    schedule: ScheduleResult
    completion: date
    pins: tuple[str, ...]
    relinked: tuple[tuple[str, str, str, str, int], ...]
    targets: tuple[tuple[str, date], ...]
    events: tuple[EventDelay, ...]
    warnings: tuple[str, ...] = ()


def _start_pass_day(a: Activity, start: date) -> date:
    # The day a start-to-start link passes on (engine notes): a finish
    # milestone's start instant is the day after its date.
    return start + DAY if a.kind == "closing-milestone" else start


def as_built(casefile: Casefile, snapshot_id: str | None = None, *, cache: RunCache | None = None) -> AsBuilt:
    """Build the as-built schedule from the last update (or ``snapshot_id``); ``cache``: one call's schedules.

    Returns
    -------
    AsBuilt
        With the event representations of every event in the casefile.

    References
    ----------
    AACE RP 29R-03, MIP 3.8, on building the as-built model to be collapsed.
    """
    src = casefile.snapshot(snapshot_id) if snapshot_id else casefile.snapshots[-1]
    cals, project = casefile.calendars, casefile.project
    forecast = cached_schedule(cache, casefile, src)
    acts: dict[str, Activity] = {}
    target: dict[str, date] = {}
    for aid, a in src.activities.items():
        cal = calendars_of(casefile, a)
        milestone = a.is_milestone or a.duration == 0
        if milestone and (done_on := a.actual_finish or a.actual_start) is not None:  # finished or started
            dur, target[aid] = 0, done_on
        elif a.actual_finish is not None:  # a finished task
            start = a.actual_start or a.actual_finish
            dur, target[aid] = max(1, workdays_between(cal, start, a.actual_finish + DAY)), start
        elif a.actual_start is not None:  # a task in progress
            dur = workdays_between(cal, a.actual_start, src.data_date) + a.remaining_duration
            dur, target[aid] = max(1, dur), a.actual_start
        else:
            dur = 0 if milestone else a.remaining_duration
            target[aid] = forecast[aid].early_start
        # An actual date on a non-working day is read as the next working day,
        # where the engine (and a start-from pin) would place it.
        target[aid] = next_workday(cal, target[aid])
        acts[aid] = Activity(aid, a.name, dur, kind=a.kind, calendar=a.calendar, party=a.party,
                             area=a.area, line=a.line)
    data_date = min([*target.values(), casefile.snapshots[0].data_date])

    def pinned(ids: Iterable[str]) -> dict[str, Activity]:
        out = dict(acts)
        for aid in ids:
            out[aid] = replace(acts[aid], constraint="start-from", constraint_date=target[aid])
        return out

    # Links: replace the ones the actual dates contradict, a frontier at a time.
    links = list(src.links)
    relinked: list[tuple[str, str, str, str, int]] = []
    all_pinned = pinned(acts)
    for _ in range(len(links) + 1):
        net = Snapshot(f"{src.id}-as-built", data_date, frozen_mapping(all_pinned), tuple(links), "update")
        r = schedule(net, cals, project)
        pushed = {aid for aid in acts if r[aid].early_start > target[aid]}
        if not pushed:
            break
        changed = False
        new_links = []
        for lk in links:
            if lk.succ in pushed and lk.pred not in pushed and lk.pred in r[lk.succ].driving_predecessors:
                changed = True
                p, s = acts[lk.pred], acts[lk.succ]
                pass_day = _start_pass_day(p, target[lk.pred])
                if lk.type != "SS" and not s.is_milestone and target[lk.succ] >= pass_day:
                    lag = workdays_between(calendars_of(casefile, s), pass_day, target[lk.succ])
                    new_links.append(Link(lk.pred, lk.succ, "SS", lag, lk.line))
                    relinked.append((lk.pred, lk.succ, lk.type, "SS", lag))
                else:
                    relinked.append((lk.pred, lk.succ, lk.type, "dropped", 0))
                continue
            new_links.append(lk)
        links = new_links
        if not changed:  # pushed only through other pushed work: fixed on the next round
            break

    # Pins: only where no link explains the start.
    net = Snapshot(f"{src.id}-as-built", data_date, frozen_mapping(all_pinned), tuple(links), "update")
    r = schedule(net, cals, project)
    pins = tuple(aid for aid in acts if not r[aid].driving_predecessors and target[aid] > data_date)
    net = replace(net, activities=frozen_mapping(pinned(pins)))
    final = schedule(net, cals, project)
    warnings = [
        f"as-built from {src.id}: {aid} starts {final[aid].early_start.isoformat()}, "
        f"not on its target {target[aid].isoformat()}"
        for aid in acts
        if final[aid].early_start != target[aid]
    ]
    reps = tuple(_represent(casefile, src, ev, forecast) for ev in casefile.events)
    return AsBuilt(
        source=src.id,
        snapshot=net,
        schedule=final,
        completion=final.completion,
        pins=pins,
        relinked=tuple(relinked),
        targets=tuple(target.items()),
        events=reps,
        warnings=tuple(warnings),
    )


def _represent(casefile: Casefile, src: Snapshot, ev: Event, record: ScheduleResult) -> EventDelay:
    """Fragnet activities in the as-built, else ``days_lost``, else the estimate from the record."""
    frag = fragnet_of(casefile, ev)
    if frag is not None:
        present = tuple(a for a in frag.activities if a in src.activities)
        if present:
            days = tuple((a, record_span(src.activities[a], record[a], src.data_date, calendars_of(casefile, src.activities[a]))[2]
                          if not (src.activities[a].is_milestone or src.activities[a].duration == 0) else 0)
                         for a in present)
            return EventDelay(ev.id, ev.party, "fragnet", present, days,
                              f"fragnet {frag.id}: its activities are in {src.id}")
    if ev.days_lost:
        rep = Representation(ev.id, "days-lost", ev.days_lost, "days_lost stated in events.csv")
    else:
        rep = estimate_days(casefile, ev, record)
    return EventDelay(ev.id, ev.party, rep.how, tuple(a for a, _ in rep.days), rep.days, rep.why)
