"""What a quality check is: the result types, the published thresholds and the ratio measure.

A :class:`QualityCheck` is one measure on one snapshot compared with its
threshold; a :class:`QualityReport` the checks of one snapshot. The
thresholds are those of the DCMA 14-point assessment (DCMA-EA PAM 200.1,
October 2012, sec. 4) as recalled; most checks are a count over a
population in percent (:func:`ratio_check`). The populations (incomplete
tasks, live links) are defined here once for the DCMA points
(:mod:`.dcma`) and the practitioners' checks (:mod:`.practice`).

Populations
-----------
Unless a check says otherwise it counts over the *incomplete tasks* of the
snapshot: activities without an actual finish, excluding milestones and
zero-duration tasks (the pamphlet excludes completed, level-of-effort,
summary and zero-duration work; the casefile format has no level-of-effort
or summary kinds). Link checks count the links that touch at least one
unfinished activity. The exclusions are recalled from the pamphlet and
from secondary summaries of it (from memory), not quoted.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from datetime import date

from forensic.core.model import Activity, Calendar, Casefile, Link, Snapshot

__all__ = [
    "BEI_LIMIT",
    "CPLI_LIMIT",
    "CP_TEST_CALENDAR_TOLERANCE",
    "CP_TEST_DELAY",
    "FS_LIMIT",
    "HARD_LIMIT",
    "HIGH_DURATION_DAYS",
    "HIGH_DURATION_LIMIT",
    "HIGH_FLOAT_DAYS",
    "HIGH_FLOAT_LIMIT",
    "INVALID_DATES_LIMIT",
    "LAGS_LIMIT",
    "LEADS_LIMIT",
    "LOGIC_LIMIT",
    "MISSED_LIMIT",
    "NEGATIVE_FLOAT_LIMIT",
    "PRACTICE",
    "SOURCE",
    "QualityCheck",
    "QualityReport",
    "activity_calendar",
    "is_task",
    "link_successors",
    "live_links",
    "ratio_check",
]

# Thresholds of DCMA-EA PAM 200.1 (Oct 2012). The figures below are those of
# the pamphlet as restated in the project's issue and in secondary summaries
# of it; they were checked against memory, not against the pamphlet's text.
HIGH_FLOAT_DAYS = 44  # check 6: total float above 44 working days (about two months)
HIGH_DURATION_DAYS = 44  # check 8: original duration above 44 working days
LOGIC_LIMIT = 5.0  # check 1: <= 5 % of incomplete tasks missing a predecessor or successor
LEADS_LIMIT = 0.0  # check 2: no leads
LAGS_LIMIT = 5.0  # check 3: <= 5 % of links with a positive lag
FS_LIMIT = 90.0  # check 4: >= 90 % of links finish-to-start
HARD_LIMIT = 5.0  # check 5: <= 5 % of incomplete tasks with a hard constraint
HIGH_FLOAT_LIMIT = 5.0  # check 6
NEGATIVE_FLOAT_LIMIT = 0.0  # check 7
HIGH_DURATION_LIMIT = 5.0  # check 8
INVALID_DATES_LIMIT = 0.0  # check 9
MISSED_LIMIT = 5.0  # check 11
CPLI_LIMIT = 0.95  # check 13
BEI_LIMIT = 0.95  # check 14
# Check 12 inserts a delay "large enough to be seen"; the pamphlet leaves the
# size to the analyst (from memory). 600 working days is far beyond any float
# a sound schedule carries, so a path that does not pass it on is plain.
CP_TEST_DELAY = 600
# Tolerance of check 12 when the path crosses calendars: each date rolls to the
# next working day of the next calendar, and 600 working days span two or
# three holiday seasons that the calendars close for differently, so the
# completion can move a few of the delayed task's working days more or less
# with the logic intact. A broken path moves far less (often nothing). Our own
# figure: 2 % of the delay (12 working days).
CP_TEST_CALENDAR_TOLERANCE = 0.02
SOURCE = "DCMA-EA PAM 200.1 (Oct 2012)"
PRACTICE = "common practice (our threshold; no published figure)"



@dataclass(frozen=True, slots=True)
class QualityCheck:
    """One check on one snapshot.

    ``number`` is the DCMA point (1-14), ``None`` for a practitioners' check;
    ``key`` a stable short name. ``value`` is the measure compared with
    ``limit`` by ``comparison`` (``"<="`` or ``">="``; ``"=="`` for check 12)
    in ``unit`` (``"percent"``, ``"index"`` or ``"working days"``); the
    comparison is empty for a check with no threshold (10, resources).
    ``passed`` is ``None`` when the check could not be assessed (``note``
    says why). ``activities`` are the activities that fail it, ``links`` the
    links that fail it (link checks).
    """

    number: int | None
    key: str
    title: str
    count: int | None
    denominator: int | None
    value: float | None
    unit: str
    comparison: str
    limit: float
    passed: bool | None
    source: str
    activities: tuple[str, ...] = ()
    links: tuple[Link, ...] = ()
    note: str = ""

    @property
    def status(self) -> str:
        """``pass``, ``fail`` or ``not assessed``."""
        return "not assessed" if self.passed is None else "pass" if self.passed else "fail"


@dataclass(frozen=True, slots=True)
class QualityReport:
    """The quality checks of one snapshot, measured against the casefile's baseline."""

    snapshot_id: str
    data_date: date
    baseline_id: str
    incomplete_tasks: int
    checks: tuple[QualityCheck, ...]

    def check(self, key: str) -> QualityCheck:
        for c in self.checks:
            if c.key == key:
                return c
        raise KeyError(key)

    @property
    def failed(self) -> tuple[QualityCheck, ...]:
        return tuple(c for c in self.checks if c.passed is False)



def is_task(a: Activity) -> bool:
    """A task in the pamphlet's sense: not a milestone, not of zero duration."""
    return not a.is_milestone and a.duration > 0


def live_links(snap: Snapshot) -> list[Link]:
    """The links that touch at least one unfinished activity (the link checks' population)."""
    acts = snap.activities
    return [
        link for link in snap.links
        if not acts[link.pred].is_finished or not acts[link.succ].is_finished
    ]


def ratio_check(
    number: int | None,
    key: str,
    title: str,
    failing: Sequence[str],
    denominator: int,
    comparison: str,
    limit: float,
    source: str = SOURCE,
    *,
    links: Sequence[Link] = (),
    count: int | None = None,
    note: str = "",
) -> QualityCheck:
    """A check whose measure is ``count / denominator`` in percent."""
    n = len(failing) if count is None else count
    if denominator == 0:
        return QualityCheck(
            number, key, title, n, 0, None, "percent", comparison, limit, None, source,
            tuple(failing), tuple(links), note or "nothing to count",
        )
    value = 100.0 * n / denominator
    passed = value <= limit if comparison == "<=" else value >= limit
    return QualityCheck(
        number, key, title, n, denominator, round(value, 2), "percent", comparison, limit,
        passed, source, tuple(failing), tuple(links), note,
    )



def activity_calendar(casefile: Casefile, a: Activity) -> Calendar:
    """The calendar an activity works on (the project's default when it names none)."""
    return casefile.calendars[a.calendar or casefile.project.default_calendar]



def link_successors(links: Iterable[Link]) -> list[str]:
    """The successors of the links, each once, in the order of their first link.

    A dict keeps the first-seen order (a list searched for each link took
    quadratic time: about 1 s a snapshot at 20,000 activities).
    """
    return list(dict.fromkeys(link.succ for link in links))

