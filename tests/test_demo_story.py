"""The demo casefile's story (casefiles/riverside/README.md), as the analyses find it.

Every expected number is read from casefiles/riverside/story.toml, the one
place the story's numbers live (written by casefiles/generate_demo.py from
its stated story); the analyses run here on the committed casefile.
"""

from __future__ import annotations

import tomllib
from pathlib import Path

import pytest

from forensic.analysis.attribution.delay import analyse_delay
from forensic.analysis.butfor import but_for
from forensic.analysis.compare import compare_snapshots
from forensic.analysis.impact import time_impact, unimpacted_snapshot
from forensic.casefile.reading import load_casefile

DEMO = Path(__file__).resolve().parents[1] / "casefiles" / "riverside"
STORY = tomllib.loads((DEMO / "story.toml").read_text(encoding="utf-8"))
WINDOWS = list(STORY["windows"])


@pytest.fixture(scope="module")
def cf():
    return load_casefile(DEMO)


@pytest.fixture(scope="module")
def delay(cf):
    return analyse_delay(cf)


def _att(delay, label):
    return next(a for a in delay.attributions if a.window_label == label)


def _win(delay, label):
    return next(w for w in delay.windows.windows if w.label == label)


@pytest.mark.parametrize("label", WINDOWS)
def test_window_slip_and_its_half_step_split_are_the_story_s(delay, label):
    """Each window's slip, progress and revision slip are those the story states (story.toml [windows])."""
    told, w = STORY["windows"][label], _win(delay, label)
    assert (w.slip, w.progress_slip, w.revision_slip) == (told["slip"], told["progress_slip"], told["revision_slip"])


@pytest.mark.parametrize("label", WINDOWS)
def test_window_days_go_to_the_parties_and_events_the_story_names(delay, label):
    """Each window's days by party, concurrent days and the events behind them are the story's (story.toml [windows])."""
    told, att = STORY["windows"][label], _att(delay, label)
    assert dict(att.by_party) == told["by_party"]
    assert att.concurrent.days == told["concurrent"]
    events = {c.event for c in att.contributors if c.event and c.days} | {s.event for s in att.revision if s.days}
    assert sorted(events) == told["events"]
    assert att.unexplained == 0  # every day of the demo has an event behind it (the story)


def test_concurrency_in_the_story_s_window_involves_both_parties_and_events(delay):
    """U04-U05: the owner's change (revision) and the contractor's crane failure (progress) are concurrent (SCL core principle 10)."""
    c = STORY["concurrency"]
    att = _att(delay, "-".join(c["window"]))
    assert att.concurrent.days == c["days"] > 0
    assert list(att.concurrent.parties) == c["parties"]
    assert set(att.concurrent.events) == {c["owner_event"], c["contractor_event"]}
    # The rule's but-for figures: either party alone recovers less than both together.
    assert att.concurrent.recovered_together - sum(att.concurrent.recovered_alone.values()) == c["days"]
    others = [a.window_label for a in delay.attributions if a.concurrent.days]
    assert others == ["-".join(c["window"])]


def test_ledger_balances_to_the_story_s_total(delay):
    """The delay ledger's total row is the story's (story.toml [ledger_total]) and equals the final slip."""
    told, total = STORY["ledger_total"], delay.ledger.total
    for key, value in told.items():
        assert getattr(total, key) == value, key
    assert total.total == STORY["final_slip_days"] == delay.ledger.total_slip
    assert delay.ledger.balanced


@pytest.mark.parametrize("eid", list(STORY["fragnets"]))
def test_time_impact_of_each_fragnet_into_its_default_unimpacted_update(cf, eid):
    """Each fragnet goes by default into the last update on or before its event (AACE RP 52R-06) and moves completion as the story states."""
    told = STORY["fragnets"][eid]
    assert unimpacted_snapshot(cf, cf.event(eid)).id == told["tia_update"]
    r = time_impact(cf, eid)
    assert (r.into, r.impact) == (told["tia_update"], told["tia_days"])


def test_fragnet_work_keeps_its_ids_in_the_updates_that_take_it_in(cf):
    """The fragnets share ids with the incorporated work, so the later updates hold the same activities (casefiles/README.md)."""
    for eid, told in STORY["fragnets"].items():
        frag = cf.fragnets[eid]
        assert set(frag.activities) <= set(cf.snapshot(told["in_programme_from"]).activities)
        assert not set(frag.activities) & set(cf.snapshot(told["tia_update"]).activities)


def test_but_for_removes_each_party_s_delays_as_the_story_states(cf):
    """Collapsed as-built from U10: completion earlier by the story's days without each party's delays (AACE RP 29R-03 MIP 3.8)."""
    report = but_for(cf)
    got = {c.label.removeprefix("party "): c.difference for c in report.cases}
    assert got == STORY["but_for"]
    ev03 = next(e for e in report.as_built.events if e.event == "EV03")
    assert ev03.how == "fragnet"  # the owner's change is recognised in the as-built by its fragnet ids


def test_comparison_finds_the_revised_actual_finish(cf):
    """Comparing U05 with U06 finds the corrected actual finish the story names (story.toml [actual_correction])."""
    fact = STORY["actual_correction"]
    r = compare_snapshots(cf, fact["reported_in"], fact["corrected_in"])
    hits = [c for c in r.of_kind("actual-revised") if c.activity == fact["activity"]]
    assert [c.field for c in hits] == ["actual_finish"]
