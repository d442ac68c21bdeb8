"""Working-day calendars: date <-> working-day index and working-day arithmetic.

A calendar is a workweek, a set of holidays (non-working dates) and a set
of extra working dates. Its working days over a horizon are computed once
with numpy's business-day functions (``numpy.is_busday`` with a
``busdaycalendar``) and kept as a sorted array; every later question (is
this a working day, the first working day on or after a date, add or count
working days) is then an array look-up, so the scheduling engine can ask it
hundreds of thousands of times without a per-day loop.

Days are *day numbers*: days since 1970-01-01, the integer behind numpy's
``datetime64[D]``. A working-day *index* ``k`` names the ``k``-th working
day of the horizon; the boundary ``k`` is the moment just before that day's
work begins, which is how the engine places starts and finishes (see
:mod:`forensic.core.engine`).
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date, timedelta
from functools import lru_cache

import numpy as np

from forensic.core.model import Calendar

__all__ = [
    "DAY_NAMES",
    "WorkdayIndex",
    "add_workdays",
    "day_number",
    "from_day_number",
    "is_workday",
    "next_workday",
    "previous_workday",
    "workday_index",
    "workdays_between",
]

DAY_NAMES = ("mon", "tue", "wed", "thu", "fri", "sat", "sun")
_EPOCH_ORDINAL = date(1970, 1, 1).toordinal()
MIN_DAY = date(1, 1, 1).toordinal() - _EPOCH_ORDINAL
MAX_DAY = date(9999, 12, 31).toordinal() - _EPOCH_ORDINAL


def day_number(d: date) -> int:
    """Days since 1970-01-01 (negative before it)."""
    return d.toordinal() - _EPOCH_ORDINAL


def from_day_number(n: int) -> date:
    """The date of a day number."""
    return date.fromordinal(n + _EPOCH_ORDINAL)


def _weekmask(cal: Calendar) -> str:
    return "".join("1" if name in cal.workdays else "0" for name in DAY_NAMES)


@dataclass(frozen=True, slots=True, eq=False)
class WorkdayIndex:
    """The working days of one calendar over the day numbers ``[lo, hi)``.

    ``days[k]`` is the day number of the ``k``-th working day;
    ``first_at[t - lo]`` is the index of the first working day on or after
    day ``t`` (``len(days)`` when there is none before ``hi``), so it is also
    the count of working days before ``t``. Both are plain lists: scalar
    look-ups on lists are several times faster than on numpy arrays.
    """

    calendar: Calendar
    lo: int
    hi: int
    days: list[int]
    first_at: list[int]
    days_array: np.ndarray
    first_at_array: np.ndarray | None = None  # ``first_at`` as an array, for the engine's grid

    @property
    def size(self) -> int:
        return len(self.days)

    def covers(self, day: int) -> bool:
        return self.lo <= day < self.hi

    def index_on_or_after(self, day: int) -> int:
        """Index of the first working day on or after ``day`` (= working days before it)."""
        return self.first_at[day - self.lo]

    def count_on_or_before(self, day: int) -> int:
        """Number of working days on or before ``day`` within the horizon."""
        return self.first_at[day + 1 - self.lo]

    def day_at(self, k: int) -> int:
        """Day number of the working day with index ``k``."""
        if k < 0:
            msg = f"working-day index {k} before the start of the horizon"
            raise IndexError(msg)
        return self.days[k]

    def is_workday(self, day: int) -> bool:
        k = self.first_at[day - self.lo]
        return k < len(self.days) and self.days[k] == day

    # Vectorised forms, for analyses that convert many dates at once.
    def indices_on_or_after(self, days: np.ndarray) -> np.ndarray:
        return np.searchsorted(self.days_array, days, side="left")

    def days_at(self, ks: np.ndarray) -> np.ndarray:
        return self.days_array[ks]


def _build_index(cal: Calendar, lo: int, hi: int) -> WorkdayIndex:
    span = np.arange(lo, hi, dtype="int64")
    as_dates = span.astype("datetime64[D]")
    holidays = np.array([day_number(h) for h in cal.holidays], dtype="int64").astype("datetime64[D]")
    busy = np.busdaycalendar(weekmask=_weekmask(cal), holidays=holidays)
    working = np.is_busday(as_dates, busdaycal=busy)
    if cal.extra_workdays:
        extra = np.array([day_number(d) for d in cal.extra_workdays], dtype="int64")
        extra = extra[(extra >= lo) & (extra < hi)]
        working[extra - lo] = True
    days_array = span[working]
    # first_at has hi - lo + 1 entries so that count_on_or_before(hi - 1) works.
    first_at = np.searchsorted(days_array, np.arange(lo, hi + 1, dtype="int64"), side="left")
    first_at.flags.writeable = False
    return WorkdayIndex(
        calendar=cal,
        lo=lo,
        hi=hi,
        days=days_array.tolist(),
        first_at=first_at.tolist(),
        days_array=days_array,
        first_at_array=first_at,
    )


@lru_cache(maxsize=64)
def workday_index(cal: Calendar, lo: int, hi: int) -> WorkdayIndex:
    """The (cached) working-day index of ``cal`` over day numbers ``[lo, hi)``.

    Raises ``ValueError`` when the calendar has no working day at all, since
    nothing could ever be scheduled on it.
    """
    if lo < MIN_DAY or hi > MAX_DAY + 1:
        msg = "working-day horizon outside years 1-9999"
        raise ValueError(msg)
    if not cal.workdays and not cal.extra_workdays:
        msg = f"calendar {cal.id!r} has no working days"
        raise ValueError(msg)
    return _build_index(cal, lo, hi)


def _local_index(cal: Calendar, *days: date, span_days: int = 0) -> tuple[WorkdayIndex, list[int]]:
    nums = [day_number(d) for d in days]
    # Margin wide enough for span_days working days even on a one-day week
    # with holidays: 7 calendar days per working day, plus a year.
    margin = 7 * abs(span_days) + 400
    lo = (min(nums) - margin) // 4096 * 4096
    hi = (max(nums) + margin) // 4096 * 4096 + 4096
    return workday_index(cal, lo, hi), nums


def is_workday(cal: Calendar, d: date) -> bool:
    """True when ``d`` is a working day of ``cal``."""
    idx, (n,) = _local_index(cal, d)
    return idx.is_workday(n)


def next_workday(cal: Calendar, d: date) -> date:
    """The first working day on or after ``d``."""
    idx, (n,) = _local_index(cal, d)
    return from_day_number(idx.day_at(idx.index_on_or_after(n)))


def previous_workday(cal: Calendar, d: date) -> date:
    """The last working day on or before ``d``."""
    idx, (n,) = _local_index(cal, d)
    return from_day_number(idx.day_at(idx.count_on_or_before(n) - 1))


def add_workdays(cal: Calendar, d: date, n: int) -> date:
    """The working day ``n`` working days after ``d`` (before it when ``n`` < 0).

    ``d`` is first moved to the first working day on or after it (a start on a
    non-working day starts on the next working day), then ``n`` working days
    are counted from there; ``add_workdays(cal, d, 0)`` is ``next_workday``.
    This is numpy's ``busday_offset(..., roll="forward")``.
    """
    idx, (num,) = _local_index(cal, d, span_days=n)
    return from_day_number(idx.day_at(idx.index_on_or_after(num) + n))


def workdays_between(cal: Calendar, start: date, end: date) -> int:
    """Working days in ``[start, end)``: ``end`` excluded, negative when ``end < start``.

    This is numpy's ``busday_count`` convention.
    """
    idx, (a, b) = _local_index(cal, start, end)
    return idx.index_on_or_after(b) - idx.index_on_or_after(a)


def shift_date(d: date, days: int) -> date:
    """``d`` moved by ``days`` calendar days."""
    return d + timedelta(days=days)
