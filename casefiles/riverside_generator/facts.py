"""The story's numbers computed from the schedules, and the check that the record tells the story.

Before anything is written the generator schedules every snapshot with
the project's engine and refuses a record whose completions, critical
paths, float erosion, out-of-sequence progress, corrected actual, time
impacts (AACE RP 52R-06) or window slips differ from the story told in
the README and ``story.toml``.
"""

from __future__ import annotations

from forensic.core.engine import ScheduleResult, schedule
from forensic.core.model import Link, Snapshot, frozen_mapping

from .fragnets import FRAGNETS, fragnet_as_filed
from .setting import CALENDARS, CONTRACT_COMPLETION, PROJECT
from .simulation import activity_of
from .story import (
    ACTUAL_CORRECTION,
    CONCURRENCY,
    EARLY_PATH,
    FINAL_SLIP_DAYS,
    LATE_PATH,
    OUT_OF_SEQUENCE,
    SECONDARY_PATH,
    SNAPSHOT_IDS,
    WINDOW_FINDINGS,
)


def story_facts(snaps: dict[str, Snapshot], res: dict[str, ScheduleResult]) -> dict:
    """The numbers the story states, computed from the schedules (and checked by ``check_story``)."""
    facts = {
        "completion": {sid: r.completion for sid, r in res.items()},
        "slip_days": {sid: (r.completion - CONTRACT_COMPLETION).days for sid, r in res.items()},
        "secondary_float": {sid: r[SECONDARY_PATH].total_float for sid, r in res.items()},
        "path_areas": {
            sid: sorted({snaps[sid].activities[a].area for a in r.longest_path}
                        & {"HALL", "LIB", "RIV"})
            for sid, r in res.items()
        },
    }
    return facts


def tia_delay(snaps: dict[str, Snapshot], eid: str) -> int:
    """Calendar days the fragnet of ``eid`` adds to its update's completion (a plain insertion)."""
    spec = FRAGNETS[eid]
    snap = snaps[spec["tia_update"]]
    frag = fragnet_as_filed(eid)
    acts = dict(snap.activities)
    acts.update({k: activity_of(v, remaining=v["duration"]) for k, v in frag.acts.items()})
    links = snap.links + tuple(Link(p, s, t, lag) for p, s, t, lag in frag.links)
    impacted = Snapshot(snap.id, snap.data_date, frozen_mapping(acts), links, snap.role)
    before = schedule(snap, CALENDARS, PROJECT).completion
    after = schedule(impacted, CALENDARS, PROJECT).completion
    return (after - before).days


def check_story(snaps: dict[str, Snapshot], res: dict[str, ScheduleResult]) -> None:
    """Refuse to write a record whose data does not tell the story told in README and story.toml."""
    facts = story_facts(snaps, res)
    problems = []
    if res["BL"].completion != CONTRACT_COMPLETION:
        problems.append(f"baseline completion {res['BL'].completion} is not the contract date")
    if facts["slip_days"][SNAPSHOT_IDS[-1]] != FINAL_SLIP_DAYS:
        problems.append(f"final slip {facts['slip_days'][SNAPSHOT_IDS[-1]]} != {FINAL_SLIP_DAYS}")
    if facts["path_areas"][EARLY_PATH[0]] != [EARLY_PATH[1]]:
        problems.append(f"early critical path areas {facts['path_areas'][EARLY_PATH[0]]}")
    if facts["path_areas"][LATE_PATH[0]] != [LATE_PATH[1]]:
        problems.append(f"late critical path areas {facts['path_areas'][LATE_PATH[0]]}")
    both = facts["path_areas"][CONCURRENCY["critical_in"]]
    if both != ["HALL", "LIB"]:
        problems.append(f"{CONCURRENCY['critical_in']} should have hall and library critical: {both}")
    floats = [facts["secondary_float"][s] for s in SNAPSHOT_IDS]
    if any(b > a for a, b in zip(floats, floats[1:], strict=False)) or floats[-1] > 0:
        problems.append(f"secondary path float does not erode to critical: {floats}")
    upd, act, pred = OUT_OF_SEQUENCE
    a, p = snaps[upd].activities[act], snaps[upd].activities[pred]
    if not (a.is_started and not p.is_finished):
        problems.append(f"{upd}: {act} is not out of sequence")
    aid, wrong_in, fixed_in, _ = ACTUAL_CORRECTION
    if snaps[wrong_in].activities[aid].actual_finish == snaps[fixed_in].activities[aid].actual_finish:
        problems.append(f"{aid}: actual finish not corrected")
    for eid, spec in FRAGNETS.items():
        gain = tia_delay(snaps, eid)
        if gain != spec["tia_days"]:
            problems.append(f"fragnet {eid} delays completion by {gain} days, not {spec['tia_days']}")
    slips = facts["slip_days"]
    for a, b in zip(SNAPSHOT_IDS, SNAPSHOT_IDS[1:], strict=False):
        told = WINDOW_FINDINGS[f"{a}-{b}"]
        if told["slip"] != slips[b] - slips[a]:
            problems.append(f"window {a}-{b} slips {slips[b] - slips[a]}, the story says {told['slip']}")
        if told["progress"] + told["revision"] != told["slip"]:
            problems.append(f"window {a}-{b}: progress + revision is not the slip")
        if sum(told["parties"].values()) + told["concurrent"] != told["slip"]:
            problems.append(f"window {a}-{b}: parties + concurrent is not the slip")
    for r in res.values():
        if r.warnings:
            problems.append("; ".join(r.warnings))
    if problems:
        raise SystemExit("demo casefile does not tell its story:\n  " + "\n  ".join(problems))
