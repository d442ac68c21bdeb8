"""The report never misleads: window dates, critical counts, key dates, charts never cut.

Each figure checked here is counted independently in the test from the
engine's result or the casefile, not read back from the report's helpers.
"""

from __future__ import annotations

import io
from datetime import date, timedelta

import pytest
from pypdf import PdfReader

from forensic.analysis.trend import completion_trend
from forensic.casefile.demo import demo_source
from forensic.casefile.reading import load_casefile
from forensic.core.engine import schedule
from forensic.report import build_report
from forensic.report.narrative import long_date


def _pages(data: bytes) -> list[str]:
    return [" ".join(p.extract_text().split()) for p in PdfReader(io.BytesIO(data)).pages]


@pytest.fixture(scope="module")
def demo():
    return load_casefile(demo_source())


@pytest.fixture(scope="module")
def full_pages(demo) -> list[str]:
    return _pages(build_report(demo, "full"))


@pytest.fixture(scope="module")
def monthly_text(demo) -> str:
    return " ".join(_pages(build_report(demo, "monthly")))


def test_windows_are_printed_from_the_earlier_data_date_to_the_day_before_the_later(demo, full_pages):
    """Under the inclusive reading of dates no day falls in two windows.

    Hand working: BL has data date 2 March 2026 and U01 7 April 2026, so the
    window BL-U01 covers 2 March to 6 April 2026 and U01-U02 starts on
    7 April (common practice: the data date is the first day of the work
    still to do, casefile format).
    """
    text = " ".join(full_pages)
    assert "Window BL-U01: 2 March 2026 to 6 April 2026" in text
    assert "Window BL-U01: 2 March 2026 to 7 April 2026" not in text
    snaps = demo.snapshots
    for a, b in zip(snaps, snaps[1:], strict=False):
        last_day = b.data_date - timedelta(days=1)
        assert f"Window {a.id}-{b.id}: {long_date(a.data_date)} to {long_date(last_day)}" in text
        # The next window starts the day after this one's last day.
        assert last_day + timedelta(days=1) == b.data_date


def test_summary_says_why_critical_activities_outnumber_the_longest_path(demo, full_pages):
    """At U10, 28 activities are critical and the longest path has 21: the 7 others carry negative float.

    Counted here from the engine's result: critical = not finished with total
    float <= the casefile's critical float (0); off the path = critical and
    not on the longest path; every one of them has negative float, held by
    the key date M-RIV (finish-by 25 March 2027), earlier than the work can
    finish.
    """
    latest = demo.snapshots[-1]
    res = schedule(latest, demo.calendars, demo.project)
    crit = [a for a, x in res.activities.items() if x.status != "finished" and x.total_float <= 0]
    off = [a for a in crit if a not in set(res.longest_path)]
    negative = [a for a in off if res.activities[a].total_float < 0]
    assert (len(crit), len(res.longest_path), len(off), len(negative)) == (28, 21, 7, 7)
    summary = next(p for p in full_pages if "2. Executive summary" in p)
    assert (f"The longest path at U10 holds {len(res.longest_path)} activities, fewer than the {len(crit)} critical "
            f"activities: {len(off)} lie off it, {len(negative)} with negative float") in summary


def test_longest_path_section_says_why_the_path_is_not_all_critical(demo, full_pages):
    """At BL the longest path holds 36 activities but only 6 are critical: 30 carry 1-2 working days of float.

    Counted from the engine: unfinished activities of the longest path whose
    total float is above 0. Their float is counted on their own calendars
    (five-, six- and seven-day, fabrication) (AACE RP 49R-06, from memory: with several calendars
    the longest path, not lowest float, identifies the critical path).
    """
    bl = demo.baseline
    res = schedule(bl, demo.calendars, demo.project)
    loose = [res.activities[a].total_float for a in res.longest_path if res.activities[a].total_float > 0]
    assert len(res.longest_path) == 36 and len(loose) == 30
    # The stated cause needs calendars with different working weeks on the path: here four of them.
    assert {bl.activities[a].calendar for a in res.longest_path} == {"5d", "6d", "7d", "fab"}
    text = " ".join(full_pages)
    assert (f"{len(loose)} of the activities still to do on this longest path carry {min(loose)} to {max(loose)} "
            "working days of total float") in text


def test_every_longest_path_chart_reaches_the_completion(demo, full_pages):
    """No silent cut at 30 rows: each update's chart names the completion milestone M900, continued if need be.

    BL's longest path has 36 activities and U06's 47 (counted from the
    engine): both continue on a second chart, and no chart stops before the
    completion.
    """
    trend = completion_trend(demo)
    text = " ".join(full_pages)
    appendix = text[text.index("Appendix: longest path at each update For each snapshot"):]
    appendix = appendix[: appendix.index("Appendix: record of inputs")]
    heads = [f"{r.snapshot_id}: data date {long_date(r.data_date)}" for r in trend.snapshots]
    parts = []
    for h, nxt in zip(heads, [*heads[1:], None], strict=True):
        at = appendix.index(h)
        parts.append(appendix[at: appendix.index(nxt) if nxt else None])
    for r, part in zip(trend.snapshots, parts, strict=True):
        assert "M900 Practical completion" in part, r.snapshot_id
        if len(r.longest_path) > 30:
            assert f"Continued: activities 31 to {len(r.longest_path)} of the {len(r.longest_path)} on the path." in part
    assert {r.snapshot_id for r in trend.snapshots if len(r.longest_path) > 30} >= {"BL", "U06"}


def test_monthly_brief_lists_a_key_date_forecast_late(monthly_text):
    """M-RIV (finish-by 25 March 2027) is forecast 6 April 2027 at U10 with float -6, after -3 at U09.

    Hand working: 25 March to 6 April 2027 is 12 calendar days (the demo's
    delay unit); float fell from -3 to -6 working days, 3 lost since U09.
    """
    assert (date(2027, 4, 6) - date(2027, 3, 25)).days == 12
    assert ("Key dates late or losing float this month: River terrace complete (M-RIV), forecast 6 April 2027, "
            "total float -6 working days: 12 calendar days after its key date of 25 March 2027 and 3 working days "
            "of float lost since U09.") in monthly_text


def test_plurals_and_lists_read_as_written(demo):
    """One event is "event EV07", several "events EV01 and EV03"; a case is named without repeating itself."""
    text = " ".join(_pages(build_report(demo, "full", recover_days=10)))
    assert "(event EV07)" in text and "(events EV07)" not in text
    assert "(events EV01 and EV03)" in text
    assert "every owner delay together, those of" not in text
    assert "But for the delays of all owner parties together (Merrowby Town Council (employer))" in text
    assert " 1 activities" not in text


def test_cumulative_impact_sentence_names_the_base_schedules(demo):
    """The cumulative difference is not only float and overlap: the events alone went into different updates."""
    from forensic.analysis.impact import time_impacts

    series = time_impacts(demo)
    bases = sorted({r.into for r in series.individual})
    assert len(bases) > 1  # the demo's events start in different months
    text = " ".join(_pages(build_report(demo, "full")))
    words = ", ".join(bases[:-1]) + " and " + bases[-1]
    assert f"Each event alone went into its own unimpacted update ({words})" in text
    assert "change of base schedule between those updates" in text


def test_acceleration_says_when_the_plan_is_not_proven_least_cost(demo, monkeypatch):
    """With the solver's time limit cut to 0.01 s the plan still meets its target but is flagged in the PDF."""
    import forensic.report as report_module
    from forensic.analysis.recovery import recover

    monkeypatch.setattr(report_module, "recover", lambda cf, sid, days: recover(cf, sid, days=days, time_limit=0.01))
    text = " ".join(_pages(build_report(demo, "full", recover_days=10)))
    assert "proven the cheapest: it meets its target, confirmed by the engine, but a cheaper plan may exist" in text
    monkeypatch.undo()
    assert "a cheaper plan may exist" not in " ".join(_pages(build_report(demo, "full", recover_days=10)))


def test_tied_longest_paths_are_named_as_chains(demo, full_pages):
    """BL's longest path is four tied chains (engine longest_paths): the appendix names each and numbers the bars."""
    res = schedule(demo.baseline, demo.calendars, demo.project)
    chains = res.longest_paths
    assert len(chains) == 4
    text = " ".join(full_pages)
    assert f"the longest path is {len(chains)} chains through driving links" in text
    for n, c in enumerate(chains, 1):
        assert f"chain {n}, {len(c)} activities from {c[0]} to {c[-1]}" in text
        # each chain is contiguous through links of the snapshot (a chain, not a list)
        links = {(lk.pred, lk.succ) for lk in demo.baseline.links}
        assert all((a, b) in links for a, b in zip(c, c[1:], strict=False))
    assert "[1] M000 Notice to proceed" in text and "[2] " in text


def test_float_erosion_is_also_measured_against_the_contractual_dates(demo, full_pages):
    """The completion kept 0 network float while 43 days late: against 10 June 2027 it has -31 working days.

    Hand working (five-day calendar, no holiday between): forecast 23 July
    2027, contract 10 June 2027; 11 June plus six weeks 14 June - 23 July is
    31 working days, so the float to the contract is -31 (trend.contract_float).
    """
    text = " ".join(full_pages)
    assert ("Measured against its contractual date of 10 June 2027 instead of the moving completion, Practical "
            "completion (M900) had 0 working days of float at BL and -31 working days at U10") in text
    assert "River terrace complete (M-RIV) had 36 working days of float at BL and -6 working days at U10" in text
