"""The ``Table`` result type that analyses return, and the schedule as a table.

Every analysis result is turned into one or more :class:`Table` objects
(plain rows of plain values), so that CSV, JSON, text and the spreadsheet
export all come from one place; the writers of those formats live in
:mod:`forensic.exchange.writers`.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from datetime import date
from operator import attrgetter
from typing import Any

from forensic.core.engine import ScheduleResult, activity_columns
from forensic.core.model import Snapshot

__all__ = [
    "SCHEDULE_COLUMNS",
    "Table",
    "is_number",
    "schedule_json",
    "schedule_table",
]


@dataclass(frozen=True, slots=True)
class Table:
    """A named table: column names and rows of plain values (str, int, float, date, bool, None)."""

    name: str
    columns: tuple[str, ...]
    rows: tuple[tuple[Any, ...], ...]

    def records(self) -> list[dict[str, Any]]:
        return [dict(zip(self.columns, row, strict=True)) for row in self.rows]

    def to_pandas(self) -> Any:
        """The table as a :class:`pandas.DataFrame` with real dtypes, one column per column.

        Dates become ``datetime64`` (a missing date is ``NaT``); whole numbers
        (days, floats of the schedule, counts) the nullable integer dtype
        ``Int64`` (a missing value is ``<NA>``, not a float NaN); true/false
        the nullable ``boolean``; other numbers ``float64``; lists of ids stay
        Python lists; text stays text (``object``).
        """
        import pandas as pd

        data: dict[str, Any] = {}
        for i, col in enumerate(self.columns):
            values = [row[i] for row in self.rows]
            present = [v for v in values if v is not None]
            if present and all(isinstance(v, date) for v in present):
                data[col] = pd.to_datetime(pd.Series(values, dtype=object))
            elif present and all(isinstance(v, bool) for v in present):
                data[col] = pd.Series(values, dtype="boolean")
            elif present and all(isinstance(v, int) and not isinstance(v, bool) for v in present):
                data[col] = pd.Series(values, dtype="Int64")
            elif present and all(is_number(v) for v in present):
                data[col] = pd.Series([math.nan if v is None else float(v) for v in values], dtype="float64")
            else:
                data[col] = pd.Series([list(v) if isinstance(v, tuple) else v for v in values], dtype=object)
        return pd.DataFrame(data, columns=list(self.columns))


def is_number(v: Any) -> bool:
    """True for an int or a float, never for a bool (a table's number columns)."""
    return isinstance(v, (int, float)) and not isinstance(v, bool)


SCHEDULE_COLUMNS = (
    "id",
    "name",
    "status",
    "early_start",
    "early_finish",
    "late_start",
    "late_finish",
    "total_float",
    "free_float",
    "critical",
    "longest_path",
    "driving_predecessors",
)


def schedule_table(result: ScheduleResult, snapshot: Snapshot) -> Table:
    """One row per activity of a scheduled snapshot, in topological order."""
    c = activity_columns(result)
    on_path = set(result.longest_path)
    names = list(map(attrgetter("name"), map(snapshot.activities.__getitem__, result.order)))
    rows = zip(c["id"], names, c["status"], c["early_start"], c["early_finish"], c["late_start"],
               c["late_finish"], c["total_float"], c["free_float"], c["critical"],
               map(on_path.__contains__, result.order), c["driving_predecessors"], strict=True)
    return Table(f"schedule-{snapshot.id}", SCHEDULE_COLUMNS, tuple(rows))


def schedule_json(result: ScheduleResult) -> dict[str, Any]:
    """The ``forensic schedule --json`` object (keys documented in README.md; a contract)."""
    c = activity_columns(result)
    rows = zip(c["id"], c["status"], c["early_start"], c["early_finish"], c["late_start"], c["late_finish"],
               c["total_float"], c["free_float"], c["critical"], c["driving_predecessors"], strict=True)
    return {
        "snapshot": result.snapshot_id,
        "data_date": result.data_date,
        "completion": result.completion,
        "completion_activity": result.completion_id,
        "completion_float": result.completion_float,
        "activities": [
            {"id": aid, "status": status, "early_start": es, "early_finish": ef, "late_start": ls,
             "late_finish": lf, "total_float": tf, "free_float": ff, "critical": crit,
             "driving_predecessors": list(drivers)}
            for aid, status, es, ef, ls, lf, tf, ff, crit, drivers in rows
        ],
        "longest_path": list(result.longest_path),
        "longest_paths": [list(chain) for chain in result.longest_paths],
    }
