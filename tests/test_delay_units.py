"""One way of counting delay in working days, whichever analysis counts it.

Hand working (five-day week Monday-Friday; 2026-01-09 is a Friday): a date
moving from Friday 9 January to Sunday 11 January has crossed no working day,
so it is 0 working days late; to Monday 12 January, 1; from Saturday 10 to
Monday 12, 1; from Monday 5 to Friday 9, 4. The count is the working days in
``(earlier, later]``, which is also ``count(later) - count(earlier)`` for the
cumulative counter the windows ledger uses (common practice: a finish moving
from a Friday to the next Monday on a five-day week is one working day).
Before this test the trend counted ``[earlier, later)`` and said 1 for the
Friday-to-Sunday move, against 0 in the ledger.
"""

from datetime import date, timedelta

from hypothesis import given
from hypothesis import strategies as st

from forensic.analysis.event_cost import delay_between as impact_delay_between
from forensic.analysis.trend import delay_between as trend_delay_between
from forensic.core.units import unit_counter

from .delay_cases import casefile, ms, snap, task

D = date(2026, 1, 5)  # a Monday


def _working_days_casefile():
    bl = snap("BL", D, [task("A", 5), ms()], [("A", "M")], role="baseline")
    return casefile([bl], unit="working-days", cal="5d")


HAND = [  # (earlier, later, working days late), worked above
    (date(2026, 1, 9), date(2026, 1, 11), 0),
    (date(2026, 1, 9), date(2026, 1, 12), 1),
    (date(2026, 1, 10), date(2026, 1, 12), 1),
    (date(2026, 1, 5), date(2026, 1, 9), 4),
    (date(2026, 1, 12), date(2026, 1, 9), -1),
]


def test_hand_worked_moves_agree_in_every_analysis():
    cf = _working_days_casefile()
    count = unit_counter(cf)
    for a, b, want in HAND:
        assert count(b) - count(a) == want, (a, b)
        assert trend_delay_between(cf, a, b) == want, (a, b)
        assert impact_delay_between(cf.project, cf.calendars, a, b) == want, (a, b)


@given(st.integers(0, 60), st.integers(0, 60))
def test_the_three_counts_agree_on_any_pair_of_dates(i, j):
    cf = _working_days_casefile()
    a, b = D + timedelta(days=i), D + timedelta(days=j)
    count = unit_counter(cf)
    assert trend_delay_between(cf, a, b) == count(b) - count(a) == impact_delay_between(cf.project, cf.calendars, a, b)
