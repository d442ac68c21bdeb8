"""Time impact analysis: the trade's facts on hand-built networks, fragnet checks, progress, series."""

from datetime import date, timedelta

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from forensic.calendars import DAY_NAMES
from forensic.engine import schedule
from forensic.errors import FragnetError, LogicLoopError, NotFoundError
from forensic.impact import (
    delay_between,
    float_table,
    impact_json,
    insert_fragnet,
    milestones_table,
    progress_to,
    series_json,
    series_table,
    time_impact,
    time_impacts,
    unimpacted_snapshot,
)
from forensic.model import (
    Activity,
    Calendar,
    Casefile,
    Event,
    Fragnet,
    Link,
    Party,
    Project,
    Snapshot,
    frozen_mapping,
)

SEVEN = Calendar("7d", DAY_NAMES)
FIVE = Calendar("5d", ("mon", "tue", "wed", "thu", "fri"))
MONDAY = date(2026, 1, 5)


def day(n: int) -> date:
    return MONDAY + timedelta(days=n)


def snap(acts, links, sid="U1", data_date=MONDAY, role="update"):
    return Snapshot(sid, data_date, frozen_mapping({a.id: a for a in acts}), tuple(links), role)


def fragnet(fid, acts, links):
    return Fragnet(fid, frozen_mapping({a.id: a for a in acts}), tuple(links))


def casefile(snapshots, events=(), fragnets=(), unit="calendar-days", cal="7d"):
    project = Project("t", cal, completion="END", delay_unit=unit)
    return Casefile(
        project=project,
        calendars=frozen_mapping({"7d": SEVEN, "5d": FIVE}),
        parties=frozen_mapping({"OWN": Party("OWN", "Owner", "owner"), "CON": Party("CON", "Builder", "contractor")}),
        snapshots=tuple(snapshots),
        events=tuple(events),
        fragnets=frozen_mapping({f.id: f for f in fragnets}),
    )


def event(eid, start=MONDAY, fragnet_id=None, activities=(), party="OWN", finish=None):
    return Event(eid, eid, party, "excusable-compensable", start, finish or start, tuple(activities), fragnet_id)


def two_paths(a=5, b=3):
    """A (a days) and B (b days) in parallel into the completion END; B has a - b days of float."""
    acts = [Activity("A", "", a), Activity("B", "", b), Activity("END", "done", 0, kind="closing-milestone")]
    return acts, [Link("A", "END"), Link("B", "END")]


def on_path(fid, pred, d, succ="END"):
    """A fragnet of one d-day activity between ``pred`` and ``succ``."""
    return fragnet(fid, [Activity(f"{fid}-X", "delay", d)], [Link(pred, f"{fid}-X"), Link(f"{fid}-X", succ)])


@pytest.mark.parametrize("d", [1, 2, 3, 4, 7])
def test_fragnet_on_a_path_with_float_delays_completion_by_d_minus_float(d):
    """A d-day fragnet on a path with 2 days of total float moves completion max(0, d - 2) (common practice)."""
    acts, links = two_paths(5, 3)
    cf = casefile([snap(acts, links)], [event("E1", fragnet_id="F1")], [on_path("F1", "B", d)])
    r = time_impact(cf, "E1")
    assert r.impact == max(0, d - 2)  # common practice: float absorbs delay first
    assert r.completion_before == day(4)
    assert r.completion_after == day(4 + max(0, d - 2))
    # The float on B's path is consumed first, up to all of it (common practice).
    consumed = {c.id: c.consumed for c in r.float_consumed}
    assert consumed["B"] == min(d, 2)


@settings(max_examples=40, deadline=None)
@given(st.integers(1, 30), st.integers(0, 20), st.integers(1, 40))
def test_any_fragnet_on_a_parallel_path_delays_by_its_excess_over_float(b, f, d):
    """For any path with total float f, a d-day fragnet on it moves completion max(0, d - f) (common practice)."""
    acts, links = two_paths(b + f, b)
    cf = casefile([snap(acts, links)], [event("E1", fragnet_id="F1")], [on_path("F1", "B", d)])
    assert time_impact(cf, "E1").impact == max(0, d - f)


@pytest.mark.parametrize("d", [1, 4, 10])
def test_fragnet_on_the_critical_path_delays_completion_by_its_duration(d):
    """A d-day fragnet on the critical path moves completion by d calendar days on a 7-day week (common practice)."""
    acts, links = two_paths(5, 3)
    cf = casefile([snap(acts, links)], [event("E1", fragnet_id="F1")], [on_path("F1", "A", d)])
    r = time_impact(cf, "E1")
    assert r.impact == d  # common practice
    assert "F1-X" in r.critical_path and "A" in r.critical_path
    assert r.critical_path[-1] == "END"


def test_two_fragnets_on_parallel_paths_are_not_additive():
    """6 days on the critical path and 8 on a path with 4 float: 6 and 4 alone, 6 together, not 10 (common practice)."""
    acts, links = two_paths(10, 6)
    events = [event("E1", fragnet_id="F1"), event("E2", day(1), fragnet_id="F2")]
    cf = casefile([snap(acts, links)], events, [on_path("F1", "A", 6), on_path("F2", "B", 8)])
    series = time_impacts(cf)
    assert [r.impact for r in series.individual] == [6, 4]  # common practice: 6; 8 - 4 of float
    assert series.cumulative.impact == 6  # A path 16 days, B path 6 + 8 = 14 days (worked by hand)
    assert series.sum_of_individual == 10
    assert series.non_additivity == 4
    # The steps telescope to the cumulative impact (arithmetic).
    assert [s.impact for s in series.steps] == [6, 0]
    assert sum(s.impact for s in series.steps) == series.cumulative.impact


def test_cumulative_equals_all_fragnets_inserted_at_once_into_the_same_update():
    """Inserting fragnets one by one in date order ends where inserting all of them at once does (common practice)."""
    acts = [Activity("A", "", 4), Activity("B", "", 6), Activity("C", "", 3),
            Activity("END", "done", 0, kind="closing-milestone")]
    links = [Link("A", "B"), Link("B", "END"), Link("A", "C"), Link("C", "END")]
    frags = [on_path("F1", "A", 2, "C"), on_path("F2", "C", 5), on_path("F3", "A", 1, "B")]
    events = [event("E3", day(3), fragnet_id="F3"), event("E1", day(1), fragnet_id="F1"),
              event("E2", day(2), fragnet_id="F2")]
    cf = casefile([snap(acts, links)], events, frags)
    series = time_impacts(cf)
    assert [s.event for s in series.steps] == ["E1", "E2", "E3"]  # date order
    # All at once: one fragnet holding every activity and link, scheduled directly.
    whole = fragnet("ALL", [a for f in frags for a in f.activities.values()], [lk for f in frags for lk in f.links])
    at_once, _ = insert_fragnet(cf.snapshots[0], whole)
    direct = schedule(at_once, cf.calendars, cf.project)
    assert series.cumulative.completion_after == direct.completion
    assert series.steps[-1].completion_after == direct.completion
    assert series.cumulative.impact == (direct.completion - series.cumulative.completion_before).days


def test_tie_to_an_unknown_activity_is_refused_naming_it():
    """A fragnet link to an activity in neither the fragnet nor the update is an error naming both ends."""
    acts, links = two_paths()
    bad = fragnet("F1", [Activity("X", "", 2)], [Link("A", "X", line=3), Link("X", "NOPE", line=4)])
    cf = casefile([snap(acts, links)], [event("E1", fragnet_id="F1")], [bad])
    with pytest.raises(FragnetError) as err:
        time_impact(cf, "E1")
    msg = str(err.value)
    assert "'NOPE'" in msg and "X -> NOPE" in msg and "line 4" in msg and "F1" in msg


def test_fragnet_that_closes_a_loop_is_refused_naming_the_loop():
    """A fragnet tied END -> X -> A closes a loop through A -> END; the error names it (Kelley and Walker 1959)."""
    acts, links = two_paths()
    loop = fragnet("F1", [Activity("X", "", 2)], [Link("END", "X"), Link("X", "A")])
    cf = casefile([snap(acts, links)], [event("E1", fragnet_id="F1")], [loop])
    with pytest.raises(LogicLoopError) as err:
        time_impact(cf, "E1")
    assert set(err.value.activities) == {"A", "END", "X"}
    assert "fragnet F1" in str(err.value)


def test_fragnet_activity_already_in_the_update_is_refused():
    """A fragnet adds new activities; an id the update already has is an error naming it."""
    acts, links = two_paths()
    dup = fragnet("F1", [Activity("B", "", 2)], [Link("A", "B")])
    with pytest.raises(FragnetError, match="B"):
        insert_fragnet(snap(acts, links), dup)


def test_unimpacted_schedule_is_the_last_update_on_or_before_the_event():
    """The default unimpacted schedule is the last data date on or before the event's start (AACE RP 52R-06)."""
    acts, links = two_paths()
    snaps = [snap(acts, links, "BL", MONDAY, "baseline"), snap(acts, links, "U1", day(14))]
    cf = casefile(snaps)
    assert unimpacted_snapshot(cf, event("E", day(13))).id == "BL"
    assert unimpacted_snapshot(cf, event("E", day(14))).id == "U1"
    assert unimpacted_snapshot(cf, event("E", day(40))).id == "U1"
    with pytest.raises(NotFoundError, match="--into"):
        unimpacted_snapshot(cf, event("E", day(-1)))


def test_progress_as_planned_to_the_event_keeps_completion_and_splits_work():
    """Progress as planned to day 7: A finished, B in progress with 3 days left, completion unchanged."""
    acts = [Activity("A", "", 5), Activity("B", "", 5), Activity("END", "", 0, kind="closing-milestone")]
    links = [Link("A", "B"), Link("B", "END")]
    cf = casefile([snap(acts, links)])
    s = progress_to(cf.snapshots[0], cf.calendars, cf.project, day(7))
    assert s.data_date == day(7)
    assert (s.activities["A"].actual_start, s.activities["A"].actual_finish) == (day(0), day(4))
    assert s.activities["B"].actual_start == day(5)
    assert s.activities["B"].remaining == 3  # days 7, 8, 9 (worked by hand)
    assert s.activities["END"].actual_finish is None
    # Work that proceeds as planned does not move completion (definition of the step).
    before = schedule(cf.snapshots[0], cf.calendars, cf.project).completion
    assert schedule(s, cf.calendars, cf.project).completion == before == day(9)


def test_progress_to_the_event_makes_a_tie_into_finished_work_ineffective():
    """A fragnet that holds A's start delays completion unless A is already finished at the event's start."""
    acts = [Activity("A", "", 5), Activity("B", "", 5), Activity("END", "", 0, kind="closing-milestone")]
    links = [Link("A", "B"), Link("B", "END")]
    late_info = fragnet("F1", [Activity("X", "late drawings", 3)], [Link("X", "A")])
    cf = casefile([snap(acts, links)], [event("E1", day(6), fragnet_id="F1")], [late_info])
    assert time_impact(cf, "E1").impact == 3  # X (3 days) ahead of the 10-day chain, worked by hand
    r = time_impact(cf, "E1", progress_to_event=True)
    assert r.progressed_to == day(6)
    assert r.impact == 0  # A finished on day 4, before the event (as-planned progress)
    assert any("no effect" in w for w in r.warnings)


def test_event_without_fragnet_adds_its_overlap_to_the_activity_it_names():
    """A 3-day suspension of critical A while it is scheduled delays completion 3 days (AACE RP 29R-03, 3.6)."""
    acts, links = two_paths(5, 3)
    cf = casefile([snap(acts, links)], [event("E1", day(1), activities=["A"], finish=day(3))])
    r = time_impact(cf, "E1")
    assert [(h.activity, h.days) for h in r.hold_ups] == [("A", 3)]
    assert r.impact == 3  # common practice: on the critical path, day for day
    # A suspension that only half overlaps the scheduled work adds the overlap.
    cf = casefile([snap(acts, links)], [event("E1", day(3), activities=["A"], finish=day(9))])
    assert time_impact(cf, "E1").impact == 2  # days 3 and 4 of A's days 0-4 (worked by hand)


def test_milestones_are_reported_before_and_after():
    """Every milestone of the unimpacted schedule is reported with its move (AACE RP 52R-06)."""
    acts = [Activity("A", "", 5), Activity("M1", "key date", 0, kind="closing-milestone"), Activity("B", "", 3),
            Activity("END", "done", 0, kind="closing-milestone")]
    links = [Link("A", "M1"), Link("M1", "B"), Link("B", "END")]
    cf = casefile([snap(acts, links)], [event("E1", fragnet_id="F1")], [on_path("F1", "A", 2, "M1")])
    r = time_impact(cf, "E1")
    assert [(m.id, m.before, m.after, m.impact) for m in r.milestones] == [
        ("M1", day(4), day(6), 2), ("END", day(7), day(9), 2)]  # worked by hand
    table = milestones_table(r)
    assert table.columns == ("id", "name", "before", "after", "impact")
    assert table.rows[0][:2] == ("M1", "key date")


def test_impact_in_working_days_counts_the_default_calendar():
    """On a five-day week, Friday to the next Monday is 1 working day and 3 calendar days (common practice)."""
    fri, mon = date(2026, 1, 9), date(2026, 1, 12)
    assert delay_between(Project("t", "5d", delay_unit="working-days"), {"5d": FIVE}, fri, mon) == 1
    assert delay_between(Project("t", "5d"), {"5d": FIVE}, fri, mon) == 3
    assert delay_between(Project("t", "5d", delay_unit="working-days"), {"5d": FIVE}, mon, fri) == -1
    acts = [Activity("A", "", 5, calendar="5d"), Activity("END", "", 0, kind="closing-milestone", calendar="5d")]
    frag = fragnet("F1", [Activity("X", "", 2, calendar="5d")], [Link("A", "X"), Link("X", "END")])
    cf = casefile([snap(acts, [Link("A", "END")])], [event("E1", fragnet_id="F1")], [frag],
                  unit="working-days", cal="5d")
    r = time_impact(cf, "E1")
    assert (r.completion_before, r.completion_after) == (fri, date(2026, 1, 13))
    assert r.impact == 2 and r.unit == "working days"  # 2-day fragnet on the only path


def test_json_keys_are_the_contract():
    """The single-event JSON has exactly the keys issue 6 spells out; the series JSON holds the steps."""
    acts, links = two_paths(10, 6)
    events = [event("E1", fragnet_id="F1"), event("E2", day(1), fragnet_id="F2")]
    cf = casefile([snap(acts, links)], events, [on_path("F1", "A", 6), on_path("F2", "B", 8)])
    r = time_impact(cf, "E1")
    obj = impact_json(r)
    assert list(obj) == ["event", "into", "completion_before", "completion_after", "impact", "milestones",
                         "critical_path"]
    assert obj["milestones"][0] == {"id": "END", "name": "done", "before": day(9), "after": day(15), "impact": 6}
    series = time_impacts(cf, into="U1")
    sj = series_json(series)
    assert sj["non_additivity"] == 4 and len(sj["individual"]) == 2
    assert [s["impact"] for s in sj["cumulative"]["steps"]] == [6, 0]
    assert series_table(series).rows[1][3:5] == (4, 0)
    assert float_table(r).columns[-1] == "consumed"


def test_event_may_name_its_fragnet_by_folder_path_or_name():
    """events.csv may give the fragnet as "fragnets/F1" or "F1"; a missing one is an error naming it."""
    acts, links = two_paths(5, 3)
    frags = [on_path("F1", "A", 2)]
    for name in ("F1", "fragnets/F1"):
        cf = casefile([snap(acts, links)], [event("E1", fragnet_id=name)], frags)
        assert time_impact(cf, "E1").impact == 2  # 2 days on the critical path (common practice)
    cf = casefile([snap(acts, links)], [event("E1", fragnet_id="F9")], frags)
    with pytest.raises(NotFoundError, match="F9"):
        time_impact(cf, "E1")
