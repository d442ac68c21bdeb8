"""The setting of the demo: the project, its parties, its calendars and the casefile's columns.

The Merrowby Riverside Library and Civic Hall, built for Merrowby Town
Council by Tarrant & Vell Builders on the bank of the river Sallow: every
name is invented for this tool. Four calendars (five-day site, six-day
frame and substructure gangs, seven-day curing and testing, off-site
fabrication) with the holidays and shutdowns of an English site.
"""

from __future__ import annotations

from datetime import date, timedelta

from forensic.core.model import Calendar, Project

NAME = "riverside"
PROJECT_NAME = "Merrowby Riverside Library and Civic Hall"
COMPLETION = "M900"
CONTRACT_COMPLETION = date(2027, 6, 10)
RIV_KEY_DATE = date(2027, 3, 25)  # sectional completion: river terrace open for the festival

ACT_COLUMNS = (
    "id", "name", "kind", "duration", "remaining", "actual_start", "actual_finish",
    "calendar", "constraint", "constraint_date", "party", "area", "percent_complete",
    "crash_days", "crash_cost",
)
LINK_COLUMNS = ("pred", "succ", "type", "lag")
EVENT_COLUMNS = (
    "id", "title", "party", "category", "start", "finish", "activities", "fragnet", "reference",
)

PARTIES = (
    ("OWN", "Merrowby Town Council (employer)", "owner"),
    ("CON", "Tarrant & Vell Builders Ltd (main contractor)", "contractor"),
    ("WX", "Exceptional weather and river flooding", "neutral"),
    ("UTL", "Sallow Valley Power Networks (statutory utility)", "neutral"),
)

# ---------------------------------------------------------------- calendars


def _days(first: date, last: date) -> list[date]:
    return [first + timedelta(n) for n in range((last - first).days + 1)]


PUBLIC_HOLIDAYS = [
    date(2026, 4, 3), date(2026, 4, 6), date(2026, 5, 4), date(2026, 5, 25),
    date(2026, 8, 31), date(2026, 12, 25), date(2026, 12, 28), date(2027, 1, 1),
    date(2027, 3, 26), date(2027, 3, 29), date(2027, 5, 3), date(2027, 5, 31),
    date(2027, 8, 30), date(2027, 12, 27), date(2027, 12, 28),
]
SITE_SHUTDOWN = _days(date(2026, 12, 21), date(2027, 1, 1))  # Christmas shutdown, 5-day site
FRAME_SHUTDOWN = _days(date(2026, 12, 24), date(2027, 1, 1))  # shorter for the frame gangs
FACTORY_SHUTDOWN = _days(date(2026, 8, 3), date(2026, 8, 14))  # fabricators' summer closure


def _holidays(*extra: list[date], workdays: tuple[str, ...]) -> tuple[date, ...]:
    names = ("mon", "tue", "wed", "thu", "fri", "sat", "sun")
    days = set(PUBLIC_HOLIDAYS)
    for block in extra:
        days.update(block)
    return tuple(sorted(d for d in days if names[d.weekday()] in workdays))


WEEK5 = ("mon", "tue", "wed", "thu", "fri")
WEEK6 = (*WEEK5, "sat")
WEEK7 = (*WEEK6, "sun")
CALENDARS = {
    "5d": Calendar("5d", WEEK5, _holidays(SITE_SHUTDOWN, workdays=WEEK5)),
    "6d": Calendar("6d", WEEK6, _holidays(FRAME_SHUTDOWN, workdays=WEEK6)),
    "7d": Calendar("7d", WEEK7, ()),
    "fab": Calendar(
        "fab", WEEK5, _holidays(FACTORY_SHUTDOWN, FRAME_SHUTDOWN, workdays=WEEK5)
    ),
}
CALENDAR_NOTES = {
    "5d": "site works: Monday-Friday, public holidays, Christmas shutdown 21 Dec 2026 - 1 Jan 2027",
    "6d": "frame and substructure gangs: Monday-Saturday, public holidays, 24 Dec - 1 Jan",
    "7d": "curing, drying and testing: every day",
    "fab": "off-site fabrication: Monday-Friday, public holidays, factory closed 3-14 Aug 2026",
}
PROJECT = Project(
    name=PROJECT_NAME,
    default_calendar="5d",
    completion=COMPLETION,
    contract_completion=CONTRACT_COMPLETION,
    delay_unit="calendar-days",
    progress_logic="retained",
    critical_float=0,
)

BL_DATE = date(2026, 3, 2)  # the baseline's data date
