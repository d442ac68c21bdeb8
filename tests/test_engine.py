"""The CPM engine: a published worked example, networkx as a reference, invariants, progress."""

from datetime import date, timedelta

import networkx as nx
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from forensic.core.calendars import DAY_NAMES
from forensic.core.engine import schedule
from forensic.core.errors import LogicLoopError
from forensic.core.model import Activity, Calendar, Link, Project, Snapshot, frozen_mapping

SEVEN = Calendar("7d", DAY_NAMES)
FIVE = Calendar("5d", ("mon", "tue", "wed", "thu", "fri"))
CALS = {"7d": SEVEN, "5d": FIVE}
MONDAY = date(2026, 1, 5)


def make_snapshot(acts, links, data_date=MONDAY, sid="S"):
    return Snapshot(sid, data_date, frozen_mapping({a.id: a for a in acts}), tuple(links))


def run(acts, links, cal="7d", data_date=MONDAY, **kw):
    project = Project("t", cal, completion=kw.pop("completion", None))
    return schedule(make_snapshot(acts, links, data_date), CALS, project, **kw)


# Hillier and Lieberman, Introduction to Operations Research, the house-construction
# project (from memory): durations in weeks, 44-week duration, critical path A-B-C-E-F-J-L-N.
HOUSE_DURATIONS = dict(A=2, B=4, C=10, D=6, E=4, F=5, G=7, H=9, I=7, J=8, K=4, L=5, M=2, N=6)
HOUSE_PREDS = dict(B="A", C="B", D="C", E="C", F="E", G="D", H="EG", I="C", J="FI", K="J", L="J", M="H", N="KL")


def house(extra_links=()):
    acts = [Activity(k, f"house {k}", v) for k, v in HOUSE_DURATIONS.items()]
    acts.append(Activity("END", "house complete", 0, kind="closing-milestone"))
    links = [Link(p, s) for s, ps in HOUSE_PREDS.items() for p in ps]
    links += [Link("M", "END"), Link("N", "END"), *extra_links]
    return acts, links


def test_house_construction_project_duration_and_critical_path():
    """The textbook house project takes 44 weeks on the path A-B-C-E-F-J-L-N (Hillier & Lieberman, from memory)."""
    acts, links = house()
    # One "week" = one working day of a 7-day calendar, so weeks are counted as days.
    r = run(acts, links, completion="END")
    assert (r.completion - MONDAY).days + 1 == 44
    assert [a for a in r.longest_path if a != "END"] == list("ABCEFJLN")
    assert {a for a in r.order if r[a].critical and a != "END"} == set("ABCEFJLN")
    # Slack from the same worked example (from memory): D, G, H, M 4 weeks; I 2; K 1.
    assert {k: r[k].total_float for k in "DGHIKM"} == dict(D=4, G=4, H=4, I=2, K=1, M=4)


@st.composite
def random_dags(draw):
    n = draw(st.integers(2, 30))
    durations = draw(st.lists(st.integers(1, 15), min_size=n, max_size=n))
    edges = draw(
        st.sets(st.tuples(st.integers(0, n - 1), st.integers(0, n - 1)).filter(lambda e: e[0] < e[1]), max_size=3 * n)
    )
    return durations, sorted(edges)


@settings(max_examples=120, deadline=None)
@given(random_dags())
def test_project_duration_equals_networkx_longest_path(dag):
    """FS links on a 7-day calendar: the duration equals networkx.dag_longest_path's weight (reference library)."""
    durations, edges = dag
    acts = [Activity(f"A{i}", "", d) for i, d in enumerate(durations)]
    links = [Link(f"A{p}", f"A{s}") for p, s in edges]
    r = run(acts, links)
    # Node-weighted longest path: put each activity's duration on its outgoing edge to a sink.
    g = nx.DiGraph()
    for i, d in enumerate(durations):
        g.add_edge(f"A{i}", "SINK", w=d)
    for p, s in edges:
        g.add_edge(f"A{p}", f"A{s}", w=durations[p])
    path = nx.dag_longest_path(g, weight="w")
    expected = nx.path_weight(g, path, weight="w")
    assert (r.completion - MONDAY).days + 1 == expected
    for a in path[:-1]:
        assert r[a].total_float == 0
    _check_invariants(r, acts, links)


def _check_invariants(r, acts, links):
    driving = {a.id: set(r[a.id].driving_predecessors) for a in acts}
    for a in acts:
        x = r[a.id]
        assert x.early_start <= x.late_start
        assert x.early_finish <= x.late_finish
        assert x.total_float >= 0  # no constraint applies
        assert x.free_float <= x.total_float
        assert x.free_float >= 0
    # The longest path is contiguous through driving links: every member but the
    # completion drives another member.
    members = set(r.longest_path)
    assert r.completion_id in members
    for a in members - {r.completion_id}:
        assert any(a in driving[b] for b in members)


def test_relationship_types_with_lags_and_leads_on_one_calendar():
    """SS+2, FF+1, SF and an FS lead, worked by hand on a 7-day calendar (common practice PDM rules)."""
    acts = [Activity("A", "", 5), Activity("B", "", 3), Activity("C", "", 2), Activity("D", "", 4), Activity("E", "", 2)]
    links = [Link("A", "B", "SS", 2), Link("A", "C", "FF", 1), Link("A", "D", "FS", -2), Link("B", "E", "SF", 0)]
    r = run(acts, links)
    day = lambda n: MONDAY + timedelta(days=n)  # noqa: E731
    # A: days 0-4. B starts 2 days after A starts: days 2-4.
    assert (r["B"].early_start, r["B"].early_finish) == (day(2), day(4))
    # C finishes 1 day after A finishes (day 5), so it runs days 4-5.
    assert (r["C"].early_start, r["C"].early_finish) == (day(4), day(5))
    # D may start 2 days before A's finish boundary (day 5): day 3, runs days 3-6.
    assert (r["D"].early_start, r["D"].early_finish) == (day(3), day(6))
    # E must finish no earlier than B starts (day 2 boundary): data date binds, days 0-1.
    assert (r["E"].early_start, r["E"].early_finish) == (day(0), day(1))


def test_links_across_calendars_pass_the_day_after_the_finish():
    """A 5-day task ending Friday lets a 7-day successor start Saturday (casefile format, time and dates)."""
    acts = [
        Activity("A", "", 5, calendar="5d"),
        Activity("CURE", "", 3, calendar="7d"),
        Activity("B", "", 1, calendar="5d"),
        Activity("M", "", 0, kind="closing-milestone", calendar="5d"),
    ]
    links = [Link("A", "CURE"), Link("CURE", "B"), Link("A", "M")]
    r = run(acts, links, cal="5d")
    assert r["A"].early_finish == date(2026, 1, 9)  # Friday
    assert r["CURE"].early_start == date(2026, 1, 10)  # Saturday on the 7-day calendar
    assert r["CURE"].early_finish == date(2026, 1, 12)
    assert r["B"].early_start == date(2026, 1, 13)
    # A finish milestone is dated on the last working day before it is reached.
    assert r["M"].early_finish == date(2026, 1, 9)
    # Backward pass mirrors: the driving chain has zero float.
    assert [r[a].total_float for a in ("A", "CURE", "B")] == [0, 0, 0]


def test_finish_on_or_before_that_cannot_be_met_gives_negative_float():
    """A 10-day chain with a finish-by 7 days after the start shows -3 days of float (common practice)."""
    acts = [
        Activity("A", "", 4),
        Activity("B", "", 6, constraint="finish-by", constraint_date=MONDAY + timedelta(days=6)),
    ]
    r = run(acts, [Link("A", "B")])
    assert r["B"].early_finish == MONDAY + timedelta(days=9)
    assert r["B"].total_float == -3
    assert r["A"].total_float == -3
    assert r["A"].critical


def test_start_on_or_after_pushes_early_dates_only():
    """A start-from date later than logic allows delays the start and leaves late dates alone."""
    acts = [Activity("A", "", 3, constraint="start-from", constraint_date=MONDAY + timedelta(days=5)), Activity("B", "", 10)]
    r = run(acts, [])
    assert r["A"].early_start == MONDAY + timedelta(days=5)
    assert r["A"].total_float == 2  # project ends day 9 (B), A ends day 7


def test_loop_is_an_error_naming_its_activities():
    """A loop A -> B -> C -> A is refused and the error names all three (Kelley and Walker assume an acyclic net)."""
    acts = [Activity(x, "", 1) for x in "ABCD"]
    links = [Link("D", "A"), Link("A", "B"), Link("B", "C"), Link("C", "A")]
    with pytest.raises(LogicLoopError) as err:
        run(acts, links)
    assert set(err.value.activities) == {"A", "B", "C"}
    assert "A" in str(err.value) and "loop" in str(err.value)


def _progress_case():
    # A not started (5 days). B started out of sequence before A finished; 3 days remain.
    dd = date(2026, 2, 2)
    acts = [
        Activity("A", "", 5),
        Activity("B", "", 6, actual_start=date(2026, 1, 26), remaining=3),
        Activity("P", "", 4, actual_start=date(2026, 1, 5), actual_finish=date(2026, 1, 8)),
    ]
    links = [Link("P", "A"), Link("A", "B")]
    return acts, links, dd


def test_retained_logic_holds_remaining_work_after_its_predecessor():
    """Retained logic: the out-of-sequence remaining work follows the predecessor's finish (AACE RP 29R-03)."""
    acts, links, dd = _progress_case()
    r = run(acts, links, data_date=dd, progress_logic="retained")
    assert r["P"].early_start == date(2026, 1, 5) and r["P"].early_finish == date(2026, 1, 8)
    assert r["P"].total_float is None
    assert r["A"].early_start == dd
    assert r["B"].early_start == date(2026, 1, 26)  # the actual start is kept
    assert r["B"].early_finish == dd + timedelta(days=5 + 3 - 1)


def test_override_lets_remaining_work_run_from_the_data_date():
    """Progress override: the remaining work ignores its unfinished predecessor (AACE RP 29R-03)."""
    acts, links, dd = _progress_case()
    r = run(acts, links, data_date=dd, progress_logic="override")
    assert r["B"].early_finish == dd + timedelta(days=2)
    assert r["A"].early_start == dd


@settings(max_examples=60, deadline=None)
@given(random_dags(), st.integers(0, 40))
def test_nothing_remaining_is_scheduled_before_the_data_date(dag, shift):
    """With finished work at the front of the network, remaining work never starts before the data date."""
    durations, edges = dag
    dd = MONDAY + timedelta(days=shift)
    acts = []
    for i, d in enumerate(durations):
        if i == 0 and shift > d:
            acts.append(Activity("A0", "", d, actual_start=MONDAY, actual_finish=MONDAY + timedelta(days=d - 1)))
        else:
            acts.append(Activity(f"A{i}", "", d))
    links = [Link(f"A{p}", f"A{s}") for p, s in edges]
    r = run(acts, links, data_date=dd)
    for a in acts:
        x = r[a.id]
        if a.actual_finish is not None:
            assert (x.early_start, x.early_finish) == (a.actual_start, a.actual_finish)
        else:
            assert x.early_start >= dd


def test_cached_compile_gives_the_same_schedule_as_a_fresh_one():
    """A variant sharing links and most records with a scheduled snapshot schedules as if compiled afresh."""
    from dataclasses import replace

    from forensic.casefile.synthetic import generate_casefile
    from forensic.core.network import clear_caches

    cf = generate_casefile(1200, updates=2, seed=9)
    snap = cf.snapshots[-1]
    schedule(snap, cf.calendars, cf.project)  # fills the caches
    acts = dict(snap.activities)
    changed = [a for a in acts.values() if a.kind == "task" and a.actual_start is None][:40]
    for a in changed:
        acts[a.id] = replace(a, remaining=a.duration + 7, calendar="7d")
    variant = replace(snap, activities=frozen_mapping(acts))
    cached = schedule(variant, cf.calendars, cf.project)
    clear_caches()
    fresh = schedule(variant, cf.calendars, cf.project)
    assert cached.completion == fresh.completion
    assert dict(cached.activities) == dict(fresh.activities)  # reference: the uncached compile
    assert cached.longest_path == fresh.longest_path
