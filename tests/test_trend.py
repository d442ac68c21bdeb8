"""Completion trend and float erosion on a hand-built network whose dates are worked out by hand."""

from datetime import date

from forensic.analysis.trend import completion_trend, make_bands
from forensic.core.model import (
    Activity,
    Calendar,
    Casefile,
    Link,
    Project,
    Snapshot,
    frozen_mapping,
)

FIVE = Calendar("5d", ("mon", "tue", "wed", "thu", "fri"))


def _snap(sid, dd, role, acts):
    links = (Link("A", "B"), Link("B", "M"), Link("C", "M"))
    return Snapshot(sid, dd, frozen_mapping({a.id: a for a in acts}), links, role)


def casefile(delay_unit="calendar-days"):
    """A(10) -> B(20) -> M, and C(5) -> M, on a Monday-to-Friday calendar from Monday 5 January 2026."""
    base = [Activity("A", "a", 10), Activity("B", "b", 20), Activity("C", "c", 5),
            Activity("M", "done", 0, kind="closing-milestone")]
    upd = [Activity("A", "a", 10, actual_start=date(2026, 1, 5), actual_finish=date(2026, 1, 23)),
           Activity("B", "b", 20), Activity("C", "c", 5), Activity("M", "done", 0, kind="closing-milestone")]
    project = Project("t", "5d", completion="M", contract_completion=date(2026, 2, 20), delay_unit=delay_unit)
    snaps = (_snap("BL", date(2026, 1, 5), "baseline", base), _snap("U01", date(2026, 2, 2), "update", upd))
    return Casefile(project, frozen_mapping({"5d": FIVE}), frozen_mapping(), snaps)


def test_late_predecessor_slips_completion_by_two_weeks():
    """A finishes a week late, so M moves from Fri 13 Feb to Fri 27 Feb 2026: +14 calendar days (worked by hand)."""
    t = completion_trend(casefile())
    bl, u1 = t.snapshots
    # By hand: A Jan 5-16, B Jan 19 - Feb 13 (20 working days); M dated Feb 13.
    assert bl.completion == date(2026, 2, 13)
    # By hand: B restarts at the data date Feb 2 and takes 20 working days to Feb 27.
    assert u1.completion == date(2026, 2, 27)
    assert (u1.slip, u1.movement, bl.movement) == (14, 14, None)
    # Against the contract date 20 Feb 2026: 7 days before, then 7 days after (by hand).
    assert (bl.variance, u1.variance) == (-7, 7)


def test_working_day_unit_counts_on_the_default_calendar():
    """The same slip is 10 working days Monday to Friday (13 Feb to 27 Feb, numpy busday_count convention)."""
    t = completion_trend(casefile("working-days"))
    assert t.snapshots[-1].slip == 10


def test_float_bands_count_open_activities():
    """C has 25 working days of float in the baseline (30-day path less its 5 days); A, B, M none (by hand)."""
    t = completion_trend(casefile(), band_edges=(0, 1, 6, 21))
    labels = [b.label for b in t.bands]
    assert labels == ["negative", "0", "1 to 5", "6 to 20", "21 or more"]
    assert t.snapshots[0].band_counts == (0, 3, 0, 0, 1)
    # In U01 A is finished; C still not started, so it has 20 - 5 = 15 working days of float (by hand).
    assert t.snapshots[1].band_counts == (0, 2, 0, 1, 0)
    assert t.snapshots[1].finished == 1


def test_named_milestone_float_is_followed():
    """A milestone asked for by id is followed update by update (the engine's float, read as is)."""
    t = completion_trend(casefile(), milestones=["M"])
    assert t.milestones == ("M",)
    assert [r.milestone_floats["M"] for r in t.snapshots] == [0, 0]


def test_bands_from_edges_cover_every_value():
    """Every integer falls in exactly one band (common practice: bands partition the float axis)."""
    bands = make_bands([0, 1, 6, 21])
    for v in range(-50, 60):
        assert sum(b.holds(v) for b in bands) == 1


def test_float_to_the_contract_date_goes_negative_when_the_network_float_stays_zero():
    """M's network float is 0 in both snapshots; against the contract date 20 Feb 2026 it is +5 then -5 (worked by hand).

    BL: M on Fri 13 Feb; working days after it up to and including Fri 20 Feb:
    Mon 16 - Fri 20 = 5. U01: M on Fri 27 Feb, a week after the date: Mon 23 -
    Fri 27 = 5 working days late, -5 (negative float against a missed date:
    AACE RP 49R-06, from memory; GAO-16-89G best practice 6).
    """
    t = completion_trend(casefile())
    bl, u1 = t.snapshots
    assert (bl.completion_float, u1.completion_float) == (0, 0)
    assert (bl.contract_floats["M"], u1.contract_floats["M"]) == (5, -5)
    assert dict(t.contract_dates) == {"M": date(2026, 2, 20)}


def test_demo_completion_float_to_contract_matches_its_lateness():
    """Demo: M900 keeps network float 0 from BL to U10 but is 43 calendar days late: -31 working days to the contract.

    10 Jun 2027 (contract) to 23 Jul 2027 (U10 forecast): Fri 11 Jun, then six
    full weeks 14 Jun - 23 Jul (no holiday in them on the 5d calendar): 1 + 30
    = 31 working days late. The river terrace key date (M-RIV, finish-by 25 Mar
    2027) follows its network float, its own constraint (-6 at U10).
    """
    from forensic.casefile.demo import demo_source  # noqa: PLC0415
    from forensic.casefile.reading import load_casefile  # noqa: PLC0415

    t = completion_trend(load_casefile(demo_source()))
    last = t.latest
    assert last.completion_float == 0 and last.variance == 43
    assert last.contract_floats["M900"] == -31
    assert last.contract_floats["M-RIV"] == last.milestone_floats["M-RIV"] == -6
