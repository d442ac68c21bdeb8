"""But-for (collapsed as-built): the trade's facts, the as-built construction, event representation."""

from datetime import date, timedelta

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from forensic.analysis.butfor import as_built, as_built_table, but_for, but_for_json, but_for_table
from forensic.core.calendars import DAY_NAMES
from forensic.core.engine import schedule
from forensic.core.errors import NotFoundError
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
    """Default cases: each party alone, every owner-role party's events, all events, all excusable events."""
    cf = finished_case([ev("E1", "OWN", jan(7), jan(8), ["A"]), ev("E2", "CON", jan(6), jan(6), ["B"])])
    report = but_for(cf)
    got = {c.label: (c.removed, c.difference) for c in report.cases}
    # ev() makes every event excusable-compensable, so "all excusable events" holds E2 too.
    assert got == {"party OWN": (("E1",), 2), "party CON": (("E2",), 0), "all owner delays": (("E1",), 2),
                   "all events": (("E1", "E2"), 2), "all excusable events": (("E1", "E2"), 2)}
    assert report.overlap == 0  # 2 + 0 against 2 together (arithmetic)
    assert but_for(cf, party="CON").cases[0].difference == 0
    with pytest.raises(NotFoundError, match="XYZ"):
        but_for(cf, party="XYZ")


def test_overlapping_events_on_one_task_are_removed_once():
    """Two events on A (Jan 7-8, Jan 8-9) take out no more than A's overrun, counted once (casefile format 2).

    A planned 5 took 7 (Jan 5-11): an overrun of 2. Each event alone is
    estimated at min(2, 2 days inside its period) = 2; together they cover
    Jan 7-9 (3 days) but A overran by only 2, so 2 are taken out, not 4 (and
    not the 3 days of a total stoppage).
    """
    cf = finished_case([ev("E1", "OWN", jan(7), jan(8), ["A"]), ev("E4", "OWN", jan(8), jan(9), ["A"])])
    report = but_for(cf)
    assert {e.event: e.days for e in report.as_built.events} == {"E1": (("A", 2),), "E4": (("A", 2),)}
    assert {c.label: c.difference for c in report.cases}["party OWN"] == 2


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
    assert as_built_table(report).rows == (("E9", "OWN", "not-represented", (), ""),)
    assert "A was not worked inside the event's period" in report.as_built.events[0].why


def test_but_for_json_and_table_shapes():
    """The JSON lists the as-built facts and one object per case; the table one row per case."""
    cf = finished_case([ev("E1", "OWN", jan(7), jan(8), ["A"])])
    report = but_for(cf)
    obj = but_for_json(report)
    assert list(obj) == ["as_built_from", "as_built_completion", "pins", "relinked", "events", "cases", "warnings",
                         "overlap", "overlap_note"]
    assert obj["events"][0]["days"] == {"A": 2}
    assert obj["events"][0]["represented_as"] == "estimated"
    # party OWN, all owner delays, all events, all excusable events: each 2 (worked in finished_case).
    assert [c["difference"] for c in obj["cases"]] == [2, 2, 2, 2]
    assert obj["cases"][2]["case"] == "all events" and obj["cases"][2]["events_removed"] == ["E1"]
    assert obj["overlap"] == 0
    assert but_for_table(report).rows[0][:2] == ("party OWN", ("E1",))


# --- issue 17: what each event cost, never a total stoppage -------------------------

def labour_shortage_case(days_lost=()):
    """A planned 10 days (Jan 1-10) took 14 (Jan 1-14) during a contractor labour shortage of Jan 1-14.

    Worked by hand on a 7-day week: the baseline finishes END on Jan 10; the
    as-built on Jan 14, a slip of 4 days, all of it A's overrun.
    """
    bl = snap([Activity("A", "A", 10), Activity("END", "END", 0, kind="closing-milestone")],
              [Link("A", "END")], "BL", jan(1), "baseline")
    u1 = snap([done("A", jan(1), jan(14), 10), done("END", jan(14), jan(14), kind="closing-milestone")],
              bl.links, "U1", date(2026, 2, 2))
    labour = Event("EV", "labour shortage (about 70% output)", "CON", "non-excusable", jan(1), jan(14), ("A",),
                   days_lost=tuple(days_lost))
    return casefile([bl, u1], [labour])


def test_labour_shortage_worked_example_removes_the_overrun_not_the_whole_period():
    """But-for gives 4, not 13: the event cost A its overrun, 14 - 10 = 4 days (issue 17, worked example).

    Estimate (casefile format 2, events.csv): A's as-built 14 days less its
    planned 10 = 4, all 14 working days inside the event's period, so
    min(4, 14) = 4. A is 10 days in the but-for, END Jan 10: 4 days earlier,
    the baseline's completion exactly, so no warning. The old reading (a
    total stoppage) took out all 14 days, left A 1 day and finished Jan 1,
    nine days before the baseline (AACE RP 29R-03, MIP 3.8: the delay
    subtracted is the delay that happened).
    """
    report = but_for(labour_shortage_case(), event="EV")
    (rep,) = report.as_built.events
    assert (rep.how, rep.days) == ("estimated", (("A", 4),))
    (case,) = report.cases
    assert (case.but_for_completion, case.difference) == (jan(10), 4)
    assert case.warnings == ()


def test_days_lost_beats_the_estimate():
    """A stated ``days_lost`` of 3 is what is removed, whatever the record's overrun (casefile format 2)."""
    report = but_for(labour_shortage_case([("A", 3)]), event="EV")
    assert (report.as_built.events[0].how, report.as_built.events[0].days) == ("days-lost", (("A", 3),))
    assert report.cases[0].difference == 3  # A 14 - 3 = 11 days, END Jan 11 (worked by hand)


def test_but_for_before_the_baseline_completion_is_warned_naming_event_and_activities():
    """A stated 6 days on A's 4-day overrun finishes Jan 8, before the baseline's Jan 10: a warning (issue 17)."""
    report = but_for(labour_shortage_case([("A", 6)]), event="EV")
    (case,) = report.cases
    assert case.but_for_completion == jan(8)  # A 14 - 6 = 8 days, Jan 1-8 (worked by hand)
    (warning,) = case.warnings
    assert "EV" in warning and "A" in warning and "2026-01-10" in warning
    assert warning in but_for_json(report)["warnings"]


def owner_then_contractor_case():
    """Owner delays B1 by 6 days (10 days of float absorb it); the contractor then delays B2 by 8.

    Worked by hand on a 7-day week from Mon Jan 5: baseline A 20 days (Jan
    5-24) and B1 5 + B2 5 (Jan 5-14) beside it, END Jan 24, the B path with
    10 days of float. As built B1 took 11 (Jan 5-15), B2 13 (Jan 16-28),
    END Jan 28: a slip of 4.
    """
    bl = snap([Activity("A", "A", 20), Activity("B1", "B1", 5), Activity("B2", "B2", 5),
               Activity("END", "END", 0, kind="closing-milestone")],
              [Link("A", "END"), Link("B1", "B2"), Link("B2", "END")], "BL", jan(5), "baseline")
    u1 = snap([done("A", jan(5), jan(24)), done("B1", jan(5), jan(15), 5), done("B2", jan(16), jan(28), 5),
               done("END", jan(28), jan(28), kind="closing-milestone")], bl.links, "U1", date(2026, 2, 16))
    events = [Event("EO", "late drawings", "OWN", "excusable-compensable", jan(5), jan(15), ("B1",)),
              Event("EC", "slow gang", "CON", "non-excusable", jan(16), jan(28), ("B2",))]
    return casefile([bl, u1], events)


def test_owner_and_contractor_each_a_but_for_cause_the_combined_case_and_the_overlap():
    """Owner 4, contractor 4, all events 4, overlap 4 (issue 17, worked example; SCL Protocol 2nd ed.).

    Estimates: B1 11 - 5 = 6 (all inside EO's Jan 5-15), B2 13 - 5 = 8 (all
    inside EC's Jan 16-28). Without the owner: B1 5 + B2 13 = 18 days < A's
    20, END Jan 24, 4 earlier. Without the contractor: 11 + 5 = 16 < 20, 4
    earlier. Without both: 10 < 20, 4 earlier. The single-party figures add
    to 8 against 4 for all events: an overlap of 4, whose split depends on
    who owns the float (SCL Protocol 2nd ed., float and concurrency).
    """
    report = but_for(owner_then_contractor_case())
    got = {c.label: c.difference for c in report.cases}
    assert got == {"party OWN": 4, "party CON": 4, "all owner delays": 4, "all events": 4,
                   "all excusable events": 4}
    removed = {c.label: c.removed for c in report.cases}
    assert removed["all events"] == ("EO", "EC") and removed["all excusable events"] == ("EO",)
    assert report.overlap == 4
    assert "float" in report.overlap_note and "8" in report.overlap_note
    obj = but_for_json(report)
    assert obj["overlap"] == 4
    assert obj["cases"][3]["events_removed"] == ["EO", "EC"]


@settings(max_examples=40, deadline=None)
@given(
    st.lists(st.tuples(st.integers(1, 8), st.integers(0, 6)), min_size=2, max_size=4),
    st.lists(st.tuples(st.integers(0, 3), st.integers(0, 30), st.integers(0, 12)), min_size=1, max_size=4),
)
def test_all_events_but_for_never_exceeds_the_as_built_slip(tasks, hits):
    """Removing every event gives back at most the slip against the baseline, and never less than 0 (issue 17).

    Two chains from Jan 5 (tasks alternately on each), each task planned p
    days and built p + o days, back to back; events hit random tasks over
    random periods and are estimated from the record. Each removal is at most
    the task's overrun, so no but-for task is shorter than planned and the
    but-for completion is no earlier than the baseline's (arithmetic).
    """
    chains: list[list[str]] = [[], []]
    plan, built, links = [], [], []
    finish = {0: jan(4), 1: jan(4)}
    for i, (p, o) in enumerate(tasks):
        aid, c = f"T{i}", i % 2
        if chains[c]:
            links.append(Link(chains[c][-1], aid))
        chains[c].append(aid)
        plan.append(Activity(aid, aid, p))
        start = finish[c] + timedelta(days=1)
        finish[c] = start + timedelta(days=p + o - 1)
        built.append(done(aid, start, finish[c], p))
    end = max(finish.values())
    links += [Link(ch[-1], "END") for ch in chains if ch]
    bl = snap([*plan, Activity("END", "END", 0, kind="closing-milestone")], links, "BL", jan(5), "baseline")
    u1 = snap([*built, done("END", end, end, kind="closing-milestone")], links, "U1", end + timedelta(days=1))
    events = [ev(f"E{k}", "OWN" if k % 2 else "CON", jan(5) + timedelta(days=s), jan(5) + timedelta(days=s + n),
                 [f"T{t % len(tasks)}"]) for k, (t, s, n) in enumerate(hits)]
    cf = casefile([bl, u1], events)
    slip = (end - schedule(bl, cf.calendars, cf.project).completion).days
    every = next(c for c in but_for(cf).cases if c.label == "all events")
    assert 0 <= every.difference <= slip


def test_demo_ev05_ev01_ev11_are_removed_as_what_they_cost():
    """The demo's EV05, EV01, EV11 in the collapsed as-built from U10 (figures worked in test_impact's demo test).

    EV05 takes 6, 4, 4 and 2 days off the curtain wall elevations (each
    built in 26, 24, 24, 22 days against the 20 planned when it began), so
    LIB-ENV-CW-N is 20 days in the but-for, not the 1 day a total stoppage
    left; completion 23 July 2027 -> 21 July, 2 days. EV01 takes 14 days
    off PRE-FAC-REV (24 built against 10 planned, 14 inside its period),
    which the 51 days of float on the facade path absorb: 0. EV11 is not
    represented (none of its work in its period) and removes nothing.
    """
    from forensic.analysis.butfor import remove_events
    from forensic.casefile.demo import demo_source
    from forensic.casefile.reading import load_casefile

    cf = load_casefile(demo_source())
    report = but_for(cf, event="EV05")
    rep = {e.event: e for e in report.as_built.events}
    assert rep["EV05"].how == "estimated"
    assert dict(rep["EV05"].days) == {"LIB-ENV-CW-N": 6, "LIB-ENV-CW-E": 4, "LIB-ENV-CW-S": 4, "LIB-ENV-CW-W": 2}
    net, _ = remove_events(cf, report.as_built, ["EV05"])
    assert report.as_built.snapshot.activities["LIB-ENV-CW-N"].duration == 26
    assert net.activities["LIB-ENV-CW-N"].duration == 20
    (case,) = report.cases
    assert (case.as_built_completion, case.but_for_completion, case.difference) == (
        date(2027, 7, 23), date(2027, 7, 21), 2)
    assert dict(rep["EV01"].days) == {"PRE-FAC-REV": 14}
    assert but_for(cf, event="EV01").cases[0].difference == 0
    assert rep["EV11"].how == "not-represented"
    (case,) = but_for(cf, event="EV11").cases
    assert case.not_represented == ("EV11",) and case.difference == 0
