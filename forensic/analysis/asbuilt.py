"""As-planned versus as-built: the baseline against the last update, activity by activity.

This is the observational, static-logic comparison of AACE RP 29R-03
method implementation protocols 3.1 (gross) and 3.2 (periodic): each
activity's planned start, finish and duration in the baseline against its
actual (or, where not yet reached, forecast) start, finish and duration in
the last update, with the slips (AACE RP 29R-03 terms: as-planned, as-built). Start and
finish slips are in the casefile's delay unit (a negative slip is earlier than planned);
duration growth in working days of the activity's calendar.

References
----------
AACE International Recommended Practice 29R-03, Forensic Schedule Analysis,
protocols 3.1 and 3.2.
SCL Delay and Disruption Protocol, 2nd ed., Appendix A (as-planned versus
as-built windows analysis).
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date, timedelta

from forensic.core.calendars import workdays_between
from forensic.core.engine import schedule
from forensic.core.model import Casefile
from forensic.core.tables import Table
from forensic.core.units import unit_counter

__all__ = ["AsBuiltRow", "as_planned_vs_as_built", "asbuilt_table"]


@dataclass(frozen=True, slots=True)
class AsBuiltRow:
    """One activity planned against built.

    ``status`` is ``finished``, ``in-progress``, ``not-started``, ``added``
    (not in the baseline) or ``deleted`` (not in the last update). For an
    activity not finished the "actual" finish is the last update's forecast
    (``forecast`` is then true). Slips are ``None`` where one side is
    missing.
    """

    id: str
    name: str
    status: str
    as_planned_start: date | None
    as_planned_finish: date | None
    as_planned_days: int | None
    as_built_start: date | None
    as_built_finish: date | None
    as_built_days: int | None
    forecast: bool
    start_slip: int | None
    finish_slip: int | None
    duration_growth: int | None


def as_planned_vs_as_built(casefile: Casefile) -> tuple[AsBuiltRow, ...]:
    """Compare every activity of the baseline with the last update (AACE RP 29R-03, 3.1/3.2).

    Parameters
    ----------
    casefile : Casefile

    Returns
    -------
    tuple of AsBuiltRow
        Baseline activities in file order, then those the updates added.
    """
    base, last = casefile.baseline, casefile.snapshots[-1]
    rb = schedule(base, casefile.calendars, casefile.project)
    rl = schedule(last, casefile.calendars, casefile.project)
    count = unit_counter(casefile)
    rows = []
    ids = list(base.activities) + [a for a in last.activities if a not in base.activities]
    for aid in ids:
        p = base.activities.get(aid)
        a = last.activities.get(aid)
        ps = rb[aid].early_start if p else None
        pf = rb[aid].early_finish if p else None
        pd = p.duration if p else None
        if a is None:
            assert p is not None  # every id is in the baseline or the last update
            rows.append(AsBuiltRow(aid, p.name, "deleted", ps, pf, pd, None, None, None, False, None, None, None))
            continue
        x = rl[aid]
        cal = casefile.calendars[a.calendar or casefile.project.default_calendar]
        finished = a.is_finished
        ad = None
        if a.actual_start is not None:
            end = a.actual_finish if a.actual_finish is not None else x.early_finish
            ad = 0 if a.is_milestone else workdays_between(cal, a.actual_start, end + timedelta(days=1))
        status = "added" if p is None else x.status
        rows.append(
            AsBuiltRow(
                aid,
                a.name,
                status,
                ps,
                pf,
                pd,
                x.early_start,
                x.early_finish,
                ad,
                not finished,
                None if ps is None else count(x.early_start) - count(ps),  # ps, pf are None exactly when p is
                None if pf is None else count(x.early_finish) - count(pf),
                None if (p is None or ad is None) else ad - p.duration,
            )
        )
    return tuple(rows)


ASBUILT_COLUMNS = tuple(AsBuiltRow.__slots__)


def asbuilt_table(rows: tuple[AsBuiltRow, ...]) -> Table:
    """The as-planned versus as-built comparison as a table."""
    return Table("as-planned-vs-as-built", ASBUILT_COLUMNS, tuple(tuple(getattr(r, c) for c in ASBUILT_COLUMNS) for r in rows))
