"""Time impact analysis: the trade's facts on hand-built networks, fragnet checks, progress, series."""

from datetime import date, timedelta

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from forensic.analysis.impact import (
    delay_between,
    insert_fragnet,
    progress_to,
    time_impact,
    time_impacts,
    unimpacted_snapshot,
)
from forensic.analysis.impact_tables import (
    float_table,
    impact_json,
    milestones_table,
    series_json,
    series_table,
)
from forensic.core.calendars import DAY_NAMES
from forensic.core.engine import schedule
from forensic.core.errors import FragnetError, LogicLoopError, NotFoundError
from forensic.core.model import (
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


def overrun_case(planned=5, took=8, start=1, finish=3, days_lost=()):
    """A (critical, planned ``planned`` days from day 0) took ``took`` in the record; an event hits A.

    BL (day 0) has A and B (3 days) in parallel into END; U2 (day 30) has A
    finished on days 0 .. took - 1 and B on days 0-2.
    """
    acts, links = two_paths(planned, 3)
    bl = snap(acts, links, "BL", MONDAY, "baseline")
    u2 = snap([Activity("A", "", planned, actual_start=day(0), actual_finish=day(took - 1)),
               Activity("B", "", 3, actual_start=day(0), actual_finish=day(2)),
               Activity("END", "done", 0, kind="closing-milestone", actual_start=day(took - 1),
                        actual_finish=day(took - 1))], links, "U2", day(30))
    ev = Event("E1", "E1", "CON", "non-excusable", day(start), day(finish), ("A",), days_lost=tuple(days_lost))
    return casefile([bl, u2], [ev])


def test_event_without_fragnet_adds_the_overrun_inside_its_period_not_the_whole_period():
    """A planned 5 took 8; an event on days 1-3 cost it 3, on days 3-9 min(3, 5 inside) = 3 (issue 17).

    Days 1-3 are 3 working days of A's days 0-7 inside the event, the overrun
    8 - 5 = 3: min(3, 3) = 3, and A on the critical path moves completion 3
    days (AACE RP 29R-03, 3.6; common practice: day for day on the critical
    path). Days 3-9 hold days 3-7 of A (5): still min(3, 5) = 3, where a
    total stoppage would have added every overlap day.
    """
    r = time_impact(overrun_case(), "E1")
    assert r.into == "BL" and r.represented_as == "estimated"
    assert [(h.activity, h.days) for h in r.hold_ups] == [("A", 3)]
    assert r.impact == 3
    r = time_impact(overrun_case(start=3, finish=9), "E1")
    assert r.days == {"A": 3} and r.impact == 3
    # An event of one day inside the period: never more than its 1 working day.
    r = time_impact(overrun_case(start=2, finish=2), "E1")
    assert r.days == {"A": 1} and r.impact == 1


def test_labour_shortage_worked_example_impact_is_4_not_10():
    """A planned 10 took 14 (Jan 1-14) in a 14-day labour shortage: the time impact is 4 (issue 17, worked example).

    Into BL (data date Jan 1, the last on or before the event): A 10 days,
    END Jan 10. The estimate is A's overrun 14 - 10 = 4, all 14 working days
    inside the event, min(4, 14) = 4; A becomes 14 days and END moves to Jan
    14: 4 days, as the windows give. The old reading added the whole overlap
    of the event with A's scheduled Jan 1-10, 10 days (AACE RP 52R-06: the
    fragnet models what the event cost, not its whole duration).
    """
    jan1 = date(2026, 1, 1)
    bl = snap([Activity("A", "", 10), Activity("END", "", 0, kind="closing-milestone")], [Link("A", "END")],
              "BL", jan1, "baseline")
    u1 = snap([Activity("A", "", 10, actual_start=jan1, actual_finish=date(2026, 1, 14)),
               Activity("END", "", 0, kind="closing-milestone", actual_finish=date(2026, 1, 14))],
              [Link("A", "END")], "U1", date(2026, 2, 2))
    ev = Event("EV", "labour shortage", "CON", "non-excusable", jan1, date(2026, 1, 14), ("A",))
    r = time_impact(casefile([bl, u1], [ev]), "EV")
    assert (r.into, r.completion_before, r.completion_after) == ("BL", date(2026, 1, 10), date(2026, 1, 14))
    assert r.impact == 4 and r.days == {"A": 4} and r.represented_as == "estimated"


def test_days_lost_beats_the_estimate_and_a_fragnet_keeps_its_figure():
    """A stated days_lost of 2 is inserted instead of the record's 3 (casefile format 2); a fragnet is as before."""
    r = time_impact(overrun_case(days_lost=[("A", 2)]), "E1")
    assert (r.represented_as, r.days, r.impact) == ("days-lost", {"A": 2}, 2)  # critical A, day for day
    acts, links = two_paths(5, 3)
    cf = casefile([snap(acts, links)], [event("E1", fragnet_id="F1")], [on_path("F1", "A", 4)])
    r = time_impact(cf, "E1")
    assert (r.represented_as, r.days, r.impact) == ("fragnet", {"F1-X": 4}, 4)  # as in the fragnet tests above


def test_event_with_nothing_to_estimate_is_not_represented_and_says_why():
    """An event dated after A's work in the record has no estimate: it adds nothing and every output says so."""
    r = time_impact(overrun_case(start=12, finish=14), "E1")
    assert r.represented_as == "not-represented" and r.impact == 0 and r.hold_ups == ()
    assert any("not represented" in w and "not worked inside the event's period" in w for w in r.warnings)
    obj = impact_json(r)
    assert obj["represented_as"] == "not-represented" and obj["days"] == {}
    assert "not worked inside" in obj["events"][0]["why"]


def test_a_time_impact_that_shortens_the_schedule_is_warned():
    """Never below the as-planned: an after-schedule earlier than the unimpacted one is warned, naming the event."""
    from forensic.analysis.impact import HoldUp, _compare

    acts, links = two_paths(5, 3)
    before = snap(acts, links)
    shorter = snap([Activity("A", "", 2), *acts[1:]], links)
    cf = casefile([before])
    r = _compare(cf, "E1", before, None, before, shorter, (), (HoldUp("E1", "A", 0),), ())
    assert r.impact == -2  # END day 4 (A 5 days) -> day 2 (A 2 days, B 3 days holds it there), worked by hand
    assert any("E1" in w and "shortens the schedule" in w and "A" in w for w in r.warnings)


@settings(max_examples=60, deadline=None)
@given(st.integers(1, 15), st.integers(1, 25), st.integers(0, 30), st.integers(0, 30), st.integers(0, 20),
       st.sampled_from(["7d", "5d"]))
def test_estimate_never_exceeds_the_event_s_working_days_or_the_overrun(planned, took, s0, e0, n, cal_id):
    """The estimate is min(overrun, working days of the work inside the event), so never more than either (issue 17).

    Checked against a plain count of the working dates (Python's weekday()
    for the five-day week, every day for the seven-day one).
    """
    from forensic.analysis.impact import estimate_days
    from forensic.core.calendars import add_workdays, next_workday

    cal = SEVEN if cal_id == "7d" else FIVE
    start = next_workday(cal, MONDAY + timedelta(days=s0))
    finish = add_workdays(cal, start, took - 1)
    bl = snap([Activity("A", "", planned, calendar=cal_id)], [], "BL", MONDAY, "baseline")
    u1 = snap([Activity("A", "", planned, calendar=cal_id, actual_start=start, actual_finish=finish)], [], "U1",
              finish + timedelta(days=1))
    ev = Event("E", "E", "CON", "non-excusable", MONDAY + timedelta(days=e0), MONDAY + timedelta(days=e0 + n), ("A",))
    cf = casefile([bl, u1], [ev])
    rep = estimate_days(cf, ev)

    def working(d):
        return cal_id == "7d" or d.weekday() < 5

    span = [start + timedelta(days=i) for i in range((finish - start).days + 1)]
    assert sum(working(d) for d in span) == took  # the record's duration (add_workdays round trip)
    inside = sum(working(d) and ev.start <= d <= ev.finish for d in span)
    event_days = sum(working(ev.start + timedelta(days=i)) for i in range(n + 1))
    overrun = max(0, took - planned)
    if inside == 0:
        assert rep.how == "not-represented" and rep.days == ()
    else:
        assert rep.how == "estimated"
        (aid, got), = rep.days
        assert got == min(overrun, inside)
        assert got <= event_days and got <= overrun


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
                         "critical_path", "represented_as", "days", "events", "warnings"]
    assert (obj["represented_as"], obj["days"]) == ("fragnet", {"F1-X": 6})
    assert obj["milestones"][0] == {"id": "END", "name": "done", "before": day(9), "after": day(15), "impact": 6}
    series = time_impacts(cf, into="U1")
    sj = series_json(series)
    assert sj["non_additivity"] == 4 and len(sj["individual"]) == 2
    assert [s["impact"] for s in sj["cumulative"]["steps"]] == [6, 0]
    assert series_table(series).rows[1][3:5] == (4, 0)
    assert float_table(r).columns[-2:] == ("consumed", "gained")


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


# --- the demo's events without a fragnet (casefiles/riverside; issue 17) --------------------

def test_demo_ev05_ev01_ev11_cost_what_the_record_shows():
    """EV05, EV01 and EV11 of the demo, worked by hand from its snapshots (five-day week, demo holidays).

    EV05 (curtain wall labour, 22 Oct 2026 - 7 Jan 2027) into U07 (5 Oct),
    where each elevation is planned at 20 days (the re-plan of EV11). The
    record (U10) has N 22 Oct - 26 Nov = 2 + 5 + 5 + 5 + 5 + 4 = 26 working
    days, all inside the event: min(26 - 20, 26) = 6; E 24 -> 4, S 24 -> 4,
    W 22 -> 2. Inserted on the curtain wall chain they move completion 2
    days (21 -> 23 July 2027), which is what the windows give EV05 (+2), not
    the +28 of a total stoppage (20 days an elevation).

    EV01 (facade review, 20 Apr - 8 May 2026) into U01: PRE-FAC-REV planned
    10, built 8 Apr - 12 May = 3 + 5 + 5 + 5 + 4 + 2 = 24 working days (4 May
    a holiday), 5 + 5 + 4 = 14 of them inside the event: min(24 - 10, 14) =
    14, the real excess, not the 2 of the scheduled overlap. U01 gives the
    path 51 days of float, so the time impact stays 0.

    EV11 (re-plan, 21 Sep - 2 Oct 2026): none of its activities was worked in
    that period (the curtain walls start 22 Oct, SYS-COM-ME is forecast from
    27 May 2027), so nothing can be estimated: not represented, 0 inserted.
    """
    from forensic.casefile.demo import demo_source
    from forensic.casefile.reading import load_casefile

    cf = load_casefile(demo_source())
    r = time_impact(cf, "EV05")
    assert (r.into, r.represented_as) == ("U07", "estimated")
    assert r.days == {"LIB-ENV-CW-N": 6, "LIB-ENV-CW-E": 4, "LIB-ENV-CW-S": 4, "LIB-ENV-CW-W": 2}
    assert (r.completion_before, r.completion_after, r.impact) == (date(2027, 7, 21), date(2027, 7, 23), 2)
    r = time_impact(cf, "EV01")
    assert (r.into, r.represented_as, r.days, r.impact) == ("U01", "estimated", {"PRE-FAC-REV": 14}, 0)
    r = time_impact(cf, "EV11")
    assert (r.represented_as, r.days, r.impact, r.hold_ups) == ("not-represented", {}, 0, ())
    assert "was not worked inside the event's period" in r.represented[0].why


# --- the contemporaneous series (AACE RP 29R-03, MIP 3.7) ------------------------------------

def series_case():
    """BL (day 0): A 10 days then B 10, END day 19. U1 (day 14): A built days 0-11, B to start day 14, END day 23.

    E1 (contractor, days 0-11) hit A: A took 12 against 10 planned, all
    inside E1, estimated 2. E2 (owner, day 14) has fragnet F2: a 3-day X
    ahead of B. E3 (owner, day 16) states 1 day lost on B.
    """
    acts = [Activity("A", "", 10), Activity("B", "", 10), Activity("END", "", 0, kind="closing-milestone")]
    links = [Link("A", "B"), Link("B", "END")]
    bl = snap(acts, links, "BL", MONDAY, "baseline")
    u1 = snap([Activity("A", "", 10, actual_start=day(0), actual_finish=day(11)), *acts[1:]], links, "U1", day(14))
    events = [Event("E1", "slow gang", "CON", "non-excusable", day(0), day(11), ("A",)),
              Event("E2", "late design", "OWN", "excusable-compensable", day(14), day(14), (), "F2"),
              Event("E3", "access", "OWN", "excusable-compensable", day(16), day(16), ("B",), days_lost=(("B", 1),))]
    frag = fragnet("F2", [Activity("X", "redesign", 3)], [Link("X", "B")])
    return casefile([bl, u1], events, [frag])


def test_series_inserts_each_event_into_its_own_update_and_carries_the_result_forward():
    """Steps 2, 3 and 1 days, total 6 against the windows' 4 (worked by hand; AACE RP 29R-03, MIP 3.7).

    E1 into BL (the last update on or before day 0): A 10 + 2 = 12 days, END
    day 19 -> 21: +2. E2 into U1 (data date day 14, its own update, not BL):
    X days 14-16, B days 17-26, END day 23 -> 26: +3. E3 also belongs to U1,
    so it goes into E2's impacted result, carried forward: B 11 days, END 26
    -> 27: +1. Running total 2, 5, 6. The windows analysis measures BL's day
    19 to U1's day 23: 4, so the series models 2 days more than the record
    shows.
    """
    from forensic.analysis.impact import time_impact_series
    from forensic.analysis.impact_tables import contemporaneous_json
    from forensic.analysis.windows import analyse_windows

    cf = series_case()
    s = time_impact_series(cf)
    got = [(x.event, x.into, x.completion_before, x.completion_after, x.impact, x.running_total, x.carried)
           for x in s.steps]
    assert got == [("E1", "BL", day(19), day(21), 2, 2, False),
                   ("E2", "U1", day(23), day(26), 3, 5, False),
                   ("E3", "U1", day(26), day(27), 1, 6, True)]
    assert [x.represented_as for x in s.steps] == ["estimated", "fragnet", "days-lost"]
    assert (s.total, s.windows_total, s.difference_from_windows) == (6, 4, 2)
    assert s.windows_total == analyse_windows(cf).total_slip  # the windows module's own figure
    obj = contemporaneous_json(s)
    assert list(obj)[:3] == ["unit", "steps", "total"] and obj["unit"] == "calendar-days"
    assert list(obj["steps"][0])[:5] == ["event", "into", "completion_before", "completion_after", "impact"]
    assert obj["total"] == 6


def test_cumulative_names_its_update_and_warns_of_events_after_later_updates():
    """--cumulative keeps its meaning (all into one update) but warns that E2 and E3 belong to U1 (AACE RP 52R-06)."""
    series = time_impacts(series_case())
    assert series.cumulative.into == "BL"
    (warning,) = series.warnings
    assert "cumulative into BL" in warning and "E2 (its own update U1)" in warning and "E3" in warning
    assert "E1 (" not in warning and "impacted as-planned" in warning
    assert series_json(series)["warnings"] == [warning] and series_json(series)["into"] == "BL"


def test_float_table_shows_gains_as_gains_not_negative_consumption():
    """Every row's consumed and gained are >= 0 and their difference is the float change (demo, every event)."""
    from forensic.analysis.impact import time_impacts
    from forensic.casefile.demo import demo_source
    from forensic.casefile.reading import load_casefile

    cf = load_casefile(demo_source())
    rows = [(row, c) for r in time_impacts(cf, [e.id for e in cf.events]).individual
            for row, c in zip(float_table(r).rows, r.float_consumed, strict=True)]
    assert rows
    for row, c in rows:
        consumed, gained = row[-2], row[-1]
        assert consumed >= 0 and gained >= 0 and consumed - gained == c.before - c.after
    assert any(row[-1] > 0 for row, _ in rows)  # the demo has gains (EV02, EV03, EV05, EV09: e.g. SITE-090)
