"""But-for analysis: the collapsed as-built schedule (AACE RP 29R-03, MIP 3.8).

A but-for analysis asks, after the fact, when the work would have finished
*but for* one party's delays. It builds an *as-built schedule* from the last
update (what actually happened, with the logic of the last update), takes
out the delays of that party (or of one event), reschedules, and compares
the *but-for* completion with the as-built one (AACE RP 29R-03, MIP 3.8,
modelled / subtractive / single simulation; SCL Delay and Disruption
Protocol, 2nd ed., on collapsed as-built analysis).

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

How a delay event is represented and removed
--------------------------------------------
- If activities of the event's fragnet are in the as-built (its ids are in
  the update), they are its delay: removing the event deletes them and
  joins each predecessor to each successor through them, the link type
  taking the predecessor's end of the first link and the successor's end of
  the second, the lags added (as if the deleted activity took no time).
- Otherwise the event held up the activities it names: on each named task
  with actual dates, the working days of its calendar where the event's
  dates overlap its actual dates (to the data date for work in progress).
  Removing the event shortens the task by those days (at least to 1 day);
  several events removed together on one task remove the union of their
  days, so an overlap is not counted twice.
- An event with neither (or whose days fall outside the named work, for
  example one that held up only a start) is not represented; it is listed
  in ``ButForCase.not_represented``.

References
----------
AACE International Recommended Practice 29R-03, Forensic Schedule Analysis,
MIP 3.8 (modelled / subtractive / single simulation).
Society of Construction Law, Delay and Disruption Protocol, 2nd edition (2017).
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from dataclasses import dataclass, replace
from datetime import date, timedelta

from .calendars import is_workday, next_workday, workdays_between
from .engine import ScheduleResult, schedule
from .errors import NotFoundError
from .impact import delay_between, fragnet_of
from .model import Activity, Casefile, Event, Link, Snapshot, frozen_mapping
from .tables import Table

__all__ = [
    "AsBuilt",
    "ButForCase",
    "ButForReport",
    "EventDelay",
    "as_built",
    "as_built_table",
    "bridge_links",
    "but_for",
    "but_for_json",
    "but_for_table",
    "remove_events",
]

_DAY = timedelta(days=1)


@dataclass(frozen=True, slots=True)
class EventDelay:
    """How one event's delay is represented in the as-built schedule.

    ``how`` is ``"fragnet"`` (``activities`` are its fragnet's activities in
    the as-built), ``"hold-up"`` (``days`` maps each named task to the
    working days the event held it up) or ``"none"``.
    """

    event: str
    party: str
    how: str
    activities: tuple[str, ...] = ()
    days: tuple[tuple[str, int], ...] = ()


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


@dataclass(frozen=True, slots=True)
class ButForCase:
    """One but-for run: the events removed and the completion without them.

    ``difference`` is ``as_built_completion`` less ``but_for_completion`` in
    ``unit`` (the project's delay unit): the delay to completion that these
    events caused, by this method.
    """

    label: str
    removed: tuple[str, ...]
    not_represented: tuple[str, ...]
    as_built_completion: date
    but_for_completion: date
    difference: int
    unit: str
    critical_path: tuple[str, ...]


@dataclass(frozen=True, slots=True)
class ButForReport:
    """The as-built schedule and each but-for case run on it."""

    as_built: AsBuilt
    cases: tuple[ButForCase, ...]


# --- the as-built schedule ---------------------------------------------------


def _cal(casefile: Casefile, a: Activity):
    return casefile.calendars[a.calendar or casefile.project.default_calendar]


def _start_pass_day(a: Activity, start: date) -> date:
    # The day a start-to-start link passes on (engine notes): a finish
    # milestone's start instant is the day after its date.
    return start + _DAY if a.kind == "closing-milestone" else start


def as_built(casefile: Casefile, snapshot_id: str | None = None) -> AsBuilt:
    """Build the as-built schedule from the last update (or ``snapshot_id``).

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
    forecast = schedule(src, cals, project)
    acts: dict[str, Activity] = {}
    target: dict[str, date] = {}
    for aid, a in src.activities.items():
        cal = _cal(casefile, a)
        milestone = a.is_milestone or a.duration == 0
        if a.is_finished or (milestone and a.is_started):
            start = a.actual_start or a.actual_finish
            if milestone:
                dur, target[aid] = 0, a.actual_finish or a.actual_start
            else:
                dur, target[aid] = max(1, workdays_between(cal, start, a.actual_finish + _DAY)), start
        elif a.is_started:
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
                    lag = workdays_between(_cal(casefile, s), pass_day, target[lk.succ])
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
    reps = tuple(_represent(casefile, src, ev) for ev in casefile.events)
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


def _represent(casefile: Casefile, src: Snapshot, ev: Event) -> EventDelay:
    frag = fragnet_of(casefile, ev)
    if frag is not None:
        present = tuple(a for a in frag.activities if a in src.activities)
        if present:
            return EventDelay(ev.id, ev.party, "fragnet", present)
    days = []
    for aid, n in _held_days(casefile, src, ev).items():
        if n:
            days.append((aid, len(n)))
    if days:
        return EventDelay(ev.id, ev.party, "hold-up", tuple(a for a, _ in days), tuple(days))
    return EventDelay(ev.id, ev.party, "none")


def _held_days(casefile: Casefile, src: Snapshot, ev: Event) -> dict[str, set[date]]:
    """Working dates on which the event overlapped the actual work of each task it names."""
    out: dict[str, set[date]] = {}
    for aid in ev.activities:
        a = src.activities.get(aid)
        if a is None or not a.is_started or a.is_milestone or a.duration == 0:
            continue
        end = a.actual_finish or (src.data_date - _DAY)
        lo, hi = max(ev.start, a.actual_start), min(ev.finish, end)
        cal = _cal(casefile, a)
        span = (lo + timedelta(days=i) for i in range((hi - lo).days + 1)) if lo <= hi else ()
        out[aid] = {d for d in span if is_workday(cal, d)}
    return out


# --- removing delays ---------------------------------------------------------


def bridge_links(links: Sequence[Link], removed: set[str]) -> list[Link]:
    """Delete ``removed`` activities' links, joining each predecessor to each successor through them.

    The new link takes the predecessor's end of the link into the removed
    activity and the successor's end of the link out of it, the lags added,
    as if the removed activity took no time (see the module notes).
    """
    current = list(links)
    for r in removed:
        ins = [lk for lk in current if lk.succ == r and lk.pred != r]
        outs = [lk for lk in current if lk.pred == r and lk.succ != r]
        kept = [lk for lk in current if r not in (lk.pred, lk.succ)]
        seen = {(lk.pred, lk.succ, lk.type, lk.lag) for lk in kept}
        for a in ins:
            for b in outs:
                new = Link(a.pred, b.succ, a.type[0] + b.type[1], a.lag + b.lag)
                key = (new.pred, new.succ, new.type, new.lag)
                if key not in seen:
                    seen.add(key)
                    kept.append(new)
        current = kept
    return current


def remove_events(casefile: Casefile, built: AsBuilt, event_ids: Iterable[str]) -> tuple[Snapshot, tuple[str, ...]]:
    """The as-built network with these events' delays taken out, and the ids not represented.

    References
    ----------
    AACE RP 29R-03, MIP 3.8, on subtracting the delays from the as-built model.
    """
    ids = set(event_ids)
    rep = {e.event: e for e in built.events}
    src = casefile.snapshot(built.source)
    snap = built.snapshot
    acts = dict(snap.activities)
    drop: set[str] = set()
    held: dict[str, set[date]] = {}
    missing = []
    for ev in casefile.events:
        if ev.id not in ids:
            continue
        e = rep[ev.id]
        if e.how == "fragnet":
            drop.update(e.activities)
        elif e.how == "hold-up":
            for aid, days in _held_days(casefile, src, ev).items():
                held.setdefault(aid, set()).update(days)
        else:
            missing.append(ev.id)
    for aid, days in held.items():
        if aid in acts and aid not in drop:
            acts[aid] = replace(acts[aid], duration=max(1, acts[aid].duration - len(days)))
    for aid in drop:
        del acts[aid]
    links = bridge_links(snap.links, drop) if drop else list(snap.links)
    return replace(snap, activities=frozen_mapping(acts), links=tuple(links)), tuple(missing)


def _case(casefile: Casefile, built: AsBuilt, label: str, events: Sequence[str]) -> ButForCase:
    cals, project = casefile.calendars, casefile.project
    net, missing = remove_events(casefile, built, events)
    r = schedule(net, cals, project)
    comp = built.schedule.completion_id
    after = r[comp].early_finish if comp in r.activities else r.completion
    return ButForCase(
        label=label,
        removed=tuple(events),
        not_represented=missing,
        as_built_completion=built.completion,
        but_for_completion=after,
        difference=delay_between(project, cals, after, built.completion),
        unit="working days" if project.delay_unit == "working-days" else "calendar days",
        critical_path=r.longest_path,
    )


def but_for(
    casefile: Casefile,
    *,
    party: str | None = None,
    event: str | None = None,
    snapshot_id: str | None = None,
) -> ButForReport:
    """Collapse the as-built schedule: without one party's delays, one event's, or each in turn.

    Parameters
    ----------
    casefile : Casefile
    party : str, optional
        Remove every event of this party (one case).
    event : str, optional
        Remove this one event (one case).
    snapshot_id : str, optional
        Build the as-built from this snapshot instead of the last.

    Returns
    -------
    ButForReport
        With neither option: one case per party that has events, each alone,
        then one with all owner delays together (events of every party whose
        role is ``owner``).

    Raises
    ------
    NotFoundError
        When the party or event is not in the casefile.

    References
    ----------
    AACE RP 29R-03, MIP 3.8; SCL Protocol 2nd ed., on collapsed as-built analysis.
    """
    if party is not None and event is not None:
        msg = "choose one of a party and an event to remove, not both"
        raise ValueError(msg)
    built = as_built(casefile, snapshot_id)
    cases = []
    if event is not None:
        ev = casefile.event(event)
        cases.append(_case(casefile, built, f"event {ev.id}", [ev.id]))
    elif party is not None:
        if party not in casefile.parties:
            known = ", ".join(casefile.parties) or "none"
            msg = f"no party {party!r} in the casefile (known: {known})"
            raise NotFoundError(msg)
        cases.append(_case(casefile, built, f"party {party}", [e.id for e in casefile.events if e.party == party]))
    else:
        for pid in casefile.parties:
            evs = [e.id for e in casefile.events if e.party == pid]
            if evs:
                cases.append(_case(casefile, built, f"party {pid}", evs))
        owners = [pid for pid, p in casefile.parties.items() if p.role == "owner"]
        evs = [e.id for e in casefile.events if e.party in owners]
        if evs:
            cases.append(_case(casefile, built, "all owner delays", evs))
    return ButForReport(built, tuple(cases))


# --- tables and JSON ---------------------------------------------------------


def but_for_table(report: ButForReport) -> Table:
    """One row per but-for case: the completion with and without the removed delays."""
    return Table(
        "but-for",
        ("case", "events_removed", "not_represented", "as_built_completion", "but_for_completion", "difference", "unit"),
        tuple(
            (c.label, c.removed, c.not_represented, c.as_built_completion, c.but_for_completion, c.difference, c.unit)
            for c in report.cases
        ),
    )


def as_built_table(report: ButForReport) -> Table:
    """How each event is represented in the as-built schedule."""
    return Table(
        "but-for-events",
        ("event", "party", "represented_as", "activities", "days"),
        tuple(
            (e.event, e.party, e.how, e.activities, " ".join(f"{a}:{n}" for a, n in e.days))
            for e in report.as_built.events
        ),
    )


def but_for_json(report: ButForReport) -> dict:
    """The ``forensic but-for --json`` object (keys documented in docs/impact-and-butfor.md)."""
    b = report.as_built
    return {
        "as_built_from": b.source,
        "as_built_completion": b.completion,
        "pins": list(b.pins),
        "relinked": [
            {"pred": p, "succ": s, "type": t, "now": n, "lag": lag} for p, s, t, n, lag in b.relinked
        ],
        "events": [
            {"event": e.event, "party": e.party, "represented_as": e.how,
             "activities": list(e.activities), "days": dict(e.days)}
            for e in b.events
        ],
        "cases": [
            {"case": c.label, "events_removed": list(c.removed), "not_represented": list(c.not_represented),
             "as_built_completion": c.as_built_completion, "but_for_completion": c.but_for_completion,
             "difference": c.difference, "unit": c.unit.replace(" ", "-"), "critical_path": list(c.critical_path)}
            for c in report.cases
        ],
        "warnings": list(b.warnings),
    }
