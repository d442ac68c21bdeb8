"""Private helpers of the casefile loader: rows of activities.csv, links.csv, events.csv.

Each reader turns the rows of one table into model records and records
every problem it meets; a row with a problem yields no record (the casefile
is refused whole anyway) but its id is still known, so one bad cell does not
set off a cascade of "unknown activity" problems elsewhere. The checks of a
whole network are in :mod:`forensic.casefile.loops` (logic loops) and
:mod:`forensic.casefile.span` (the span ceiling).
"""

from __future__ import annotations

import re
from collections.abc import Collection, Mapping
from dataclasses import dataclass, field
from datetime import date

from forensic.casefile.csvread import (
    MAX_DURATION,
    Problems,
    Row,
    check_id,
    check_text,
    mixed_scripts,
    parse_date,
    parse_int,
    parse_number,
)
from forensic.casefile.loops import check_fragnet_loops, check_loops
from forensic.casefile.span import (
    MAX_SPAN_DAYS,
    MAX_SPAN_YEARS,
    check_span,
    min_calendar_days,
    span_bounds,
)
from forensic.core.model import (
    ACTIVITY_KINDS,
    CATEGORIES,
    CONSTRAINT_KINDS,
    DEFAULT_CATEGORY,
    LINK_TYPES,
    Activity,
    Event,
    Link,
    Party,
)

# The loop and span checks are defined in forensic.casefile.loops and
# forensic.casefile.span; they are named here too, where they were first published.
__all__ = [
    "ACTIVITY_COLUMNS",
    "EVENT_COLUMNS",
    "LINK_COLUMNS",
    "ActivityTable",
    "MAX_SPAN_DAYS",
    "MAX_SPAN_YEARS",
    "check_fragnet_loops",
    "check_loops",
    "check_span",
    "min_calendar_days",
    "span_bounds",
    "read_activities",
    "read_events",
    "read_links",
]

# (required, optional) columns of each table (casefile format, version 2).
ACTIVITY_COLUMNS = (
    ("id", "name", "duration"),
    (
        "kind",
        "remaining",
        "actual_start",
        "actual_finish",
        "calendar",
        "constraint",
        "constraint_date",
        "party",
        "area",
        "percent_complete",
        "crash_days",
        "crash_cost",
    ),
)
LINK_COLUMNS = (("pred", "succ"), ("type", "lag"))
_BLANK = re.compile(r"\s")
EVENT_COLUMNS = (
    ("id", "title", "party", "start", "finish"),
    ("category", "activities", "fragnet", "days_lost", "reference"),
)


@dataclass
class ActivityTable:
    """The activities read from one file: good records, and every id seen (good or not)."""

    file: str
    activities: dict[str, Activity] = field(default_factory=dict)
    ids: dict[str, int] = field(default_factory=dict)  # id -> line, file order


def _required(row: Row, column: str, rel: str, problems: Problems) -> str | None:
    raw = row.get(column)
    if not raw:
        problems.add(rel, row.line, column, raw, f"{column} is required and is blank")
        return None
    return raw


def _choice(raw: str, allowed: Collection[str], rel: str, line: int, column: str, problems: Problems) -> str | None:
    if raw not in allowed:
        problems.add(rel, line, column, raw, f"expected one of {', '.join(allowed)}")
        return None
    return raw


def read_activities(
    rows: list[Row],
    rel: str,
    *,
    calendars: Collection[str],
    parties: Collection[str],
    data_date: date | None,
    problems: Problems,
    warnings: list[str],
    memo: dict | None = None,
) -> ActivityTable:
    """Read activity rows; ``data_date`` is ``None`` for a fragnet (no progress check).

    ``memo`` (shared by the snapshots of one casefile) maps a row's cells to
    the record read from them with no problem and no warning: an activity
    that did not change from one update to the next is read once, and the
    snapshots share its record. Only the data-date check depends on the
    snapshot, and it is made again on every reuse.
    """
    table = ActivityTable(rel)
    memo = {} if memo is None else memo.setdefault(tuple(rows[0].cells) if rows else (), {})
    for row in rows:
        before = len(problems)
        key = tuple(row.cells.values())
        act = memo.get(key)
        if act is not None and data_date is not None and (
            (act.actual_start is not None and act.actual_start >= data_date)
            or (act.actual_finish is not None and act.actual_finish >= data_date)
        ):
            act = None
        if act is None:
            n_warn = len(warnings)
            act = _read_activity(row, rel, calendars, parties, data_date, problems, warnings)
            if act is not None and len(problems) == before and len(warnings) == n_warn:
                memo[key] = act
        elif act.line != row.line:
            act = memo[key] = _moved(act, row.line)
        aid = row.get("id")
        if aid:
            if aid in table.ids:
                problems.add(rel, row.line, "id", aid, f"duplicate activity id; first on line {table.ids[aid]}")
                continue
            table.ids[aid] = row.line
        if act is not None and len(problems) == before:
            table.activities[act.id] = act
    return table


def _moved(a: Activity, line: int) -> Activity:
    """The same record at another line (a direct call: ``dataclasses.replace`` is far slower)."""
    return Activity(
        a.id, a.name, a.duration, a.kind, a.remaining, a.actual_start, a.actual_finish, a.calendar,
        a.constraint, a.constraint_date, a.party, a.area, a.percent_complete, a.crash_days, a.crash_cost, line,
    )


def _read_activity(row, rel, calendars, parties, data_date, problems, warnings) -> Activity | None:
    line = row.line
    aid = _required(row, "id", rel, problems)
    if aid is not None and check_id(aid, rel, line, "id", problems):
        if _BLANK.search(aid):
            problems.add(rel, line, "id", aid, "an activity id may not contain blanks (events list ids separated by blanks)")
        scripts = mixed_scripts(aid)
        if scripts:
            warnings.append(f"{rel}, line {line}: activity id {aid!r} mixes letters of the {' and '.join(scripts)} "
                            "scripts; a look-alike letter makes it another id than the one it resembles")
    name = _required(row, "name", rel, problems)
    if name is not None:
        check_text(name, rel, line, "name", problems)
    if row.get("area"):
        check_text(row.get("area"), rel, line, "area", problems)
    kind = _choice(row.get("kind") or "task", ACTIVITY_KINDS, rel, line, "kind", problems)
    raw = _required(row, "duration", rel, problems)
    duration = None if raw is None else parse_int(raw, rel, line, "duration", problems)
    raw = row.get("remaining")
    remaining = parse_int(raw, rel, line, "remaining", problems) if raw else None
    dates = {}
    for col in ("actual_start", "actual_finish", "constraint_date"):
        raw = row.get(col)
        dates[col] = parse_date(raw, rel, line, col, problems) if raw else None
    start, finish = dates["actual_start"], dates["actual_finish"]
    calendar = row.get("calendar") or None
    if calendar is not None and calendar not in calendars:
        problems.add(rel, line, "calendar", calendar, f"unknown calendar; the manifest defines {', '.join(calendars) or 'none'}")
    constraint = row.get("constraint") or None
    if constraint is not None:
        _choice(constraint, CONSTRAINT_KINDS, rel, line, "constraint", problems)
        if dates["constraint_date"] is None and not row.get("constraint_date"):
            problems.add(rel, line, "constraint_date", "", f"constraint {constraint!r} needs a constraint_date")
    elif row.get("constraint_date"):
        problems.add(rel, line, "constraint_date", row.get("constraint_date"), "constraint_date given without a constraint")
    party = row.get("party") or None
    if party is not None and party not in parties:
        problems.add(rel, line, "party", party, f"unknown party; the manifest defines {', '.join(parties) or 'none'}")
    raw = row.get("percent_complete")
    percent = parse_number(raw, rel, line, "percent_complete", problems, maximum=100.0) if raw else None
    raw = row.get("crash_days")
    crash_days = parse_int(raw, rel, line, "crash_days", problems) if raw else None
    if crash_days is not None and duration is not None and crash_days > duration:
        problems.add(rel, line, "crash_days", crash_days, f"cannot shorten by more than the duration ({duration})")
    raw = row.get("crash_cost")
    crash_cost = parse_number(raw, rel, line, "crash_cost", problems) if raw else None

    if kind in ("opening-milestone", "closing-milestone"):
        if duration not in (None, 0):
            problems.add(rel, line, "duration", duration, "a milestone has duration 0")
        if remaining not in (None, 0):
            problems.add(rel, line, "remaining", remaining, "a milestone has remaining 0")
        if start is not None and finish is not None and start != finish:
            problems.add(rel, line, "actual_finish", finish.isoformat(),
                         f"a milestone has one date; actual_start is {start.isoformat()}")
        # Either actual date marks a milestone achieved; it carries both.
        start = finish = start or finish
        remaining = 0
    elif kind == "task":
        if finish is not None and start is None and not row.get("actual_start"):
            problems.add(rel, line, "actual_finish", finish.isoformat(), "a task with an actual_finish needs an actual_start")
        if start is not None and finish is not None and finish < start:
            problems.add(rel, line, "actual_finish", finish.isoformat(),
                         f"actual_finish is before actual_start {start.isoformat()}")
    if data_date is not None:
        for col, value in (("actual_start", start), ("actual_finish", finish)):
            if value is not None and value >= data_date and row.get(col):
                problems.add(rel, line, col, value.isoformat(),
                             f"an actual date must be before the data date {data_date.isoformat()}")
    if kind == "task" and duration is not None:
        if finish is not None:
            if remaining not in (None, 0):
                problems.add(rel, line, "remaining", remaining, "a finished activity has remaining 0 (or blank)")
            remaining = 0
        elif start is not None:
            if remaining is None and not row.get("remaining"):
                problems.add(rel, line, "remaining", "", "an activity in progress needs its remaining duration")
            elif remaining == 0:
                warnings.append(f"{rel}, line {line}: activity {aid} is in progress with remaining 0 "
                                "and no actual_finish")
        elif remaining is None and not row.get("remaining"):
            remaining = duration
    if aid is None or name is None or kind is None or duration is None:
        return None
    return Activity(
        id=aid, name=name, duration=duration, kind=kind, remaining=remaining,
        actual_start=start, actual_finish=finish, calendar=calendar, constraint=constraint,
        constraint_date=dates["constraint_date"], party=party, area=row.get("area") or None,
        percent_complete=percent, crash_days=crash_days, crash_cost=crash_cost, line=line,
    )


def read_links(
    rows: list[Row],
    rel: str,
    *,
    known: Collection[str],
    finished: Collection[str],
    problems: Problems,
    warnings: list[str],
    unknown_hint: str = "no activity with this id in the snapshot",
    memo: dict | None = None,
) -> list[Link]:
    """Read link rows; ``known`` are the ids a link may name, ``finished`` those finished.

    ``memo`` maps a row's cells to the link read from them (see
    :func:`read_activities`); the checks against the snapshot (known ids,
    duplicates, links into finished work) are made on every row.
    """
    links: list[Link] = []
    seen: dict[tuple[str, str, str], int] = {}
    memo = {} if memo is None else memo.setdefault(tuple(rows[0].cells) if rows else (), {})
    for row in rows:
        line = row.line
        cells_key = tuple(row.cells.values())
        hit = memo.get(cells_key)
        if hit is not None and hit.pred in known and hit.succ in known:
            lkey = hit.key
            if lkey in seen:
                problems.add(rel, line, "succ", f"{hit.pred} -> {hit.succ} {hit.type}", f"duplicate link; first on line {seen[lkey]}")
                continue
            seen[lkey] = line
            if hit.succ in finished and hit.pred not in finished:
                warnings.append(f"{rel}, line {line}: link {hit.pred} -> {hit.succ} has no effect, "
                                f"because {hit.succ} is finished and {hit.pred} is not")
            if hit.line != line:
                hit = memo[cells_key] = Link(hit.pred, hit.succ, hit.type, hit.lag, line)
            links.append(hit)
            continue
        before = len(problems)
        ends = {}
        for col in ("pred", "succ"):
            end = ends[col] = _required(row, col, rel, problems)
            if end is not None and end not in known and check_id(end, rel, line, col, problems):
                problems.add(rel, line, col, end, unknown_hint)
        pred, succ = ends["pred"], ends["succ"]
        if pred is not None and pred == succ:
            problems.add(rel, line, "succ", succ, "an activity cannot be linked to itself")
        ltype = _choice(row.get("type") or "FS", LINK_TYPES, rel, line, "type", problems)
        raw = row.get("lag")
        lag = parse_int(raw, rel, line, "lag", problems, minimum=None, maximum=MAX_DURATION,
                        what="a lag in whole working days (negative for a lead)") if raw else 0
        if len(problems) != before or pred is None or succ is None or ltype is None or lag is None:
            continue  # (a missing value has been reported: ``_required`` and the parsers add a problem)
        key = (pred, succ, ltype)
        if key in seen:
            problems.add(rel, line, "succ", f"{pred} -> {succ} {ltype}", f"duplicate link; first on line {seen[key]}")
            continue
        seen[key] = line
        # A link between two finished activities is history and says nothing;
        # one into finished work from unfinished work has no effect and shows
        # progress out of sequence, so it is worth a warning.
        if succ in finished and pred not in finished:
            warnings.append(f"{rel}, line {line}: link {pred} -> {succ} has no effect, "
                            f"because {succ} is finished and {pred} is not")
        link = Link(pred, succ, ltype, lag, line)
        memo[cells_key] = link
        links.append(link)
    return links


def read_events(
    rows: list[Row],
    rel: str,
    *,
    parties: Mapping[str, Party],
    fragnets: Mapping[str, Collection[str]],
    snapshot_ids: Collection[str],
    problems: Problems,
    unreadable: Collection[str] = (),
) -> list[Event]:
    """Read event rows; ``fragnets`` maps each fragnet folder name to its activity ids.

    ``unreadable`` names fragnet folders that exist but could not be read
    (their problem is reported with their files): an event naming one is
    not reported again, nor the activities it lists (they may be the
    fragnet's own).

    An activity an event names must be in some snapshot or in the event's own
    fragnet: an id found nowhere is an error, since a slip there would drop
    the event from the attribution without a word.
    """
    events: list[Event] = []
    seen: dict[str, int] = {}
    for row in rows:
        before = len(problems)
        line = row.line
        eid = _required(row, "id", rel, problems)
        if eid is not None and check_id(eid, rel, line, "id", problems):
            if eid in seen:
                problems.add(rel, line, "id", eid, f"duplicate event id; first on line {seen[eid]}")
            else:
                seen[eid] = line
        title = _required(row, "title", rel, problems)
        if title is not None:
            check_text(title, rel, line, "title", problems)
        if row.get("reference"):
            check_text(row.get("reference"), rel, line, "reference", problems)
        pid = _required(row, "party", rel, problems)
        party = parties.get(pid) if pid else None
        if pid is not None and party is None:
            problems.add(rel, line, "party", pid, f"unknown party; the manifest defines {', '.join(parties) or 'none'}")
        category = row.get("category") or None
        if category is not None:
            _choice(category, CATEGORIES, rel, line, "category", problems)
        elif party is not None:
            category = DEFAULT_CATEGORY[party.role]
        span = {}
        for col in ("start", "finish"):
            raw = _required(row, col, rel, problems)
            span[col] = parse_date(raw, rel, line, col, problems) if raw else None
        if span["start"] and span["finish"] and span["finish"] < span["start"]:
            problems.add(rel, line, "finish", span["finish"].isoformat(),
                         f"the event finishes before it starts ({span['start'].isoformat()})")
        fragnet = row.get("fragnet") or None
        if fragnet is not None and fragnet in unreadable:
            continue  # its files' problems are reported; the rest of the row waits for them
        if fragnet is not None and fragnet not in fragnets:
            hint = "; a folder whose name starts with a dot is ignored" if fragnet.startswith(".") else ""
            problems.add(rel, line, "fragnet", fragnet,
                         f"no such fragnet folder under fragnets/; found {', '.join(fragnets) or 'none'}{hint}")
        hit = tuple(row.get("activities").split())
        own = fragnets.get(fragnet, ()) if fragnet else ()
        for aid in hit:
            if aid not in snapshot_ids and aid not in own:
                problems.add(rel, line, "activities", aid, "no activity with this id in any snapshot or in the event's fragnet")
        if len(set(hit)) != len(hit):
            problems.add(rel, line, "activities", row.get("activities"), "an activity is listed twice")
        raw = row.get("days_lost")
        lost = _days_lost(raw, hit, rel, line, problems) if raw else ()
        start, finish = span["start"], span["finish"]
        # With no new problem every required value is there (a missing one is reported).
        if (len(problems) == before and eid is not None and title is not None and pid is not None
                and category is not None and start is not None and finish is not None):
            events.append(Event(eid, title, pid, category, start, finish, hit,
                                fragnet, row.get("reference") or None, line, lost))
    return events


def _days_lost(raw: str, hit: tuple[str, ...], rel: str, line: int, problems: Problems) -> tuple[tuple[str, int], ...]:
    """``days_lost``: one number for every activity hit, or ``ACT:days`` pairs (casefile format 2).

    A pair's activity must be one the event hit; a hit activity that no pair
    names lost 0 days (the stated figure is the whole of it).
    """
    parts = raw.split()
    if len(parts) == 1 and ":" not in parts[0]:
        n = parse_int(parts[0], rel, line, "days_lost", problems, what="whole working days, or ACT:days pairs")
        if n is not None and not hit:
            problems.add(rel, line, "days_lost", raw, "a number of days lost needs the activities the event hit")
        return tuple((aid, n) for aid in hit) if n is not None else ()
    given: dict[str, int] = {}
    for part in parts:
        aid, sep, num = part.partition(":")
        if not sep or not aid:
            problems.add(rel, line, "days_lost", part, "expected one number, or ACT:days pairs separated by blanks")
            continue
        n = parse_int(num, rel, line, "days_lost", problems)
        if aid not in hit:
            problems.add(rel, line, "days_lost", part,
                         f"{aid} is not among the activities the event hit ({' '.join(hit) or 'none'})")
        elif aid in given:
            problems.add(rel, line, "days_lost", part, f"activity {aid} is given twice")
        elif n is not None:
            given[aid] = n
    return tuple((aid, given.get(aid, 0)) for aid in hit)
