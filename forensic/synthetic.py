"""Synthetic casefiles for scale tests and the benchmark (deterministic from a seed).

The networks look like a large programme: areas, each with phases made of
work chains; every chain step is an FS link, and cross-links of all four
types (with lags and leads) tie chains within and across nearby areas;
three calendars (5-day with holidays, 6-day, 7-day), a few constraints,
area milestones and a completion milestone. Links only run from earlier to
later positions of a hidden order, so every network is acyclic.

Updates are simulated by the real engine: at each data date the previous
snapshot is scheduled, work forecast to finish before the data date is
recorded as finished (some of it late), work straddling it is in progress
with a remaining duration that sometimes grows, and a few durations and
links are revised. The data are invented; they exercise the code, not a
project's story.
"""

from __future__ import annotations

import math
import random
from dataclasses import replace
from datetime import date, timedelta

from .calendars import workdays_between
from .engine import schedule
from .model import (
    Activity,
    Calendar,
    Casefile,
    Link,
    Party,
    Project,
    Snapshot,
    frozen_mapping,
)

__all__ = ["generate_casefile"]

_START = date(2027, 1, 4)
_TYPES = ("FS", "SS", "FF", "SF")
_TYPE_WEIGHTS = (0.70, 0.12, 0.12, 0.06)


def _calendars() -> dict[str, Calendar]:
    holidays = []
    for year in range(2027, 2060):
        holidays += [date(year, 1, 1), date(year, 5, 1), date(year, 12, 25), date(year, 12, 26)]
    return {
        "5d": Calendar("5d", ("mon", "tue", "wed", "thu", "fri"), tuple(holidays)),
        "6d": Calendar("6d", ("mon", "tue", "wed", "thu", "fri", "sat"), tuple(holidays)),
        "7d": Calendar("7d", ("mon", "tue", "wed", "thu", "fri", "sat", "sun")),
    }


def _baseline(n: int, links_per_activity: float, rng: random.Random) -> tuple[list[Activity], list[Link]]:
    """Work laid out as areas x lanes x levels; links run only to later levels (acyclic).

    A *level* is a step in time; a *lane* a crew's chain of work through an
    area. The number of levels grows with the square root of the size, so a
    large programme is wide rather than absurdly long (a few years).
    """
    n_tasks = max(n - 2, 4)
    levels = max(6, min(250, int(math.sqrt(n_tasks))))
    lanes = math.ceil(n_tasks / levels)
    lanes_per_area = 8
    acts: list[Activity] = [Activity("START", "Start of works", 0, kind="start-milestone")]
    links: list[Link] = []
    seen: set[tuple[str, str]] = set()

    def add(p: str, s: str, typ: str = "FS", lag: int = 0) -> None:
        if p != s and (p, s) not in seen:
            seen.add((p, s))
            links.append(Link(p, s, typ, lag))

    grid: dict[tuple[int, int], str] = {}  # (lane, level) -> activity id
    made = 0
    for level in range(levels):
        for lane in range(lanes):
            if made >= n_tasks:
                break
            area = lane // lanes_per_area
            aid = f"Z{area + 1:03d}-{lane % lanes_per_area + 1}-{level + 1:03d}"
            cal = rng.choices(("5d", "6d", "7d"), (0.7, 0.2, 0.1))[0]
            dur = rng.randint(1, 10)
            crash = rng.random() < 0.1
            constraint = cdate = None
            if rng.random() < 0.005:
                constraint = "start-on-or-after"
                cdate = _START + timedelta(days=rng.randint(0, 120))
            acts.append(
                Activity(
                    aid,
                    f"Work {aid}",
                    dur,
                    calendar=cal,
                    constraint=constraint,
                    constraint_date=cdate,
                    party="CON",
                    area=f"Z{area + 1:03d}",
                    crash_days=max(1, dur // 3) if crash else None,
                    crash_cost=float(rng.randint(5, 50) * 100) if crash else None,
                )
            )
            grid[(lane, level)] = aid
            prev = grid.get((lane, level - 1))
            add(prev if prev else "START", aid)
            made += 1
    area_ms: dict[int, str] = {}
    for lane in range(lanes):
        area = lane // lanes_per_area
        last = None
        for level in range(levels - 1, -1, -1):
            if (lane, level) in grid:
                last = grid[(lane, level)]
                break
        if last is None:
            continue
        ms = area_ms.get(area)
        if ms is None:
            ms = area_ms[area] = f"Z{area + 1:03d}-DONE"
        add(last, ms)
    for area, ms in sorted(area_ms.items()):
        acts.append(Activity(ms, f"Area Z{area + 1:03d} complete", 0, kind="finish-milestone", area=f"Z{area + 1:03d}"))
    acts.append(Activity("FINISH", "Completion of the works", 0, kind="finish-milestone"))
    for ms in sorted(area_ms.values()):
        add(ms, "FINISH")
    # Cross-links of every type: from a nearby lane one to three levels earlier.
    target = int(links_per_activity * len(acts))
    keys = list(grid)
    tries = 0
    while len(links) < target and tries < 4 * target:
        tries += 1
        lane, level = rng.choice(keys)
        src = (min(lanes - 1, max(0, lane + rng.randint(-6, 6))), level - rng.randint(1, 3))
        if src not in grid:
            continue
        typ = rng.choices(_TYPES, _TYPE_WEIGHTS)[0]
        r = rng.random()
        lag = 0 if r < 0.8 else rng.randint(1, 5) if r < 0.95 else -rng.randint(1, 3)
        add(grid[src], grid[(lane, level)], typ, lag)
    return acts, links


def _progress(
    snap: Snapshot,
    sid: str,
    data_date: date,
    cals: dict[str, Calendar],
    project: Project,
    rng: random.Random,
) -> Snapshot:
    """The next update: progress to ``data_date`` by the engine's forecast, with slips and revisions."""
    result = schedule(snap, cals, project)
    new_acts: dict[str, Activity] = {}
    for a in snap.activities.values():
        if a.actual_finish is not None:
            new_acts[a.id] = a
            continue
        x = result.activities[a.id]
        cal = cals[a.calendar or project.default_calendar]
        if x.early_finish < data_date and not (a.kind == "task" and rng.random() < 0.08):
            start = a.actual_start or x.early_start
            new_acts[a.id] = replace(
                a, actual_start=start, actual_finish=x.early_finish, remaining=0, percent_complete=100.0
            )
        elif x.early_start < data_date and a.kind == "task":
            start = a.actual_start or x.early_start
            left = max(1, workdays_between(cal, data_date, x.early_finish + timedelta(days=1)))
            if rng.random() < 0.25:
                left += rng.randint(1, 5)  # slower than planned
            done = max(0.0, min(99.0, 100.0 * (1 - left / max(a.duration, left + 1))))
            new_acts[a.id] = replace(a, actual_start=start, remaining=left, percent_complete=round(done, 1))
        else:
            if a.kind == "task" and rng.random() < 0.005:
                a = replace(a, duration=a.duration + rng.randint(1, 10), remaining=None)  # a revision
            new_acts[a.id] = a
    links = list(snap.links)
    # Revisions: a few links removed and added (earlier -> later keeps it acyclic).
    order = {aid: i for i, aid in enumerate(new_acts)}
    for _ in range(max(1, len(links) // 1000)):
        k = rng.randrange(len(links))
        if links[k].type != "FS":
            links.pop(k)
    ids = list(new_acts)
    seen = {(k.pred, k.succ) for k in links}
    for _ in range(max(1, len(links) // 1000)):
        j = rng.randrange(1, len(ids) - 1)
        i = j - rng.randint(1, 100)
        if i >= 1 and new_acts[ids[j]].actual_start is None and (ids[i], ids[j]) not in seen:
            if order[ids[i]] < order[ids[j]]:
                links.append(Link(ids[i], ids[j]))
                seen.add((ids[i], ids[j]))
    return Snapshot(sid, data_date, frozen_mapping(new_acts), tuple(links), role="update")


def generate_casefile(
    activities: int,
    *,
    updates: int = 0,
    seed: int = 0,
    links_per_activity: float = 2.0,
    name: str | None = None,
) -> Casefile:
    """A synthetic casefile of about ``activities`` activities and ``updates`` monthly updates.

    Deterministic: the same arguments give the same casefile. ``links_per_activity``
    sets the link count (2.0 gives the 50,000-activity, 100,000-link network
    of the benchmark).
    """
    rng = random.Random(seed)
    cals = _calendars()
    project = Project(
        name=name or f"Synthetic programme {activities} (seed {seed})",
        default_calendar="5d",
        completion="FINISH",
        contract_completion=None,
    )
    acts, links = _baseline(activities, links_per_activity, rng)
    base = Snapshot("BL", _START, frozen_mapping({a.id: a for a in acts}), tuple(links), role="baseline")
    first = schedule(base, cals, project)
    project = replace(project, contract_completion=first.completion)
    snaps = [base]
    for u in range(1, updates + 1):
        dd = _START + timedelta(days=28 * u)
        snaps.append(_progress(snaps[-1], f"U{u:02d}", dd, cals, project, rng))
    parties = {
        "OWN": Party("OWN", "Synthetic owner", "owner"),
        "CON": Party("CON", "Synthetic contractor", "contractor"),
        "WX": Party("WX", "Weather", "neutral"),
    }
    return Casefile(project=project, calendars=frozen_mapping(cals), parties=frozen_mapping(parties), snapshots=tuple(snaps))
