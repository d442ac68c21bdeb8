"""Whole-casefile validation: every snapshot must schedule, warnings are gathered.

Loading (:mod:`forensic.casefile.reading`) checks each file on its own terms; this
step schedules every snapshot with the engine, so that a logic loop or an
unschedulable network is found before any analysis relies on it (AACE RP
29R-03, sec. 2.1, source validation: the schedules must be shown fit for use).
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date

from forensic.core.engine import ScheduleResult, schedule
from forensic.core.model import Casefile

__all__ = ["SnapshotSummary", "ValidationResult", "validate_casefile"]


@dataclass(frozen=True, slots=True)
class SnapshotSummary:
    """What one snapshot schedules to, for the check's summary."""

    id: str
    role: str
    data_date: date
    activities: int
    links: int
    completion: date
    completion_float: int | None
    critical: int
    longest_path_length: int


@dataclass(frozen=True, slots=True)
class ValidationResult:
    """The check of a casefile: per-snapshot summaries, warnings, and the schedules."""

    snapshots: tuple[SnapshotSummary, ...]
    warnings: tuple[str, ...]
    schedules: tuple[ScheduleResult, ...]


def validate_casefile(casefile: Casefile) -> ValidationResult:
    """Schedule every snapshot; raise the engine's error on the first that fails.

    Returns the summaries and the warnings of the loader and of the engine
    (open ends: activities without a predecessor or a successor).
    """
    summaries = []
    warnings = list(casefile.warnings)
    results = []
    for snap in casefile.snapshots:
        r = schedule(snap, casefile.calendars, casefile.project)
        results.append(r)
        warnings.extend(r.warnings)
        summaries.append(
            SnapshotSummary(
                id=snap.id,
                role=snap.role,
                data_date=snap.data_date,
                activities=len(snap.activities),
                links=len(snap.links),
                completion=r.completion,
                completion_float=r.completion_float,
                critical=len(r.critical_ids),
                longest_path_length=len(r.longest_path),
            )
        )
    return ValidationResult(tuple(summaries), tuple(warnings), tuple(results))
