"""The simulation: each monthly update is the programme known at its data date, progressed as built.

The as-built record is the last programme (baseline, both fragnets, the
revisions) with the durations the work really took and the
out-of-sequence start, scheduled once with the project's engine from the
baseline data date. Each update takes the fragnets and revisions known by
its data date, with progress read off the as-built dates: finished before
the data date, in progress across it (remaining = working days from the
data date to the as-built finish), or not started; one actual finish is
reported wrongly and corrected a month later.
"""

from __future__ import annotations

from datetime import date, timedelta

from forensic.core.calendars import workdays_between
from forensic.core.engine import ScheduleResult, schedule
from forensic.core.model import Activity, Calendar, Link, Snapshot, frozen_mapping

from .fragnets import FRAGNETS
from .network import Net, Spec, baseline
from .setting import BL_DATE, CALENDARS, PROJECT
from .story import (
    ACTUAL_CORRECTION,
    AS_BUILT_CONSTRAINTS,
    AS_BUILT_DURATIONS,
    AS_BUILT_LINKS,
    DATA_DATES,
    DURATION_REVISIONS,
    LOGIC_REVISIONS,
    SNAPSHOT_IDS,
)


def rank(snapshot_id: str) -> int:
    return SNAPSHOT_IDS.index(snapshot_id)


def programme(snapshot_id: str) -> Net:
    """The programme as known at a snapshot: fragnets taken in and revisions made by then."""
    net = baseline()
    k = rank(snapshot_id)
    for spec in FRAGNETS.values():
        if rank(spec["in_programme_from"]) <= k:
            frag = spec["build"]()
            net.acts.update(frag.acts)
            net.links.extend(frag.links)
    for sid, rev in LOGIC_REVISIONS.items():
        if rank(sid) <= k:
            for link in rev["remove"]:
                net.links.remove(link)
            net.links.extend(rev["add"])
    for sid, rev in DURATION_REVISIONS.items():
        if rank(sid) <= k:
            for aid, d in rev.items():
                net.acts[aid]["duration"] = d
    return net


def activity_of(spec: Spec, **progress) -> Activity:
    return Activity(
        id=spec["id"], name=spec["name"], duration=spec["duration"], kind=spec["kind"],
        calendar=spec["calendar"], constraint=spec["constraint"],
        constraint_date=spec["constraint_date"], party=spec["party"], area=spec["area"],
        crash_days=spec["crash_days"],
        crash_cost=None if spec["crash_cost"] is None else float(spec["crash_cost"]),
        **progress,
    )


def snapshot_of(net: Net, sid: str, data_date: date, progress: dict[str, dict]) -> Snapshot:
    acts = {
        aid: activity_of(spec, **progress.get(aid, {"remaining": spec["duration"]}))
        for aid, spec in net.acts.items()
    }
    links = tuple(Link(p, s, t, lag) for p, s, t, lag in net.links)
    return Snapshot(id=sid, data_date=data_date, activities=frozen_mapping(acts), links=links,
                    role="baseline" if sid == "BL" else "update")


def as_built() -> dict[str, tuple[date, date]]:
    """As-built (start, finish) of every activity: the last programme as the work really went."""
    net = programme(SNAPSHOT_IDS[-1])
    for aid, d in AS_BUILT_DURATIONS.items():
        net.acts[aid]["duration"] = d
    for link in AS_BUILT_LINKS["remove"]:
        net.links.remove(link)
    net.links.extend(AS_BUILT_LINKS["add"])
    for aid, (kind, day) in AS_BUILT_CONSTRAINTS.items():
        net.acts[aid]["constraint"], net.acts[aid]["constraint_date"] = kind, day
    res = schedule(snapshot_of(net, "AS-BUILT", BL_DATE, {}), CALENDARS, PROJECT)
    return {aid: (r.early_start, r.early_finish) for aid, r in res.activities.items()}


def progress_at(net: Net, data_date: date, built: dict[str, tuple[date, date]]) -> dict[str, dict]:
    """Progress at a data date, read off the as-built dates."""
    out: dict[str, dict] = {}
    for aid, spec in net.acts.items():
        start, finish = built[aid]
        cal = CALENDARS[spec["calendar"]]
        if spec["kind"] != "task":
            if finish < data_date:
                out[aid] = {"actual_start": finish, "actual_finish": finish, "remaining": 0,
                            "percent_complete": 100.0}
            else:
                out[aid] = {"remaining": 0, "percent_complete": 0.0}
        elif finish < data_date:
            out[aid] = {"actual_start": start, "actual_finish": finish, "remaining": 0,
                        "percent_complete": 100.0}
        elif start < data_date:
            remaining = workdays_between(cal, data_date, finish + timedelta(1))
            done = workdays_between(cal, start, data_date)
            out[aid] = {"actual_start": start, "remaining": remaining,
                        "percent_complete": float(round(100 * done / (done + remaining)))}
        else:
            out[aid] = {"remaining": spec["duration"], "percent_complete": 0.0}
    return out


def build_snapshots() -> dict[str, Snapshot]:
    """Every snapshot of the casefile, in memory (baseline first)."""
    built = as_built()
    snaps: dict[str, Snapshot] = {}
    for sid in SNAPSHOT_IDS:
        net = programme(sid)
        dd = DATA_DATES[sid]
        prog = {} if sid == "BL" else progress_at(net, dd, built)
        aid, wrong_in, _, early = ACTUAL_CORRECTION
        if sid == wrong_in and "actual_finish" in prog[aid]:
            cal = CALENDARS[net.acts[aid]["calendar"]]
            reported = _add_workdays(cal, prog[aid]["actual_finish"], -early)
            prog[aid] = {**prog[aid], "actual_finish": reported}
        snaps[sid] = snapshot_of(net, sid, dd, prog)
    return snaps


def _add_workdays(cal: Calendar, d: date, n: int) -> date:
    from forensic.core.calendars import add_workdays

    return add_workdays(cal, d, n)


def schedule_all(snaps: dict[str, Snapshot]) -> dict[str, ScheduleResult]:
    return {sid: schedule(s, CALENDARS, PROJECT) for sid, s in snaps.items()}
