"""The vectorised engine against the scalar reference coding of the same rules.

The reference (tests/reference_engine.py) walks the network link by link in
plain Python; the engine works level by level on numpy arrays. On random
networks with all four link types, leads and lags, three calendars with
holidays, constraints, finished and in-progress work (retained and
override), the two must agree on every date, float and driving link.
"""

from dataclasses import astuple
from datetime import date, timedelta

from hypothesis import given, settings
from hypothesis import strategies as st

from forensic.core.engine import schedule
from forensic.core.model import (
    CONSTRAINT_KINDS,
    Activity,
    Calendar,
    Link,
    Project,
    Snapshot,
    frozen_mapping,
)

from .reference_engine import schedule as reference_schedule

CALS = {
    "5d": Calendar("5d", ("mon", "tue", "wed", "thu", "fri"), (date(2026, 4, 3), date(2026, 4, 6), date(2026, 5, 1))),
    "6d": Calendar("6d", ("mon", "tue", "wed", "thu", "fri", "sat"), (date(2026, 4, 6),)),
    "7d": Calendar("7d", ("mon", "tue", "wed", "thu", "fri", "sat", "sun")),
}
START = date(2026, 3, 2)
KINDS = ("task", "task", "task", "opening-milestone", "closing-milestone")


@st.composite
def networks(draw, started=False):
    """A random snapshot; with ``started`` every activity of the first half has
    progress and every link from one of them is start-type (SS or SF)."""
    n = draw(st.integers(2, 18))
    data_date = START + timedelta(days=draw(st.integers(0, 30)))
    acts = []
    for i in range(n):
        kind = draw(st.sampled_from(KINDS))
        dur = 0 if kind != "task" else draw(st.integers(0, 12))
        cal = draw(st.sampled_from(("5d", "6d", "7d")))
        constraint = cdate = None
        if draw(st.integers(0, 5)) == 0:
            constraint = draw(st.sampled_from(CONSTRAINT_KINDS))
            cdate = START + timedelta(days=draw(st.integers(0, 60)))
        progress = (draw(st.integers(1, 3)) if started else draw(st.integers(0, 3))) if i < n // 2 else 0
        a_start = a_finish = None
        remaining = None
        span = (data_date - START).days
        if progress and span >= 2:
            a_start = START + timedelta(days=draw(st.integers(0, span - 2)))
            if progress == 1 or kind != "task":
                a_finish = a_start + timedelta(days=draw(st.integers(0, (data_date - a_start).days - 1)))
                remaining = 0
                if kind != "task":
                    a_start = a_finish
            else:
                remaining = draw(st.integers(0, max(dur, 1)))
        acts.append(
            Activity(
                f"A{i}", "", dur, kind=kind, calendar=cal, constraint=constraint, constraint_date=cdate,
                actual_start=a_start, actual_finish=a_finish, remaining=remaining,
            )
        )
    pairs = draw(st.sets(st.tuples(st.integers(0, n - 1), st.integers(0, n - 1)).filter(lambda e: e[0] < e[1]), max_size=3 * n))
    links = []
    for p, s in sorted(pairs):
        from_progress = started and acts[p].actual_start is not None
        typ = draw(st.sampled_from(("SS", "SF") if from_progress else ("FS", "SS", "FF", "SF")))
        lag = draw(st.integers(-3, 5))
        links.append(Link(f"A{p}", f"A{s}", typ, lag))
    return Snapshot("R", data_date, frozen_mapping({a.id: a for a in acts}), tuple(links))


@settings(max_examples=250, deadline=None)
@given(networks(), st.sampled_from(("retained", "override")), st.sampled_from(("5d", "7d")))
def test_vectorised_engine_matches_scalar_reference(snap, logic, default):
    """Every date, float, critical flag and driving link agrees with the reference coding."""
    project = Project("ref", default)
    got = schedule(snap, CALS, project, progress_logic=logic)
    want = reference_schedule(snap, CALS, project, progress_logic=logic)
    assert got.completion_id == want.completion_id
    assert got.completion == want.completion
    for aid in snap.activities:
        g, w = got[aid], want[aid]
        assert astuple(g) == astuple(w), aid
    assert got.longest_path == want.longest_path


@settings(max_examples=150, deadline=None)
@given(networks(started=True), st.sampled_from(("retained", "override")))
def test_reference_agrees_on_start_type_links_from_started_work(snap, logic):
    """Progress (actual starts and finishes, remaining durations) with SS/SF links out of
    started work: the rule of tests/test_engine_rules.py (such a link is satisfied by
    the actual start) is coded in both engines, and they agree on every field."""
    project = Project("ref", "7d")
    got = schedule(snap, CALS, project, progress_logic=logic)
    want = reference_schedule(snap, CALS, project, progress_logic=logic)
    assert got.completion == want.completion
    for aid in snap.activities:
        assert astuple(got[aid]) == astuple(want[aid]), aid
    assert got.longest_path == want.longest_path
