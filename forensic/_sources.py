"""Private helpers of the importer: read one CSV file or one workbook sheet as a table.

A source table is a header row and data rows, each cell either text
(stripped) or a :class:`datetime.date` (a workbook's date cell). Workbooks
are opened read-only with cached values only (``data_only=True``): a
formula is never evaluated, its last saved value is read, and a formula
cell never saved by a spreadsheet program reads as blank.
"""

from __future__ import annotations

import csv
import io
from dataclasses import dataclass
from datetime import date, datetime
from pathlib import Path

from ._csvread import Problems

__all__ = ["SourceTable", "close_books", "read_source"]

_MAX_BYTES = 64 * 1024 * 1024  # the loader's default ceiling, for the same reason
_WORKBOOK_SUFFIXES = (".xlsx", ".xlsm")


@dataclass(frozen=True, slots=True)
class SourceTable:
    """One table read from a source: its label for messages, header, and rows.

    ``rows`` holds ``(line, cells)`` with the 1-based line (or sheet row)
    number; wholly blank rows are left out and counted in ``blank_rows``.
    ``times_dropped`` counts workbook date cells whose time of day was dropped.
    """

    label: str
    header: tuple[str, ...]
    rows: tuple[tuple[int, tuple[str | date, ...]], ...]
    blank_rows: int = 0
    times_dropped: int = 0


def _workbook_value(value) -> tuple[str | date, bool]:
    """A workbook cell as text or a date; the flag says a time of day was dropped."""
    if value is None:
        return "", False
    if isinstance(value, datetime):
        return value.date(), value.time() != datetime.min.time()
    if isinstance(value, date):
        return value, False
    if isinstance(value, bool):
        return ("true" if value else "false"), False
    if isinstance(value, float):
        return (str(int(value)) if value.is_integer() else repr(value)), False
    return str(value).strip(), False


def read_source(path: Path, label: str, sheet: str | None, encoding: str, delimiter: str,
                problems: Problems, books: dict | None = None) -> SourceTable | None:
    """Read a CSV file, or a sheet of a workbook (``sheet`` ``None``: its first sheet).

    ``books`` caches open workbooks by path, so that a workbook with a sheet
    per table is opened once; the caller closes them (:func:`close_books`).
    Problems (file not found, not decodable, no such sheet, duplicate
    column names, no header) go to ``problems``; the result is then ``None``.
    """
    if not path.is_file():
        problems.add(label, None, None, str(path), "source file not found")
        return None
    if path.stat().st_size > _MAX_BYTES:
        problems.add(label, None, None, path.stat().st_size, f"file is over the limit of {_MAX_BYTES} bytes")
        return None
    if path.suffix.lower() in _WORKBOOK_SUFFIXES:
        raw = _read_sheet(path, label, sheet, problems, {} if books is None else books)
    else:
        if sheet is not None:
            problems.add(label, None, "sheet", sheet, "a sheet can only be named for a workbook (.xlsx)")
            return None
        raw = _read_csv(path, label, encoding, delimiter, problems)
    if raw is None:
        return None
    records, times = raw
    header: tuple[str, ...] | None = None
    rows: list[tuple[int, tuple[str | date, ...]]] = []
    blank = 0
    for line, cells in records:
        if not any(c != "" for c in cells):
            if header is not None:
                blank += 1
            continue
        if header is None:
            header = tuple(str(c).strip() for c in cells)
            while header and not header[-1]:
                header = header[:-1]
            dupes = sorted({h for h in header if h and header.count(h) > 1})
            for h in dupes:
                problems.add(label, line, h, h, "column appears twice in the header")
            if dupes:
                return None
            continue
        cells = tuple(cells[: len(header)]) + ("",) * (len(header) - len(cells))
        rows.append((line, cells))
    if header is None:
        problems.add(label, None, None, None, "no header row: the table is empty")
        return None
    return SourceTable(label, header, tuple(rows), blank, times)


def _read_csv(path: Path, label: str, encoding: str, delimiter: str, problems: Problems):
    with open(path, "rb") as fh:  # read-only; never written
        data = fh.read()
    try:
        text = data.decode("utf-8-sig" if encoding.lower().replace("_", "-") == "utf-8" else encoding)
    except (UnicodeDecodeError, LookupError) as exc:
        problems.add(label, None, None, encoding, f"cannot decode the file: {exc}; set [values] encoding")
        return None
    reader = csv.reader(io.StringIO(text, newline=""), delimiter=delimiter, strict=True)
    out = []
    try:
        while True:
            line = reader.line_num + 1
            try:
                record = next(reader)
            except StopIteration:
                break
            out.append((line, [c.strip() for c in record]))
    except csv.Error as exc:
        problems.add(label, reader.line_num, None, None, f"not valid CSV: {exc}")
        return None
    return out, 0


def close_books(books: dict) -> None:
    """Close the workbooks :func:`read_source` opened."""
    for wb in books.values():
        wb.close()
    books.clear()


def _read_sheet(path: Path, label: str, sheet: str | None, problems: Problems, books: dict):
    from openpyxl import load_workbook

    key = path.resolve()
    wb = books.get(key)
    if wb is None:
        try:
            wb = load_workbook(path, read_only=True, data_only=True)
        except Exception as exc:  # openpyxl raises several types for a damaged file
            problems.add(label, None, None, None, f"cannot open the workbook: {exc}")
            return None
        books[key] = wb
    if sheet is None:
        ws = wb.worksheets[0]
    elif sheet in wb.sheetnames:
        ws = wb[sheet]
    else:
        problems.add(label, None, "sheet", sheet,
                     f"no such sheet; the workbook has {', '.join(repr(s) for s in wb.sheetnames)}")
        return None
    out = []
    times = 0
    for number, row in enumerate(ws.iter_rows(values_only=True), 1):
        cells = []
        for v in row:
            value, dropped = _workbook_value(v)
            times += dropped
            cells.append(value)
        out.append((number, cells))
    return out, times
