"""Results as tables, and the CSV / JSON writers.

Every analysis result is turned into one or more :class:`Table` objects here
(plain rows of plain values), so that CSV, JSON and the spreadsheet export
all come from one place. The writers return text; the CLI writes it.

CSV cells are neutralised against formula injection: a text cell that
begins with ``=``, ``+``, ``-``, ``@``, a tab or a carriage return gets a
leading apostrophe, as the OWASP guidance on CSV injection recommends.
Numbers stay numbers.
"""

from __future__ import annotations

import csv
import io
import json
import math
import re
from dataclasses import dataclass
from datetime import date
from typing import Any

from .engine import ScheduleResult
from .model import Snapshot

__all__ = [
    "Table",
    "dumps_json",
    "neutralise",
    "schedule_json",
    "schedule_table",
    "to_csv",
    "to_text",
]

_FORMULA_LEADS = ("=", "+", "-", "@", "\t", "\r")
_BARE_OPERATOR = re.compile(r"[=<>]{1,2}")


@dataclass(frozen=True, slots=True)
class Table:
    """A named table: column names and rows of plain values (str, int, float, date, bool, None)."""

    name: str
    columns: tuple[str, ...]
    rows: tuple[tuple[Any, ...], ...]

    def records(self) -> list[dict[str, Any]]:
        return [dict(zip(self.columns, row, strict=True)) for row in self.rows]


def neutralise(value: Any) -> Any:
    """Make a text cell inert in a spreadsheet (OWASP, CSV injection); other values pass.

    A bare comparison operator (``==``, ``<=``, ``>=``: the quality checks'
    documented ``comparison`` column) has no operand, so a spreadsheet has
    nothing to evaluate: it is kept as written rather than given an
    apostrophe (common practice; the XLSX writer stores it as a text cell).
    """
    if isinstance(value, str) and value.startswith(_FORMULA_LEADS) and not _BARE_OPERATOR.fullmatch(value):
        return "'" + value
    return value


def _cell(value: Any) -> Any:
    if value is None:
        return ""
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, date):
        return value.isoformat()
    if isinstance(value, float) and math.isfinite(value) and value.is_integer():
        return int(value)
    if isinstance(value, (list, tuple)):
        return neutralise(" ".join(str(v) for v in value))
    return neutralise(value)


def to_csv(table: Table) -> str:
    """The table as CSV text with a header row and ``\\n`` line endings."""
    buf = io.StringIO()
    writer = csv.writer(buf, lineterminator="\n")
    writer.writerow(table.columns)
    for row in table.rows:
        writer.writerow([_cell(v) for v in row])
    return buf.getvalue()


def _json_default(value: Any) -> Any:
    if isinstance(value, date):
        return value.isoformat()
    if isinstance(value, (set, frozenset)):
        return sorted(value)
    msg = f"cannot write {type(value).__name__} as JSON"
    raise TypeError(msg)


def dumps_json(obj: Any) -> str:
    """Deterministic JSON: dates as ISO strings, UTF-8 text, two-space indent, trailing newline."""
    return json.dumps(obj, default=_json_default, ensure_ascii=False, indent=2, allow_nan=False) + "\n"


def to_text(table: Table, max_width: int = 40) -> str:
    """A fixed-width text table for the terminal."""
    def show(v: Any) -> str:
        s = "" if v is None else _cell(v) if not isinstance(v, str) else v
        s = str(s).replace("\n", " ")
        return s if len(s) <= max_width else s[: max_width - 1] + "…"

    cells = [list(table.columns)] + [[show(v) for v in row] for row in table.rows]
    widths = [max(len(r[c]) for r in cells) for c in range(len(table.columns))]
    lines = ["  ".join(v.ljust(w) for v, w in zip(r, widths, strict=True)).rstrip() for r in cells]
    lines.insert(1, "  ".join("-" * w for w in widths))
    return "\n".join(lines) + "\n"


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
    on_path = set(result.longest_path)
    rows = []
    for aid in result.order:
        x = result.activities[aid]
        rows.append(
            (
                aid,
                snapshot.activities[aid].name,
                x.status,
                x.early_start,
                x.early_finish,
                x.late_start,
                x.late_finish,
                x.total_float,
                x.free_float,
                x.critical,
                aid in on_path,
                x.driving_predecessors,
            )
        )
    return Table(f"schedule-{snapshot.id}", SCHEDULE_COLUMNS, tuple(rows))


def schedule_json(result: ScheduleResult) -> dict[str, Any]:
    """The ``forensic schedule --json`` object (keys documented in README.md; a contract)."""
    return {
        "snapshot": result.snapshot_id,
        "data_date": result.data_date,
        "completion": result.completion,
        "completion_activity": result.completion_id,
        "completion_float": result.completion_float,
        "activities": [
            {
                "id": x.id,
                "status": x.status,
                "early_start": x.early_start,
                "early_finish": x.early_finish,
                "late_start": x.late_start,
                "late_finish": x.late_finish,
                "total_float": x.total_float,
                "free_float": x.free_float,
                "critical": x.critical,
                "driving_predecessors": list(x.driving_predecessors),
            }
            for x in (result.activities[a] for a in result.order)
        ],
        "longest_path": list(result.longest_path),
        "longest_paths": [list(c) for c in result.longest_paths],
    }
