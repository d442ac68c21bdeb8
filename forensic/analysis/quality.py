"""Schedule quality: the DCMA 14-point assessment and practitioners' checks.

Before a schedule is relied on in a delay analysis it has to be shown fit
for use (AACE RP 29R-03, sec. 2.1, source validation). The Defense Contract
Management Agency's 14-point assessment (DCMA-EA PAM 200.1, *Earned Value
Management System (EVMS) Program Analysis Pamphlet*, October 2012) is the
check most often quoted; this module runs it on one snapshot, with its
published thresholds, and adds a few checks that practitioners expect.

Populations
-----------
Unless a check says otherwise it counts over the *incomplete tasks* of the
snapshot: activities without an actual finish, excluding milestones and
zero-duration tasks (the pamphlet excludes completed, level-of-effort,
summary and zero-duration work; the casefile format has no level-of-effort
or summary kinds). Link checks count the links that touch at least one
unfinished activity. The exclusions are recalled from the pamphlet and
from secondary summaries of it (from memory), not quoted.

Every date and float comes from the scheduling engine
(:func:`forensic.core.engine.schedule`); working-day counts come from
:mod:`forensic.core.calendars`. Nothing here re-implements the critical path
method.

References
----------
DCMA-EA PAM 200.1, Earned Value Management System (EVMS) Program Analysis
Pamphlet, Defense Contract Management Agency, October 2012, sec. 4 (the
14-point schedule assessment).
AACE International Recommended Practice 29R-03, Forensic Schedule Analysis.
GAO-16-89G, Schedule Assessment Guide, December 2015 (best practices 2, 6
and 7 on logic, float and the critical path).
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from dataclasses import dataclass, replace
from datetime import date, timedelta
from typing import Any

from forensic.core.calendars import workdays_between
from forensic.core.engine import ScheduleResult, schedule
from forensic.core.model import (
    HARD_CONSTRAINTS,
    Activity,
    Calendar,
    Casefile,
    Link,
    Snapshot,
    frozen_mapping,
)
from forensic.core.tables import Table

__all__ = [
    "CP_TEST_DELAY",
    "HIGH_DURATION_DAYS",
    "HIGH_FLOAT_DAYS",
    "QualityCheck",
    "QualityReport",
    "assess_casefile",
    "assess_quality",
    "out_of_sequence_links",
    "quality_json",
    "quality_table",
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


# -- helpers ---------------------------------------------------------------


def _is_task(a: Activity) -> bool:
    return not a.is_milestone and a.duration > 0


def _ratio_check(
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


def _calendar(casefile: Casefile, a: Activity) -> Calendar:
    return casefile.calendars[a.calendar or casefile.project.default_calendar]


def _instant_of_start(a: Activity) -> date | None:
    """The day a start-timed link (SS, SF) passes on, from actual dates (engine rules)."""
    if a.kind == "closing-milestone":
        d = a.actual_finish or a.actual_start
        return None if d is None else d + timedelta(days=1)
    return a.actual_start or (a.actual_finish if a.is_milestone else None)


def _instant_of_finish(a: Activity) -> date | None:
    """The day a finish-timed link (FS, FF) passes on, from actual dates (engine rules)."""
    if a.kind == "opening-milestone":
        return a.actual_start or a.actual_finish
    d = a.actual_finish or (a.actual_start if a.is_milestone else None)
    return None if d is None else d + timedelta(days=1)


def out_of_sequence_links(snap: Snapshot) -> tuple[Link, ...]:
    """The links whose actual dates run out of sequence (the successor's side came first).

    An FS or SS successor started, or an FF or SF successor finished, before
    the predecessor's finish (FS, FF) or start (SS, SF) that the link waits
    for, or while that predecessor has not reached it. Lags are not
    considered: this is about the order of the work, from actual dates only,
    timed as the engine times links (common practice; AACE RP 29R-03, sec.
    2.2 on out-of-sequence progress).
    """
    acts = snap.activities
    bad: list[Link] = []
    for link in snap.links:
        p, s = acts[link.pred], acts[link.succ]
        pred_day = _instant_of_start(p) if link.type in ("SS", "SF") else _instant_of_finish(p)
        succ_day = _instant_of_start(s) if link.type in ("FS", "SS") else _instant_of_finish(s)
        if succ_day is None:
            continue  # the successor's side has not happened: nothing out of order yet
        if pred_day is None or succ_day < pred_day:
            bad.append(link)
    return tuple(bad)


# -- the assessment --------------------------------------------------------


def assess_quality(
    casefile: Casefile,
    snapshot_id: str,
    *,
    baseline_result: ScheduleResult | None = None,
) -> QualityReport:
    """Run the DCMA 14-point assessment and the practitioners' checks on one snapshot.

    Parameters
    ----------
    casefile : Casefile
        Supplies the snapshot, its calendars, the project settings and the
        baseline (checks 11 and 14 compare with the baseline's dates; check
        13 measures float to the contract completion, else the baseline's).
    snapshot_id : str
        The snapshot to assess.
    baseline_result : ScheduleResult, optional
        The scheduled baseline, when the caller already has it.

    Returns
    -------
    QualityReport
        One :class:`QualityCheck` per check, DCMA points 1-14 first.

    Notes
    -----
    The measures (DCMA-EA PAM 200.1, Oct 2012; thresholds as recalled, see
    the module constants):

    1. logic = tasks missing a predecessor or a successor / tasks <= 5 %
    2. leads = links with negative lag / links = 0 %
    3. lags = links with positive lag / links <= 5 %
    4. relationship types = FS links / links >= 90 %
    5. hard constraints = tasks with a hard constraint / tasks <= 5 %
    6. high float = tasks with total float > 44 wd / tasks <= 5 %
    7. negative float = tasks with total float < 0 / tasks = 0 %
    8. high duration = tasks with duration > 44 wd / tasks <= 5 %
    9. invalid dates = actual dates on or after the data date, or forecast
       dates before it / activities = 0 %
    10. resources: not assessed (the casefile format carries no resources)
    11. missed tasks = tasks baselined to finish before the data date that
        finished later than baselined or not at all / those tasks <= 5 %
    12. critical path test: a delay of ``CP_TEST_DELAY`` wd on the first
        unfinished task of the longest path moves the completion by as much,
        in working days of that task's calendar (within 2 % when the path
        crosses calendars, whose holidays differ)
    13. CPLI = (CPL + TF) / CPL >= 0.95, CPL the working days from the data
        date to the forecast completion, TF the completion's float to the
        contract completion (else the baseline's completion)
    14. BEI = tasks finished / tasks baselined to finish before the data
        date >= 0.95

    References
    ----------
    DCMA-EA PAM 200.1 (October 2012), sec. 4, the 14-point assessment.
    GAO-16-89G Schedule Assessment Guide (2015), best practices 2 and 6.
    """
    snap = casefile.snapshot(snapshot_id)
    cals, project = casefile.calendars, casefile.project
    result = schedule(snap, cals, project)
    base_snap = casefile.baseline
    if baseline_result is None:
        baseline_result = result if base_snap.id == snap.id else schedule(base_snap, cals, project)
    acts = snap.activities
    tasks = [a for a in acts.values() if not a.is_finished and _is_task(a)]
    task_ids = [a.id for a in tasks]
    n_tasks = len(tasks)
    has_pred = {link.succ for link in snap.links}
    has_succ = {link.pred for link in snap.links}
    live_links = [
        link for link in snap.links
        if not acts[link.pred].is_finished or not acts[link.succ].is_finished
    ]
    n_links = len(live_links)
    tf = {a: result[a].total_float for a in task_ids}

    checks: list[QualityCheck] = []
    add = checks.append

    add(_ratio_check(1, "logic", "Logic: tasks missing a predecessor or a successor",
                     [a for a in task_ids if a not in has_pred or a not in has_succ],
                     n_tasks, "<=", LOGIC_LIMIT))
    leads = [link for link in live_links if link.lag < 0]
    add(_ratio_check(2, "leads", "Leads: links with a negative lag", _succs(leads), n_links,
                     "<=", LEADS_LIMIT, links=leads, count=len(leads)))
    lags = [link for link in live_links if link.lag > 0]
    add(_ratio_check(3, "lags", "Lags: links with a positive lag", _succs(lags), n_links,
                     "<=", LAGS_LIMIT, links=lags, count=len(lags)))
    not_fs = [link for link in live_links if link.type != "FS"]
    fs = _ratio_check(4, "relationship-types", "Relationship types: finish-to-start links",
                      _succs(not_fs), n_links, ">=", FS_LIMIT, links=not_fs,
                      count=n_links - len(not_fs))
    add(fs)
    add(_ratio_check(5, "hard-constraints", "Hard constraints on tasks",
                     [a.id for a in tasks if a.constraint in HARD_CONSTRAINTS], n_tasks, "<=", HARD_LIMIT))
    add(_ratio_check(6, "high-float", f"High float: total float above {HIGH_FLOAT_DAYS} working days",
                     [a for a in task_ids if tf[a] is not None and tf[a] > HIGH_FLOAT_DAYS],
                     n_tasks, "<=", HIGH_FLOAT_LIMIT))
    add(_ratio_check(7, "negative-float", "Negative float",
                     [a for a in task_ids if tf[a] is not None and tf[a] < 0], n_tasks, "<=",
                     NEGATIVE_FLOAT_LIMIT))
    add(_ratio_check(8, "high-duration", f"High duration: above {HIGH_DURATION_DAYS} working days",
                     [a.id for a in tasks if a.duration > HIGH_DURATION_DAYS], n_tasks, "<=",
                     HIGH_DURATION_LIMIT))
    add(_invalid_dates(snap, result))
    add(QualityCheck(10, "resources", "Resources", None, None, None, "percent", "", 0.0, None, SOURCE,
                     note="not assessed: the casefile carries no resource data"))
    add(_missed_tasks(snap, base_snap, baseline_result))
    add(_critical_path_test(casefile, snap, result))
    add(_cpli(casefile, snap, result, baseline_result))
    add(_bei(snap, base_snap, baseline_result))
    checks.extend(_practitioners_checks(casefile, snap, result, live_links))
    return QualityReport(snap.id, snap.data_date, base_snap.id, n_tasks, tuple(checks))


def assess_casefile(casefile: Casefile, snapshot_ids: Iterable[str] | None = None) -> tuple[QualityReport, ...]:
    """:func:`assess_quality` for each snapshot (all of them by default), oldest first."""
    base = casefile.baseline
    base_result = schedule(base, casefile.calendars, casefile.project)
    ids = list(snapshot_ids) if snapshot_ids is not None else [s.id for s in casefile.snapshots]
    return tuple(assess_quality(casefile, sid, baseline_result=base_result) for sid in ids)


def _succs(links: Iterable[Link]) -> list[str]:
    out: list[str] = []
    for link in links:
        if link.succ not in out:
            out.append(link.succ)
    return out


def _invalid_dates(snap: Snapshot, result: ScheduleResult) -> QualityCheck:
    # All activities, milestones and finished work included: a future actual
    # date is wrong wherever it is (the pamphlet's check 9, from memory).
    dd = snap.data_date
    bad = []
    for a in snap.activities.values():
        x = result[a.id]
        actual_late = any(d is not None and d >= dd for d in (a.actual_start, a.actual_finish))
        forecast_early = (x.status == "not-started" and x.early_start < dd) or (
            x.status != "finished" and x.early_finish < dd
        )
        if actual_late or forecast_early:
            bad.append(a.id)
    return _ratio_check(9, "invalid-dates",
                        "Invalid dates: actuals on or after the data date, forecasts before it",
                        bad, len(snap.activities), "<=", INVALID_DATES_LIMIT)


def _planned_by(base_snap: Snapshot, base: ScheduleResult, data_date: date) -> list[str]:
    """Baseline tasks whose baseline finish date falls before ``data_date``."""
    return [
        a.id for a in base_snap.activities.values()
        if _is_task(a) and base[a.id].early_finish < data_date
    ]


def _missed_tasks(snap: Snapshot, base_snap: Snapshot, base: ScheduleResult) -> QualityCheck:
    planned = _planned_by(base_snap, base, snap.data_date)
    missed = []
    for aid in planned:
        a = snap.activities.get(aid)
        # A task deleted since the baseline was not done as planned; counting
        # it as missed keeps a deletion from improving the score (our choice).
        if a is None or a.actual_finish is None or a.actual_finish > base[aid].early_finish:
            missed.append(aid)
    return _ratio_check(11, "missed-tasks", "Missed tasks: baselined to finish before the data date, late or open",
                        missed, len(planned), "<=", MISSED_LIMIT,
                        note="" if planned else "no task was baselined to finish before the data date")


def _bei(snap: Snapshot, base_snap: Snapshot, base: ScheduleResult) -> QualityCheck:
    planned = _planned_by(base_snap, base, snap.data_date)
    finished = [a.id for a in snap.activities.values() if _is_task(a) and a.is_finished]
    behind = [aid for aid in planned if aid not in snap.activities or not snap.activities[aid].is_finished]
    if not planned:
        return QualityCheck(14, "bei", "Baseline execution index (BEI)", len(finished), 0, None, "index", ">=",
                            BEI_LIMIT, None, SOURCE,
                            note="no task was baselined to finish before the data date")
    # The numerator counts every finished task, planned or not (DCMA, from memory).
    value = len(finished) / len(planned)
    return QualityCheck(14, "bei", "Baseline execution index (BEI)", len(finished), len(planned),
                        round(value, 4), "index", ">=", BEI_LIMIT, value >= BEI_LIMIT, SOURCE, tuple(behind),
                        note="BEI = tasks finished / tasks baselined to finish before the data date")


def _completion_calendar(casefile: Casefile, snap: Snapshot, result: ScheduleResult) -> Calendar:
    return _calendar(casefile, snap.activities[result.completion_id])


def _cpli(casefile: Casefile, snap: Snapshot, result: ScheduleResult, base: ScheduleResult) -> QualityCheck:
    title = "Critical path length index (CPLI)"
    if result.completion_float is None:
        return QualityCheck(13, "cpli", title, None, None, None, "index", ">=", CPLI_LIMIT, None, SOURCE,
                            note="the completion is finished")
    cal = _completion_calendar(casefile, snap, result)
    one = timedelta(days=1)
    target = casefile.project.contract_completion or base.completion
    # Critical path length: working days from the data date through the forecast completion.
    cpl = workdays_between(cal, snap.data_date, result.completion + one)
    # The engine's backward pass closes on the project's own end, so float to a
    # later target is counted on the completion's calendar: working days from
    # the forecast to the target (negative when the forecast is later). When
    # the completion carries its own finish constraint the engine's float is
    # the one the schedule states, and it is used instead.
    comp = snap.activities[result.completion_id]
    if comp.constraint in ("finish-by", "finish-fixed"):
        total_float = result.completion_float
        against = f"its {comp.constraint} constraint"
    else:
        total_float = workdays_between(cal, result.completion + one, target + one)
        against = "the contract completion" if casefile.project.contract_completion else "the baseline completion"
    if cpl <= 0:
        return QualityCheck(13, "cpli", title, None, None, None, "index", ">=", CPLI_LIMIT, None, SOURCE,
                            note="no remaining critical path length")
    value = (cpl + total_float) / cpl
    return QualityCheck(
        13, "cpli", title, total_float, cpl, round(value, 4), "index", ">=", CPLI_LIMIT,
        value >= CPLI_LIMIT, SOURCE,
        () if value >= CPLI_LIMIT else (result.completion_id,),
        note=f"CPLI = (CPL {cpl} + TF {total_float}) / CPL {cpl}; TF to {against} ({target.isoformat()})",
    )


def _critical_path_test(casefile: Casefile, snap: Snapshot, result: ScheduleResult) -> QualityCheck:
    title = f"Critical path test: {CP_TEST_DELAY} working days inserted on the longest path"
    acts = snap.activities
    target = next(
        (aid for aid in result.longest_path if not acts[aid].is_finished and _is_task(acts[aid])), None
    )
    if target is None:
        return QualityCheck(12, "critical-path-test", title, None, None, None, "working days", "==",
                            CP_TEST_DELAY, None, SOURCE, note="no unfinished task on the longest path")
    a = acts[target]
    delayed = replace(a, duration=a.duration + CP_TEST_DELAY, remaining=a.remaining_duration + CP_TEST_DELAY)
    test_snap = replace(snap, activities=frozen_mapping({**acts, target: delayed}))
    after = schedule(test_snap, casefile.calendars, casefile.project)
    cal = _calendar(casefile, a)
    one = timedelta(days=1)
    moved = workdays_between(cal, result.completion + one, after.completion + one)
    cal_ids = {_calendar(casefile, acts[x]).id for x in result.longest_path}
    tolerance = 0 if cal_ids == {cal.id} else round(CP_TEST_CALENDAR_TOLERANCE * CP_TEST_DELAY)
    passed = abs(moved - CP_TEST_DELAY) <= tolerance
    note = (f"delayed {target}; completion {result.completion_id} moved {moved} working days "
            f"of calendar {cal.id} ({result.completion.isoformat()} -> {after.completion.isoformat()})")
    if tolerance:
        note += (f"; the path crosses calendars ({', '.join(sorted(cal_ids))}), so "
                 f"+/-{tolerance} working days are allowed")
    return QualityCheck(12, "critical-path-test", title, 0 if passed else 1, 1, float(moved), "working days", "==",
                        CP_TEST_DELAY, passed, SOURCE, () if passed else (target,), note=note)


# -- practitioners' checks -------------------------------------------------


def _practitioners_checks(
    casefile: Casefile, snap: Snapshot, result: ScheduleResult, live_links: Sequence[Link]
) -> list[QualityCheck]:
    acts = snap.activities
    open_acts = [a for a in acts.values() if not a.is_finished]
    has_pred = {link.succ for link in snap.links}
    has_succ = {link.pred for link in snap.links}
    # Open ends: everything unfinished except the start milestones (no
    # predecessor needed) and the completion (no successor needed).
    open_ends = [
        a.id for a in open_acts
        if (a.id not in has_pred and a.kind != "opening-milestone")
        or (a.id not in has_succ and a.id != result.completion_id)
    ]
    started = [a for a in acts.values() if a.is_started or (a.is_milestone and a.is_finished)]
    oos = _succs(out_of_sequence_links(snap))
    no_cal = [a.id for a in acts.values() if a.calendar is None]
    # A milestone that gathers several predecessors and feeds several
    # successors acts as a summary: every successor then waits for every
    # predecessor, which can hide the real driving logic (common practice).
    n_in: dict[str, int] = {}
    n_out: dict[str, int] = {}
    for link in snap.links:
        n_in[link.succ] = n_in.get(link.succ, 0) + 1
        n_out[link.pred] = n_out.get(link.pred, 0) + 1
    hubs = {
        a.id for a in open_acts
        if a.is_milestone and n_in.get(a.id, 0) >= 2 and n_out.get(a.id, 0) >= 2
    }
    hub_links = [link for link in live_links if link.pred in hubs or link.succ in hubs]
    tasks = [a for a in open_acts if _is_task(a)]
    over = [a.id for a in tasks if a.remaining_duration > a.duration]
    with_pct = [a for a in acts.values() if a.percent_complete is not None]
    pct_bad = [
        a.id for a in with_pct
        if (a.status == "not-started" and a.percent_complete > 0)
        or (a.status == "finished" and a.percent_complete < 100)
        or (a.status == "in-progress" and a.percent_complete >= 100)
    ]
    return [
        _ratio_check(None, "open-ends", "Open ends: unfinished activities without a predecessor or a successor",
                     open_ends, len(open_acts), "<=", 0.0, PRACTICE),
        _ratio_check(None, "out-of-sequence", "Out-of-sequence progress: actual dates that break a link",
                     oos, len(started), "<=", 0.0, PRACTICE),
        _ratio_check(None, "no-calendar", "Activities without a calendar (default applied)",
                     no_cal, len(acts), "<=", 0.0, PRACTICE),
        _ratio_check(None, "summary-milestone-links",
                     "Links to or from summary-like milestones (2+ predecessors and 2+ successors)",
                     sorted(hubs), len(live_links), "<=", 5.0, PRACTICE, links=hub_links,
                     count=len(hub_links)),
        _ratio_check(None, "remaining-over-duration", "Remaining duration larger than original duration",
                     over, len(tasks), "<=", 0.0, PRACTICE),
        _ratio_check(None, "percent-vs-actuals", "Percent complete inconsistent with actual dates",
                     pct_bad, len(with_pct), "<=", 0.0, PRACTICE),
    ]


# -- tables ----------------------------------------------------------------

QUALITY_COLUMNS = (
    "snapshot", "number", "key", "title", "count", "denominator", "value", "unit",
    "comparison", "limit", "result", "activities", "note",
)


def quality_table(reports: Sequence[QualityReport]) -> Table:
    """One row per check per snapshot (the ``forensic check --quality --csv`` table)."""
    rows = tuple(
        (r.snapshot_id, c.number, c.key, c.title, c.count, c.denominator, c.value, c.unit,
         c.comparison, c.limit, c.status, c.activities, c.note)
        for r in reports for c in r.checks
    )
    return Table("quality", QUALITY_COLUMNS, rows)


def _check_json(c: QualityCheck) -> dict[str, Any]:
    return {
        "number": c.number,
        "key": c.key,
        "title": c.title,
        "count": c.count,
        "denominator": c.denominator,
        "value": c.value,
        "unit": c.unit,
        "comparison": c.comparison,
        "limit": c.limit,
        "result": c.status,
        "passed": c.passed,
        "source": c.source,
        "activities": list(c.activities),
        "links": [{"pred": k.pred, "succ": k.succ, "type": k.type, "lag": k.lag} for k in c.links],
        "note": c.note,
    }


def quality_json(reports: Sequence[QualityReport]) -> dict[str, Any]:
    """The ``forensic check --quality --json`` object (keys in docs/quality-and-compare.md)."""
    return {
        "snapshots": [
            {
                "snapshot": r.snapshot_id,
                "data_date": r.data_date,
                "baseline": r.baseline_id,
                "incomplete_tasks": r.incomplete_tasks,
                "passed": sum(1 for c in r.checks if c.passed is True),
                "failed": sum(1 for c in r.checks if c.passed is False),
                "not_assessed": sum(1 for c in r.checks if c.passed is None),
                "checks": [_check_json(c) for c in r.checks],
            }
            for r in reports
        ]
    }
