"""The quality assessment as a table and as the ``forensic check --quality --json`` object.

One row per check per snapshot (DCMA-EA PAM 200.1 points 1-14 first, then
the practitioners' checks); the JSON keys are documented in
docs/quality-and-compare.md.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

from forensic.core.tables import Table

from .checks import QualityCheck, QualityReport

__all__ = ["QUALITY_COLUMNS", "quality_json", "quality_table"]

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
