"""But-for (collapsed as-built): the trade's facts, the as-built construction, event representation."""

from datetime import date

import pytest

from forensic.butfor import as_built, as_built_table, but_for, but_for_json, but_for_table
from forensic.calendars import DAY_NAMES
from forensic.engine import schedule
from forensic.errors import NotFoundError
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


def snap(acts, links, sid, data_date, role="update"):
    return Snapshot(sid, data_date, frozen_mapping({a.id: a for a in acts}), tuple(links), role)


def casefile(snapshots, events=(), fragnets=()):
    return Casefile(
        project=Project("t", "7d", completion="END"),
        calendars=frozen_mapping({"7d": SEVEN}),
        parties=frozen_mapping({"OWN": Party("OWN", "Owner", "owner"), "CON": Party("CON", "Builder", "contractor")}),
        snapshots=tuple(snapshots),
        events=tuple(events),
        fragnets=frozen_mapping({f.id: f for f in fragnets}),
    )


def jan(d: int) -> date:
    return date(2026, 1, d)


def done(aid, start, finish, planned=None, kind="task"):
    dur = 0 if kind != "task" else planned or (finish - start).days + 1
    return Activity(aid, aid, dur, kind=kind, actual_start=start, actual_finish=finish)


def ev(eid, party, start, finish, activities=(), fragnet_id=None):
    return Event(eid, eid, party, "excusable-compensable", start, finish, tuple(activities), fragnet_id)


def finished_case(events):
    """A (suspended Jan 7-8, 7 days) then C on the only critical path; B with float beside them.

    Worked by hand on a 7-day week: A Jan 5-11, C Jan 12-14, END Jan 14; B Jan 5-8.
    """
    bl = snap([Activity("A", "A", 5), Activity("B", "B", 3), Activity("C", "C", 3),
               Activity("END", "END", 0, kind="closing-milestone")],
              [Link("A", "C"), Link("C", "END"), Link("B", "END")], "BL", jan(5), "baseline")
    u1 = snap([done("A", jan(5), jan(11), 5), done("B", jan(5), jan(8), 3), done("C", jan(12), jan(14)),
               done("END", jan(14), jan(14), kind="closing-milestone")],
              bl.links, "U1", date(2026, 2, 2))
    return casefile([bl, u1], events)


def test_removing_a_delay_on_the_only_critical_path_shortens_completion_by_its_length():
    """Without the 2-day suspension of critical A, completion is 2 days earlier (common practice)."""
    cf = finished_case([ev("E1", "OWN", jan(7), jan(8), ["A"])])
    report = but_for(cf, event="E1")
    (case,) = report.cases
    assert report.as_built.completion == jan(14)  # the actual completion
    assert case.but_for_completion == jan(12)
    assert case.difference == 2  # common practice: the full length of the delay


def test_removing_a_delay_on_a_path_with_float_shortens_completion_by_nothing():
    """Without a 1-day hold-up of B, which had 6 days of float, completion does not move (common practice)."""
    cf = finished_case([ev("E2", "CON", jan(6), jan(6), ["B"])])
    (case,) = but_for(cf, event="E2").cases
    assert case.but_for_completion == jan(14)
    assert case.difference == 0  # common practice: float absorbs it


def test_each_party_alone_and_all_owner_delays_together():
    """Default cases: each party with events alone, then every owner-role party's events together."""
    cf = finished_case([ev("E1", "OWN", jan(7), jan(8), ["A"]), ev("E2", "CON", jan(6), jan(6), ["B"])])
    report = but_for(cf)
    got = {c.label: (c.removed, c.difference) for c in report.cases}
    assert got == {"party OWN": (("E1",), 2), "party CON": (("E2",), 0), "all owner delays": (("E1",), 2)}
    assert but_for(cf, party="CON").cases[0].difference == 0
    with pytest.raises(NotFoundError, match="XYZ"):
        but_for(cf, party="XYZ")


def test_overlapping_events_on_one_task_are_removed_once():
    """Two suspensions of A (Jan 7-8, Jan 8-9) take out the 3 days they cover, not 4 (common practice)."""
    cf = finished_case([ev("E1", "OWN", jan(7), jan(8), ["A"]), ev("E4", "OWN", jan(8), jan(9), ["A"])])
    assert {c.label: c.difference for c in but_for(cf).cases}["party OWN"] == 3


def test_as_built_reproduces_actual_dates_pins_unexplained_starts_and_relinks_out_of_sequence_work():
    """The as-built has each actual start; D's late start is pinned; E started before A finished, so A-E is SS+5."""
    bl = snap([Activity(x, x, 3) for x in "ABCDE"] + [Activity("END", "", 0, kind="closing-milestone")],
              [Link("A", "C"), Link("B", "D"), Link("A", "E"), Link("C", "END"), Link("D", "END"), Link("E", "END")],
              "BL", jan(5), "baseline")
    acts = [done("A", jan(5), jan(11)), done("B", jan(5), jan(8)), done("C", jan(12), jan(14)),
            done("D", jan(12), jan(13)), done("E", jan(10), jan(12)),
            done("END", jan(14), jan(14), kind="closing-milestone")]
    cf = casefile([bl, snap(acts, bl.links, "U1", date(2026, 2, 2))])
    b = as_built(cf)
    assert b.source == "U1" and b.warnings == ()
    r = b.schedule
    for a in acts:
        assert (r[a.id].early_start, r[a.id].early_finish) == (a.actual_start, a.actual_finish)
    assert b.pins == ("D",)  # B finished Jan 8, D started Jan 12: logic does not explain it
    # E started on Jan 10, 5 days after A started (worked by hand).
    assert b.relinked == (("A", "E", "FS", "SS", 5),)


def test_as_built_takes_in_progress_work_as_continuous_and_keeps_the_forecast():
    """C started Jan 10 with 3 days left at the Jan 12 data date: 5 days in the as-built, completion as forecast."""
    bl = snap([Activity("A", "A", 5), Activity("C", "C", 4), Activity("END", "", 0, kind="closing-milestone")],
              [Link("A", "C"), Link("C", "END")], "BL", jan(5), "baseline")
    u1 = snap([done("A", jan(5), jan(9)), Activity("C", "C", 4, actual_start=jan(10), remaining=3),
               Activity("END", "", 0, kind="closing-milestone")], bl.links, "U1", jan(12))
    cf = casefile([bl, u1])
    b = as_built(cf)
    forecast = schedule(u1, cf.calendars, cf.project)
    assert b.snapshot.activities["C"].duration == 5  # Jan 10, 11 worked + 3 remaining
    assert b.completion == forecast.completion == jan(14)
    assert b.warnings == ()


def test_fragnet_activities_in_the_as_built_are_the_delay_removed():
    """A recorded fragnet activity X (4 days) between A and C is taken out and A joined to C (AACE RP 29R-03, 3.8)."""
    bl = snap([Activity("A", "A", 5), Activity("C", "C", 3), Activity("END", "", 0, kind="closing-milestone")],
              [Link("A", "C"), Link("C", "END")], "BL", jan(5), "baseline")
    u1 = snap([done("A", jan(5), jan(9)), done("X", jan(10), jan(13)), done("C", jan(14), jan(16)),
               done("END", jan(16), jan(16), kind="closing-milestone")],
              [Link("A", "X"), Link("X", "C"), Link("C", "END")], "U1", date(2026, 2, 2))
    frag = Fragnet("F1", frozen_mapping({"X": Activity("X", "X", 4)}), (Link("A", "X"), Link("X", "C")))
    cf = casefile([bl, u1], [ev("E3", "OWN", jan(10), jan(13), fragnet_id="F1")], [frag])
    report = but_for(cf, event="E3")
    rep = {e.event: e for e in report.as_built.events}["E3"]
    assert (rep.how, rep.activities) == ("fragnet", ("X",))
    case = report.cases[0]
    assert case.but_for_completion == jan(12)  # A Jan 5-9, C Jan 10-12 (worked by hand)
    assert case.difference == 4  # the fragnet lay on the only path: all of it (common practice)
    assert "X" not in case.critical_path


def test_event_that_held_up_no_named_work_is_listed_as_not_represented():
    """An event dated outside the actual dates of the work it names is not in the as-built, and says so."""
    cf = finished_case([ev("E9", "OWN", jan(20), jan(22), ["A"])])
    report = but_for(cf, event="E9")
    assert report.cases[0].not_represented == ("E9",)
    assert report.cases[0].difference == 0
    assert as_built_table(report).rows == (("E9", "OWN", "none", (), ""),)


def test_but_for_json_and_table_shapes():
    """The JSON lists the as-built facts and one object per case; the table one row per case."""
    cf = finished_case([ev("E1", "OWN", jan(7), jan(8), ["A"])])
    report = but_for(cf)
    obj = but_for_json(report)
    assert list(obj) == ["as_built_from", "as_built_completion", "pins", "relinked", "events", "cases", "warnings"]
    assert obj["events"][0]["days"] == {"A": 2}
    assert [c["difference"] for c in obj["cases"]] == [2, 2]
    assert but_for_table(report).rows[0][:2] == ("party OWN", ("E1",))
