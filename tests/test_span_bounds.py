"""The loader's lower bound on the span of a schedule (forensic.casefile.records.span_bounds, check_span).

The bound must never exceed the engine's dates, or a genuine casefile could
be refused: on random networks (the engine reference test's strategy: all
four link types, leads and lags, three calendars with holidays, constraints,
finished and in-progress work, both progress logics) every activity's
finish bound is at most the calendar days from the data date through its
early finish. On a seven-day calendar with no progress, no constraints
and no leads the bound is exact: it equals the longest path of the start
and finish events, computed by networkx (dag_longest_path_length) as the
outside reference.
"""

from __future__ import annotations

import random
from datetime import date

import networkx as nx
from hypothesis import given, settings
from hypothesis import strategies as st

from forensic.casefile.records import MAX_SPAN_DAYS, min_calendar_days, span_bounds
from forensic.core.engine import schedule
from forensic.core.model import Activity, Calendar, Link, Project, Snapshot, frozen_mapping

from .test_engine_reference import CALS, networks


def test_min_calendar_days_worked_by_hand():
    """Five-day week: 6 working days take at least 8 days (Monday to Monday), 11 at least 15, 10 at least 10."""
    five = Calendar("5d", ("mon", "tue", "wed", "thu", "fri"))
    assert min_calendar_days(6, five) == 8  # 7 * (5 // 5) + 1
    assert min_calendar_days(11, five) == 15  # 7 * (10 // 5) + 1
    assert min_calendar_days(10, five) == 10  # max(10, 7 * (9 // 5) + 1 = 8); truly 12
    assert min_calendar_days(5, five) == 5
    assert min_calendar_days(0, five) == 0
    # One working day a week: 36,500 of them at least 7 * 36,499 + 1 days.
    assert min_calendar_days(36_500, Calendar("1", ("sun",))) == 255_494
    # Extra working dates may each add one: 3 extra dates on a one-day week, 4 working days: 4 days at least.
    assert min_calendar_days(4, Calendar("x", ("sun",), (), (date(2026, 1, 1), date(2026, 1, 2), date(2026, 1, 3)))) == 4


@settings(max_examples=300, deadline=None)
@given(networks(), st.sampled_from(("retained", "override")), st.sampled_from(("5d", "7d")))
def test_the_bound_never_exceeds_the_engines_early_finish(snap, logic, default):
    project = Project("P", default, progress_logic=logic)
    result = schedule(snap, CALS, project)
    bounds = span_bounds(snap.activities, list(snap.links), CALS, default, skip_under=None)
    finish, _span, work, _cal, _over = bounds
    for i, a in enumerate(snap.activities.values()):
        if work[i] < 0:
            continue  # finished: no bound
        through = (result[a.id].early_finish - snap.data_date).days + 1
        assert finish[i] <= through, (a, int(finish[i]), through)


def test_the_bound_is_the_longest_path_on_a_seven_day_calendar():
    """No holidays, no progress, no leads: the bound is exact (networkx longest path of the event graph)."""
    seven = {"7d": Calendar("7d", ("mon", "tue", "wed", "thu", "fri", "sat", "sun"))}
    rng = random.Random(22)
    for _trial in range(40):
        n = rng.randint(2, 25)
        acts = [Activity(f"A{i}", "", rng.randint(1, 3000), calendar="7d") for i in range(n)]
        links = []
        for p in range(n):
            for s in range(p + 1, n):
                if rng.random() < 0.15:
                    links.append(Link(f"A{p}", f"A{s}", rng.choice(("FS", "SS", "FF", "SF")), rng.randint(1, 400)))
        g = nx.DiGraph()
        for i, a in enumerate(acts):
            g.add_edge("origin", ("S", i), w=0)
            g.add_edge(("S", i), ("F", i), w=a.duration)
        for k in links:
            p, s = int(k.pred[1:]), int(k.succ[1:])
            tail = ("S", p) if k.type in ("SS", "SF") else ("F", p)
            head = ("S", s) if k.type in ("FS", "SS") else ("F", s)
            if g.has_edge(tail, head):
                g[tail][head]["w"] = max(g[tail][head]["w"], k.lag)
            else:
                g.add_edge(tail, head, w=k.lag)
        snap = Snapshot("R", date(2026, 3, 2), frozen_mapping({a.id: a for a in acts}), tuple(links))
        finish, *_ = span_bounds(snap.activities, links, seven, "7d", skip_under=None)
        assert int(finish.max()) == nx.dag_longest_path_length(g, weight="w")


def test_check_span_skips_a_network_that_fits_end_to_end():
    """Every duration and lag added up under the ceiling: nothing to compute (None)."""
    cal = {"7d": Calendar("7d", ("mon", "tue", "wed", "thu", "fri", "sat", "sun"))}
    acts = {"A": Activity("A", "", 10, calendar="7d"), "B": Activity("B", "", MAX_SPAN_DAYS - 20, calendar="7d")}
    assert span_bounds(acts, [Link("A", "B", "FS", 5)], cal, "7d") is None
