"""``forensic impact`` and ``forensic but-for`` on in-memory casefiles (the loader is replaced)."""

import json
from datetime import date

import pytest
from click.testing import CliRunner

import forensic.cli.impact as cli_impact
from forensic.cli import main
from forensic.core.model import Activity, Event, Fragnet, Link, frozen_mapping

from .test_impact import casefile, day, on_path, snap, two_paths


@pytest.fixture
def case(monkeypatch):
    acts, links = two_paths(10, 6)
    bad = Fragnet("BAD", frozen_mapping({"Q": Activity("Q", "", 1)}), (Link("Q", "GHOST", line=2),))
    events = [Event("E1", "E1", "OWN", "excusable-compensable", day(0), day(0), (), "F1"),
              Event("E2", "E2", "CON", "non-excusable", day(1), day(1), (), "F2"),
              Event("EB", "EB", "OWN", "excusable-compensable", day(2), day(2), (), "BAD")]
    cf = casefile([snap(acts, links)], events, [on_path("F1", "A", 6), on_path("F2", "B", 8), bad])
    monkeypatch.setattr(cli_impact, "load", lambda path: cf)
    return cf


def run(*args):
    return CliRunner().invoke(main, list(args))


def test_impact_json_has_exactly_the_contract_keys(case):
    """--json for one event prints the seven keys of issue 6 and the worked 6-day impact."""
    res = run("impact", "X", "--event", "E1", "--json")
    assert res.exit_code == 0, res.output
    obj = json.loads(res.output)
    # The seven contract keys in order, then the two that trace the run (issue 21; an in-memory
    # casefile has no input files, so no digests).
    assert list(obj) == ["event", "into", "completion_before", "completion_after", "impact", "milestones",
                         "critical_path", "represented_as", "days", "events", "warnings",
                         "forensic_version", "inputs_sha256"]
    assert obj["inputs_sha256"] == {}
    assert (obj["event"], obj["into"], obj["impact"]) == ("E1", "U1", 6)  # 6 days on the critical path
    assert (obj["represented_as"], obj["days"]) == ("fragnet", {"F1-X": 6})
    assert obj["completion_after"] == date(2026, 1, 20).isoformat()


def test_impact_cumulative_json_reports_non_additivity(case):
    """--cumulative over E1 and E2 gives 6 + 4 alone, 6 together, a difference of 4 (common practice)."""
    res = run("impact", "X", "--event", "E1", "--event", "E2", "--cumulative", "--json")
    assert res.exit_code == 0, res.output
    obj = json.loads(res.output)
    assert [r["impact"] for r in obj["individual"]] == [6, 4]
    assert obj["cumulative"]["impact"] == 6 and obj["non_additivity"] == 4
    assert obj["cumulative"]["event"] == "E1+E2"


def test_impact_text_and_list_output(case):
    """Text shows the completion move; two --event without --cumulative give a JSON list."""
    res = run("impact", "X", "--event", "E2")
    assert res.exit_code == 0 and "time impact 4 calendar days" in res.output
    assert "Total float consumed" in res.output
    res = run("impact", "X", "--event", "E1", "--event", "E2", "--json")
    assert [r["event"] for r in json.loads(res.output)] == ["E1", "E2"]


def test_impact_errors_are_plain_messages(case):
    """An unknown event, a bad tie and missing options end with exit 1 or 2 and a message, no traceback."""
    res = run("impact", "X", "--event", "NOPE")
    assert res.exit_code == 1 and "Error: no event 'NOPE'" in res.output
    res = run("impact", "X", "--event", "EB")
    assert res.exit_code == 1 and "GHOST" in res.output and "Q -> GHOST" in res.output
    res = run("impact", "X")
    assert res.exit_code == 2 and "--event" in res.output


def test_but_for_json_and_text(case, monkeypatch):
    """but-for on a finished job: removing the critical delay E1 gives back its 6 days.

    A planned 10 took 16 (days 0-15); E1 (days 3-8) holds 6 of its working
    days, the overrun is 6: estimated min(6, 6) = 6, all on the only path.
    """
    last = snap(
        [Activity("A", "", 10, actual_start=day(0), actual_finish=day(15)),
         Activity("B", "", 6, actual_start=day(0), actual_finish=day(5)),
         Activity("END", "", 0, kind="closing-milestone", actual_start=day(15), actual_finish=day(15))],
        [Link("A", "END"), Link("B", "END")], "U2", day(30))
    events = [Event("E1", "E1", "OWN", "excusable-compensable", day(3), day(8), ("A",))]
    cf = casefile([case.snapshots[0], last], events)
    monkeypatch.setattr(cli_impact, "load", lambda path: cf)
    res = run("but-for", "X", "--json")
    assert res.exit_code == 0, res.output
    obj = json.loads(res.output)
    assert [(c["case"], c["difference"]) for c in obj["cases"]] == [
        ("party OWN", 6), ("all owner delays", 6), ("all events", 6), ("all excusable events", 6)]
    assert obj["events"][0]["represented_as"] == "estimated" and obj["events"][0]["days"] == {"A": 6}
    assert obj["overlap"] == 0
    res = run("but-for", "X")
    assert res.exit_code == 0 and "Overlap: 0." in res.output
    res = run("but-for", "X", "--event", "E1")
    assert res.exit_code == 0 and "as-built from U2" in res.output
    res = run("but-for", "X", "--party", "OWN", "--event", "E1")
    assert res.exit_code == 2


def test_impact_series_json_text_and_refusals(monkeypatch):
    """--series prints the steps, the running total and the windows difference (test_impact's series_case)."""
    from .test_impact import series_case

    monkeypatch.setattr(cli_impact, "load", lambda path: series_case())
    res = run("impact", "X", "--all", "--series", "--json")
    assert res.exit_code == 0, res.output
    obj = json.loads(res.output)
    assert [(s["event"], s["into"], s["impact"]) for s in obj["steps"]] == [("E1", "BL", 2), ("E2", "U1", 3),
                                                                            ("E3", "U1", 1)]
    assert (obj["total"], obj["windows_total"], obj["difference_from_windows"]) == (6, 4, 2)
    res = run("impact", "X", "--all", "--series")
    assert res.exit_code == 0 and "Total 6 calendar days" in res.output and "difference of +2" in res.output
    res = run("impact", "X", "--all", "--series", "--cumulative")
    assert res.exit_code == 2 and "--series" in res.output
    res = run("impact", "X", "--all", "--cumulative")
    assert res.exit_code == 0 and "Cumulative into BL (data date 2026-01-05)" in res.output
    assert "impacted as-planned" in res.output  # the warning (stderr is mixed into the output here)


def test_impact_text_says_when_an_event_is_not_represented(monkeypatch):
    """An event with no work in its period: the text says 'not represented' and why (issue 17)."""
    from .test_impact import overrun_case

    monkeypatch.setattr(cli_impact, "load", lambda path: overrun_case(start=12, finish=14))
    res = run("impact", "X", "--event", "E1")
    assert res.exit_code == 0
    assert "E1 not represented (nothing inserted)" in res.output and "time impact 0" in res.output
