"""The delay summary per event (`forensic eot`): hand-worked case, the demo's identities, the CLI."""

from __future__ import annotations

import json

import pytest
from click.testing import CliRunner

from forensic.analysis.eot import delay_summary, eot_json
from forensic.casefile.demo import demo_source
from forensic.casefile.reading import load_casefile
from forensic.cli import main
from tests.delay_cases import casefile, day, event, ms, snap, task


def _two_events():
    """Two events on a 7-day calendar, one critical, one absorbed by float (dates: tests/delay_cases.py).

    Baseline BL (data date day 0): A (10 days) -> C (5) -> M, and B (5) -> M.
    A runs days 0-9, C 10-14, so M is on day 14; B runs 0-4 with 10 days of
    float.

    Update U01 (data date day 15): A took 13 days (0-12) during the owner's
    event EV1 (days 3-5, three days, naming A); C started day 13 with 3 of
    its 5 days left, so it finishes on day 17 and M moves to day 17: a slip
    of 3 calendar days. B took 7 days (0-6) during the contractor's event EV2
    (days 1-2, naming B), 2 days late against 10 of float: absorbed.

    Worked by hand, every method gives EV1 3 and EV2 0:
    - windows: the one window's progress slip of 3 is carried by A along
      the driving path, covered by EV1 (owner, excusable and compensable);
    - time impact: EV1 inserted into BL (the last update before day 3)
      holds A for its 3 days: M moves 14 -> 17; EV2 holds B for 2 days
      inside its 10 days of float: 0;
    - but-for: taking EV1's 3 days out of A's as-built 13 gives back 3;
      taking EV2's 2 days out of B moves nothing.
    - time impact in series: EV2 (day 1) goes into BL first, 0; EV1 (day 3)
      into the same update, carried forward, 3.
    Each event is estimated from the record: A's overrun of 3 days lies
    inside EV1's 3-day period, B's 2 days inside EV2's 2 days.
    The methods agree, so each reconciliation difference is 0.
    """
    bl = snap("BL", day(0), [task("A", 10), task("B", 5), task("C", 5), ms()],
              [("A", "C"), ("C", "M"), ("B", "M")], role="baseline")
    u1 = snap("U01", day(15), [
        task("A", 10, actual_start=day(0), actual_finish=day(12)),
        task("B", 5, actual_start=day(0), actual_finish=day(6)),
        task("C", 5, actual_start=day(13), remaining=3),
        ms(),
    ], [("A", "C"), ("C", "M"), ("B", "M")])
    events = [
        event("EV1", "OWN", "excusable-compensable", day(3), day(5), ["A"]),
        event("EV2", "CON", "non-excusable", day(1), day(2), ["B"]),
    ]
    return casefile([bl, u1], events)


def test_hand_worked_two_events_by_every_method():
    s = delay_summary(_two_events(), sensitivity=False)
    by = {e.event: e for e in s.events}
    assert s.completion["slip"] == 3
    assert (by["EV1"].days["windows"], by["EV1"].days["impact"], by["EV1"].days["but_for"]) == (3, 3, 3)
    assert (by["EV2"].days["windows"], by["EV2"].days["impact"], by["EV2"].days["but_for"]) == (0, 0, 0)
    assert (by["EV1"].days["impact_series"], by["EV2"].days["impact_series"]) == (3, 0)
    assert by["EV1"].represented_as["impact"] == by["EV1"].represented_as["but_for"] == "estimated"
    assert (by["EV1"].excusable, by["EV1"].compensable, by["EV1"].concurrent) == (3, 3, 0)
    assert (by["EV2"].excusable, by["EV2"].compensable) == (0, 0)
    assert s.methods["windows"].excusable_compensable == 3 and s.methods["windows"].total == 3
    assert s.methods["impact"].excusable_compensable == 3 and s.methods["impact"].non_excusable == 0
    assert dict(s.not_from_events) == {"performance": 0, "unassigned": 0, "unattributed_revision": 0, "gains": 0,
                                       "concurrent": 0}
    for r in s.reconciliation:
        assert r.difference == 0
        assert sum(c.days for c in r.causes if c.days is not None) == 0


@pytest.fixture(scope="module")
def demo_summary():
    return delay_summary(load_casefile(demo_source()))


def test_demo_events_plus_not_from_events_make_the_slip(demo_summary):
    """Per-event windows days plus the days from no event equal the slip (43 calendar days on the demo)."""
    s = demo_summary
    assert sum(e.days["windows"] for e in s.events) + sum(s.not_from_events.values()) == s.completion["slip"] == 43


def test_demo_windows_totals_are_the_ledger(demo_summary):
    """The windows method's totals are exactly the ledger's cumulative totals (forensic windows)."""
    from forensic.analysis.attribution.delay import analyse_delay

    led = analyse_delay(load_casefile(demo_source())).ledger.total
    w = demo_summary.methods["windows"]
    assert (w.excusable_compensable, w.excusable_noncompensable, w.non_excusable, w.concurrent) == (
        led.excusable_compensable, led.excusable_noncompensable, led.non_excusable, led.concurrent)
    assert w.total == 43


def test_demo_sensitivity_rows_each_add_up_to_their_slip(demo_summary):
    """Each row's categories (the ledger's, less gains) and each party's days add up to the row's slip."""
    rows = demo_summary.sensitivity
    assert rows[0].setting == "as analysed" and not rows[0].moved
    assert {r.setting for r in rows} >= {"window grouping", "progress logic", "critical float", "concurrency rule"}
    assert {r.value for r in rows if r.setting == "concurrency rule"} == {"apportion", "dominant"}
    for r in rows:
        assert sum(r.by_party.values()) + r.concurrent == r.slip == 43
    quarterly = next(r for r in rows if r.value.startswith("quarterly"))
    # Grouping three months at a time moves the split (concurrency is judged per window): flagged.
    assert quarterly.moved == any(abs(quarterly.by_party.get(p, 0) - rows[0].by_party.get(p, 0)) > demo_summary.tolerance
                                  for p in set(quarterly.by_party) | set(rows[0].by_party))


def test_demo_reconciliation_causes_add_up_and_name_concurrency(demo_summary):
    """Counted causes add up to each difference; windows sets its 13 concurrent days apart from the events."""
    for r in demo_summary.reconciliation:
        assert sum(c.days for c in r.causes if c.days is not None) == r.difference
        if "windows" in r.methods:
            conc = next(c for c in r.causes if c.cause == "concurrency treatment")
            assert conc.days == (-13 if r.methods[0] == "windows" else 13)


def test_eot_json_keys_are_the_contract(demo_summary):
    j = eot_json(demo_summary)
    assert list(j)[:7] == ["unit", "completion", "events", "methods", "not_from_events", "reconciliation", "sensitivity"]
    assert set(j["completion"]) == {"baseline", "latest", "contract", "slip"}
    e = j["events"][0]
    for key in ("event", "title", "party", "category", "reference", "start", "finish", "days", "represented_as",
                "concurrent", "excusable", "compensable"):
        assert key in e
    assert set(e["days"]) == {"windows", "impact", "impact_series", "but_for"}
    assert set(j["methods"]) == {"windows", "impact", "impact_series", "but_for"}
    assert set(j["methods"]["windows"]) >= {"excusable_compensable", "excusable_noncompensable", "non_excusable", "concurrent"}
    r = j["sensitivity"][0]
    assert set(r) >= {"setting", "value", "excusable_compensable", "excusable_noncompensable", "non_excusable",
                      "concurrent", "by_party", "moved"}
    c = j["reconciliation"][0]
    assert set(c) == {"methods", "difference", "causes"} and set(c["causes"][0]) == {"cause", "days", "explanation"}


def test_cli_eot_json_and_text(tmp_path):
    runner = CliRunner()
    res = runner.invoke(main, ["eot", str(demo_source()), "--json", "--out", str(tmp_path / "eot.json")])
    assert res.exit_code == 0, res.output
    j = json.loads((tmp_path / "eot.json").read_text(encoding="utf-8"))
    assert j["completion"]["slip"] == 43
    res = runner.invoke(main, ["eot", str(demo_source()), "--snapshot", "U05", "--csv", "--table", "methods"])
    assert res.exit_code == 0, res.output
    assert res.output.splitlines()[0].startswith("method,")
    res = runner.invoke(main, ["eot", str(demo_source()), "--snapshot", "U99"])
    assert res.exit_code == 1 and "Error: --snapshot: no snapshot 'U99'" in res.output


def test_report_carries_the_per_event_table_and_the_reconciliation(demo_summary):
    """The full report prints every event's windows figure and each pair's difference from the summary."""
    import io

    from pypdf import PdfReader

    from forensic.report import build_report

    pdf = build_report(load_casefile(demo_source()), "full")
    text = " ".join(" ".join(p.extract_text().split()) for p in PdfReader(io.BytesIO(pdf)).pages)
    assert "Delay per event by every method" in text and "Reconciliation of methods" in text
    assert f"Not from events {sum(demo_summary.not_from_events.values())}" in text
    words = {"windows": "windows", "impact": "time impact alone", "impact_series": "time impact in series",
             "but_for": "but-for"}
    for r in demo_summary.reconciliation:
        a, b = (words[m] for m in r.methods)
        assert f"The {a} and the {b} differ by {r.difference} calendar days" in text


def test_demo_events_without_anything_to_insert_are_null_with_a_reason(demo_summary):
    """EV10 and EV11 (re-plans with no fragnet, no days_lost and no overrun to estimate) are not represented."""
    by = {e.event: e for e in demo_summary.events}
    for eid in ("EV10", "EV11"):
        for m in ("impact", "impact_series", "but_for"):
            assert by[eid].days[m] is None and by[eid].represented_as[m] == "not-represented"
            assert by[eid].reasons[m]
    # The windows analysis still observes EV11's re-plan: 14 calendar days (the demo's story).
    assert by["EV11"].days["windows"] == 14
    # A fragnet event keeps its fragnet figure: EV03 (CO-01) adds 7 alone (forensic impact --event EV03).
    assert by["EV03"].represented_as["impact"] == "fragnet" and by["EV03"].days["impact"] == 7
