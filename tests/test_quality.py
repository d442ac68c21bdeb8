"""Schedule quality: each DCMA 14-point measure and each practitioners' check on a small network."""

from datetime import date

import pytest

from forensic.analysis import quality
from forensic.analysis.quality import assess_casefile, assess_quality, quality_json, quality_table
from forensic.core.model import (
    Activity,
    Calendar,
    Casefile,
    Link,
    Project,
    Snapshot,
    frozen_mapping,
)

FIVE = Calendar("5d", ("mon", "tue", "wed", "thu", "fri"))
MON = date(2026, 1, 5)  # a Monday; every network below is on the Monday-Friday calendar


def task(aid, d, **kw):
    kw.setdefault("calendar", "5d")
    return Activity(aid, f"task {aid}", d, **kw)


def start(aid="ST", **kw):
    return Activity(aid, "start", 0, kind="opening-milestone", calendar="5d", **kw)


def finish(aid="END", **kw):
    return Activity(aid, "finish", 0, kind="closing-milestone", calendar="5d", **kw)


def snap(acts, links, sid="BL", dd=MON, role="baseline"):
    return Snapshot(sid, dd, frozen_mapping({a.id: a for a in acts}), tuple(links), role=role)


SIX = Calendar("6d", ("mon", "tue", "wed", "thu", "fri", "sat"))


def casefile(*snapshots, contract=None, completion="END", logic="retained"):
    project = Project("t", "5d", completion=completion, contract_completion=contract, progress_logic=logic)
    return Casefile(project, frozen_mapping({"5d": FIVE, "6d": SIX}), frozen_mapping(), tuple(snapshots))


def one(acts, links, key, **kw):
    cf = casefile(snap(acts, links), **kw)
    return assess_quality(cf, "BL").check(key)


def chain(*ids):
    return [Link(a, b) for a, b in zip(ids, ids[1:], strict=False)]


def test_published_thresholds_of_the_fourteen_points():
    """Each DCMA point carries the pamphlet's threshold (DCMA-EA PAM 200.1, Oct 2012, as recalled; from memory)."""
    r = assess_quality(casefile(snap([start(), task("A", 5), finish()], chain("ST", "A", "END"))), "BL")
    got = {c.number: (c.comparison, c.limit) for c in r.checks if c.number is not None}
    # DCMA-EA PAM 200.1 (Oct 2012) sec. 4 thresholds, from memory and the project's issue 4;
    # point 10 (resources) has no threshold here since it is not assessed.
    assert got == {
        1: ("<=", 5.0), 2: ("<=", 0.0), 3: ("<=", 5.0), 4: (">=", 90.0), 5: ("<=", 5.0),
        6: ("<=", 5.0), 7: ("<=", 0.0), 8: ("<=", 5.0), 9: ("<=", 0.0), 10: ("", 0.0),
        11: ("<=", 5.0), 12: ("==", 600), 13: (">=", 0.95), 14: (">=", 0.95),
    }
    # High float and high duration: more than 44 working days (DCMA-EA PAM 200.1, from memory).
    assert quality.HIGH_FLOAT_DAYS == 44 and quality.HIGH_DURATION_DAYS == 44
    assert [c.number for c in r.checks[:14]] == list(range(1, 15))


def test_logic_counts_tasks_missing_a_predecessor_or_a_successor():
    """Check 1: two of four tasks have an open end, 50 % > 5 % (DCMA-EA PAM 200.1 threshold)."""
    acts = [start(), task("A", 5), task("B", 5), task("C", 3), task("D", 2), finish()]
    links = [*chain("ST", "A", "B", "END"), Link("ST", "C"), Link("D", "END")]
    c = one(acts, links, "logic")
    # Tasks A, B, C, D (milestones excluded); C has no successor, D no predecessor: 2 / 4 = 50 %.
    assert (c.count, c.denominator, c.value, c.passed) == (2, 4, 50.0, False)
    assert c.activities == ("C", "D")


def test_leads_lags_and_relationship_types_count_links():
    """Checks 2-4 over five links: one lead (20 %), one lag (20 %), three FS (60 % < 90 %)."""
    acts = [start(), task("A", 5), task("B", 5), task("C", 5), finish()]
    links = [
        Link("ST", "A"), Link("A", "B", "FS", -2), Link("A", "C", "SS", 3),
        Link("B", "END"), Link("C", "END", "FF"),
    ]
    cf = casefile(snap(acts, links))
    r = assess_quality(cf, "BL")
    # Hand count over the 5 links: lag -2 on A->B; lag +3 on A->C; FS are ST->A, A->B, B->END.
    leads, lags, types = r.check("leads"), r.check("lags"), r.check("relationship-types")
    assert (leads.count, leads.denominator, leads.value, leads.passed) == (1, 5, 20.0, False)
    assert [(k.pred, k.succ) for k in leads.links] == [("A", "B")]
    assert (lags.count, lags.value, lags.passed) == (1, 20.0, False)
    assert (types.count, types.value, types.passed) == (3, 60.0, False)
    assert {(k.pred, k.succ) for k in types.links} == {("A", "C"), ("C", "END")}


def test_links_between_finished_activities_leave_the_link_population():
    """Check 3 counts only links touching unfinished work (DCMA population, from memory)."""
    acts = [
        task("A", 5, actual_start=date(2026, 1, 5), actual_finish=date(2026, 1, 9)),
        task("B", 5, actual_start=date(2026, 1, 19), actual_finish=date(2026, 1, 23)),
        task("C", 5), finish(),
    ]
    links = [Link("A", "B", lag=5), Link("B", "C"), Link("C", "END")]
    cf = casefile(snap(acts, links, dd=date(2026, 2, 2)))
    c = assess_quality(cf, "BL").check("lags")
    # A->B joins two finished tasks, so 0 lags over the 2 remaining links.
    assert (c.count, c.denominator, c.passed) == (0, 2, True)


@pytest.mark.parametrize(("hard", "expected"), [(1, (5.0, True)), (2, (10.0, False))])
def test_hard_constraints_at_and_over_five_percent(hard, expected):
    """Check 5: 1 hard constraint in 20 tasks is 5 % (passes), 2 is 10 % (fails) (DCMA-EA PAM 200.1)."""
    far = date(2027, 12, 31)  # late enough to give no negative float
    acts = [start()]
    for i in range(20):
        kw = {}
        if i < hard:
            kw = dict(constraint="finish-by", constraint_date=far)
        elif i == 19:
            kw = dict(constraint="start-from", constraint_date=MON)  # soft: not counted
        acts.append(task(f"T{i:02d}", 2, **kw))
    acts.append(finish())
    links = chain("ST", *[f"T{i:02d}" for i in range(20)], "END")
    c = one(acts, links, "hard-constraints")
    assert (c.denominator, c.value, c.passed) == (20, *expected)


def test_high_float_counts_float_above_44_working_days():
    """Check 6: floats 0, 50 and 44; only 50 is above 44, 1 / 3 = 33.33 % (DCMA-EA PAM 200.1)."""
    acts = [start(), task("A", 60), task("B", 10), task("C", 16), finish()]
    links = [Link("ST", x) for x in "ABC"] + [Link(x, "END") for x in "ABC"]
    c = one(acts, links, "high-float")
    # A sets the 60-day path; B floats 60 - 10 = 50, C 60 - 16 = 44 (not above 44).
    assert (c.count, c.denominator, c.value, c.passed) == (1, 3, 33.33, False)
    assert c.activities == ("B",)


def test_negative_float_from_a_finish_constraint_that_cannot_be_met():
    """Check 7: a 10-day task due in 5 working days floats -5; 1 / 2 tasks (DCMA-EA PAM 200.1, 0 %)."""
    acts = [
        start(), task("A", 10, constraint="finish-by", constraint_date=date(2026, 1, 9)),
        task("B", 3), finish(),
    ]
    links = [Link("ST", "A"), Link("ST", "B"), Link("A", "END"), Link("B", "END")]
    c = one(acts, links, "negative-float")
    # A runs Mon 5 - Fri 16 Jan; it must finish by Fri 9 Jan: 5 working days short.
    assert (c.count, c.denominator, c.value, c.passed) == (1, 2, 50.0, False)
    assert c.activities == ("A",)


def test_high_duration_counts_durations_above_44_working_days():
    """Check 8: durations 45 and 44; one is above 44, 1 / 2 = 50 % (DCMA-EA PAM 200.1)."""
    acts = [start(), task("A", 45), task("B", 44), finish()]
    links = [Link("ST", "A"), Link("ST", "B"), Link("A", "END"), Link("B", "END")]
    c = one(acts, links, "high-duration")
    assert (c.count, c.denominator, c.value, c.activities) == (1, 2, 50.0, ("A",))


def test_invalid_dates_future_actual_and_forecast_before_the_data_date():
    """Check 9: an actual after the data date and a forecast before it: 2 of 5 activities (0 % allowed)."""
    dd = date(2026, 2, 2)
    acts = [
        start(actual_start=MON),
        task("A", 5, actual_start=date(2026, 1, 26), actual_finish=date(2026, 2, 3)),  # after dd
        task("B", 5, actual_start=date(2026, 1, 26), remaining=0),  # open, nothing left: forecast Fri 30 Jan
        task("C", 5), finish(),
    ]
    links = [Link("ST", "A"), Link("ST", "B"), Link("A", "C"), Link("B", "C"), Link("C", "END")]
    c = assess_quality(casefile(snap(acts, links, dd=dd)), "BL").check("invalid-dates")
    assert (c.count, c.denominator, c.value, c.passed) == (2, 5, 40.0, False)
    assert c.activities == ("A", "B")


def test_resources_are_not_assessed():
    """Check 10: the casefile format carries no resources, so the check says so (issue 4)."""
    c = one([start(), task("A", 5), finish()], chain("ST", "A", "END"), "resources")
    assert c.passed is None and c.status == "not assessed" and "no resource" in c.note


def _progressed():
    """Baseline chain of four 5-day tasks; update at Mon 26 Jan with B late and C open."""
    base = snap([start(), *(task(x, 5) for x in "ABCD"), finish()], chain("ST", "A", "B", "C", "D", "END"))
    # Baseline finishes: A Fri 9, B Fri 16, C Fri 23, D Fri 30 Jan; before Mon 26 Jan: A, B, C.
    acts = [
        start(actual_start=MON),
        task("A", 5, actual_start=MON, actual_finish=date(2026, 1, 9)),
        task("B", 5, actual_start=date(2026, 1, 14), actual_finish=date(2026, 1, 20)),
        task("C", 5, actual_start=date(2026, 1, 21), remaining=1),
        task("D", 5), finish(),
    ]
    upd = snap(acts, chain("ST", "A", "B", "C", "D", "END"), sid="U1", dd=date(2026, 1, 26), role="update")
    return casefile(base, upd)


def test_missed_tasks_late_or_open_against_the_baseline():
    """Check 11: of A, B, C baselined to finish before the data date, B finished late and C is open: 66.67 %."""
    c = assess_quality(_progressed(), "U1").check("missed-tasks")
    assert (c.count, c.denominator, c.value, c.passed) == (2, 3, 66.67, False)
    assert c.activities == ("B", "C")


def test_baseline_execution_index():
    """Check 14: BEI = 2 finished (A, B) / 3 baselined to finish (A, B, C) = 0.6667 < 0.95 (DCMA)."""
    c = assess_quality(_progressed(), "U1").check("bei")
    assert (c.count, c.denominator, c.value, c.passed) == (2, 3, 0.6667, False)
    assert c.activities == ("C",)


def test_bei_on_the_baseline_itself_is_not_assessed():
    """Check 14 on the baseline: nothing was due before its own data date, so no index."""
    c = assess_quality(_progressed(), "BL").check("bei")
    assert c.passed is None and c.denominator == 0


def test_critical_path_test_passes_on_a_finish_to_start_chain():
    """Check 12: 600 working days on A move the completion by 600 working days (DCMA-EA PAM 200.1)."""
    c = one([start(), task("A", 5), task("B", 5), finish()], chain("ST", "A", "B", "END"), "critical-path-test")
    assert (c.value, c.passed) == (600.0, True)
    assert "delayed A" in c.note


def test_critical_path_test_across_calendars_allows_the_roll_over():
    """Check 12: a 6-day-week task before a 5-day one: the completion moves 600 of A's days, within 2 %."""
    acts = [start(), task("A", 6, calendar="6d"), task("B", 5), finish()]
    c = one(acts, chain("ST", "A", "B", "END"), "critical-path-test")
    # A (Mon-Sat) ends on a Saturday both times (606 = 101 six-day weeks from Mon 5 Jan), B
    # then runs Mon-Fri: the completion Friday moves exactly 100 weeks = 600 of A's days.
    assert (c.value, c.passed) == (600.0, True)
    assert "crosses calendars (5d, 6d)" in c.note


def test_critical_path_test_fails_when_the_path_runs_through_a_start_to_start_link():
    """Check 12: A drives B by SS only, so A's 600 extra days do not reach the completion (0 moved)."""
    acts = [start(), task("A", 5), task("B", 20), finish()]
    links = [Link("ST", "A"), Link("A", "B", "SS"), Link("B", "END")]
    c = one(acts, links, "critical-path-test")
    # Longest path ST, A, B, END (A drives B's start); lengthening A changes only A's finish.
    assert (c.value, c.passed, c.activities) == (0.0, False, ("A",))


@pytest.mark.parametrize(
    ("contract", "total_float", "cpli", "passed"),
    [(date(2026, 1, 23), 5, 1.5, True), (date(2026, 1, 14), -2, 0.8, False)],
)
def test_cpli_against_the_contract_completion(contract, total_float, cpli, passed):
    """Check 13: CPL 10 days (Mon 5 - Fri 16 Jan); CPLI = (10 + TF) / 10 against the contract date (DCMA)."""
    c = one([start(), task("A", 10), finish()], chain("ST", "A", "END"), "cpli", contract=contract)
    # Contract Fri 23 Jan: 5 working days after Fri 16 -> (10 + 5) / 10 = 1.5.
    # Contract Wed 14 Jan: Thu 15 and Fri 16 are beyond it -> (10 - 2) / 10 = 0.8.
    assert (c.count, c.denominator, c.value, c.passed) == (total_float, 10, cpli, passed)


def test_cpli_without_a_contract_date_uses_the_baseline_completion():
    """Check 13 in the update: the completion slips from Fri 30 Jan to Mon 2 Feb; TF -1 over CPL 6."""
    c = assess_quality(_progressed(), "U1").check("cpli")
    # Update: C's last day Mon 26, D Tue 27 Jan - Mon 2 Feb; CPL Mon 26 Jan - Mon 2 Feb = 6 working days.
    assert (c.count, c.denominator, c.value, c.passed) == (-1, 6, round(5 / 6, 4), False)


def test_open_ends_exempt_the_start_milestone_and_the_completion():
    """Open ends: B has no predecessor and C no successor; 2 of 5 unfinished activities (common practice)."""
    acts = [start(), task("A", 5), task("B", 5), task("C", 5), finish()]
    links = [*chain("ST", "A", "END"), Link("B", "END"), Link("ST", "C")]
    c = one(acts, links, "open-ends")
    assert (c.count, c.denominator, c.value, c.activities) == (2, 5, 40.0, ("B", "C"))


def test_out_of_sequence_progress_found_from_actual_dates():
    """Out of sequence: B started while its FS predecessor A was open; C by SS the same day is fine."""
    acts = [
        start(actual_start=MON),
        task("A", 20, actual_start=MON, remaining=6),
        task("B", 5, actual_start=date(2026, 1, 19), remaining=1),
        task("C", 5, actual_start=date(2026, 1, 19), remaining=1),
        finish(),
    ]
    links = [Link("ST", "A"), Link("A", "B"), Link("B", "C", "SS"), Link("C", "END")]
    c = assess_quality(casefile(snap(acts, links, dd=date(2026, 2, 2))), "BL").check("out-of-sequence")
    # Started: ST, A, B, C (4); B breaks A->B: 1 / 4 = 25 %.
    assert (c.count, c.denominator, c.value, c.activities) == (1, 4, 25.0, ("B",))


def test_activities_without_a_calendar():
    """No calendar: one activity of three leaves the calendar blank (common practice)."""
    acts = [start(), task("A", 5, calendar=None), finish()]
    c = one(acts, chain("ST", "A", "END"), "no-calendar")
    assert (c.count, c.denominator, c.activities) == (1, 3, ("A",))


def test_links_through_a_summary_like_milestone():
    """Summary-like milestone M (2 in, 2 out): 4 of 8 links touch it, 50 % (our threshold 5 %)."""
    acts = [start(), task("A", 2), task("B", 2), finish("M"), task("C", 2), task("D", 2), finish()]
    links = [Link("ST", "A"), Link("ST", "B"), Link("A", "M"), Link("B", "M"),
             Link("M", "C"), Link("M", "D"), Link("C", "END"), Link("D", "END")]
    c = one(acts, links, "summary-milestone-links")
    assert (c.count, c.denominator, c.value, c.activities) == (4, 8, 50.0, ("M",))


def test_remaining_larger_than_original_duration():
    """Remaining over duration: A has 12 days left of 10 (common practice)."""
    acts = [start(actual_start=MON), task("A", 10, actual_start=MON, remaining=12), task("B", 3), finish()]
    cf = casefile(snap(acts, chain("ST", "A", "B", "END"), dd=date(2026, 1, 12)))
    c = assess_quality(cf, "BL").check("remaining-over-duration")
    assert (c.count, c.denominator, c.activities) == (1, 2, ("A",))


def test_percent_complete_inconsistent_with_actual_dates():
    """Percent vs actuals: 20 % not started, 90 % finished, 100 % open are wrong; 50 % open is right."""
    acts = [
        start(),
        task("A", 5, percent_complete=90, actual_start=MON, actual_finish=date(2026, 1, 9)),
        task("B", 5, percent_complete=100, actual_start=date(2026, 1, 12), remaining=2),
        task("C", 5, percent_complete=50, actual_start=date(2026, 1, 12), remaining=2),
        task("D", 5, percent_complete=20),
        finish(),
    ]
    links = [*chain("ST", "A", "B", "D", "END"), Link("A", "C"), Link("C", "D")]
    cf = casefile(snap(acts, links, dd=date(2026, 1, 15)))
    c = assess_quality(cf, "BL").check("percent-vs-actuals")
    assert (c.count, c.denominator, c.value, c.activities) == (3, 4, 75.0, ("A", "B", "D"))


def test_scorecard_table_and_json_keys():
    """The table has a row per check per snapshot; the JSON keys are the documented contract."""
    reports = assess_casefile(_progressed())
    table = quality_table(reports)
    assert len(table.rows) == 2 * len(reports[0].checks) == 2 * 20
    doc = quality_json(reports)
    assert [s["snapshot"] for s in doc["snapshots"]] == ["BL", "U1"]
    assert set(doc["snapshots"][1]) == {
        "snapshot", "data_date", "baseline", "incomplete_tasks", "passed", "failed", "not_assessed", "checks",
    }
    assert set(doc["snapshots"][1]["checks"][0]) == {
        "number", "key", "title", "count", "denominator", "value", "unit", "comparison", "limit",
        "result", "passed", "source", "activities", "links", "note",
    }


def test_check_quality_command_text_json_and_csv(monkeypatch):
    """`forensic check --quality` prints a scorecard per snapshot, JSON and CSV (issue 4)."""
    import json

    from click.testing import CliRunner

    from forensic.cli import check as cli_check
    from forensic.cli import main

    cf = _progressed()
    monkeypatch.setattr(cli_check, "load", lambda path: cf)  # no casefile folder needed
    runner = CliRunner()
    text = runner.invoke(main, ["check", "case", "--quality"])
    assert text.exit_code == 0, text.output
    assert "Snapshot U1, data date 2026-01-26" in text.output and "missed-tasks" in text.output
    out = runner.invoke(main, ["check", "case", "--quality", "--snapshot", "U1", "--json"])
    doc = json.loads(out.output)
    assert [s["snapshot"] for s in doc["snapshots"]] == ["U1"]
    assert doc["snapshots"][0]["checks"][13]["value"] == 0.6667  # BEI 2 / 3, as above
    csv_out = runner.invoke(main, ["check", "case", "--quality", "--csv"])
    assert csv_out.output.splitlines()[0].startswith("snapshot,number,key,title,count")
    plain = runner.invoke(main, ["check", "case", "--json"])
    assert json.loads(plain.output)["valid"] is True  # without --quality: the old check


def test_link_successors_each_once_in_the_order_of_their_first_link():
    from hypothesis import given, settings
    from hypothesis import strategies as st

    from forensic.analysis.quality.checks import link_successors
    from forensic.core.model import Link

    # Worked by hand: B first (link 1), then C (link 2); B again and C again add nothing.
    links = [Link("A", "B"), Link("A", "C"), Link("C", "B"), Link("B", "C")]
    assert link_successors(links) == ["B", "C"]
    assert link_successors([]) == []

    @settings(max_examples=200, deadline=None)
    @given(st.lists(st.sampled_from("ABCDEF"), max_size=30))
    def same_as_the_first_occurrences(succs):
        got = link_successors([Link("P", s) for s in succs])
        assert got == [s for i, s in enumerate(succs) if s not in succs[:i]]

    same_as_the_first_occurrences()
