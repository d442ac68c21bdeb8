"""Slices of a window: progress rebuilt day by day at a uniform rate, cuts where the driving path switches.

Every case is worked by hand in its docstring (7-day calendar of
tests/delay_cases.py: a task of d days starting on day s finishes on
s + d - 1). Sources: SCL Delay and Disruption Protocol, 2nd ed., core
principle 10 and Part B (concurrency needs delays of roughly the same
time); AACE RP 29R-03 protocols 3.3 (windows drawn where the critical path
changes) and 3.4 (half-step), from memory. The uniform-rate interpolation
between two updates is this project's rule (docs/windows.md, "Slices"):
the updates do not say when in the period work was slow, so it is spread
evenly over the days the activity could work.
"""

from datetime import timedelta

import pytest

from forensic.analysis.attribution.delay import analyse_delay
from forensic.analysis.slices import (
    path_switch_cuts,
    path_work,
    slice_snapshot,
    working_rate_remaining,
)
from forensic.analysis.windows import analyse_windows
from forensic.casefile.demo import demo_source
from forensic.casefile.reading import load_casefile
from forensic.core.engine import schedule

from .delay_cases import D0, casefile, day, event, ms, snap, task


@pytest.mark.parametrize(("r0", "r_end", "worked", "available", "left"), [
    (10, 0, 6, 12, 5),   # 10 - round(10 * 6 / 12 = 5) = 5 (the docstring's example)
    (10, 2, 4, 12, 7),   # 10 - round(8 * 4 / 12 = 2.67) = 7
    (10, 2, 3, 12, 8),   # 10 - round(2.0) = 8
    (10, 2, 10, 12, 3),  # 10 - round(6.67) = 3
    (10, 2, 12, 12, 2),  # the whole stretch: the later update's 2
    (10, 2, 0, 12, 10),  # nothing worked yet
    (10, 2, 5, 0, 10),   # no day to work on: nothing done
    (10, 2, 2, 5, 7),    # a gain: 8 days of work in 5; 10 - round(3.2) = 7
    (9, 0, 1, 2, 4),     # 9 - round(4.5, halves up: 5) = 4
])
def test_uniform_rate_hand_worked(r0, r_end, worked, available, left):
    assert working_rate_remaining(r0, r_end, worked, available) == left


def slow_case():
    """X(10) -> M. BL day 0; U01 day 14: X started day 0, 2 days left; owner event stops X on days 4-5.

    X could work 14 - 2 = 12 of the 14 days and did 10 - 2 = 8 days of
    work: a rate of 2/3 (slow apart from the event too).
    """
    links = [("X", "M")]
    bl = snap("BL", D0, [task("X", 10), ms()], links, role="baseline")
    u1 = snap("U01", day(14), [task("X", 10, actual_start=D0, remaining=2), ms()], links)
    return casefile([bl, u1], [event("EV", "OWN", "excusable-compensable", day(4), day(5), ["X"])])


@pytest.mark.parametrize(("t", "left"), [
    (3, 8),    # worked 3 of 12: 10 - round(8 * 3 / 12 = 2) = 8
    (6, 7),    # worked 6 - 2 event days = 4: 10 - round(2.67) = 7
    (12, 3),   # worked 10: 10 - round(6.67) = 3
])
def test_slice_spreads_slowness_over_the_days_worked(t, left):
    """The planned rate from the cut would leave 2 + (14 - 6) = 10 on day 6 (nothing done): all the slowness first."""
    cf = slow_case()
    bl, u1 = cf.snapshots
    x = slice_snapshot(cf, bl, u1, day(t)).activities["X"]
    assert x.actual_start == D0 and x.actual_finish is None
    assert x.remaining_duration == left


def test_slice_of_work_finished_late_inside_the_window():
    """X(10) started day 0 and finished day 11 (12 days, no event): on day 6, 10 - round(10 * 6 / 12) = 5 left.

    Forecast on day 6: days 6-10, one day before the actual finish; the
    last day of slowness falls in the days after the cut, as it was spread.
    """
    links = [("X", "M")]
    bl = snap("BL", D0, [task("X", 10), ms()], links, role="baseline")
    u1 = snap("U01", day(14), [task("X", 10, actual_start=D0, actual_finish=day(11)), ms()], links)
    cf = casefile([bl, u1])
    s = slice_snapshot(cf, bl, u1, day(6))
    assert s.activities["X"].remaining_duration == 5
    assert schedule(s, cf.calendars, cf.project)["X"].early_finish == day(10)
    done = slice_snapshot(cf, bl, u1, day(12)).activities["X"]
    assert (done.actual_finish, done.remaining_duration) == (day(11), 0)


def takeover_case():
    """A(10, contractor) and B(8, owner's work) both -> M; B has 2 days of float. U01 day 12: both finished late.

    A finished day 10 (11 days: 1 late), B day 11 (12 days: 4 late, 2 over
    its float); no events. BL completion day 10, U01 day 12: slip 2.
    Uniform rates: A 10/11, B 8/12. Forecast finishes f = t + left - 1:
      day 7: A 10 - round(6.36) = 4 -> f 10; B 8 - round(4.67) = 3 -> f 9: A drives;
      day 8: A 10 - round(7.27) = 3 -> f 10; B 8 - round(5.33) = 3 -> f 10: B joins (tie).
    So the window is cut on day 8, where B takes over. Slice 1 (days 0-8):
    M from day 10 to 11, +1, A and B both slow on the same days, each of
    which alone would have cost the day: concurrent 1. Slice 2 (days 8-12):
    M to day 12, +1, B alone drives: the owner's 1.
    """
    links = [("A", "M"), ("B", "M")]
    plan = [task("A", 10), task("B", 8, party="OWN"), ms()]
    bl = snap("BL", D0, plan, links, role="baseline")
    u1 = snap("U01", day(12), [task("A", 10, actual_start=D0, actual_finish=day(10)),
                               task("B", 8, party="OWN", actual_start=D0, actual_finish=day(11)), ms()], links)
    return casefile([bl, u1])


def test_the_window_is_cut_where_other_work_takes_over():
    cf = takeover_case()
    run = analyse_windows(cf).runs[0]
    sched = lambda s: schedule(s, cf.calendars, cf.project)  # noqa: E731
    found = path_switch_cuts(cf, run.earlier, run.later, sched, first=run.before, last=run.half_result, half=run.half)
    assert found == (day(8),)
    # At the window's end both are finished; B, finished on the day before the data date, held M to it.
    preds = {"M": ("A", "B")}
    assert path_work(cf, run.half, run.half_result, preds) == {"B", "M"}
    for t, drives in ((7, {"A", "M"}), (8, {"A", "B", "M"})):
        s = slice_snapshot(cf, run.earlier, run.later, day(t))
        assert path_work(cf, s, sched(s), preds) == drives
    att = analyse_delay(cf).attributions[0]
    assert [(s.start, s.end) for s in att.slices] == [(D0, day(8)), (day(8), day(12))]
    assert run.window.slip == 2
    assert dict(att.by_party) == {"OWN": 1} and att.concurrent.days == 1
    assert [(d.activity, d.party, d.days) for d in att.slices[1].delays] == [("B", "OWN", 1)]


def test_a_tied_path_falling_behind_is_not_a_cut():
    """A and C tied on the critical path at the start; C runs less late than A: C drops off, A drove all along.

    BL day 0: A(10), C(10) -> M, both critical. U01 day 10: A 5 left
    (owner event days 2-4 and slow), C 3 left. The longest path loses C
    and gains nothing: no cut, one slice, and the hand-worked answer of
    tests/test_attribution.py (3 concurrent, owner 2) stands.
    """
    links = [("A", "M"), ("C", "M")]
    bl = snap("BL", D0, [task("A", 10), task("C", 10), ms()], links, role="baseline")
    u1 = snap("U01", day(10), [task("A", 10, actual_start=D0, remaining=5),
                               task("C", 10, actual_start=D0, remaining=3), ms()], links)
    cf = casefile([bl, u1], [event("EV1", "OWN", "excusable-compensable", day(2), day(4), ["A"])])
    att = analyse_delay(cf).attributions[0]
    assert len(att.slices) == 1
    assert att.concurrent.days == 3 and dict(att.by_party) == {"OWN": 2}


DEMO = load_casefile(demo_source())


def _daily_cuts(cf, earlier, later, sched, *, first, last, half, on_day=None):
    """Every day probed, every takeover a cut: what the bisection must agree with on the demo."""
    preds = {}
    for link in earlier.links:
        preds.setdefault(link.succ, []).append(link.pred)
    cuts, prev = [], path_work(cf, earlier, first, preds)
    t = earlier.data_date + timedelta(days=1)
    while t < later.data_date:
        s = slice_snapshot(cf, earlier, later, t)
        cur = path_work(cf, s, sched(s), preds)
        if cur - prev:
            cuts.append(t)
        prev, t = cur, t + timedelta(days=1)
    return tuple(cuts)


def test_demo_monthly_answers_stand_and_daily_probing_agrees(monkeypatch):
    """The demo's monthly figures by party (docs/windows.md) do not change with the cuts, and probing every day gives the same.

    Monthly windows of the demo, by party and concurrent days (the answers
    before path-switch cuts): BL-U01 0; U01-U02 WX 14; U04-U05 OWN 1, 13
    concurrent; U05-U06 OWN 1, CON -2; U06-U07 CON 14; U07-U08 CON 1;
    U08-U09 CON 1; the rest 0: 43 in all.
    """
    expected = [({}, 0), ({"WX": 14}, 0), ({}, 0), ({}, 0), ({"OWN": 1}, 13), ({"OWN": 1, "CON": -2}, 0),
                ({"CON": 14}, 0), ({"CON": 1}, 0), ({"CON": 1}, 0), ({}, 0)]
    bisect = analyse_delay(DEMO)
    assert [(dict(a.by_party), a.concurrent.days) for a in bisect.attributions] == expected
    assert any(len(a.slices) > 1 for a in bisect.attributions)  # BL-U01 switches (0 days: no delay in it)
    import forensic.analysis.attribution.delay as delay_module
    monkeypatch.setattr(delay_module, "path_switch_cuts", _daily_cuts)
    daily = analyse_delay(DEMO)
    assert [(dict(a.by_party), a.concurrent.days) for a in daily.attributions] == expected
    # Probing every day cuts more often; each extra cut may leave a rounding day (+1 here, -1 there,
    # integer remaining durations) between activities of the same party: the totals by party above
    # stand, and each event's days (and the days of no event) within a day. Seen: U04-U05 daily gives
    # HALL-FRM-TRS -1, SYS-COM-ME -1, HALL-FRM-DECK +2 (no event) before EV04's 13; U08-U09 gives
    # LIB-ENV-CW-S -1 (no event) and EV05 2 where the bisection gives EV05 1.
    for d, b in zip(daily.attributions, bisect.attributions, strict=True):
        ev_d, ev_b = _by_event(d), _by_event(b)
        assert all(abs(ev_d.get(k, 0) - ev_b.get(k, 0)) <= 1 for k in {*ev_d, *ev_b}), d.window_label


def _by_event(att) -> dict:
    """Days per event (None: no event) over the window's slices, zero entries left out."""
    out: dict = {}
    for c in att.contributors:
        out[c.event] = out.get(c.event, 0) + c.days
    return {k: v for k, v in out.items() if v}


def test_demo_contributors_have_no_offsetting_entries():
    """No activity is given a loss and a gain of the same event in one window (what the planned-rate reading made)."""
    for att in analyse_delay(DEMO).attributions:
        signs: dict[tuple, set] = {}
        for c in att.contributors:
            if c.days:
                signs.setdefault((c.activity, c.event), set()).add(c.days > 0)
        assert all(len(s) == 1 for s in signs.values()), att.window_label


def test_overlapping_events_stop_a_day_once():
    """Events on days 4-6 and 5-8 listing X stop it on days 4, 5, 6, 7 and 8: 5 days, not 7 (7-day calendar)."""
    from forensic.analysis.slices import event_days

    cf = casefile(slow_case().snapshots, [event("E1", "OWN", "excusable-compensable", day(4), day(6), ["X"]),
                                          event("E2", "CON", "non-excusable", day(5), day(8), ["X"])])
    cal = cf.calendars["7d"]
    assert event_days(cf, "X", cal, D0, day(14)) == 5
    assert event_days(cf, "X", cal, day(6), day(14)) == 3   # days 6, 7, 8
    assert event_days(cf, "X", cal, D0, day(5)) == 1        # day 4
    assert event_days(cf, "M", cal, D0, day(14)) == 0


def test_daily_progress_gives_one_snapshot_per_day():
    """Asking twice for a day gives the same object (the probes and the cuts share their schedules)."""
    from forensic.analysis.slices import daily_progress

    cf = slow_case()
    bl, u1 = cf.snapshots
    progress = daily_progress(cf, bl, u1)
    assert progress.on(day(6)) is progress.on(day(6))
    assert progress.on(day(6)).activities["X"].remaining_duration == slice_snapshot(cf, bl, u1, day(6)).activities["X"].remaining_duration == 7
