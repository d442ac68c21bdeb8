"""Recovery (time-cost trade-off): brute force, a published crashing example, properties, the CLI."""

import itertools
import json
from dataclasses import replace
from datetime import date, timedelta

import pytest
from click.testing import CliRunner
from hypothesis import given, settings
from hypothesis import strategies as st

from forensic.analysis.recovery import (
    apply_plan,
    recover,
    recovery_curve_table,
    recovery_json,
    recovery_plan_table,
)
from forensic.cli import main
from forensic.core.calendars import DAY_NAMES, add_workdays, workdays_between
from forensic.core.engine import schedule
from forensic.core.errors import RecoveryError
from forensic.core.model import (
    Activity,
    Calendar,
    Casefile,
    Link,
    Project,
    Snapshot,
    frozen_mapping,
)

SEVEN = Calendar("7d", DAY_NAMES)
FIVE = Calendar("5d", ("mon", "tue", "wed", "thu", "fri"))
CALS = {"7d": SEVEN, "5d": FIVE}
MONDAY = date(2026, 1, 5)


def casefile(acts, links, cal="7d", completion=None, data_date=MONDAY, **project):
    snap = Snapshot("S", data_date, frozen_mapping({a.id: a for a in acts}), tuple(links), role="baseline")
    return Casefile(Project("t", cal, completion=completion, **project), frozen_mapping(CALS), frozen_mapping(), (snap,))


# Hillier and Lieberman, Introduction to Operations Research, the house-construction
# project and its crashing data (from memory): normal/crash weeks and normal/crash
# costs in thousands. Predecessors as in tests/test_engine.py (HOUSE_PREDS).
HOUSE = dict(
    A=(2, 1, 180, 280), B=(4, 2, 320, 420), C=(10, 7, 620, 860), D=(6, 4, 260, 340),
    E=(4, 3, 410, 570), F=(5, 3, 180, 260), G=(7, 4, 900, 1020), H=(9, 6, 200, 380),
    I=(7, 5, 210, 270), J=(8, 6, 430, 490), K=(4, 3, 160, 200), L=(5, 3, 250, 350),
    M=(2, 1, 100, 200), N=(6, 3, 330, 510),
)
HOUSE_PREDS = dict(B="A", C="B", D="C", E="C", F="E", G="D", H="EG", I="C", J="FI", K="J", L="J", M="H", N="KL")


def house():
    acts = [
        Activity(k, f"house {k}", n, crash_days=n - c, crash_cost=(cc - nc) / (n - c))
        for k, (n, c, nc, cc) in HOUSE.items()
    ]
    acts.append(Activity("END", "house complete", 0, kind="closing-milestone"))
    links = [Link(p, s) for s, ps in HOUSE_PREDS.items() for p in ps]
    links += [Link("M", "END"), Link("N", "END")]
    # One "week" is one working day of a 7-day calendar.
    return casefile(acts, links, completion="END")


def test_house_project_cheapest_plan_to_finish_in_40_weeks():
    """44 -> 40 weeks: shorten F and J by 2 weeks each for 140 extra (Hillier & Lieberman, from memory)."""
    r = recover(house(), "S", days=4)
    assert (r.current_completion - MONDAY).days + 1 == 44  # the textbook's normal duration
    assert (r.plan.completion - MONDAY).days + 1 == 40
    assert {s.id: s.days for s in r.plan.shortenings} == {"F": 2, "J": 2}
    assert r.plan.cost == pytest.approx(140)
    assert r.plan.working_days_recovered == 4


def test_house_project_by_target_date_matches_by_days():
    """A target date 40 weeks out gives the same plan as 4 days to recover (same example, from memory)."""
    by_date = recover(house(), "S", target=MONDAY + timedelta(days=39), curve=False)
    assert {s.id: s.days for s in by_date.plan.shortenings} == {"F": 2, "J": 2}
    assert by_date.curve == ()


def test_house_project_fewest_activities_objective():
    """Fewest activities for 4 weeks is two (no one activity can give 4); F+J is the cheapest pair (worked out here)."""
    r = recover(house(), "S", days=4, objective="count")
    assert len(r.plan.shortenings) == 2
    assert {s.id: s.days for s in r.plan.shortenings} == {"F": 2, "J": 2}


def test_house_project_curve_starts_with_the_cheapest_critical_activity():
    """One week back costs 30 (J, the cheapest per week on the critical path; worked out from the example's data)."""
    r = recover(house(), "S", days=1)
    first = r.curve[0].plan
    assert r.curve[0].working_days == 1
    assert {s.id: s.days for s in first.shortenings} == {"J": 1}
    assert first.cost == pytest.approx(30)
    assert r.curve[3].plan.cost == pytest.approx(140)


def test_house_project_least_cost_curve():
    """The textbook's marginal cost analysis, 44 to 40 weeks: J, J, F, F for 30, 60, 100, 140 (Hillier & Lieberman, from memory).

    Worked by hand from the data above: the critical path A-B-C-E-F-J-L-N is 44
    weeks, A-B-C-E-F-J-K-N 43, A-B-C-I-J-L-N 42. J (30 a week, on all three)
    gives 43 then 42; then both the L and K paths are critical and F (40, on
    both, not on the I path, which is at 40) gives 41 and 40.
    """
    r = recover(house(), "S", days=4)
    assert [pt.plan.cost for pt in r.curve[:4]] == pytest.approx([30, 60, 100, 140])
    assert [{s.id: s.days for s in pt.plan.shortenings} for pt in r.curve[:4]] == [
        {"J": 1}, {"J": 2}, {"F": 1, "J": 2}, {"F": 2, "J": 2},
    ]


# Render, Stair and Hanna, Quantitative Analysis for Management, the General Foundry
# project (from memory): normal/crash weeks and normal/crash costs; predecessors.
FOUNDRY = dict(
    A=(2, 1, 22000, 22750), B=(3, 1, 30000, 34000), C=(2, 1, 26000, 27000), D=(4, 3, 48000, 49000),
    E=(4, 2, 56000, 58000), F=(3, 2, 30000, 30500), G=(5, 2, 80000, 86000), H=(2, 1, 16000, 19000),
)
FOUNDRY_PREDS = dict(C="A", D="B", E="C", F="C", G="DE", H="FG")


def test_general_foundry_least_cost_curve():
    """15 weeks down to 7: the whole least-cost curve (data from memory; curve worked by hand here).

    Paths: P1 A-C-E-G-H 15 weeks, P2 B-D-G-H 14, P3 A-C-F-H 9. Per week: on P1
    only A 750 (1), C 1000 (1), E 1000 (2); on P2 only D 1000 (1), B 2000 (2);
    on both G 2000 (3), H 3000 (1). With g weeks off G/H, P1 needs 15 - w - g
    from its own list and P2 14 - w - g from its own (w = weeks wanted off):
    14: A 750. 13: A + G, or A + C + D: 2750. 12: A + C + D + G, or A + 2G: 4750.
    11: 6750. 10: A + C + D + 3G: 8750. 9: 11750. 8: 14750. 7 (every P1 and P2
    shortening, P3 then 6): 17750, the earliest; F is never needed.
    The textbook's 14-week answer is A by one week for 750.
    """
    acts = [
        Activity(k, f"foundry {k}", n, crash_days=n - c, crash_cost=(cc - nc) / (n - c))
        for k, (n, c, nc, cc) in FOUNDRY.items()
    ]
    acts.append(Activity("END", "foundry complete", 0, kind="closing-milestone"))
    links = [Link(p, s) for s, ps in FOUNDRY_PREDS.items() for p in ps]
    links.append(Link("H", "END"))
    cf = casefile(acts, links, completion="END")
    r = recover(cf, "S", days=1)
    assert (r.current_completion - MONDAY).days + 1 == 15
    assert (r.earliest_completion - MONDAY).days + 1 == 7
    assert [pt.plan.cost for pt in r.curve] == pytest.approx([750, 2750, 4750, 6750, 8750, 11750, 14750, 17750])
    assert {s.id: s.days for s in r.plan.shortenings} == {"A": 1}
    assert all("F" not in {s.id for s in pt.plan.shortenings} for pt in r.curve)


def test_target_beyond_the_most_recoverable_names_the_earliest_completion():
    """A target before the earliest achievable completion is an error that gives that date (common practice)."""
    cf = house()
    earliest = recover(cf, "S", days=1).earliest_completion
    with pytest.raises(RecoveryError, match=earliest.isoformat()) as info:
        recover(cf, "S", target=earliest - timedelta(days=1))
    assert info.value.earliest == earliest


def test_target_already_met_needs_no_shortening():
    """A target on or after the current completion costs nothing (definition of the trade-off)."""
    cf = house()
    r = recover(cf, "S", target=MONDAY + timedelta(days=60), curve=False)
    assert r.plan.shortenings == () and r.plan.cost == 0
    assert r.plan.completion == r.current_completion


def test_two_parallel_critical_paths_both_need_a_cut():
    """Two parallel critical paths: one day back needs a cut on each (Kelley 1961: every critical path shortens)."""
    acts = [
        Activity("A", "", 10, crash_days=3, crash_cost=10),
        Activity("B", "", 10, crash_days=3, crash_cost=12),
        Activity("END", "", 0, kind="closing-milestone"),
    ]
    cf = casefile(acts, [Link("A", "END"), Link("B", "END")], completion="END")
    r = recover(cf, "S", days=1)
    assert {s.id: s.days for s in r.plan.shortenings} == {"A": 1, "B": 1}
    assert r.plan.cost == pytest.approx(22)


@pytest.mark.parametrize(("shared_cost", "expected"), [(15, {"S": 1}), (25, {"A": 1, "B": 1})])
def test_two_parallel_paths_with_a_shared_activity(shared_cost, expected):
    """A shared activity cuts both paths at once when cheaper than a cut on each (worked out here)."""
    acts = [
        Activity("S", "", 5, crash_days=2, crash_cost=shared_cost),
        Activity("A", "", 10, crash_days=3, crash_cost=10),
        Activity("B", "", 10, crash_days=3, crash_cost=10),
        Activity("END", "", 0, kind="closing-milestone"),
    ]
    links = [Link("S", "A"), Link("S", "B"), Link("A", "END"), Link("B", "END")]
    r = recover(casefile(acts, links, completion="END"), "S", days=1)
    assert {s.id: s.days for s in r.plan.shortenings} == expected


def test_shortening_that_would_delay_the_completion_is_never_chosen():
    """FF into B and SS out of it: shortening B pushes its start and C later (Wiest 1981, from memory), so B stays."""
    acts = [
        Activity("A", "", 10),
        Activity("B", "", 10, crash_days=5, crash_cost=1),
        Activity("C", "", 10, crash_days=2, crash_cost=50),
        Activity("END", "", 0, kind="closing-milestone"),
    ]
    links = [Link("A", "B", "FF"), Link("B", "C", "SS"), Link("C", "END")]
    cf = casefile(acts, links, completion="END")
    r = recover(cf, "S", days=2)
    assert {s.id: s.days for s in r.plan.shortenings} == {"C": 2}
    # The engine agrees that shortening B alone makes the completion later.
    later = schedule(apply_plan(cf.snapshots[0], {"B": 2}), CALS, cf.project).completion
    assert later > r.current_completion
    assert r.max_working_days == 2


def test_in_progress_work_shortens_its_remaining_duration_only():
    """Finished work is never shortened; in-progress work loses remaining days (issue 7; casefile format, Progress)."""
    acts = [
        Activity("A", "", 5, actual_start=MONDAY - timedelta(days=10), actual_finish=MONDAY - timedelta(days=6),
                 crash_days=3, crash_cost=1),
        Activity("B", "", 10, actual_start=MONDAY - timedelta(days=5), remaining=6, crash_days=4, crash_cost=5),
        Activity("C", "", 4, crash_days=2, crash_cost=8),
        Activity("END", "", 0, kind="closing-milestone"),
    ]
    links = [Link("A", "B"), Link("B", "C"), Link("C", "END")]
    cf = casefile(acts, links, completion="END")
    r = recover(cf, "S", days=6)
    got = {s.id: (s.status, s.days, s.remaining_after) for s in r.plan.shortenings}
    assert got == {"B": ("in-progress", 4, 2), "C": ("not-started", 2, 2)}
    assert r.max_working_days == 6
    with pytest.raises(RecoveryError):
        recover(cf, "S", days=7)


def test_a_task_keeps_at_least_one_day_and_milestones_are_not_shortened():
    """A crash limit above the duration leaves one working day; milestones carry no crash (definition used here)."""
    acts = [
        Activity("A", "", 3, crash_days=10, crash_cost=1),
        Activity("M", "", 0, kind="closing-milestone", crash_days=5, crash_cost=0),
    ]
    r = recover(casefile(acts, [Link("A", "M")], completion="M"), "S", days=2)
    assert [(s.id, s.days, s.limit, s.remaining_after) for s in r.plan.shortenings] == [("A", 2, 2, 1)]


def test_zero_cost_days_are_not_spent_for_nothing():
    """Free shortening off the critical path is left alone (fewest days as the last tie-breaker; common practice)."""
    acts = [
        Activity("A", "", 10, crash_days=2, crash_cost=3),
        Activity("B", "", 4, crash_days=2, crash_cost=0),
    ]
    r = recover(casefile(acts, [Link("B", "A", "SS")]), "S", days=1)
    assert {s.id: s.days for s in r.plan.shortenings} == {"A": 1}


def test_crash_days_without_a_cost_are_not_used_and_warned():
    """An activity with crash_days but no crash_cost cannot be priced (issue 7: cost per day is required)."""
    acts = [Activity("A", "", 10, crash_days=2), Activity("B", "", 10, crash_days=1, crash_cost=4)]
    r = recover(casefile(acts, [Link("A", "B")]), "S", days=1)
    assert r.max_working_days == 1
    assert [s.id for s in r.plan.shortenings] == ["B"]
    assert any("A" in w and "crash_cost" in w for w in r.warnings)


def test_days_in_calendar_days_on_a_five_day_week():
    """delay_unit calendar-days: 3 days back from a Monday finish means the Friday before (casefile format)."""
    acts = [Activity("A", "", 6, crash_days=3, crash_cost=1)]  # Mon 5 Jan to Mon 12 Jan on 5d
    cf = casefile(acts, [], cal="5d")
    r = recover(cf, "S", days=3, curve=False)
    assert r.current_completion == date(2026, 1, 12)
    assert r.plan.completion == date(2026, 1, 9)
    assert (r.plan.working_days_recovered, r.plan.calendar_days_recovered) == (1, 3)
    wd = recover(casefile(acts, [], cal="5d", delay_unit="working-days"), "S", days=3, curve=False)
    assert wd.plan.completion == date(2026, 1, 7)


# --------------------------------------------------------------------------- brute force

@st.composite
def crash_networks(draw, progress=True):
    n = draw(st.integers(2, 6))
    durations = draw(st.lists(st.integers(1, 6), min_size=n, max_size=n))
    crash = draw(st.lists(st.sampled_from([0, 1, 2, 2]), min_size=n, max_size=n))
    costs = draw(st.lists(st.integers(0, 20), min_size=n, max_size=n))
    # Keep the number of combinations small enough to try them all.
    crashable = [i for i in range(n) if crash[i]][:4]
    edges = draw(
        st.sets(
            st.tuples(st.integers(0, n - 1), st.integers(0, n - 1), st.sampled_from(["FS", "SS", "FF", "SF"]),
                      st.integers(-2, 3)).filter(lambda e: e[0] < e[1]),
            max_size=2 * n,
        )
    )
    state = draw(st.sampled_from(["none", "finished", "in-progress"])) if progress else "none"
    acts = []
    for i in range(n):
        kw = {}
        if i in crashable:
            kw = dict(crash_days=crash[i], crash_cost=costs[i])
        if i == 0 and state == "finished":
            kw.update(actual_start=MONDAY - timedelta(days=20), actual_finish=MONDAY - timedelta(days=20 - durations[i]))
        elif i == 0 and state == "in-progress":
            kw.update(actual_start=MONDAY - timedelta(days=3), remaining=durations[i])
        acts.append(Activity(f"A{i}", "", durations[i] + (3 if state == "in-progress" and i == 0 else 0), **kw))
    links = []
    seen = set()
    for p, s, typ, lag in sorted(edges):
        if (p, s) not in seen:
            seen.add((p, s))
            links.append(Link(f"A{p}", f"A{s}", typ, lag))
    named = draw(st.booleans())
    if named:
        acts.append(Activity("END", "", 0, kind="closing-milestone"))
        links += [Link(f"A{i}", "END") for i in range(n)]
    cal = draw(st.sampled_from(["7d", "5d"]))
    logic = draw(st.sampled_from(["retained", "override"]))
    return casefile(acts, links, cal=cal, completion="END" if named else None, progress_logic=logic)


def brute_force(cf):
    """Every combination of whole-day shortenings, rescheduled by the engine: {plan: (completion, cost)}."""
    snap = cf.snapshots[0]
    options = []
    for a in snap.activities.values():
        if a.crash_days and not a.is_finished and not a.is_milestone:
            # Shorten by 0 .. crash_days, keeping at least one day of remaining work.
            top = min(a.crash_days, a.remaining_duration - 1)
            options.append([(a.id, x, x * a.crash_cost) for x in range(top + 1)])
    out = {}
    for combo in itertools.product(*options):
        plan = {aid: x for aid, x, _ in combo if x}
        done = schedule(apply_plan(snap, plan), cf.calendars, cf.project).completion
        out[tuple(sorted(plan.items()))] = (done, sum(c for _, _, c in combo))
    return out


@settings(max_examples=60, deadline=None)
@given(crash_networks())
def test_least_cost_equals_brute_force_on_random_networks(cf):
    """Every point of the curve costs exactly the cheapest plan found by trying every combination (brute force)."""
    plans = brute_force(cf)
    current = schedule(cf.snapshots[0], cf.calendars, cf.project).completion
    cal = cf.calendars[cf.project.default_calendar]
    earliest = min(done for done, _ in plans.values())
    try:
        r = recover(cf, "S", target=current - timedelta(days=1) if earliest < current else current)
    except RecoveryError as exc:
        assert earliest >= current  # nothing can be recovered, so the error is right
        assert exc.earliest == current
        return
    assert r.earliest_completion == earliest
    assert r.max_working_days == len(r.curve)
    for pt in r.curve:
        target = add_workdays(cal, current, -pt.working_days)
        cheapest = min(cost for done, cost in plans.values() if done <= target)
        assert pt.plan.cost == pytest.approx(cheapest)
        assert pt.plan.completion <= target
        key = tuple(sorted((s.id, s.days) for s in pt.plan.shortenings))
        assert plans[key][0] == pt.plan.completion  # the reported completion is the engine's


@settings(max_examples=40, deadline=None)
@given(crash_networks(), st.sampled_from(["cost", "count"]))
def test_plans_stay_within_limits_and_cost_rises_with_the_days(cf, objective):
    """Cost never falls as the target tightens; no plan passes a limit or touches finished work (issue 7)."""
    snap = cf.snapshots[0]
    try:
        r = recover(cf, "S", days=1, objective=objective)
    except RecoveryError:
        return
    costs = [pt.plan.cost for pt in r.curve]
    assert costs == sorted(costs)
    for plan in [r.plan, *(pt.plan for pt in r.curve)]:
        for s in plan.shortenings:
            a = snap.activities[s.id]
            assert not a.is_finished and not a.is_milestone
            assert 1 <= s.days <= a.crash_days
            assert s.remaining_after == a.remaining_duration - s.days >= 1
    if objective == "count":
        cheapest = recover(cf, "S", days=1, curve=False).plan
        assert len(r.plan.shortenings) <= len(cheapest.shortenings)
        assert r.plan.cost >= cheapest.cost - 1e-9


@settings(max_examples=30, deadline=None)
@given(crash_networks(progress=False), st.lists(st.sampled_from(["7d", "5d"]), min_size=7, max_size=7))
def test_mixed_calendars_plans_are_confirmed_by_the_engine(cf, cals):
    """Across calendars every plan reported meets its target in the engine, with the completion it reports."""
    snap = cf.snapshots[0]
    acts = [replace(a, calendar=cals[k % 7]) for k, a in enumerate(snap.activities.values())]
    cf = casefile(acts, snap.links, cal="5d", completion=cf.project.completion)
    try:
        r = recover(cf, "S", days=1)
    except RecoveryError:
        return
    for plan in [r.plan, *(pt.plan for pt in r.curve)]:
        shortened = apply_plan(cf.snapshots[0], {s.id: s.days for s in plan.shortenings})
        assert schedule(shortened, cf.calendars, cf.project).completion == plan.completion <= plan.target


# --------------------------------------------------------------------------- tables, JSON, CLI

def test_tables_and_json_carry_the_plan_and_the_curve():
    """The plan table, the curve table and the JSON hold the same figures (one number, one place)."""
    r = recover(house(), "S", days=4)
    plan = recovery_plan_table(r)
    assert [row["id"] for row in plan.records()] == ["F", "J"]
    curve = recovery_curve_table(r)
    assert len(curve.rows) == r.max_working_days
    doc = recovery_json(r)
    assert doc["plan"]["cost"] == 140 and doc["plan"]["activities_shortened"] == 2
    assert [c["working_days"] for c in doc["curve"]] == list(range(1, r.max_working_days + 1))
    assert set(doc) == {
        "snapshot", "data_date", "objective", "completion_activity", "current_completion",
        "earliest_completion", "max_working_days", "plan", "curve", "warnings",
        "working_days_calendar", "time_limit", "proven_least_cost",
    }
    assert doc["proven_least_cost"] is True and doc["plan"]["proven_least_cost"] is True


def test_cli_recover_prints_json(monkeypatch):
    """`forensic recover --days 4 --json` prints the plan (CliRunner, as sqlite-utils tests its CLI)."""
    monkeypatch.setattr("forensic.cli.recover.load_lazily", lambda path: house())
    monkeypatch.setattr("forensic.cli._common.load", lambda path, **_kw: house())
    res = CliRunner().invoke(main, ["recover", "case", "--snapshot", "S", "--days", "4", "--json"])
    assert res.exit_code == 0, res.output
    doc = json.loads(res.output)
    assert {s["id"]: s["days"] for s in doc["plan"]["shortenings"]} == {"F": 2, "J": 2}


def test_cli_recover_text_and_unreachable_target(monkeypatch):
    """Readable output names the cost; an unreachable target is `Error: ...` with exit 1 (sqlite-utils pattern)."""
    monkeypatch.setattr("forensic.cli.recover.load_lazily", lambda path: house())
    monkeypatch.setattr("forensic.cli._common.load", lambda path, **_kw: house())
    runner = CliRunner()
    res = runner.invoke(main, ["recover", "case", "--snapshot", "S", "--days", "4"])
    assert res.exit_code == 0, res.output
    assert "140" in res.output and "2026-02-13" in res.output
    res = runner.invoke(main, ["recover", "case", "--snapshot", "S", "--days", "40"])
    assert res.exit_code == 1
    assert res.output.startswith("Error: ") and "earliest achievable completion" in res.output
    res = runner.invoke(main, ["recover", "case", "--snapshot", "S"])
    assert res.exit_code == 2  # neither --target nor --days


def test_cli_recover_help_has_an_example():
    """Every command's help shows an example (RULES.md)."""
    res = CliRunner().invoke(main, ["recover", "--help"])
    assert res.exit_code == 0 and "Example: forensic recover" in res.output


def test_days_recovered_count_on_the_completion_calendar():
    """A 7-day task in a 5-day project: working days back are days of the completion's calendar (issue 14, item 4).

    Worked by hand: A runs Mon 5 Jan to Sun 18 Jan on its 7-day calendar and is
    the completion (none is named). One working day back on that calendar is
    Sat 17 Jan, met by shortening A by one day; the exact program needs one
    solve. (The old scaled program counted on the 5-day default, Sun 18 as Fri 16,
    and asked for Thu 15: three days off A.)
    """
    acts = [Activity("A", "", 14, calendar="7d", crash_days=7, crash_cost=1)]
    cf = casefile(acts, [], cal="5d", delay_unit="working-days")
    r = recover(cf, "S", days=1, curve=False)
    assert r.working_days_calendar == "7d"
    assert r.plan.target == date(2026, 1, 17)
    assert [(s.id, s.days) for s in r.plan.shortenings] == [("A", 1)]
    assert r.plan.completion == date(2026, 1, 17)
    assert r.plan.solves == 1 and r.plan.proven
    assert recovery_json(r)["working_days_calendar"] == "7d"


# --------------------------------------------------------------------------- several calendars, exact (issue 14)

# Three calendars with different work weeks, holidays and an extra working day, so that
# links between them pass weekends and holidays at different places (invented, common practice).
MULTI = {
    "7d": Calendar("7d", DAY_NAMES, holidays=(date(2026, 1, 10),)),
    "5d": Calendar("5d", DAY_NAMES[:5], holidays=(date(2026, 1, 7), date(2026, 1, 15))),
    "4d": Calendar("4d", DAY_NAMES[:4], holidays=(date(2026, 1, 13),), extra_workdays=(date(2026, 1, 9),)),
}


@st.composite
def multi_calendar_networks(draw):
    """4-6 crashable activities on 2-3 calendars, all link types with lags, progress, optional constraint."""
    n = draw(st.integers(4, 7))
    n_crash = draw(st.integers(4, min(6, n)))
    cal_ids = draw(st.lists(st.sampled_from(sorted(MULTI)), min_size=2, max_size=3, unique=True))
    durations = draw(st.lists(st.integers(2, 6), min_size=n, max_size=n))
    crash = draw(st.lists(st.sampled_from([1, 2]), min_size=n, max_size=n))
    costs = draw(st.lists(st.integers(0, 30), min_size=n, max_size=n))
    cals = draw(st.lists(st.sampled_from(cal_ids), min_size=n, max_size=n))
    edges = draw(
        st.sets(
            st.tuples(st.integers(0, n - 1), st.integers(0, n - 1), st.sampled_from(["FS", "FS", "SS", "FF", "SF"]),
                      st.integers(-1, 3)).filter(lambda e: e[0] < e[1]),
            min_size=n - 1, max_size=2 * n,
        )
    )
    state = draw(st.sampled_from(["none", "finished", "in-progress"]))
    constrained = draw(st.sampled_from([None, "start-from", "finish-from"]))
    crashable = set(range(n - n_crash, n))
    acts = []
    for i in range(n):
        kw = {}
        if i in crashable:
            kw = dict(crash_days=crash[i], crash_cost=costs[i])
        if i == 0 and state == "finished":
            kw.update(actual_start=MONDAY - timedelta(days=20), actual_finish=MONDAY - timedelta(days=18))
        elif i == 0 and state == "in-progress":
            kw.update(actual_start=MONDAY - timedelta(days=3), remaining=durations[i])
        if i == n - 1 and constrained:
            kw.update(constraint=constrained, constraint_date=MONDAY + timedelta(days=draw(st.integers(0, 12))))
        acts.append(Activity(f"A{i}", "", durations[i] + (3 if state == "in-progress" and i == 0 else 0),
                             calendar=cals[i], **kw))
    links, seen = [], set()
    for p, s, typ, lag in sorted(edges):
        if (p, s) not in seen:
            seen.add((p, s))
            links.append(Link(f"A{p}", f"A{s}", typ, lag))
    named = draw(st.booleans())
    if named:
        acts.append(Activity("END", "", 0, kind="closing-milestone", calendar=draw(st.sampled_from(cal_ids))))
        links += [Link(f"A{i}", "END") for i in range(n)]
    snap = Snapshot("S", MONDAY, frozen_mapping({a.id: a for a in acts}), tuple(links), role="baseline")
    project = Project("t", draw(st.sampled_from(cal_ids)), completion="END" if named else None,
                      progress_logic=draw(st.sampled_from(["retained", "override"])),
                      delay_unit=draw(st.sampled_from(["calendar-days", "working-days"])))
    return Casefile(project, frozen_mapping(MULTI), frozen_mapping(), (snap,))


def _completion_calendar(cf, result):
    a = cf.snapshots[0].activities[result.completion_id]
    return cf.calendars[a.calendar or cf.project.default_calendar]


@settings(max_examples=40, deadline=None)
@given(multi_calendar_networks(), st.integers(0, 40))
def test_several_calendars_least_cost_equals_brute_force(cf, pick):
    """On 2-3 calendars every curve point and plan is the cheapest whose engine completion meets its target.

    The reference is brute force: every combination of whole-day shortenings
    rescheduled by the engine (Kelley and Walker 1959 define the least-cost
    schedule for each completion time; the engine is the judge of time).
    The curve's targets are working days of the completion activity's calendar.
    """
    plans = brute_force(cf)
    current = schedule(cf.snapshots[0], cf.calendars, cf.project)
    earliest = min(done for done, _ in plans.values())
    if earliest >= current.completion:
        with pytest.raises(RecoveryError):
            recover(cf, "S", target=current.completion - timedelta(days=1))
        return
    r = recover(cf, "S", target=earliest)
    assert r.proven and r.plan.proven
    assert r.earliest_completion == earliest
    comp_cal = _completion_calendar(cf, r)
    assert r.working_days_calendar == comp_cal.id
    # The most that can be recovered: working days of that calendar from the earliest to the current completion.
    assert r.max_working_days == workdays_between(comp_cal, earliest, current.completion)
    assert r.max_working_days == len(r.curve)
    costs = []
    for pt in r.curve:
        target = add_workdays(comp_cal, current.completion, -pt.working_days)
        assert pt.plan.target == target
        cheapest = min(cost for done, cost in plans.values() if done <= target)
        assert pt.plan.cost == pytest.approx(cheapest)
        key = tuple(sorted((s.id, s.days) for s in pt.plan.shortenings))
        assert plans[key][0] == pt.plan.completion <= target  # the engine's completion, meeting the target
        costs.append(pt.plan.cost)
    assert costs == sorted(costs)  # never cheaper as the days grow
    # Any target date between the earliest and the current completion, working day or not.
    span = (current.completion - earliest).days
    target = earliest + timedelta(days=pick % (span + 1))
    one = recover(cf, "S", target=target, curve=False)
    assert one.plan.cost == pytest.approx(min(cost for done, cost in plans.values() if done <= target))
    assert one.plan.completion <= target


def test_several_calendars_hand_worked_across_a_holiday():
    """A 5-day task feeding a 7-day task across a holiday: either shortening buys the same day (worked by hand).

    A (5-day week, 5 days) runs Mon 5 to Fri 9 Jan; B (7-day week with Sat 10 a
    holiday, 3 days, FS) starts on the first of its working days on or after
    Sat 10, Sun 11, and runs Sun 11 to Tue 13. Shortening B by one day (cost 10)
    gives Mon 12; shortening A by one day (cost 4) lets B start Fri 9 and run
    Fri 9, Sun 11, Mon 12: also Mon 12. Both: Sun 11. So one working day back
    (Mon 12 on B's calendar, the completion's) costs 4, two (Sun 11) cost 14,
    and the earliest is Sun 11.
    """
    seven = Calendar("7h", DAY_NAMES, holidays=(date(2026, 1, 10),))
    acts = [
        Activity("A", "", 5, calendar="5d", crash_days=1, crash_cost=4),
        Activity("B", "", 3, calendar="7h", crash_days=1, crash_cost=10),
    ]
    snap = Snapshot("S", MONDAY, frozen_mapping({a.id: a for a in acts}), (Link("A", "B"),), role="baseline")
    cals = frozen_mapping({"5d": FIVE, "7h": seven})
    cf = Casefile(Project("t", "5d", delay_unit="working-days"), cals, frozen_mapping(), (snap,))
    r = recover(cf, "S", days=1)
    assert r.current_completion == date(2026, 1, 13)
    assert r.working_days_calendar == "7h"
    assert [(pt.working_days, pt.plan.completion, pt.plan.cost) for pt in r.curve] == [
        (1, date(2026, 1, 12), 4), (2, date(2026, 1, 11), 14),
    ]
    assert r.earliest_completion == date(2026, 1, 11)
    assert [(s.id, s.days) for s in r.plan.shortenings] == [("A", 1)]


# --------------------------------------------------------------------------- time limit and hostile options (issue 22)

def test_time_limit_reached_reports_the_best_plan_found_not_proven(monkeypatch):
    """A time limit too short for any solve: the best plan found (here every shortening) is shown, not proven.

    Every plan is still the engine's: it meets the target, only its cost is not proven least.
    """
    monkeypatch.setattr("forensic.cli.recover.load_lazily", lambda path: house())
    monkeypatch.setattr("forensic.cli._common.load", lambda path, **_kw: house())
    runner = CliRunner()
    res = runner.invoke(main, ["recover", "case", "--snapshot", "S", "--days", "4", "--time-limit", "1e-9"])
    assert res.exit_code == 0, res.output
    assert "Not proven least-cost" in res.output and "time limit of 1e-09 s" in res.output
    res = runner.invoke(main, ["recover", "case", "--snapshot", "S", "--days", "4", "--time-limit", "1e-9", "--json"])
    doc = json.loads(res.output)
    assert doc["proven_least_cost"] is False and doc["plan"]["proven_least_cost"] is False
    assert doc["time_limit"] == 1e-9
    assert doc["plan"]["completion"] <= doc["plan"]["target"]
    costs = [pt["cost"] for pt in doc["curve"]]
    assert costs == sorted(costs)  # still never cheaper as the days grow
    proven = json.loads(runner.invoke(main, ["recover", "case", "--snapshot", "S", "--days", "4", "--json"]).output)
    assert proven["proven_least_cost"] is True and proven["time_limit"] == 60.0  # the documented default
    assert doc["plan"]["cost"] >= proven["plan"]["cost"]


@pytest.mark.parametrize(
    "args, code, words",
    [
        (["--days", "1e9"], 2, "Invalid value for '--days'"),
        (["--days", "-3"], 2, "Invalid value for '--days'"),
        (["--days", "abc"], 2, "Invalid value for '--days'"),
        (["--days", "1000000000"], 1, "before the data date"),
        (["--days", "9" * 40], 1, "before the data date"),
        (["--target", "0001-01-01"], 1, "earliest achievable completion"),
        (["--target", "2026-13-40"], 2, "Invalid value for '--target'"),
        (["--days", "2", "--time-limit", "nan"], 1, "time limit must be a number of seconds"),
        (["--days", "2", "--time-limit", "inf"], 1, "time limit must be a number of seconds"),
        (["--days", "2", "--time-limit", "1e400"], 1, "time limit must be a number of seconds"),
        (["--days", "2", "--time-limit", "0"], 1, "time limit must be a number of seconds"),
        (["--days", "2", "--time-limit", "-5"], 1, "time limit must be a number of seconds"),
        (["--days", "2", "--time-limit", "soon"], 2, "Invalid value for '--time-limit'"),
    ],
)
def test_hostile_option_values_are_named_refusals(monkeypatch, args, code, words):
    """Hostile values give `Error:` naming the option or the reason, exit 1 (or 2 for click's usage errors), no traceback."""
    monkeypatch.setattr("forensic.cli.recover.load_lazily", lambda path: house())
    monkeypatch.setattr("forensic.cli._common.load", lambda path, **_kw: house())
    res = CliRunner().invoke(main, ["recover", "case", "--snapshot", "S", *args])
    assert res.exit_code == code, res.output
    assert "Error: " in res.output and words in res.output
    assert "internal error" not in res.output and "Traceback" not in res.output
    assert not isinstance(res.exception, Exception) or isinstance(res.exception, SystemExit)


def test_recover_stdout_holds_only_the_json_even_when_the_limit_cuts_a_solve():
    """Through a real process: stdout is the JSON alone (solver output kept off it), whatever the limit cuts."""
    import subprocess
    import sys
    from pathlib import Path

    root = Path(__file__).resolve().parents[1]
    out = subprocess.run(
        [sys.executable, "-m", "forensic", "recover", str(root / "casefiles" / "riverside"), "--snapshot", "U10",
         "--days", "20", "--time-limit", "0.4", "--json"],
        capture_output=True, text=True, cwd=root, env={"PYTHONPATH": str(root), "PATH": "/usr/bin:/bin"}, timeout=120,
    )
    assert out.returncode == 0, out.stderr
    doc = json.loads(out.stdout)
    assert isinstance(doc["proven_least_cost"], bool)
    assert doc["plan"]["completion"] <= doc["plan"]["target"]


def test_library_refuses_hostile_days_and_limits_for_report_and_export():
    """`report`/`export --recover-days` call recover() with the default limit: huge days or bad limits are RecoveryError."""
    import inspect

    from forensic.analysis.recovery import DEFAULT_TIME_LIMIT

    assert inspect.signature(recover).parameters["time_limit"].default == DEFAULT_TIME_LIMIT == 60.0
    with pytest.raises(RecoveryError, match="before the data date"):
        recover(house(), "S", days=10**30)
    for bad in (float("nan"), float("inf"), 0.0, -1.0, 10.0**9):
        with pytest.raises(RecoveryError, match="time limit"):
            recover(house(), "S", days=1, time_limit=bad)
