"""Working-day calendars, checked against python-dateutil's rrule (an independent reference).

The implementation uses numpy's business-day functions; the reference here is
``dateutil.rrule`` with ``byweekday``, holidays removed with ``exdate`` and
extra working days added with ``rdate``, so the two share no code.
"""

from datetime import date, timedelta

import pytest
from dateutil.rrule import DAILY, FR, MO, SA, SU, TH, TU, WE, rrule, rruleset
from hypothesis import given, settings
from hypothesis import strategies as st

from forensic.core.calendars import (
    DAY_NAMES,
    add_workdays,
    is_workday,
    next_workday,
    previous_workday,
    workdays_between,
)
from forensic.core.model import Calendar

_RRULE_DAYS = dict(zip(DAY_NAMES, (MO, TU, WE, TH, FR, SA, SU), strict=True))
_ORIGIN = date(2025, 1, 1)


def _reference_workdays(cal: Calendar, start: date, end: date) -> list[date]:
    """Working days in [start, end] by dateutil.rrule (the independent reference)."""
    rs = rruleset()
    rs.rrule(rrule(DAILY, dtstart=start, until=end, byweekday=[_RRULE_DAYS[d] for d in cal.workdays]))
    for h in cal.holidays:
        rs.exdate(_dt(h))
    for x in cal.extra_workdays:
        if start <= x <= end:
            rs.rdate(_dt(x))
    return sorted({d.date() for d in rs})


def _dt(d: date):
    from datetime import datetime

    return datetime(d.year, d.month, d.day)


calendars = st.builds(
    lambda mask, hol, extra: Calendar(
        "c",
        tuple(name for name, on in zip(DAY_NAMES, mask, strict=True) if on),
        tuple(sorted({_ORIGIN + timedelta(days=h) for h in hol})),
        tuple(sorted({_ORIGIN + timedelta(days=x) for x in extra} - {_ORIGIN + timedelta(days=h) for h in hol})),
    ),
    st.lists(st.booleans(), min_size=7, max_size=7).filter(any),
    st.lists(st.integers(0, 700), max_size=30),
    st.lists(st.integers(0, 700), max_size=5),
)
offsets = st.integers(0, 700)


@settings(max_examples=150, deadline=None)
@given(cal=calendars, a=offsets, b=offsets)
def test_workdays_between_matches_rrule(cal, a, b):
    """Counting working days in [start, end) agrees with dateutil.rrule on random calendars."""
    start, end = sorted((_ORIGIN + timedelta(days=a), _ORIGIN + timedelta(days=b)))
    expected = len(_reference_workdays(cal, start, end - timedelta(days=1))) if end > start else 0
    assert workdays_between(cal, start, end) == expected
    assert workdays_between(cal, end, start) == -expected


@settings(max_examples=150, deadline=None)
@given(cal=calendars, a=offsets, n=st.integers(0, 60))
def test_add_workdays_matches_rrule(cal, a, n):
    """add_workdays(d, n) is the n-th working day after the first working day on or after d (rrule)."""
    start = _ORIGIN + timedelta(days=a)
    ref = _reference_workdays(cal, start, start + timedelta(days=1200))
    assert add_workdays(cal, start, n) == ref[n]
    assert next_workday(cal, start) == ref[0]
    assert is_workday(cal, start) == (ref[0] == start)


@settings(max_examples=100, deadline=None)
@given(cal=calendars, a=offsets, n=st.integers(1, 40))
def test_subtracting_workdays_inverts_adding(cal, a, n):
    """Going n working days forward then back returns to the working day started from."""
    start = next_workday(cal, _ORIGIN + timedelta(days=a))
    assert add_workdays(cal, add_workdays(cal, start, n), -n) == start
    assert previous_workday(cal, start) == start


FIVE_DAY = Calendar(
    "5d",
    ("mon", "tue", "wed", "thu", "fri"),
    holidays=(date(2026, 12, 25), date(2027, 1, 1)),
    extra_workdays=(date(2026, 12, 19),),
)


@pytest.mark.parametrize(
    ("start", "n", "expected"),
    [
        # Hand-counted on a 2026 wall calendar (common practice):
        (date(2026, 12, 24), 1, date(2026, 12, 28)),  # Thu + 1 skips the Christmas holiday and the weekend
        (date(2026, 12, 18), 1, date(2026, 12, 19)),  # Fri + 1 lands on the extra working Saturday
        (date(2026, 12, 19), 1, date(2026, 12, 21)),
        (date(2026, 12, 26), 0, date(2026, 12, 28)),  # a Saturday rolls forward to Monday
        (date(2026, 12, 31), 1, date(2027, 1, 4)),  # New Year's Day is a holiday
    ],
)
def test_holidays_and_extra_workdays_across_year_end(start, n, expected):
    """Holidays are skipped and an extra working Saturday counts, across the year end."""
    assert add_workdays(FIVE_DAY, start, n) == expected


def test_count_over_a_leap_february():
    """A 7-day calendar counts 29 days in February 2028 (a leap year; common practice)."""
    seven = Calendar("7d", DAY_NAMES)
    assert workdays_between(seven, date(2028, 2, 1), date(2028, 3, 1)) == 29


@settings(max_examples=100, deadline=None)
@given(cal=calendars, a=offsets, n=st.integers(0, 80))
def test_add_workdays_matches_pandas_custom_business_day(cal, a, n):
    """A second reference: pandas' CustomBusinessDay (weekmask + holidays) rolls and offsets alike."""
    import pandas as pd

    if cal.extra_workdays:  # pandas has no extra working days; the rrule test covers them
        cal = Calendar(cal.id, cal.workdays, cal.holidays)
    mask = " ".join(d.capitalize() for d in cal.workdays)
    step = pd.offsets.CustomBusinessDay(weekmask=mask, holidays=list(cal.holidays))
    start = pd.Timestamp(_ORIGIN + timedelta(days=a))
    rolled = start if step.is_on_offset(start) else start + step  # roll forward to a working day
    assert add_workdays(cal, start.date(), n) == (rolled + n * step).date()
