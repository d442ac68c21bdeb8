"""But-for analysis: the collapsed as-built schedule (AACE RP 29R-03, MIP 3.8).

A but-for analysis asks, after the fact, when the work would have finished
*but for* one party's delays. It builds an *as-built schedule* from the last
update (what actually happened, with the logic of the last update), takes
out the delays of that party (or of one event), reschedules, and compares
the *but-for* completion with the as-built one (AACE RP 29R-03, MIP 3.8,
modelled / subtractive / single simulation; SCL Delay and Disruption
Protocol, 2nd ed., on collapsed as-built analysis).

The as-built schedule
---------------------
Built by :func:`forensic.analysis.asbuilt_schedule.as_built` (its rules are
in that module's notes): every activity not started, placed by logic,
pinned only where the logic does not explain its actual start.

How a delay event is represented and removed
--------------------------------------------
- If activities of the event's fragnet are in the as-built (its ids are in
  the update), they are its delay: removing the event deletes them and
  joins each predecessor to each successor through them, the link type
  taking the predecessor's end of the first link and the successor's end of
  the second, the lags added (as if the deleted activity took no time).
- Otherwise the working days it cost each task it hit: its stated
  ``days_lost``, else the estimate from the record
  (:func:`forensic.analysis.impact.estimate_days`: the task's overrun on working
  days inside the event's period). Removing the event shortens the task by
  them (at least to 1 day); estimated days of several events on one task
  are capped together at its overrun inside the union of their periods, so
  no day is counted twice. No event is removed as a total stoppage.
- An event that can be neither is not represented; it is listed in
  ``ButForCase.not_represented``, with the reason in ``EventDelay.why``.

References
----------
AACE International Recommended Practice 29R-03, Forensic Schedule Analysis,
MIP 3.8 (modelled / subtractive / single simulation).
Society of Construction Law, Delay and Disruption Protocol, 2nd edition (2017).
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from dataclasses import dataclass, replace
from datetime import date

from forensic.analysis.asbuilt_schedule import DAY, AsBuilt, EventDelay, as_built
from forensic.analysis.event_cost import (
    calendars_of,
    delay_between,
    planned_duration,
    record_span,
)
from forensic.analysis.runcache import RunCache, cached_schedule
from forensic.core.calendars import is_workday
from forensic.core.engine import ScheduleResult, schedule
from forensic.core.errors import NotFoundError
from forensic.core.model import Casefile, Event, Link, Snapshot, frozen_mapping
from forensic.core.tables import Table

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
    "overlap_note",
    "remove_events",
]


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
    warnings: tuple[str, ...] = ()


@dataclass(frozen=True, slots=True)
class ButForReport:
    """The as-built schedule and each but-for case run on it.

    ``overlap`` (default run only, else ``None``) is the days, in the delay
    unit, by which the single-party differences add up to more than the
    difference with all events removed together; ``overlap_note`` says what
    it means (each party's delay is a but-for cause of the same days; the
    split then depends on who owns the float).
    """

    as_built: AsBuilt
    cases: tuple[ButForCase, ...]
    overlap: int | None = None
    overlap_note: str = ""


# --- the as-built schedule ---------------------------------------------------


def _estimate_cap(casefile: Casefile, src: Snapshot, record: ScheduleResult, aid: str,
                  events: Sequence[Event]) -> int:
    """The most that estimated events removed together may take off one task.

    Its overrun against the plan at the earliest of their starts, counted on
    working days inside the union of their periods, so that events whose
    periods overlap on one task do not count the same days twice.
    """
    a = src.activities[aid]
    cal = calendars_of(casefile, a)
    start, finish, dur = record_span(a, record[aid], src.data_date, cal)
    planned = planned_duration(casefile, aid, min(e.start for e in events)) or 0
    inside: set[date] = set()
    for e in events:
        lo, hi = max(start, e.start), min(finish, e.finish)
        d = lo
        while d <= hi:
            if is_workday(cal, d):
                inside.add(d)
            d += DAY
    return min(max(0, dur - planned), len(inside))


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


def remove_events(casefile: Casefile, built: AsBuilt, event_ids: Iterable[str], *,
                  cache: RunCache | None = None) -> tuple[Snapshot, tuple[str, ...]]:
    """The as-built network with these events' delays taken out, and the ids not represented.

    A fragnet's activities are deleted and their links bridged; a task an
    event cost days (stated or estimated) is shortened by them, at least to
    one day. Estimated days of several events on one task are capped
    together (:func:`_estimate_cap`); no event is removed as a total
    stoppage of the work it names. ``cache``: one call's schedules.

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
    stated: dict[str, int] = {}
    estimated: dict[str, int] = {}
    estimated_by: dict[str, list[Event]] = {}
    missing = []
    for ev in casefile.events:
        if ev.id not in ids:
            continue
        e = rep[ev.id]
        if e.how == "fragnet":
            drop.update(e.activities)
        elif e.how == "days-lost":
            for aid, n in e.days:
                stated[aid] = stated.get(aid, 0) + n
        elif e.how == "estimated":
            for aid, n in e.days:
                estimated[aid] = estimated.get(aid, 0) + n
                estimated_by.setdefault(aid, []).append(ev)
        else:
            missing.append(ev.id)
    record = cached_schedule(cache, casefile, src) if estimated else None
    for aid in set(stated) | set(estimated):
        if aid not in acts or aid in drop:
            continue
        a = acts[aid]
        if a.is_milestone or a.duration == 0:
            continue
        take = stated.get(aid, 0)
        if aid in estimated:
            assert record is not None  # scheduled above whenever an event is estimated
            take += min(estimated[aid], _estimate_cap(casefile, src, record, aid, estimated_by[aid]))
        if take:
            acts[aid] = replace(a, duration=max(1, a.duration - take))
    for aid in drop:
        del acts[aid]
    links = bridge_links(snap.links, drop) if drop else list(snap.links)
    return replace(snap, activities=frozen_mapping(acts), links=tuple(links)), tuple(missing)


def _case(casefile: Casefile, built: AsBuilt, label: str, events: Sequence[str],
          baseline_completion: date | None = None, cache: RunCache | None = None) -> ButForCase:
    cals, project = casefile.calendars, casefile.project
    net, missing = remove_events(casefile, built, events, cache=cache)
    r = schedule(net, cals, project)
    comp = built.schedule.completion_id
    after = r[comp].early_finish if comp in r.activities else r.completion
    warnings = []
    if baseline_completion is not None and after < baseline_completion:
        # Never below the as-planned: taking delays out cannot make the work
        # finish before the baseline planned it (AACE RP 29R-03, MIP 3.8).
        rep = {e.event: e for e in built.events}
        acts = sorted({a for e in events if e in rep for a in rep[e].activities})
        warnings.append(
            f"{label}: the but-for completion {after.isoformat()} is before the baseline's completion "
            f"{baseline_completion.isoformat()}; events {' '.join(events)} (activities {' '.join(acts) or 'none'}) "
            "take out more than they added: check their fragnets, days_lost or the as-built")
    return ButForCase(
        label=label,
        removed=tuple(events),
        not_represented=missing,
        as_built_completion=built.completion,
        but_for_completion=after,
        difference=delay_between(project, cals, after, built.completion),
        unit="working days" if project.delay_unit == "working-days" else "calendar days",
        critical_path=r.longest_path,
        warnings=tuple(warnings),
    )


def overlap_note(overlap: int, singles: int, together: int, unit: str) -> str:
    """The sentence on overlapping but-for figures and float ownership (SCL Protocol 2nd ed.)."""
    if overlap <= 0:
        return (f"The single-party differences add up to {singles} {unit}, no more than the {together} with all "
                "events removed together, so no day is counted under two parties; where the sum is less, the rest "
                "is delay that only removing several parties' events together takes out (their paths ran in "
                "parallel, each with the float the other left).")
    return (f"The single-party differences add up to {singles} {unit} against {together} with all events "
            f"removed together: {overlap} {unit} are counted under more than one party, because each party's "
            "delay alone is a but-for cause of them (the other's path had float to absorb it). How those days "
            "are split depends on who owns the float, which the contract, not this method, decides "
            "(SCL Delay and Disruption Protocol, 2nd ed., on float and concurrency).")


def but_for(
    casefile: Casefile,
    *,
    party: str | None = None,
    event: str | None = None,
    snapshot_id: str | None = None,
    cache: RunCache | None = None,
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
    cache : RunCache, optional
        One call's cache (:mod:`forensic.analysis.runcache`): a caller that
        asks for one case at a time builds the as-built schedule once.

    Returns
    -------
    ButForReport
        With neither option: one case per party that has events, each alone;
        one with all owner delays together (events of every party whose role
        is ``owner``); ``all events``; and ``all excusable events`` (both
        excusable categories), with the ``overlap`` of the single-party
        differences over the all-events one. Every case whose completion
        falls before the baseline's carries a warning.

    Raises
    ------
    NotFoundError
        When the party or event is not in the casefile.

    References
    ----------
    AACE RP 29R-03, MIP 3.8; SCL Protocol 2nd ed., on collapsed as-built
    analysis, concurrency and float ownership.
    """
    if party is not None and event is not None:
        msg = "choose one of a party and an event to remove, not both"
        raise ValueError(msg)
    if cache is None:
        built = as_built(casefile, snapshot_id)
    else:
        built = cache.get(casefile, "as-built", (), lambda: as_built(casefile, snapshot_id, cache=cache), extra=snapshot_id)
    planned = cached_schedule(cache, casefile, casefile.baseline).completion
    cases = []
    overlap = None
    note = ""
    if event is not None:
        ev = casefile.event(event)
        cases.append(_case(casefile, built, f"event {ev.id}", [ev.id], planned, cache))
    elif party is not None:
        if party not in casefile.parties:
            known = ", ".join(casefile.parties) or "none"
            msg = f"no party {party!r} in the casefile (known: {known})"
            raise NotFoundError(msg)
        cases.append(_case(casefile, built, f"party {party}",
                           [e.id for e in casefile.events if e.party == party], planned))
    else:
        singles = []
        for pid in casefile.parties:
            evs = [e.id for e in casefile.events if e.party == pid]
            if evs:
                singles.append(_case(casefile, built, f"party {pid}", evs, planned))
        cases.extend(singles)
        owners = [pid for pid, p in casefile.parties.items() if p.role == "owner"]
        evs = [e.id for e in casefile.events if e.party in owners]
        if evs:
            cases.append(_case(casefile, built, "all owner delays", evs, planned))
        if casefile.events:
            every = _case(casefile, built, "all events", [e.id for e in casefile.events], planned)
            cases.append(every)
            excusable = [e.id for e in casefile.events if e.category.startswith("excusable")]
            if excusable:
                cases.append(_case(casefile, built, "all excusable events", excusable, planned))
            total = sum(c.difference for c in singles)
            overlap = max(0, total - every.difference)
            note = overlap_note(overlap, total, every.difference, every.unit)
    return ButForReport(built, tuple(cases), overlap, note)


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
             "activities": list(e.activities), "days": dict(e.days), "why": e.why}
            for e in b.events
        ],
        "cases": [
            {"case": c.label, "events_removed": list(c.removed), "not_represented": list(c.not_represented),
             "as_built_completion": c.as_built_completion, "but_for_completion": c.but_for_completion,
             "difference": c.difference, "unit": c.unit.replace(" ", "-"), "critical_path": list(c.critical_path),
             "warnings": list(c.warnings)}
            for c in report.cases
        ],
        "warnings": [*b.warnings, *(w for c in report.cases for w in c.warnings)],
        "overlap": report.overlap,
        "overlap_note": report.overlap_note,
    }
