"""Units of delay: working days, calendar days and the casefile's delay unit.

A casefile states the unit its delay is counted in (``delay_unit`` in the
manifest: calendar days, or working days of the project's default
calendar; AACE RP 29R-03 leaves the choice to the analyst and asks that it
be stated). Every analysis that turns two dates into days of delay counts
them here, so that one figure means the same in every table.
"""

from __future__ import annotations

from collections.abc import Callable
from datetime import date, timedelta

from forensic.core.calendars import add_workdays, workdays_between
from forensic.core.model import Casefile

__all__ = ["unit_counter", "unit_shift"]


def unit_counter(casefile: Casefile) -> Callable[[date], int]:
    """A cumulative day count in the casefile's delay unit: slip = count(later) - count(earlier).

    Calendar days count every day; working days count the working days of
    the project's default calendar up to and including the date (AACE RP
    29R-03 leaves the unit to the analyst; the casefile states it).
    """
    if casefile.project.delay_unit != "working-days":
        return date.toordinal
    cal = casefile.calendars[casefile.project.default_calendar]
    ref = casefile.baseline.data_date

    def count(d: date) -> int:
        return workdays_between(cal, ref, d + timedelta(days=1))

    return count


def unit_shift(casefile: Casefile, d: date, days: int) -> date:
    """The date ``days`` delay units before (``days`` < 0: after) ``d``, for restoring lost time."""
    if casefile.project.delay_unit != "working-days":
        return d - timedelta(days=days)
    cal = casefile.calendars[casefile.project.default_calendar]
    return add_workdays(cal, d, -days)
