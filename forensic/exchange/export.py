"""Every table of a casefile, and the three writers: CSV folder, JSON, formatted XLSX.

:func:`casefile_tables` runs the analyses over a casefile and gathers their
tables (:class:`~forensic.core.tables.Table`) in a fixed order: the input tables
(activities and links of each snapshot, events, fragnets), then the
schedule of each snapshot, the quality scorecard, the comparison of each
update with the one before, the windows analysis, its contributors and
ledger, the as-planned versus as-built comparison, the time impact of each
event, the but-for cases, and a recovery plan when asked for.

The writers turn any list of tables into one output. Text cells are
neutralised against formula injection in every spreadsheet format (a
leading apostrophe before ``=``, ``+``, ``-``, ``@``, tab or carriage return,
as the OWASP guidance on CSV injection recommends); numbers stay numbers and
dates are real date cells in the workbook. The workbook is deterministic:
its document properties carry a fixed date, and the zip entries a fixed
timestamp, so the same tables always give the same bytes.

References
----------
OWASP, "CSV Injection" (formula injection), owasp.org community pages.
ECMA-376, Office Open XML File Formats, part 2 (open packaging: zip entries).
"""

from __future__ import annotations

import io
import re
import zipfile
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from datetime import date, datetime
from pathlib import Path
from typing import Any

from forensic.casefile.outputs import check_folder, staged_folder, write_new_file
from forensic.casefile.writing import ACTIVITY_COLUMNS, EVENT_COLUMNS, LINK_COLUMNS
from forensic.core.errors import ForensicError
from forensic.core.model import Activity, Casefile, Snapshot
from forensic.core.tables import Table, schedule_table
from forensic.exchange.writers import dumps_json, neutralise, to_csv

__all__ = [
    "FIXED_TIMESTAMP",
    "Export",
    "casefile_tables",
    "check_csv_dir",
    "csv_file_names",
    "input_tables",
    "sheet_names",
    "tables_json",
    "to_xlsx",
    "write_csv_dir",
]

# The one moment written into every workbook (document properties and zip
# entries), so that two runs give identical bytes; 1980-01-01 is the
# earliest date a zip entry can carry.
FIXED_TIMESTAMP = datetime(1980, 1, 1, 0, 0, 0)
_DATE_FORMAT = "yyyy-mm-dd"
_SHEET_MAX = 31  # the longest sheet name a workbook allows
_SHEET_BAD = re.compile(r"[\[\]:*?/\\]")
_WIDTH_MIN, _WIDTH_MAX = 8, 60  # column widths, in characters (common practice)


@dataclass(frozen=True, slots=True)
class Export:
    """The tables of a casefile and the analyses that could not run (with why)."""

    tables: tuple[Table, ...]
    skipped: tuple[str, ...]


# --- gathering ---------------------------------------------------------------


def _activity_row(a: Activity) -> tuple:
    remaining = a.remaining
    if remaining is not None and a.actual_start is None and remaining == a.duration:
        remaining = None  # the format's blank rule gives it back
    return (a.id, a.name, a.kind, a.duration, remaining, a.actual_start, a.actual_finish, a.calendar,
            a.constraint, a.constraint_date, a.party, a.area, a.percent_complete, a.crash_days, a.crash_cost)


def input_tables(cf: Casefile) -> tuple[Table, ...]:
    """The casefile's own data as tables, in the casefile format's columns.

    One ``activities-<snapshot>`` and ``links-<snapshot>`` per snapshot,
    ``events``, and ``fragnet-<id>-activities`` / ``-links`` per fragnet; an
    import mapping can read them back (docs/import-export.md).
    """
    out = []

    def pair(prefix: str, activities, links) -> None:
        out.append(Table(f"{prefix}activities", ACTIVITY_COLUMNS, tuple(_activity_row(a) for a in activities)))
        out.append(Table(f"{prefix}links", LINK_COLUMNS, tuple((k.pred, k.succ, k.type, k.lag) for k in links)))

    for snap in cf.snapshots:
        out.append(Table(f"activities-{snap.id}", ACTIVITY_COLUMNS,
                         tuple(_activity_row(a) for a in snap.activities.values())))
        out.append(Table(f"links-{snap.id}", LINK_COLUMNS, tuple((k.pred, k.succ, k.type, k.lag) for k in snap.links)))
    if cf.events:
        out.append(Table("events", EVENT_COLUMNS, tuple(
            (e.id, e.title, e.party, e.category, e.start, e.finish, " ".join(e.activities), e.fragnet, e.reference)
            for e in cf.events)))
    for frag in cf.fragnets.values():
        pair(f"fragnet-{frag.id}-", frag.activities.values(), frag.links)
    return tuple(out)


def casefile_tables(
    cf: Casefile,
    *,
    recover_days: int | None = None,
    recover_snapshot: str | None = None,
    inputs: bool = True,
    progress: Callable[[str], None] | None = None,
) -> Export:
    """Run every analysis over ``cf`` and return all their tables, in a fixed order.

    Parameters
    ----------
    cf : Casefile
    recover_days : int, optional
        Also plan a recovery of this many days (the project's delay unit) on
        ``recover_snapshot`` (default: the latest snapshot).
    recover_snapshot : str, optional
    inputs : bool
        Include the input tables (:func:`input_tables`) first.
    progress : callable, optional
        Called with the name of each analysis as it starts (status lines).

    Returns
    -------
    Export
        The tables, and one line per analysis that could not run on this
        casefile (for example windows with a baseline only) with its reason.

    Notes
    -----
    Each figure comes from its analysis's own table function, so the export
    shows exactly what the commands show (one number, one place).

    References
    ----------
    AACE International Recommended Practice 29R-03, Forensic Schedule
    Analysis (protocols 3.1-3.8: the analyses whose results are exported);
    DCMA-EA PAM 200.1 (the quality scorecard).
    """
    from forensic.core.engine import schedule_snapshot

    tables: list[Table] = list(input_tables(cf)) if inputs else []
    skipped: list[str] = []
    step = progress or (lambda what: None)
    step(f"scheduling {len(cf.snapshots)} snapshots")
    for snap in cf.snapshots:
        tables.append(schedule_table(schedule_snapshot(cf, snap.id), snap))
    for what, build in _analysis_steps(cf, recover_days, recover_snapshot):
        step(what)
        try:
            tables.extend(build())
        except (ForensicError, ValueError) as exc:
            skipped.append(f"{what}: {exc}")
    return Export(tuple(tables), tuple(skipped))


def _analysis_steps(cf: Casefile, recover_days: int | None,
                    recover_snapshot: str | None) -> list[tuple[str, Callable[[], list[Table]]]]:
    """Each analysis of :func:`casefile_tables` as (what, build its tables), in the export's order."""
    from forensic.analysis.asbuilt import as_planned_vs_as_built, asbuilt_table
    from forensic.analysis.attribution.delay import analyse_delay, contributors_table, ledger_table
    from forensic.analysis.attribution.floatuse import float_used_table
    from forensic.analysis.butfor import as_built_table, but_for, but_for_table
    from forensic.analysis.compare import compare_snapshots, compare_table
    from forensic.analysis.impact import time_impact, time_impacts
    from forensic.analysis.impact_tables import float_table, milestones_table, series_table
    from forensic.analysis.quality.assessment import assess_casefile
    from forensic.analysis.quality.tables import quality_table
    from forensic.analysis.recovery.acceleration import recover
    from forensic.analysis.recovery.tables import recovery_curve_table, recovery_plan_table
    from forensic.analysis.windows import windows_table

    steps: list[tuple[str, Callable[[], list[Table]]]] = [
        ("schedule quality", lambda: [quality_table(assess_casefile(cf))]),
    ]
    for old, new in zip(cf.snapshots, cf.snapshots[1:], strict=False):
        def comparison(old: Snapshot = old, new: Snapshot = new) -> list[Table]:
            return [compare_table(compare_snapshots(cf, old.id, new.id))]
        steps.append((f"comparison {old.id} -> {new.id}", comparison))
    if len(cf.snapshots) >= 2:
        def delay() -> list[Table]:
            an = analyse_delay(cf)
            return [windows_table(an.windows), contributors_table(an), ledger_table(an),
                    ledger_table(an, cumulative=True), float_used_table(an)]
        steps.append(("windows analysis", delay))
    else:
        def no_windows() -> list[Table]:
            msg = "needs a baseline and at least one update"
            raise ValueError(msg)
        steps.append(("windows analysis", no_windows))
    steps.append(("as-planned vs as-built", lambda: [asbuilt_table(as_planned_vs_as_built(cf))]))
    impacted = [e.id for e in cf.events if e.fragnet or e.activities]
    for eid in impacted:
        def one(eid: str = eid) -> list[Table]:
            r = time_impact(cf, eid)
            return [milestones_table(r), float_table(r)]
        steps.append((f"time impact of {eid}", one))
    if len(impacted) > 1:
        steps.append(("cumulative time impact", lambda: [series_table(time_impacts(cf, impacted))]))
    if cf.events:
        def bf() -> list[Table]:
            report = but_for(cf)
            return [but_for_table(report), as_built_table(report)]
        steps.append(("but-for", bf))
    if recover_days is not None:
        sid = recover_snapshot or cf.snapshots[-1].id

        def rec() -> list[Table]:
            r = recover(cf, sid, days=recover_days)
            return [recovery_plan_table(r), recovery_curve_table(r)]
        steps.append((f"recovery of {recover_days} days on {sid}", rec))
    return steps


# --- writers -----------------------------------------------------------------


_STEM_MAX = 200  # bytes: with "~NNN.csv" well under the usual 255-byte name limit (POSIX NAME_MAX; common practice)


def _file_stem(name: str) -> str:
    return re.sub(r"[^A-Za-z0-9._-]", "_", name)[:_STEM_MAX] or "table"


def csv_file_names(tables: Sequence[Table]) -> list[str]:
    """A unique ``<stem>.csv`` file name for each table, in order.

    The stem keeps ASCII letters, digits, ``.``, ``_`` and ``-`` of the
    table name and turns anything else into ``_`` (so ``activities-Ä1`` and
    ``activities-Ü1`` both give ``activities-_1``). Names are unique
    regardless of case (as on case-insensitive file systems): a later table
    whose name is taken gets ``~2``, ``~3``... like the workbook's sheet
    names, in table order, so the same tables always get the same names.
    """
    names: list[str] = []
    seen: set[str] = set()
    for t in tables:
        stem = _file_stem(t.name)
        candidate, n = stem, 1
        while candidate.casefold() in seen:
            n += 1
            candidate = f"{stem}~{n}"
        seen.add(candidate.casefold())
        names.append(f"{candidate}.csv")
    return names


def _only_csv_files(entries) -> bool:
    """An earlier CSV export: nothing but regular ``.csv`` files (no folders, links or other files)."""
    return all(e.name.endswith(".csv") and e.is_file(follow_symlinks=False) for e in entries)


def check_csv_dir(folder: str | Path, protected: Sequence[Path] = ()) -> Path:
    """Decide, before anything is written, whether the CSV folder may be written (see :func:`write_csv_dir`)."""
    return check_folder(folder, replaceable=_only_csv_files, protected=protected, what="CSV files")


def write_csv_dir(tables: Sequence[Table], folder: str | Path, protected: Sequence[Path] = ()) -> list[Path]:
    """Write each table to ``<folder>/<name>.csv``, the folder whole or not at all; return the paths.

    The folder is new, empty, or holds only the ``.csv`` files of an earlier
    export (it is then replaced whole); never inside a casefile folder. The
    files are built in a hidden temporary folder beside it and renamed into
    place at once (:func:`forensic.casefile.outputs.staged_folder`); file names come
    from :func:`csv_file_names`, so each table gets its own file.
    """
    root = Path(folder)
    names = csv_file_names(tables)
    with staged_folder(root, replaceable=_only_csv_files, protected=protected, what="CSV files") as tmp:
        for name, t in zip(names, tables, strict=True):
            write_new_file(tmp / name, to_csv(t))
    return [root / name for name in names]


def tables_json(tables: Sequence[Table]) -> str:
    """All tables as one JSON document: ``{"tables": [{"name", "columns", "rows": [{...}]}]}``."""
    return dumps_json({
        "tables": [
            {"name": t.name, "columns": list(t.columns),
             "rows": [{k: list(v) if isinstance(v, tuple) else v for k, v in r.items()} for r in t.records()]}
            for t in tables
        ]
    })


def sheet_names(tables: Sequence[Table]) -> list[str]:
    """A valid, unique workbook sheet name for each table, in order.

    Workbook sheet names are at most 31 characters, without ``[]:*?/\\``,
    and unique regardless of case; a longer name is cut and numbered.
    """
    names: list[str] = []
    seen: set[str] = set()
    for t in tables:
        base = _SHEET_BAD.sub("_", t.name).strip("'") or "table"
        name = base[:_SHEET_MAX]
        n = 1
        while name.lower() in seen:
            n += 1
            suffix = f"~{n}"
            name = base[: _SHEET_MAX - len(suffix)] + suffix
        seen.add(name.lower())
        names.append(name)
    return names


def _xlsx_cell(value: Any) -> Any:
    if isinstance(value, (list, tuple)):
        value = " ".join(str(v) for v in value)
    if isinstance(value, datetime):
        return value
    if isinstance(value, date):
        return datetime(value.year, value.month, value.day)
    return neutralise(value)


def _shown_width(value: Any) -> int:
    if value is None:
        return 0
    if isinstance(value, date):
        return 10
    return len(str(value))


def to_xlsx(tables: Sequence[Table], *, title: str = "forensic tables") -> bytes:
    """One formatted workbook with a sheet per table, as bytes.

    Each sheet has a bold, frozen header row, an auto-filter, column widths
    fitted to the longest value (within 8 to 60 characters), dates as date
    cells shown ``yyyy-mm-dd``, and text neutralised against formula
    injection. Formulas are never written: every text is written as a text
    cell (a cell that would start one also gets a leading apostrophe).

    Written with XlsxWriter in its constant-memory mode, which streams each
    row to the file (about twice as fast as openpyxl's write-only mode on a
    50,000-row sheet; docs/benchmark.md); openpyxl still reads workbooks
    (the importer) and checks these in the tests.

    The bytes are deterministic: document properties are fixed at
    :data:`FIXED_TIMESTAMP` and the zip entries are re-stamped with it.
    """
    import tempfile

    import xlsxwriter

    # constant_memory streams rows through a temporary file; the workbook is
    # written to a temporary folder and read back, so nothing is left behind.
    with tempfile.TemporaryDirectory(prefix=".forensic-xlsx-") as tmp:
        path = f"{tmp}/book.xlsx"
        wb = xlsxwriter.Workbook(path, {
            "constant_memory": True, "tmpdir": tmp,
            "strings_to_numbers": False, "strings_to_formulas": False, "strings_to_urls": False,
        })
        bold = wb.add_format({"bold": True})
        dated = wb.add_format({"num_format": _DATE_FORMAT})
        for table, name in zip(tables, sheet_names(tables), strict=True):
            _write_sheet(wb.add_worksheet(name), table, bold, dated)
        wb.set_properties({"title": title, "author": "forensic", "created": FIXED_TIMESTAMP})
        wb.close()
        with open(path, "rb") as fh:
            data = fh.read()
    return _restamp(data)


def _write_sheet(ws: Any, table: Table, bold: Any, dated: Any) -> None:
    """One table on one sheet: widths, frozen bold header, auto-filter, typed cells."""
    widths = [len(c) for c in table.columns]
    for row in table.rows:
        for i, v in enumerate(row):
            w = _shown_width(v)
            if w > widths[i]:
                widths[i] = w
    for i, w in enumerate(widths):
        ws.set_column(i, i, min(_WIDTH_MAX, max(_WIDTH_MIN, w + 2)))
    ws.freeze_panes(1, 0)
    if table.rows:
        ws.autofilter(0, 0, len(table.rows), len(table.columns) - 1)
    ws.write_row(0, 0, table.columns, bold)
    for r, row in enumerate(table.rows, 1):
        for c, raw in enumerate(row):
            v = _xlsx_cell(raw)
            if v is None:
                continue
            if isinstance(v, datetime):
                ws.write_datetime(r, c, v, dated)
            elif isinstance(v, bool):
                ws.write_boolean(r, c, v)
            elif isinstance(v, (int, float)):
                ws.write_number(r, c, v)
            else:
                ws.write_string(r, c, str(v))


_MODIFIED = re.compile(rb"(<dcterms:modified[^>]*>)[^<]*(</dcterms:modified>)")


def _restamp(data: bytes) -> bytes:
    """Rewrite the zip with fixed entry times, and the fixed modified date that saving replaced."""
    stamp = FIXED_TIMESTAMP.strftime("%Y-%m-%dT%H:%M:%SZ").encode()
    out = io.BytesIO()
    with zipfile.ZipFile(io.BytesIO(data)) as src, zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED) as dst:
        for info in src.infolist():
            payload = src.read(info.filename)
            if info.filename == "docProps/core.xml":
                payload = _MODIFIED.sub(rb"\g<1>" + stamp + rb"\g<2>", payload)
            fixed = zipfile.ZipInfo(info.filename, date_time=FIXED_TIMESTAMP.timetuple()[:6])
            fixed.compress_type = zipfile.ZIP_DEFLATED
            fixed.external_attr = 0o600 << 16
            dst.writestr(fixed, payload)
    return out.getvalue()
