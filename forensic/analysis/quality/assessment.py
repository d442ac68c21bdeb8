"""Schedule quality: the DCMA 14-point assessment and practitioners' checks of each snapshot.

Before a schedule is relied on in a delay analysis it has to be shown fit
for use (AACE RP 29R-03, sec. 2.1, source validation). The Defense Contract
Management Agency's 14-point assessment (DCMA-EA PAM 200.1, *Earned Value
Management System (EVMS) Program Analysis Pamphlet*, October 2012) is the
check most often quoted; :func:`assess_quality` runs it on one snapshot
(:mod:`.dcma`), with its published thresholds, and adds a few checks that
practitioners expect (:mod:`.practice`).
"""

from __future__ import annotations

from collections.abc import Iterable

from forensic.core.engine import ScheduleResult, schedule
from forensic.core.model import Casefile

from .checks import QualityReport, is_task, live_links
from .dcma import dcma_checks
from .practice import practitioners_checks

__all__ = ["assess_casefile", "assess_quality"]


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
    The fourteen measures and their thresholds (DCMA-EA PAM 200.1, Oct 2012,
    as recalled) are listed in the notes of
    :mod:`forensic.analysis.quality.dcma`, the practitioners' checks in
    :mod:`forensic.analysis.quality.practice`.

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
    n_tasks = sum(1 for a in snap.activities.values() if not a.is_finished and is_task(a))
    checks = dcma_checks(casefile, snap, result, base_snap, baseline_result)
    checks.extend(practitioners_checks(casefile, snap, result, live_links(snap)))
    return QualityReport(snap.id, snap.data_date, base_snap.id, n_tasks, tuple(checks))


def assess_casefile(casefile: Casefile, snapshot_ids: Iterable[str] | None = None) -> tuple[QualityReport, ...]:
    """:func:`assess_quality` for each snapshot (all of them by default), oldest first."""
    base = casefile.baseline
    base_result = schedule(base, casefile.calendars, casefile.project)
    ids = list(snapshot_ids) if snapshot_ids is not None else [s.id for s in casefile.snapshots]
    return tuple(assess_quality(casefile, sid, baseline_result=base_result) for sid in ids)

