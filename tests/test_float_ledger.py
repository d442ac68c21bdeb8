"""The float ledger: float used on the paths near the critical path, per window and party.

Hand-worked cases (7-day calendar, so working days = calendar days = the
delay unit; day n = 2026-01-05 + n; casefile format "Time and dates": a task
of d days starting on day s finishes on day s + d - 1).

Network of every case: A (30, contractor) -> M; B (5) -> C (15) -> M.
Baseline at day 0: A days 0-29, M on day 30 (critical, float 0); B days
0-4, C days 5-19: path B-C has 10 days of total float (late finish of C is
day 29). Both B and C are within the 10-working-day margin of critical
(GAO-16-89G best practice 6: near-critical paths; the 10-day margin is
common practice), so they form one near-critical path.
"""

from hypothesis import given, settings

from forensic.analysis.attribution.delay import analyse_delay, delay_json
from forensic.analysis.attribution.floatuse import float_ledger

from .delay_cases import D0, casefile, day, event, ms, snap, task
from .test_windows import random_updates

LINKS = [("A", "M"), ("B", "C"), ("C", "M")]


def _baseline():
    return snap("BL", D0, [task("A", 30), task("B", 5), task("C", 15), ms()], LINKS, role="baseline")


def _update(c_remaining: int):
    """Update at day 20: A on time (10 left); B finished day 8 (4 days late); C started day 9."""
    return snap(
        "U01", day(20),
        [
            task("A", 30, actual_start=D0, remaining=10),
            task("B", 5, actual_start=D0, actual_finish=day(8)),
            task("C", 15, actual_start=day(9), remaining=c_remaining),
            ms(),
        ],
        LINKS,
    )


OWNER_HOLDS_B = event("EV1", "OWN", "excusable-compensable", day(0), day(8), ["B"])


def test_owner_delay_absorbed_by_float_is_recorded_with_no_completion_days():
    """EV1 holds B 4 days; C then runs to plan: 4 days of the path's 10 used, by the owner.

    Hand working: C started day 9 and, going at its planned rate, has done 11
    of its 15 days by day 20, so 4 remain: C finishes day 23 instead of 19
    (variance 4). Walk back from C (the path's most delayed activity): its
    start was held by B (finished day 8, after C's planned start day 5), so
    B inherits min(v(B) = 4, 4) = 4 and C keeps 0; B has no driver and keeps
    4, covered by EV1. Float used = min(4, float 10) = 4, all the owner's.
    The completion does not move (A still finishes day 29): the ledger has
    nothing, the float ledger has the owner's 4.
    """
    cf = casefile([_baseline(), _update(4)], [OWNER_HOLDS_B])
    an = analyse_delay(cf)
    att = an.attributions[0]
    assert an.windows.windows[0].slip == 0
    [path] = att.float_used
    assert (path.activity, path.activities, path.float_before, path.used) == ("C", ("B", "C"), 10, 4)
    assert dict(path.by_party) == {"OWN": 4}
    assert [(d.activity, d.event, d.party, d.days) for d in path.delays] == [("B", "EV1", "OWN", 4)]


def test_float_is_used_first_come_first_served_and_the_rest_is_critical_delay():
    """EV1 uses 4 of the 10 days; the contractor's slow C uses the other 6 and costs 2 more.

    Hand working: C has 12 days left at day 20, finishing day 31 (variance
    12); M moves from day 30 to day 32: slip 2. Walk back from C with 12: B
    inherits min(4, 12) = 4 (EV1), C keeps 8 (the contractor's, no event).
    In date order the owner's 4 came first and used 4 of the path's float;
    the contractor's 8 used the remaining 6 and the last 2 are the window's
    critical delay, which the delay ledger gives to the contractor.
    """
    cf = casefile([_baseline(), _update(12)], [OWNER_HOLDS_B])
    an = analyse_delay(cf)
    att = an.attributions[0]
    assert an.windows.windows[0].slip == 2
    assert dict(att.by_party) == {"CON": 2}
    [path] = att.float_used
    assert (path.float_before, path.used) == (10, 10)
    assert dict(path.by_party) == {"OWN": 4, "CON": 6}
    assert [(d.activity, d.party, d.days) for d in path.delays] == [("B", "OWN", 4), ("C", "CON", 6)]


def test_a_delay_of_the_critical_path_moves_the_near_path_but_uses_none_of_its_float():
    """A critical delay that pushes a near path along with the completion is a shift, not float use.

    Case: X (5, critical) -> A (30) -> M and X -> B (5) -> C (15) -> M.
    Baseline at day 0: X days 0-4, A days 5-34, M day 35; B days 5-9, C
    days 10-24 with late finish day 34: float 10. Update at day 12: X
    finished day 6 (2 late); A started day 7 with 25 left, so it finishes
    day 36 and M moves to day 37 (slip 2); B ran days 7-11 to plan; C, not
    started, now runs days 12-26 (variance 2) with late finish day 36: its
    float is still 10. Walk back from C with 2: B inherits 2, X (finished
    day 6, after B's planned start day 5) inherits 2 and keeps them; X was
    critical, so the 2 days are the shift of the completion: float used 0.
    """
    links = [("X", "A"), ("X", "B"), ("A", "M"), ("B", "C"), ("C", "M")]
    bl = snap("BL", D0, [task("X", 5), task("A", 30), task("B", 5), task("C", 15), ms()], links, role="baseline")
    u1 = snap(
        "U01", day(12),
        [
            task("X", 5, actual_start=D0, actual_finish=day(6)),
            task("A", 30, actual_start=day(7), remaining=25),
            task("B", 5, actual_start=day(7), actual_finish=day(11)),
            task("C", 15),
            ms(),
        ],
        links,
    )
    an = analyse_delay(casefile([bl, u1]))
    assert an.windows.windows[0].slip == 2
    assert an.attributions[0].float_used == ()


def test_the_json_carries_the_float_used_per_window_and_the_cumulative_ledger():
    """`windows --json`: `float_used` per window, `float_ledger` cumulative (keys in docs/windows.md)."""
    cf = casefile([_baseline(), _update(12)], [OWNER_HOLDS_B])
    data = delay_json(analyse_delay(cf))
    fu = data["windows"][0]["float_used"]
    assert fu["by_party"] == {"OWN": 4, "CON": 6}
    assert fu["paths"][0]["activity"] == "C"
    assert fu["paths"][0]["path"] == ["B", "C"]
    assert fu["paths"][0]["delays"][0] == {"activity": "B", "event": "EV1", "party": "OWN", "days": 4}
    led = data["float_ledger"]
    assert led["margin"] == 10
    assert led["windows"] == [{"window": "BL-U01", "by_party": {"OWN": 4, "CON": 6}, "total": 10}]
    assert led["cumulative"] == {"by_party": {"OWN": 4, "CON": 6}, "total": 10}


def test_cumulative_is_the_sum_of_the_windows():
    """Two windows, each with its own float use: the cumulative row adds them (by party)."""
    bl, u1 = _baseline(), _update(4)
    # U02 at day 25: C finished day 23 as forecast, A on time; nothing more used.
    u2 = snap(
        "U02", day(25),
        [
            task("A", 30, actual_start=D0, remaining=5),
            task("B", 5, actual_start=D0, actual_finish=day(8)),
            task("C", 15, actual_start=day(9), actual_finish=day(23)),
            ms(),
        ],
        LINKS,
    )
    an = analyse_delay(casefile([bl, u1, u2], [OWNER_HOLDS_B]))
    led = float_ledger(an)
    assert [dict(w.by_party) for w in led.windows] == [{"OWN": 4}, {}]
    assert dict(led.cumulative) == {"OWN": 4}


@settings(max_examples=25, deadline=None)
@given(random_updates())
def test_float_used_never_exceeds_the_float_and_its_shares_add_up(cf):
    """On random networks and updates: 0 < used <= float before, and the shares add up to it."""
    for att in analyse_delay(cf).attributions:
        for path in att.float_used:
            assert 0 < path.used <= path.float_before
            assert sum(path.by_party.values()) == path.used
            assert sum(d.days for d in path.delays) == path.used
            assert path.activity in path.activities


def test_riverside_windows_json_has_a_float_ledger():
    """The demo: the ledger's windows are the windows; every window has a float_used object."""
    from forensic.casefile.demo import demo_source
    from forensic.casefile.reading import load_casefile

    cf = load_casefile(demo_source())
    data = delay_json(analyse_delay(cf))
    assert len(data["float_ledger"]["windows"]) == len(data["windows"])
    assert all("float_used" in w for w in data["windows"])
    total = sum(w["total"] for w in data["float_ledger"]["windows"])
    assert data["float_ledger"]["cumulative"]["total"] == total


def test_the_report_prints_the_float_ledger_of_the_hand_worked_case():
    """The full report's float-ledger section states the owner's 4 and the contractor's 6 float-days
    of the first-come case above, and lists each delay (text read back with pypdf)."""
    import io

    from pypdf import PdfReader

    from forensic.report import build_report

    cf = casefile([_baseline(), _update(12)], [OWNER_HOLDS_B])
    text = " ".join(" ".join(p.extract_text().split()) for p in PdfReader(io.BytesIO(build_report(cf, "full"))).pages)
    assert "Float used before delay became critical" in text
    # parties largest first, by name (tests/delay_cases.py: OWN "Owner", CON "Contractor")
    assert ("10 calendar days of float were used on near-critical paths in 1 window: "
            "Contractor 6 calendar days and Owner 4 calendar days.") in text
