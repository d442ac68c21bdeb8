"""Synthetic casefiles for scale tests and the benchmark (deterministic from a seed).

The networks look like a large programme. Work is laid out as *areas*, each
with a few *lanes* (a crew's chain of work through the area) running through
*phases* (bands of time steps, each closed by a phase milestone per area).
Every chain step is an FS link; cross-links of all four types (FS, SS, FF,
SF) with lags and leads tie chains within and across nearby areas. There
are three calendars (5-day with holidays, 6-day with holidays, 7-day), a
few start-from constraints on tasks, finish-by
constraints on area milestones, area and phase milestones and a completion
milestone.

Acyclic by construction: every activity has a hidden *rank* (its time step;
milestones and inserted activities get ranks between their neighbours) and
every link, in the baseline and in every revision, runs from a lower rank to
a strictly higher one.

Updates are simulated with the engine itself (Kelley and Walker 1959 CPM,
:func:`forensic.core.engine.schedule`): at each data date the previous update is
scheduled; work forecast to finish before the data date is recorded as
finished (a few late), work straddling it is in progress with a remaining
duration that sometimes grows (a slip), and the plan is revised: a few
durations and lags change, links are removed and added, activities are
inserted into chains and deleted (their predecessors bridged to their
successors). Each update also brings two delay events (one owner, one
neutral) naming some of the activities that slipped, so attribution has
events to work with. The data are invented; they exercise the code, not a
project's story.
"""

from __future__ import annotations

import math
import random
from collections.abc import Callable
from dataclasses import replace
from datetime import date, timedelta

import numpy as np

from forensic.core.calendars import from_day_number, workdays_between
from forensic.core.engine import schedule
from forensic.core.model import (
    LINK_TYPES,
    Activity,
    Calendar,
    Casefile,
    Event,
    Link,
    Party,
    Project,
    Snapshot,
    frozen_mapping,
)

__all__ = ["generate_casefile"]

_START = date(2027, 1, 4)
_TYPE_WEIGHTS = (0.70, 0.12, 0.12, 0.06)
_PHASES = ("enabling", "substructure", "frame", "envelope", "fit-out")
_LANES_PER_AREA = 8


def _calendars(seven_day: bool) -> dict[str, Calendar]:
    week7 = ("mon", "tue", "wed", "thu", "fri", "sat", "sun")
    if seven_day:
        return {"7d": Calendar("7d", week7)}
    holidays = []
    for year in range(2027, 2060):
        holidays += [date(year, 1, 1), date(year, 5, 1), date(year, 12, 25), date(year, 12, 26)]
    return {
        "5d": Calendar("5d", week7[:5], tuple(holidays)),
        "6d": Calendar("6d", week7[:6], tuple(holidays)),
        "7d": Calendar("7d", week7),
    }


class _Net:
    """The network under construction: activities in file order, links, ranks."""

    def __init__(self) -> None:
        self.acts: dict[str, Activity] = {}
        self.rank: dict[str, float] = {}
        self.links: list[Link] = []
        self.pairs: set[tuple[str, str]] = set()

    def act(self, a: Activity, rank: float) -> None:
        self.acts[a.id] = a
        self.rank[a.id] = rank

    def link(self, p: str, s: str, typ: str = "FS", lag: int = 0) -> bool:
        if (p, s) in self.pairs or not self.rank[p] < self.rank[s]:
            return False
        self.pairs.add((p, s))
        self.links.append(Link(p, s, typ, lag))
        return True


def _baseline(n: int, links_per_activity: float, rng: random.Random, opts: dict) -> _Net:
    """Areas x lanes x levels, phases as bands of levels; links only to higher ranks.

    The number of levels grows with the square root of the size, so a large
    programme is wide rather than absurdly long (a few years).
    """
    net = _Net()
    n_tasks = max(n - 2, 8)
    levels = max(len(_PHASES), min(250, int(math.sqrt(n_tasks))))
    lanes = math.ceil(n_tasks / levels)
    areas = math.ceil(lanes / _LANES_PER_AREA)
    phase_of = [min(len(_PHASES) - 1, lv * len(_PHASES) // levels) for lv in range(levels)]
    cals = ("7d",) if opts["seven_day"] else ("5d", "6d", "7d")
    cal_w = (1.0,) if opts["seven_day"] else (0.7, 0.2, 0.1)
    net.act(Activity("START", "Start of works", 0, kind="opening-milestone"), -1.0)
    grid: dict[tuple[int, int], str] = {}
    made = 0
    for level in range(levels):
        for lane in range(lanes):
            if made >= n_tasks:
                break
            area = lane // _LANES_PER_AREA
            aid = f"Z{area + 1:03d}-{lane % _LANES_PER_AREA + 1}-{level + 1:03d}"
            dur = rng.randint(1, 10)
            crash = rng.random() < 0.1
            constraint = cdate = None
            if opts["constraints"] and rng.random() < 0.005:
                constraint = "start-from"
                cdate = _START + timedelta(days=rng.randint(0, 120))
            net.act(
                Activity(
                    aid, f"{_PHASES[phase_of[level]].capitalize()} work {aid}", dur,
                    calendar=rng.choices(cals, cal_w)[0], constraint=constraint, constraint_date=cdate,
                    party="CON", area=f"Z{area + 1:03d}",
                    crash_days=max(1, dur // 3) if crash else None,
                    crash_cost=float(rng.randint(5, 50) * 100) if crash else None,
                ),
                float(level),
            )
            grid[(lane, level)] = aid
            made += 1
    # Phase milestones: each area's phase closes when its lanes finish the band,
    # and the area's next phase waits for it.
    last_level = {ph: max(lv for lv in range(levels) if phase_of[lv] == ph) for ph in range(len(_PHASES))}
    for area in range(areas):
        for ph in range(len(_PHASES) - 1):
            ms = f"Z{area + 1:03d}-P{ph + 1}"
            net.act(
                Activity(ms, f"Area Z{area + 1:03d} {_PHASES[ph]} complete", 0, kind="closing-milestone", area=f"Z{area + 1:03d}"),
                last_level[ph] + 0.5,
            )
    for area in range(areas):
        ms = f"Z{area + 1:03d}-DONE"
        net.act(Activity(ms, f"Area Z{area + 1:03d} complete", 0, kind="closing-milestone", area=f"Z{area + 1:03d}"), levels + 1.0)
    net.act(Activity("FINISH", "Completion of the works", 0, kind="closing-milestone"), levels + 2.0)
    for lane in range(lanes):
        area = lane // _LANES_PER_AREA
        tag = f"Z{area + 1:03d}"
        chain = [grid[(lane, lv)] for lv in range(levels) if (lane, lv) in grid]
        if not chain:
            continue
        net.link("START", chain[0])
        for a, b in zip(chain, chain[1:], strict=False):
            net.link(a, b)
            pa, pb = phase_of[int(net.rank[a])], phase_of[int(net.rank[b])]
            if pa != pb:
                net.link(a, f"{tag}-P{pa + 1}")
                net.link(f"{tag}-P{pa + 1}", b)
        net.link(chain[-1], f"{tag}-DONE")
    for area in range(areas):
        net.link(f"Z{area + 1:03d}-DONE", "FINISH")
    # Cross-links of every type: from a nearby lane one to three levels earlier.
    types = ("FS",) if opts["fs_only"] else LINK_TYPES
    weights = (1.0,) if opts["fs_only"] else _TYPE_WEIGHTS
    target = int(links_per_activity * len(net.acts))
    keys = list(grid)
    tries = 0
    while len(net.links) < target and tries < 4 * target:
        tries += 1
        lane, level = rng.choice(keys)
        src = (min(lanes - 1, max(0, lane + rng.randint(-6, 6))), level - rng.randint(1, 3))
        if src not in grid:
            continue
        r = rng.random()
        lag = 0 if r < 0.8 else rng.randint(1, 5) if r < 0.95 else -rng.randint(1, 3)
        net.link(grid[src], grid[(lane, level)], rng.choices(types, weights)[0], lag)
    return net


def _deadlines(net: _Net, cals: dict[str, Calendar], project: Project, rng: random.Random) -> None:
    """Finish-by constraints on the area milestones: the baseline date plus a little margin."""
    snap = Snapshot("BL", _START, frozen_mapping(net.acts), tuple(net.links), role="baseline")
    table = schedule(snap, cals, project).activities
    for aid, a in list(net.acts.items()):
        if aid.endswith("-DONE"):
            d = table[aid].early_finish + timedelta(days=rng.randint(0, 30))
            net.acts[aid] = replace(a, constraint="finish-by", constraint_date=d)


def _progress(
    prev: Snapshot,
    net: _Net,
    sid: str,
    data_date: date,
    cals: dict[str, Calendar],
    project: Project,
    rng: random.Random,
    opts: dict,
) -> tuple[Snapshot, list[str]]:
    """The next update at ``data_date``: progress by the engine's forecast, slips and revisions.

    Returns the snapshot and the ids of the activities that slipped in it.
    """
    result = schedule(prev, cals, project)
    # The forecast as arrays (the result's records are built lazily; avoid them).
    es, ef = _forecast(result, prev)
    dd = data_date.toordinal()
    slipped: list[str] = []
    acts = net.acts
    for i, a in enumerate(list(prev.activities.values())):
        if a.actual_finish is not None:
            continue
        cal = cals[a.calendar or project.default_calendar]
        start, finish = es[i], ef[i]
        if finish < dd and not (a.kind == "task" and rng.random() < 0.08):
            s = a.actual_start or date.fromordinal(start)
            acts[a.id] = replace(a, actual_start=s, actual_finish=date.fromordinal(finish), remaining=0, percent_complete=100.0)
        elif start < dd and a.kind == "task":
            s = a.actual_start or date.fromordinal(start)
            left = max(1, workdays_between(cal, data_date, date.fromordinal(max(finish, dd)) + timedelta(days=1)))
            if rng.random() < 0.25:
                left += rng.randint(1, 5)  # slower than planned
                slipped.append(a.id)
            done = max(0.0, min(99.0, 100.0 * (1 - left / max(a.duration, left + 1))))
            acts[a.id] = replace(a, actual_start=s, remaining=left, percent_complete=round(done, 1))
        elif a.kind == "task" and not opts["fs_only"] and rng.random() < 0.005:
            acts[a.id] = replace(a, duration=a.duration + rng.randint(1, 10), remaining=None)  # a revision
    _revise(net, data_date, rng, opts)
    return Snapshot(sid, data_date, frozen_mapping(acts), tuple(net.links), role="update"), slipped


def _forecast(result, snap: Snapshot) -> tuple[list[int], list[int]]:
    """Early start and finish ordinals per activity, in the snapshot's order."""
    table = result.activities
    cols = getattr(table, "_cols", None)
    if cols is None:  # a plain mapping of records
        recs = [table[a] for a in snap.activities]
        return [r.early_start.toordinal() for r in recs], [r.early_finish.toordinal() for r in recs]
    off = from_day_number(0).toordinal()
    return (np.asarray(cols["start_day"]) + off).tolist(), (np.asarray(cols["finish_day"]) + off).tolist()


def _revise(net: _Net, data_date: date, rng: random.Random, opts: dict) -> None:
    """Revisions of the plan: lags, links removed and added, activities inserted and deleted."""
    acts, links = net.acts, net.links
    open_ = [a for a, x in acts.items() if x.actual_start is None and x.kind == "task"]
    if not open_:
        return
    scale = max(1, len(acts) // 1000)
    # Lags changed and non-FS links removed.
    for _ in range(scale):
        k = rng.randrange(len(links))
        lk = links[k]
        if acts[lk.succ].actual_start is not None:
            continue
        if lk.type != "FS":
            net.pairs.discard((lk.pred, lk.succ))
            links.pop(k)
        elif not opts["fs_only"]:
            links[k] = replace(lk, lag=max(-2, lk.lag + rng.choice((-1, 1, 2))))
    # FS links added between open activities of nearby ranks.
    for _ in range(scale):
        a, b = rng.sample(open_, 2)
        if net.rank[a] > net.rank[b]:
            a, b = b, a
        if net.rank[b] - net.rank[a] <= 4:
            net.link(a, b)
    # Activities inserted into a chain: p -> X -> s beside the link p -> s.
    for j in range(max(1, scale // 2)):
        lk = links[rng.randrange(len(links))]
        if lk.type != "FS" or acts[lk.pred].kind != "task" or acts[lk.succ].actual_start is not None:
            continue
        before = acts[lk.pred]
        xid = f"{lk.pred}-X{data_date:%y%m}{j + 1}"
        if xid in acts:
            continue
        net.act(
            Activity(xid, f"Added work after {lk.pred}", rng.randint(1, 8), calendar=before.calendar, party="CON",
                     area=before.area),
            (net.rank[lk.pred] + net.rank[lk.succ]) / 2,
        )
        net.link(lk.pred, xid)
        net.link(xid, lk.succ)
    # Activities deleted: predecessors bridged to successors (FS), so no work is cut loose.
    victims = {v for v in rng.sample(open_, min(len(open_), max(1, scale // 4))) if v in acts}
    preds: dict[str, list[str]] = {v: [] for v in victims}
    succs: dict[str, list[str]] = {v: [] for v in victims}
    for lk in links:
        if lk.succ in victims:
            preds[lk.succ].append(lk.pred)
        if lk.pred in victims:
            succs[lk.pred].append(lk.succ)
    # Keep the bridging simple: a victim linked to another victim, or with an
    # open end, stays.
    victims = {v for v in victims if preds[v] and succs[v] and victims.isdisjoint(preds[v] + succs[v])}
    if not victims:
        return
    for v in victims:
        del acts[v]
        del net.rank[v]
    for v in victims:
        net.pairs.difference_update((p, v) for p in preds[v])
        net.pairs.difference_update((v, s) for s in succs[v])
    links[:] = [lk for lk in links if lk.pred not in victims and lk.succ not in victims]
    for v in sorted(victims):
        for p in preds[v]:
            for s in succs[v]:
                net.link(p, s)


def generate_casefile(
    activities: int,
    *,
    updates: int = 0,
    seed: int = 0,
    links_per_activity: float = 2.0,
    name: str | None = None,
    fs_only: bool = False,
    seven_day: bool = False,
    constraints: bool = True,
    progress: Callable[[int, int], None] | None = None,
) -> Casefile:
    """A synthetic casefile of about ``activities`` activities and ``updates`` monthly updates.

    Parameters
    ----------
    activities : int
        Size of the baseline (1,000 to 100,000 in the benchmark).
    updates : int
        Number of updates, one every four weeks (up to 60 in the benchmark).
    seed : int
        The same arguments always give the same casefile.
    links_per_activity : float
        Link count over activity count (2.0 gives the 50,000-activity,
        100,000-link network of the benchmark).
    fs_only, seven_day, constraints : bool
        Simpler variants for checking the engine against a plain longest
        path: only finish-to-start links and no lag changes, one 7-day
        calendar with no holidays, and no date constraints.
    progress : callable, optional
        Called as ``progress(done, total)`` after the baseline and each update.

    Returns
    -------
    Casefile
        In memory; write it with :func:`forensic.casefile.writing.write_casefile`.

    References
    ----------
    Kelley, J. E. and Walker, M. R. (1959), critical-path scheduling (the
    engine that simulates each update).
    """
    rng = random.Random(seed)
    opts = {"fs_only": fs_only, "seven_day": seven_day, "constraints": constraints}
    cals = _calendars(seven_day)
    default = "7d" if seven_day else "5d"
    project = Project(
        name=name or f"Synthetic programme {activities} (seed {seed})",
        default_calendar=default,
        completion="FINISH",
        contract_completion=None,
    )
    net = _baseline(activities, links_per_activity, rng, opts)
    if constraints:
        _deadlines(net, cals, project, rng)
    base = Snapshot("BL", _START, frozen_mapping(net.acts), tuple(net.links), role="baseline")
    first = schedule(base, cals, project)
    project = replace(project, contract_completion=first.completion)
    snaps = [base]
    events: list[Event] = []
    if progress is not None:
        progress(1, updates + 1)
    for u in range(1, updates + 1):
        dd = _START + timedelta(days=28 * u)
        snap, slipped = _progress(snaps[-1], net, f"U{u:02d}", dd, cals, project, rng, opts)
        snaps.append(snap)
        if slipped:
            start = dd - timedelta(days=28)
            for k, (party, title) in enumerate((("OWN", "Late design information"), ("WX", "Adverse weather"))):
                hit = sorted(rng.sample(slipped, max(1, len(slipped) // 4)))
                events.append(
                    Event(f"EV{u:02d}{k + 1}", f"{title} ({snap.id})", party,
                          "excusable-compensable" if party == "OWN" else "excusable-noncompensable",
                          start + timedelta(days=rng.randint(0, 10)), dd - timedelta(days=rng.randint(1, 10)),
                          tuple(hit))
                )
        if progress is not None:
            progress(u + 1, updates + 1)
    parties = {
        "OWN": Party("OWN", "Synthetic owner", "owner"),
        "CON": Party("CON", "Synthetic contractor", "contractor"),
        "WX": Party("WX", "Weather", "neutral"),
    }
    return Casefile(
        project=project, calendars=frozen_mapping(cals), parties=frozen_mapping(parties),
        snapshots=tuple(snaps), events=tuple(events),
    )
