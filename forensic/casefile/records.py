"""Private helpers of the casefile loader: rows of activities.csv, links.csv, events.csv.

Each reader turns the rows of one table into model records and records
every problem it meets; a row with a problem yields no record (the casefile
is refused whole anyway) but its id is still known, so one bad cell does not
set off a cascade of "unknown activity" problems elsewhere.
"""

from __future__ import annotations

import re
from collections.abc import Collection, Mapping
from dataclasses import dataclass, field
from datetime import date
from functools import lru_cache

import networkx as nx
import numpy as np

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
from forensic.core.calendars import DAY_NAMES
from forensic.core.engine import topological_order
from forensic.core.errors import LOOP_SHOWN, LOOP_WHOLE, LogicLoopError, loop_text
from forensic.core.model import (
    ACTIVITY_KINDS,
    CATEGORIES,
    CONSTRAINT_KINDS,
    DEFAULT_CATEGORY,
    LINK_TYPES,
    Activity,
    Calendar,
    Event,
    Link,
    Party,
)

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
    "span_bounds",
    "read_activities",
    "read_events",
    "read_links",
]

# (required, optional) columns of each table (casefile format, version 1).
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
    if None in (aid, name, kind, duration):
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
            ends[col] = _required(row, col, rel, problems)
            if ends[col] is not None and ends[col] not in known and check_id(ends[col], rel, line, col, problems):
                problems.add(rel, line, col, ends[col], unknown_hint)
        pred, succ = ends["pred"], ends["succ"]
        if pred is not None and pred == succ:
            problems.add(rel, line, "succ", succ, "an activity cannot be linked to itself")
        ltype = _choice(row.get("type") or "FS", LINK_TYPES, rel, line, "type", problems)
        raw = row.get("lag")
        lag = parse_int(raw, rel, line, "lag", problems, minimum=None, maximum=MAX_DURATION,
                        what="a lag in whole working days (negative for a lead)") if raw else 0
        if len(problems) != before:
            continue
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


def check_loops(ids: list[str], links: list[Link], rel: str, problems: Problems) -> None:
    """Report every logic loop of a network, naming its activities and the link lines.

    Kahn's topological sort (the engine's) finds whether there is a loop; the
    strongly connected components (networkx, Tarjan 1972) then give each
    loop separately, so one pass reports them all.
    """
    pos = {a: i for i, a in enumerate(ids)}
    succs: list[list[int]] = [[] for _ in ids]
    for link in links:
        if link.pred in pos and link.succ in pos:
            succs[pos[link.pred]].append(pos[link.succ])
    try:
        topological_order(ids, succs)
        return
    except LogicLoopError:
        pass
    line_of: dict[tuple[str, str], int] = {}
    graph = nx.DiGraph()
    for link in links:
        if link.pred in pos and link.succ in pos:
            graph.add_edge(link.pred, link.succ)
            line_of.setdefault((link.pred, link.succ), link.line or 0)
    components = [c for c in nx.strongly_connected_components(graph) if len(c) > 1]
    components.sort(key=lambda c: min(pos[a] for a in c))
    for comp in components:
        loop = _shortest_loop(min(comp, key=pos.__getitem__), comp, graph)
        lines = [line_of[(u, v)] for u, v in zip(loop, [*loop[1:], loop[0]], strict=True)]
        problems.add(rel, min(lines), None, loop_text(loop),
                     f"logic loop through the links on lines {_lines_text(lines)}; "
                     "a loop has no schedule, break one of its links")


def _shortest_loop(source: str, comp: set[str], graph) -> list[str]:
    """The shortest loop through ``source`` inside its strongly connected component (breadth first).

    Linear in the component's links, and the same loop every run (the
    links are visited in file order): one pass over 50,000 small loops costs
    no more than their links, where a networkx subgraph per loop did not.
    """
    parent = {source: source}
    queue = [source]
    for u in queue:  # the list grows while it is read: breadth-first order
        for v in graph.successors(u):
            if v == source:
                loop = [u]
                while loop[-1] != source:
                    loop.append(parent[loop[-1]])
                return loop[::-1]
            if v in comp and v not in parent:
                parent[v] = u
                queue.append(v)
    return [source]  # unreachable: every member of a component lies on a loop through the source


def _lines_text(lines: list[int]) -> str:
    """Line numbers as ``3, 4, 5``; a long list as its first and last few and the count."""
    if len(lines) <= LOOP_WHOLE:
        return ", ".join(map(str, lines))
    return (f"{', '.join(map(str, lines[:LOOP_SHOWN]))}, ... ({len(lines) - 2 * LOOP_SHOWN} more) ..., "
            f"{', '.join(map(str, lines[-LOOP_SHOWN:]))}")


def _has_loop(ids: list[str], links: list[Link]) -> bool:
    pos = {a: i for i, a in enumerate(ids)}
    succs: list[list[int]] = [[] for _ in ids]
    for link in links:
        if link.pred in pos and link.succ in pos:  # a bad row is reported with its table
            succs[pos[link.pred]].append(pos[link.succ])
    try:
        topological_order(ids, succs)
    except LogicLoopError:
        return True
    return False


# The scheduling horizon's ceiling: no snapshot may need more than a century
# of calendar days after its data date. The engine's working-day indices
# cover the whole span (several lists of one entry a day per calendar), so
# an absurd span (seven calendars of one working day a week and tasks of
# 36,500 days reach the year 9999) would cost gigabytes; this is checked on
# loading, before any array is built. A century is far beyond any real
# programme (common practice: the longest capital projects run for decades).
MAX_SPAN_YEARS = 100
MAX_SPAN_DAYS = 36_525  # 100 years of 365.25 days


def min_calendar_days(work: int, cal: Calendar | None) -> int:
    """The fewest calendar days that ``work`` working days of ``cal`` can take (a lower bound).

    At most one working day falls on a calendar day; at most ``w`` a week
    with ``w`` working weekdays, apart from the calendar's extra working
    dates (each may add one). Holidays only lengthen the span and are left
    out, so the bound never exceeds the true span. With ``r`` regular
    working days needed (``work`` less the extra dates), the first and the
    last are at least ``7 * ((r - 1) // w)`` days apart.

    Examples (worked by hand, five-day week, no extra dates): 6 working days
    take at least 7 * (5 // 5) + 1 = 8 days (Monday to the next Monday: 8,
    exact); 11 take 7 * (10 // 5) + 1 = 15 (exact); 10 take at least 10
    (the count itself; truly 12, Monday to the next Friday).
    """
    if work <= 0:
        return 0
    week = len(cal.workdays) if cal is not None and cal.workdays else 7
    regular = work - (len(cal.extra_workdays) if cal is not None else 0)
    if regular <= 0:
        return work
    return max(work, 7 * ((regular - 1) // week) + 1)


def _work(a: Activity) -> int | None:
    """Working days still to do after the data date; ``None`` when finished (it fixes nothing later)."""
    if a.actual_finish is not None or (a.actual_start is not None and (a.kind != "task" or a.duration == 0)):
        return None
    if a.remaining is not None:
        return a.remaining
    return a.duration


def check_span(
    activities: Mapping[str, Activity],
    links: list[Link],
    calendars: Mapping[str, Calendar],
    default_calendar: str | None,
    rel: str,
    problems: Problems,
) -> None:
    """Refuse a network whose schedule must run more than :data:`MAX_SPAN_YEARS` past its data date.

    A lower bound of the early dates, in calendar days after the data date,
    is propagated along the links in topological order (the forward pass of
    the critical path method, Kelley and Walker 1959, on start and finish
    events): each activity's remaining work takes at least
    :func:`min_calendar_days` on its calendar, each positive lag the same on
    the successor's calendar (the engine counts a lag in the successor's
    working days). Whatever could make a date earlier than this bound is
    left out, so the bound is never above the engine's dates: finished
    activities, links into started activities (under progress override
    they hold nothing), SS and SF links from started ones (their start is
    history), negative lags and every constraint (constraints only push
    early dates later); an instant dated on the working day before its
    boundary (a finish milestone) and an FF or SF link with no lag are
    lowered by the calendar's longest run of non-working days. Over the ceiling, the first activity (in logic
    order) whose finish is beyond it is named, with its line.
    """
    bounds = span_bounds(activities, links, calendars, default_calendar)
    if bounds is None:
        return
    finish, span, work, cal, i = bounds
    if i >= 0:
        acts = list(activities.values())
        _span_problem(acts[i], int(finish[i]), int(span[i]), int(work[i]), cal[i], rel, problems)


def span_bounds(
    activities: Mapping[str, Activity],
    links: list[Link],
    calendars: Mapping[str, Calendar],
    default_calendar: str | None,
    *,
    skip_under: int | None = MAX_SPAN_DAYS,
) -> tuple[np.ndarray, np.ndarray, np.ndarray, list, int] | None:
    """Lower bounds of the early finishes, in calendar days after the data date (see :func:`check_span`).

    Returns ``(finish, span, work, calendar)`` per activity in file order
    (``work`` is -1 for finished work) and the position of the first
    activity, in logic order, whose bound is over the ceiling (-1: none), or ``None`` when even every
    activity and lag end to end fit under ``skip_under`` days (nothing to
    check; ``None`` always computes). A finish bound counts the calendar days
    from the data date through the finish date; a start bound those before
    the start date.
    """
    acts = list(activities.values())
    n = len(acts)
    if n == 0:
        return None
    pos = {a.id: i for i, a in enumerate(acts)}
    cal_list = list(calendars.values())
    cal_at = {c.id: k for k, c in enumerate(cal_list)}
    week = np.array([len(c.workdays) or 7 for c in cal_list] + [7], dtype=np.int64)
    extra = np.array([len(c.extra_workdays) for c in cal_list] + [0], dtype=np.int64)
    none = len(cal_list)
    ck = np.fromiter((cal_at.get(a.calendar or default_calendar or "", none) for a in acts), np.int64, n)
    work = np.fromiter((-1 if (w := _work(a)) is None else w for a in acts), np.int64, n)
    started = np.fromiter((a.actual_start is not None for a in acts), bool, n)
    span = np.where(work < 0, 0, _min_days(work, week[ck], extra[ck]))
    gap = np.array([_longest_gap(c) for c in cal_list] + [0], dtype=np.int64)
    # A finish-type instant (a finish milestone, a task with no work left) is
    # dated on the working day before its boundary, which may lie up to the
    # longest run of non-working days of its calendar earlier (engine notes).
    opening = np.fromiter((a.kind == "opening-milestone" for a in acts), bool, n)
    instant = (work == 0) & ~opening
    back = np.where(instant, gap[ck], 0)
    m = len(links)
    lp = np.fromiter((pos.get(x.pred, -1) for x in links), np.int64, m)
    ls = np.fromiter((pos.get(x.succ, -1) for x in links), np.int64, m)
    typ = np.fromiter((_CODE[x.type] for x in links), np.int64, m)
    lag = np.fromiter((x.lag for x in links), np.int64, m)
    keep = (lp >= 0) & (ls >= 0) & (lag >= 0)
    lp, ls, typ, lag = lp[keep], ls[keep], typ[keep], lag[keep]
    from_start = (typ == 1) | (typ == 3)  # SS, SF: timed from the predecessor's start
    keep = (work[lp] >= 0) & (work[ls] >= 0) & ~started[ls] & ~(started[lp] & from_start)
    lp, ls, typ, lag, from_start = lp[keep], ls[keep], typ[keep], lag[keep], from_start[keep]
    w = _min_days(lag, week[ck[ls]], extra[ck[ls]])
    # An FF or SF link with no lag holds the successor's finish boundary; its
    # finish date, the working day before, may lie a run of non-working days earlier.
    w = np.where((lag == 0) & ~((typ == 0) | (typ == 1)), -gap[ck[ls]], w)
    if skip_under is not None and int(span.sum()) + int(np.maximum(w, 0).sum()) <= skip_under:
        return None
    to_start = (typ == 0) | (typ == 1)  # FS, SS: hold the successor's start
    # Kahn's algorithm one frontier at a time, pushing the bound along each
    # link once every predecessor of its activity is done.
    order = np.argsort(lp, kind="stable")
    lp, ls, w, from_start, to_start = lp[order], ls[order], w[order], from_start[order], to_start[order]
    first = np.searchsorted(lp, np.arange(n + 1))
    indeg = np.bincount(ls, minlength=n)
    start = np.zeros(n, dtype=np.int64)
    finish = np.full(n, -(1 << 40), dtype=np.int64)  # set from the start; FF and SF links may raise it
    frontier = np.flatnonzero(indeg == 0)
    first_over = -1  # the first activity, in logic order (frontier by frontier), over the ceiling
    while frontier.size:
        finish[frontier] = np.maximum(finish[frontier], start[frontier] + span[frontier] - back[frontier])
        if first_over < 0:
            over = frontier[finish[frontier] > MAX_SPAN_DAYS]
            first_over = int(over.min()) if over.size else -1
        lo, hi = first[frontier], first[frontier + 1]
        counts = hi - lo
        total = int(counts.sum())
        if not total:
            break
        take = np.repeat(hi - counts.cumsum(), counts) + np.arange(total)
        src, dst = lp[take], ls[take]
        # An instant passes one day whatever the link type (engine notes): a
        # finish-type instant's SS and SF links pass its (lowered) finish too.
        value = np.where(from_start[take] & ~instant[src], start[src], finish[src]) + w[take]
        hold_start = to_start[take]
        np.maximum.at(start, dst[hold_start], value[hold_start])
        np.maximum.at(finish, dst[~hold_start], value[~hold_start])
        np.subtract.at(indeg, dst, 1)
        cand = np.unique(dst)
        frontier = cand[indeg[cand] == 0]
    cal = [cal_list[k] if k < none else None for k in ck.tolist()]
    return finish, span, work, cal, first_over


_CODE = {"FS": 0, "SS": 1, "FF": 2, "SF": 3}


@lru_cache(maxsize=256)
def _longest_gap(cal: Calendar) -> int:
    """The longest run of non-working days of ``cal`` (its weekly pattern with its holidays and extra dates).

    Computed with numpy's business-day functions over the years its
    holidays span (at most 1900-2200, about 110,000 days), once per calendar.
    """
    mask = [name in cal.workdays for name in DAY_NAMES]
    if not any(mask) and not cal.extra_workdays:
        return 0  # refused elsewhere: a calendar needs a working day
    weekly = 0
    if any(mask):
        run = best = 0
        for working in mask * 2:  # the week twice: a run may wrap from Sunday to Monday
            run = 0 if working else run + 1
            best = max(best, run)
        weekly = best
    if not cal.holidays:
        return weekly
    lo = np.datetime64(min(cal.holidays), "D") - 14
    hi = np.datetime64(max(cal.holidays), "D") + 15
    days = np.arange(lo, hi, dtype="datetime64[D]")
    if any(mask):
        working = np.is_busday(days, weekmask=[int(m) for m in mask],
                               holidays=np.array(cal.holidays, dtype="datetime64[D]"))
    else:  # extra working dates only
        working = np.zeros(days.size, dtype=bool)
    if cal.extra_workdays:
        extra = np.array(cal.extra_workdays, dtype="datetime64[D]")
        extra = extra[(extra >= lo) & (extra < hi)]
        working[(extra - lo).astype(np.int64)] = True
    # Runs of False: the gaps between working days.
    idx = np.flatnonzero(np.concatenate(([True], working, [True])))
    return max(weekly, int(np.diff(idx).max()) - 1)


def _min_days(work: np.ndarray, week: np.ndarray, extra: np.ndarray) -> np.ndarray:
    """:func:`min_calendar_days` over arrays (0 for no work)."""
    regular = work - extra
    bound = np.maximum(work, 7 * ((regular - 1) // week) + 1)
    return np.where(work <= 0, 0, np.where(regular <= 0, work, bound))


def _span_problem(a: Activity, finish: int, span: int, work: int, cal: Calendar | None, rel: str,
                  problems: Problems) -> None:
    per_week = len(cal.workdays) if cal is not None else 7
    plural = "day" if per_week == 1 else "days"
    cal_text = "" if cal is None else f" on calendar {cal.id} ({per_week} working {plural} a week)"
    if span > MAX_SPAN_DAYS:
        why = f"activity {a.id} alone needs at least {span} calendar days ({work} working days{cal_text})"
    else:
        why = (f"activity {a.id} cannot finish sooner than {finish} calendar days after the data date "
               f"({work} working days{cal_text} after its predecessors)")
    problems.add(rel, a.line, "duration", work,
                 f"{why}; over the ceiling of {MAX_SPAN_YEARS} years ({MAX_SPAN_DAYS} days) on the span of a schedule")


def check_fragnet_loops(
    fragnet_ids: Collection[str],
    fragnet_links: list[Link],
    snapshots: list,
    rel: str,
    problems: Problems,
) -> None:
    """Report a loop that a fragnet's ties close with a snapshot's own logic.

    The fragnet is checked against every snapshot that has all the
    activities it ties to and none of its own ids (the snapshots it could
    be inserted into, AACE RP 52R-06); a loop there would stop the time impact analysis, so the
    casefile is refused now, naming the loop, the fragnet link lines in it
    and the snapshots where it closes.
    """
    own = set(fragnet_ids)
    ties = {a for link in fragnet_links for a in (link.pred, link.succ)} - own
    where: list[str] = []
    found: tuple[str, list[int]] | None = None
    for snap in snapshots:
        if not ties <= set(snap.activities) or own & set(snap.activities):
            continue  # cannot be inserted here (forensic.analysis.impact.insert_fragnet refuses it)
        if _has_loop(list(snap.activities), snap.links):
            continue  # the snapshot's own loop is reported with the snapshot
        if not _has_loop([*snap.activities, *own], [*snap.links, *fragnet_links]):
            continue
        where.append(snap.id)
        if found is None:
            graph = nx.DiGraph()
            graph.add_edges_from((x.pred, x.succ) for x in snap.links)
            graph.add_edges_from((x.pred, x.succ) for x in fragnet_links)
            mine = {(x.pred, x.succ): x.line or 0 for x in reversed(fragnet_links)}
            for comp in nx.strongly_connected_components(graph):
                if len(comp) > 1 and comp & own:
                    cycle = nx.find_cycle(graph.subgraph(comp))
                    loop = [u for u, _ in cycle]
                    found = (loop_text(loop), sorted(mine[e] for e in cycle if e in mine))
                    break
    if found is not None:
        shown, lines = found
        problems.add(rel, lines[0] if lines else None, None, shown,
                     f"the fragnet's links (lines {_lines_text(lines)}) close a logic loop with "
                     f"the links of snapshot {', '.join(where)}; a loop has no schedule, break one of them")


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
        if len(problems) == before:
            events.append(Event(eid, title, pid, category, span["start"], span["finish"], hit,
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
