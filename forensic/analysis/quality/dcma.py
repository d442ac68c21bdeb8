"""The DCMA 14-point schedule assessment of one snapshot (DCMA-EA PAM 200.1, October 2012, sec. 4).

The measures, over the incomplete tasks unless a point says otherwise
(thresholds in :mod:`.checks`, as recalled):

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
    unfinished task of the longest path moves the completion by as much
13. CPLI = (CPL + TF) / CPL >= 0.95
14. BEI = tasks finished / tasks baselined to finish before the data
    date >= 0.95

Every date and float comes from the scheduling engine
(:func:`forensic.core.engine.schedule`); working-day counts come from
:mod:`forensic.core.calendars`. GAO-16-89G, Schedule Assessment Guide
(2015), best practices 2, 6 and 7, covers the same ground.
"""

from __future__ import annotations

from dataclasses import replace
from datetime import date, timedelta

from forensic.core.calendars import workdays_between
from forensic.core.engine import ScheduleResult, schedule
from forensic.core.model import HARD_CONSTRAINTS, Calendar, Casefile, Snapshot, frozen_mapping

from .checks import (
    BEI_LIMIT,
    CP_TEST_CALENDAR_TOLERANCE,
    CP_TEST_DELAY,
    CPLI_LIMIT,
    FS_LIMIT,
    HARD_LIMIT,
    HIGH_DURATION_DAYS,
    HIGH_DURATION_LIMIT,
    HIGH_FLOAT_DAYS,
    HIGH_FLOAT_LIMIT,
    INVALID_DATES_LIMIT,
    LAGS_LIMIT,
    LEADS_LIMIT,
    LOGIC_LIMIT,
    MISSED_LIMIT,
    NEGATIVE_FLOAT_LIMIT,
    SOURCE,
    QualityCheck,
    activity_calendar,
    is_task,
    link_successors,
    live_links,
    ratio_check,
)

__all__ = ["dcma_checks"]


def dcma_checks(casefile: Casefile, snap: Snapshot, result: ScheduleResult, base_snap: Snapshot,
                baseline_result: ScheduleResult) -> list[QualityCheck]:
    """The 14 points on ``snap`` (scheduled as ``result``), against the scheduled baseline."""
    acts = snap.activities
    tasks = [a for a in acts.values() if not a.is_finished and is_task(a)]
    task_ids = [a.id for a in tasks]
    n_tasks = len(tasks)
    has_pred = {link.succ for link in snap.links}
    has_succ = {link.pred for link in snap.links}
    live = live_links(snap)
    n_links = len(live)
    known_tf = {a: tf for a in task_ids if (tf := result[a].total_float) is not None}

    checks: list[QualityCheck] = []
    add = checks.append

    add(ratio_check(1, "logic", "Logic: tasks missing a predecessor or a successor",
                    [a for a in task_ids if a not in has_pred or a not in has_succ],
                    n_tasks, "<=", LOGIC_LIMIT))
    leads = [link for link in live if link.lag < 0]
    add(ratio_check(2, "leads", "Leads: links with a negative lag", link_successors(leads), n_links,
                    "<=", LEADS_LIMIT, links=leads, count=len(leads)))
    lags = [link for link in live if link.lag > 0]
    add(ratio_check(3, "lags", "Lags: links with a positive lag", link_successors(lags), n_links,
                    "<=", LAGS_LIMIT, links=lags, count=len(lags)))
    not_fs = [link for link in live if link.type != "FS"]
    fs = ratio_check(4, "relationship-types", "Relationship types: finish-to-start links",
                     link_successors(not_fs), n_links, ">=", FS_LIMIT, links=not_fs,
                     count=n_links - len(not_fs))
    add(fs)
    add(ratio_check(5, "hard-constraints", "Hard constraints on tasks",
                    [a.id for a in tasks if a.constraint in HARD_CONSTRAINTS], n_tasks, "<=", HARD_LIMIT))
    add(ratio_check(6, "high-float", f"High float: total float above {HIGH_FLOAT_DAYS} working days",
                    [a for a in task_ids if a in known_tf and known_tf[a] > HIGH_FLOAT_DAYS],
                    n_tasks, "<=", HIGH_FLOAT_LIMIT))
    add(ratio_check(7, "negative-float", "Negative float",
                    [a for a in task_ids if a in known_tf and known_tf[a] < 0], n_tasks, "<=",
                    NEGATIVE_FLOAT_LIMIT))
    add(ratio_check(8, "high-duration", f"High duration: above {HIGH_DURATION_DAYS} working days",
                    [a.id for a in tasks if a.duration > HIGH_DURATION_DAYS], n_tasks, "<=",
                    HIGH_DURATION_LIMIT))
    add(_invalid_dates(snap, result))
    add(QualityCheck(10, "resources", "Resources", None, None, None, "percent", "", 0.0, None, SOURCE,
                     note="not assessed: the casefile carries no resource data"))
    add(_missed_tasks(snap, base_snap, baseline_result))
    add(_critical_path_test(casefile, snap, result))
    add(_cpli(casefile, snap, result, baseline_result))
    add(_bei(snap, base_snap, baseline_result))
    return checks


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
    return ratio_check(9, "invalid-dates",
                       "Invalid dates: actuals on or after the data date, forecasts before it",
                       bad, len(snap.activities), "<=", INVALID_DATES_LIMIT)


def _planned_by(base_snap: Snapshot, base: ScheduleResult, data_date: date) -> list[str]:
    """Baseline tasks whose baseline finish date falls before ``data_date``."""
    return [
        a.id for a in base_snap.activities.values()
        if is_task(a) and base[a.id].early_finish < data_date
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
    return ratio_check(11, "missed-tasks", "Missed tasks: baselined to finish before the data date, late or open",
                       missed, len(planned), "<=", MISSED_LIMIT,
                       note="" if planned else "no task was baselined to finish before the data date")


def _bei(snap: Snapshot, base_snap: Snapshot, base: ScheduleResult) -> QualityCheck:
    planned = _planned_by(base_snap, base, snap.data_date)
    finished = [a.id for a in snap.activities.values() if is_task(a) and a.is_finished]
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
    return activity_calendar(casefile, snap.activities[result.completion_id])


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
        (aid for aid in result.longest_path if not acts[aid].is_finished and is_task(acts[aid])), None
    )
    if target is None:
        return QualityCheck(12, "critical-path-test", title, None, None, None, "working days", "==",
                            CP_TEST_DELAY, None, SOURCE, note="no unfinished task on the longest path")
    a = acts[target]
    delayed = replace(a, duration=a.duration + CP_TEST_DELAY, remaining=a.remaining_duration + CP_TEST_DELAY)
    test_snap = replace(snap, activities=frozen_mapping({**acts, target: delayed}))
    after = schedule(test_snap, casefile.calendars, casefile.project)
    cal = activity_calendar(casefile, a)
    one = timedelta(days=1)
    moved = workdays_between(cal, result.completion + one, after.completion + one)
    cal_ids = {activity_calendar(casefile, acts[x]).id for x in result.longest_path}
    tolerance = 0 if cal_ids == {cal.id} else round(CP_TEST_CALENDAR_TOLERANCE * CP_TEST_DELAY)
    passed = abs(moved - CP_TEST_DELAY) <= tolerance
    note = (f"delayed {target}; completion {result.completion_id} moved {moved} working days "
            f"of calendar {cal.id} ({result.completion.isoformat()} -> {after.completion.isoformat()})")
    if tolerance:
        note += (f"; the path crosses calendars ({', '.join(sorted(cal_ids))}), so "
                 f"+/-{tolerance} working days are allowed")
    return QualityCheck(12, "critical-path-test", title, 0 if passed else 1, 1, float(moved), "working days", "==",
                        CP_TEST_DELAY, passed, SOURCE, () if passed else (target,), note=note)

