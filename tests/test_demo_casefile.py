"""The demo casefile (casefiles/riverside): it is reproducible and tells the story its README tells.

Check values come from the story itself (casefiles/riverside/story.toml and
README.md, written by casefiles/generate_demo.py) and from the issue that
asked for the demo (sizes, counts); the schedules are the project's engine.
"""

from __future__ import annotations

import csv
import importlib.util
import tomllib
from datetime import date
from pathlib import Path

import pytest

from forensic.core.engine import schedule

ROOT = Path(__file__).resolve().parent.parent
CASEFILES = ROOT / "casefiles"
DEMO = CASEFILES / "riverside"


def _load_generator():
    spec = importlib.util.spec_from_file_location("generate_demo", CASEFILES / "generate_demo.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


gen = _load_generator()
STORY = tomllib.loads((DEMO / "story.toml").read_text(encoding="utf-8"))
MANIFEST = tomllib.loads((DEMO / "casefile.toml").read_text(encoding="utf-8"))


@pytest.fixture(scope="module")
def snaps():
    return gen.build_snapshots()


@pytest.fixture(scope="module")
def results(snaps):
    return {sid: schedule(s, gen.CALENDARS, gen.PROJECT) for sid, s in snaps.items()}


def _rows(rel: str) -> list[dict]:
    with open(DEMO / rel, encoding="utf-8", newline="") as fh:
        return list(csv.DictReader(fh))


def test_generator_reproduces_committed_files_byte_for_byte(tmp_path):
    """Generating into an empty folder gives exactly the committed files (issue 3: done when)."""
    gen.generate(tmp_path)
    made = sorted(p.relative_to(tmp_path) for p in tmp_path.rglob("*") if p.is_file())
    kept = sorted(p.relative_to(DEMO) for p in DEMO.rglob("*") if p.is_file())
    assert made == kept
    for rel in made:
        assert (tmp_path / rel).read_bytes() == (DEMO / rel).read_bytes(), rel


def test_written_snapshot_files_match_the_in_memory_snapshots(snaps):
    """The CSVs hold the same activities and links the tests below schedule."""
    for sid, snap in snaps.items():
        rows = _rows(f"snapshots/{sid}/activities.csv")
        assert [r["id"] for r in rows] == list(snap.activities)
        links = _rows(f"snapshots/{sid}/links.csv")
        assert [(x["pred"], x["succ"], x["type"], int(x["lag"])) for x in links] == [
            (x.pred, x.succ, x.type, x.lag) for x in snap.links
        ]


def test_manifest_settings_are_those_the_issue_asked_for():
    """Calendar days, retained logic, critical float 0, >= 3 calendars, >= 8 updates (issue 3)."""
    project = MANIFEST["project"]
    assert project["delay_unit"] == "calendar-days"
    assert project["progress_logic"] == "retained"
    assert project["critical_float"] == 0
    assert project["completion"] == STORY["completion_milestone"]
    assert len(MANIFEST["calendar"]) >= 3
    roles = [s.get("role", "update") for s in MANIFEST["snapshot"]]
    assert roles.count("baseline") == 1 and roles.count("update") >= 8
    dates = [s["data_date"] for s in MANIFEST["snapshot"]]
    assert dates == sorted(dates) and len(set(dates)) == len(dates)


def test_parties_include_owner_contractor_and_neutral():
    """At least three parties, one of each role (issue 3)."""
    roles = {p["role"] for p in MANIFEST["party"]}
    assert len(MANIFEST["party"]) >= 3
    assert roles == {"owner", "contractor", "neutral"}


def test_activity_count_areas_and_crash_data(snaps):
    """150-400 activities in several areas; acceleration data on part of the work (issue 3)."""
    for snap in snaps.values():
        assert 150 <= len(snap.activities) <= 400
    bl = snaps["BL"].activities.values()
    assert len({a.area for a in bl}) >= 5
    crashable = [a for a in bl if a.crash_days]
    assert 10 <= len(crashable) < len(snaps["BL"].activities)
    assert all(a.crash_cost and a.crash_cost > 0 for a in crashable)


def test_baseline_completion_equals_contract_completion(results):
    """The baseline finishes on the contract date (story.toml: baseline_gap_days = 0)."""
    contract = MANIFEST["project"]["contract_completion"]
    assert STORY["baseline_gap_days"] == 0
    assert results["BL"].completion == contract == STORY["baseline_completion"]
    assert results["BL"].completion_id == "M900"


def test_final_update_shows_the_slip_the_story_states(results):
    """The last update forecasts completion final_slip_days calendar days late (story.toml)."""
    final = results[STORY["final_update"]]
    slip = (final.completion - MANIFEST["project"]["contract_completion"]).days
    assert slip == STORY["final_slip_days"] == 43  # README: "forecast 43 days after the contract date"
    for sid, r in results.items():
        assert (r.completion - MANIFEST["project"]["contract_completion"]).days == STORY[
            "slip_days"
        ][sid]


def test_every_snapshot_schedules_without_open_ends(results):
    """No open starts or finishes in any snapshot (common practice; DCMA-EA PAM 200.1 logic check)."""
    for r in results.values():
        assert r.warnings == ()


def test_concurrency_period_exists(results, snaps):
    """An owner and a contractor event overlap, on the library and hall paths, both critical in one update."""
    c = STORY["concurrency"]
    events = {r["id"]: r for r in _rows("events.csv")}
    owner, contractor = events[c["owner_event"]], events[c["contractor_event"]]
    parties = {p["id"]: p["role"] for p in MANIFEST["party"]}
    assert parties[owner["party"]] == "owner"
    assert parties[contractor["party"]] == "contractor"
    start = max(date.fromisoformat(owner["start"]), date.fromisoformat(contractor["start"]))
    finish = min(date.fromisoformat(owner["finish"]), date.fromisoformat(contractor["finish"]))
    assert (start, finish) == (c["start"], c["finish"]) and start < finish
    w0, w1 = c["window"]
    assert gen.DATA_DATES[w0] <= start < gen.DATA_DATES[w1]  # the overlap opens in the window
    r = results[c["critical_in"]]
    areas = {snaps[c["critical_in"]].activities[a].area for a in r.longest_path}
    assert {c["owner_path_area"], c["contractor_path_area"]} <= areas
    assert r["M-LIB-RDY"].total_float <= 0 and r["M-HALL-RDY"].total_float <= 0


@pytest.mark.parametrize("eid", sorted(STORY["fragnets"]))
def test_fragnet_ties_into_activities_of_its_update(eid):
    """Each fragnet's links name its own activities or activities of the update it is meant for."""
    spec = STORY["fragnets"][eid]
    own = {r["id"] for r in _rows(f"{spec['folder']}/activities.csv")}
    update = {r["id"] for r in _rows(f"snapshots/{spec['tia_update']}/activities.csv")}
    assert not own & update
    ties = 0
    for link in _rows(f"{spec['folder']}/links.csv"):
        assert {link["pred"], link["succ"]} <= own | update
        ties += bool({link["pred"], link["succ"]} & update)
    assert ties >= 2
    events = {r["id"]: r for r in _rows("events.csv")}
    assert spec["folder"] == f"fragnets/{events[eid]['fragnet']}"


def test_owner_change_fragnet_delays_and_utility_fragnet_is_absorbed(snaps):
    """Inserting EV03 into U04 delays completion; EV07 into U07 does not (README, time impact)."""
    assert gen.tia_delay(snaps, "EV03") > 0
    assert gen.tia_delay(snaps, "EV07") == 0


def test_out_of_sequence_progress_in_the_named_update(snaps):
    """In the named update an activity has started while its FS predecessor is unfinished."""
    oos = STORY["out_of_sequence"]
    snap = snaps[oos["update"]]
    act, pred = snap.activities[oos["activity"]], snap.activities[oos["unfinished_predecessor"]]
    assert act.is_started and not pred.is_finished
    assert any(x.pred == pred.id and x.succ == act.id and x.type == "FS" for x in snap.links)


def test_an_actual_date_changes_after_it_was_reported(snaps):
    """An actual finish reported in one update is different in the next (story.toml)."""
    fix = STORY["actual_correction"]
    reported = snaps[fix["reported_in"]].activities[fix["activity"]].actual_finish
    corrected = snaps[fix["corrected_in"]].activities[fix["activity"]].actual_finish
    assert reported is not None and corrected is not None and reported != corrected


def test_logic_revision_and_duration_revision(snaps):
    """A link removed and one added in U06; original durations changed in U07 (story.toml)."""
    rev = STORY["logic_revision"]
    before = {x.key for x in snaps["U05"].links}
    after = {x.key for x in snaps[rev["update"]].links}
    assert {tuple(k) for k in rev["removed"]} <= before - after
    assert {tuple(k) for k in rev["added"]} <= after - before
    dur = STORY["duration_revision"]
    prev, now = snaps["U06"].activities, snaps[dur["update"]].activities
    changed = {k: v for k, v in dur.items() if k != "update"}
    for aid, d in changed.items():
        assert prev[aid].duration != d == now[aid].duration


def test_critical_path_moves_from_hall_to_library(results, snaps):
    """The longest path lies in the hall early and in the library late (story.toml)."""
    moves = STORY["critical_path_moves"]

    def areas(sid):
        return {snaps[sid].activities[a].area for a in results[sid].longest_path}

    early, late = areas(moves["early_update"]), areas(moves["late_update"])
    assert moves["early_area"] in early and moves["late_area"] not in early
    assert moves["late_area"] in late and moves["early_area"] not in late


def test_secondary_path_float_erodes_until_critical(results):
    """The river terrace path's float never rises, falls month by month and ends <= 0 (story.toml)."""
    act = STORY["secondary_path_activity"]
    floats = [results[sid][act].total_float for sid in gen.SNAPSHOT_IDS]
    assert floats == [STORY["secondary_float"][sid] for sid in gen.SNAPSHOT_IDS]
    assert floats[0] >= 20
    assert all(b <= a for a, b in zip(floats, floats[1:], strict=False))
    assert sum(b < a for a, b in zip(floats, floats[1:], strict=False)) >= 6
    first_critical = next(sid for sid, f in zip(gen.SNAPSHOT_IDS, floats, strict=True) if f <= 0)
    assert first_critical == STORY["secondary_path_critical_from"]
    assert floats[-1] <= 0


def test_events_cover_every_party_and_hit_existing_activities(snaps):
    """Every party has at least one event; each event names activities of the last update."""
    last = snaps[gen.SNAPSHOT_IDS[-1]].activities
    events = _rows("events.csv")
    assert {e["party"] for e in events} == {p["id"] for p in MANIFEST["party"]}
    for e in events:
        assert set(e["activities"].split()) <= set(last), e["id"]
        assert e["start"] <= e["finish"]
