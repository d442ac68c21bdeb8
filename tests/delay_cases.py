"""Hand-built casefiles for the windows and attribution tests (in memory, 7-day calendar).

Every case starts on Monday 2026-01-05. On a 7-day calendar a task of ``d``
days that starts on day ``s`` finishes on ``s + d - 1`` (casefile format,
"Time and dates"), so the dates in the comments can be checked by hand.
"""

from datetime import date

from forensic.core.calendars import DAY_NAMES
from forensic.core.model import (
    Activity,
    Calendar,
    Casefile,
    Event,
    Link,
    Party,
    Project,
    Snapshot,
    frozen_mapping,
)

D0 = date(2026, 1, 5)
SEVEN = Calendar("7d", DAY_NAMES)
FIVE = Calendar("5d", ("mon", "tue", "wed", "thu", "fri"))
PARTIES = {
    "OWN": Party("OWN", "Owner", "owner"),
    "CON": Party("CON", "Contractor", "contractor"),
    "WX": Party("WX", "Weather", "neutral"),
}


def day(n: int) -> date:
    """The date ``n`` calendar days after 2026-01-05."""
    return date.fromordinal(D0.toordinal() + n)


def snap(sid, data_date, acts, links, role="update"):
    return Snapshot(sid, data_date, frozen_mapping({a.id: a for a in acts}), tuple(Link(*x) if isinstance(x, tuple) else x for x in links), role=role)


def casefile(snapshots, events=(), unit="calendar-days", cal="7d", fragnets=None, windows=()):
    project = Project("test", cal, completion="M", delay_unit=unit)
    return Casefile(
        project=project,
        calendars=frozen_mapping({"7d": SEVEN, "5d": FIVE}),
        parties=frozen_mapping(PARTIES),
        snapshots=tuple(snapshots),
        events=tuple(events),
        fragnets=frozen_mapping(fragnets or {}),
        windows=tuple(windows),
    )


def task(aid, d, party="CON", **kw):
    return Activity(aid, aid, d, party=party, **kw)


def ms(aid="M"):
    return Activity(aid, "completion", 0, kind="closing-milestone")


def event(eid, party, category, start, finish, acts, fragnet=None):
    return Event(eid, eid, party, category, start, finish, tuple(acts), fragnet=fragnet)
