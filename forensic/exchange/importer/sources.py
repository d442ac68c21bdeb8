"""Private helpers of the importer: read one CSV file or one workbook sheet as a table.

A source table is a header row and data rows, each cell either text
(stripped), a :class:`datetime.date` (a workbook's date cell) or an
:class:`Unsaved` formula. Workbooks are opened read-only with cached values
only (``data_only=True``): a formula is never evaluated, its last saved
value is read; a formula cell never saved by a spreadsheet program has no
value, and is an :class:`Unsaved` cell the importer refuses where it needs
the value.

Hostile sources are held to the loader's ceilings
(:class:`forensic.casefile.Limits`): the file size is checked before
anything is read, a workbook whose parts unpack to more than
:data:`UNPACK_FACTOR` times the file ceiling is refused before it is opened
(a zip bomb), and reading stops at the row ceiling, blank rows of a sheet
included (a sheet may declare a million empty rows in a few bytes).
"""

from __future__ import annotations

import csv
import io
import zipfile
from dataclasses import dataclass
from datetime import date, datetime
from pathlib import Path

from forensic.casefile.csvread import Problems

__all__ = ["UNPACK_FACTOR", "SourceTable", "Unsaved", "close_books", "read_source"]

_WORKBOOK_SUFFIXES = (".xlsx", ".xlsm")
# A sheet's XML is several times the size of the CSV of the same table; ten
# times the file ceiling leaves room for any genuine workbook (common practice
# in guarding against zip bombs: bound the unpacked size, not only the packed).
UNPACK_FACTOR = 10
_MAX_COLUMNS = 16_384  # a workbook's own column limit (XFD)


class Unsaved(str):
    """A workbook formula cell with no saved value; the text is the formula."""

    __slots__ = ()


@dataclass(frozen=True, slots=True)
class SourceTable:
    """One table read from a source: its label for messages, header, and rows.

    ``rows`` holds ``(line, cells)`` with the 1-based line (or sheet row)
    number; wholly blank rows are left out and counted in ``blank_rows``.
    ``times_dropped`` counts workbook date cells whose time of day was dropped;
    ``formulas`` counts formula cells read by their saved value;
    ``hidden_sheet``, ``hidden_rows`` (sheet row numbers) and ``merged`` (cell
    ranges such as ``A4:B4``) say what of a workbook a reader would not see,
    or would see otherwise than it is read (a merged range is read as its
    top-left cell and blanks).
    """

    label: str
    header: tuple[str, ...]
    rows: tuple[tuple[int, tuple[str | date, ...]], ...]
    blank_rows: int = 0
    times_dropped: int = 0
    formulas: int = 0
    hidden_sheet: bool = False
    hidden_rows: tuple[int, ...] = ()
    merged: tuple[str, ...] = ()


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
                problems: Problems, books: dict | None = None, *, max_bytes: int = 64 * 1024 * 1024,
                max_rows: int = 200_000, what: str = "rows") -> SourceTable | None:
    """Read a CSV file, or a sheet of a workbook (``sheet`` ``None``: its first sheet).

    ``books`` caches open workbooks by path, so that a workbook with a sheet
    per table is opened once; the caller closes them (:func:`close_books`).
    ``max_bytes`` bounds the file (and, times :data:`UNPACK_FACTOR`, a
    workbook unpacked); ``max_rows`` the data rows (``what`` names them in
    the message). Problems (file not found, not decodable, over a ceiling,
    no such sheet, duplicate column names, no header) go to ``problems``;
    the result is then ``None``.
    """
    if not path.is_file():
        problems.add(label, None, None, str(path), "source folder, expected a file" if path.is_dir()
                     else "source file not found")
        return None
    size = path.stat().st_size
    if size > max_bytes:
        problems.add_limit(label, None, size, f"file is {size} bytes, over the limit of {max_bytes} bytes; it is not read")
        return None
    if path.suffix.lower() in _WORKBOOK_SUFFIXES:
        raw = _read_sheet(path, label, sheet, problems, {} if books is None else books, max_bytes, max_rows, what)
    else:
        if sheet is not None:
            problems.add(label, None, "sheet", sheet, "a sheet can only be named for a workbook (.xlsx)")
            return None
        raw = _read_csv(path, label, encoding, delimiter, problems, max_bytes, max_rows, what)
    if raw is None:
        return None
    records, times, formulas, *hidden = raw
    hidden_sheet, hidden_rows, merged = hidden if hidden else (False, (), ())
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
        if len(cells) < len(header) or any(c != "" for c in cells[len(header):]):
            # A short row would leave its last columns blank without a word (an
            # activity in progress read as not started); a long one would lose cells.
            problems.add(label, line, None, len(cells),
                         f"row has {len(cells)} cells, the header has {len(header)}; "
                         "every row must have a cell for each column (blank cells are fine)")
            continue
        rows.append((line, tuple(cells[: len(header)])))
    if header is None:
        problems.add(label, None, None, None, "no header row: the table is empty")
        return None
    return SourceTable(label, header, tuple(rows), blank, times, formulas, hidden_sheet, hidden_rows, merged)


def _over(problems: Problems, label: str, line: int, max_rows: int, what: str, sheet: bool) -> None:
    blank = " (blank rows included)" if sheet else ""
    problems.add_limit(label, line, f"row {line}",
                       f"more than {max_rows} {what}{blank}, over the limit; the rest is not read")


def _read_csv(path: Path, label: str, encoding: str, delimiter: str, problems: Problems,
              max_bytes: int, max_rows: int, what: str):
    with open(path, "rb") as fh:  # read-only; never written
        data = fh.read(max_bytes + 1)
    if len(data) > max_bytes:  # grew while we looked
        problems.add_limit(label, None, len(data), f"file is over the limit of {max_bytes} bytes")
        return None
    codec = "utf-8-sig" if encoding.lower().replace("_", "-") in ("utf-8", "utf8") else encoding
    try:
        text = data.decode(codec)
    except UnicodeDecodeError as exc:
        line = data.count(b"\n", 0, exc.start) + 1
        bad = data[exc.start: exc.start + 1].hex()
        utf16 = b"\x00" in data[:4] or data.startswith((b"\xff\xfe", b"\xfe\xff"))
        fix = ('it looks like UTF-16: set [values] encoding = "utf-16"' if utf16 else
               'set [values] encoding to the file\'s encoding (for example "cp1252" or "latin-1")')
        problems.add(label, line, None, f"0x{bad} at byte {exc.start}",
                     f"the file is not {encoding} text; {fix}, or save it as UTF-8")
        return None
    nul = text.find("\x00")
    if nul >= 0:
        problems.add(label, text.count("\n", 0, nul) + 1, None, "U+0000",
                     f"the file contains a NUL character; expected {encoding} text (is it UTF-16 or binary? "
                     "set [values] encoding to the file's encoding)")
        return None
    reader = csv.reader(io.StringIO(text, newline=""), delimiter=delimiter, strict=True)
    out = []
    filled = 0
    try:
        while True:
            line = reader.line_num + 1
            try:
                record = next(reader)
            except StopIteration:
                break
            cells = [c.strip() for c in record]
            if any(cells):
                filled += 1
                if filled > max_rows + 1:  # the header and max_rows data rows are in
                    _over(problems, label, line, max_rows, what, sheet=False)
                    return None
            out.append((line, cells))
    except csv.Error as exc:
        problems.add(label, line, None, None, f"not valid CSV in the row that starts on this line: {exc} "
                     "(check its quotes: a quoted cell must end with a quote)")
        return None
    return out, 0, 0


def close_books(books: dict) -> None:
    """Close the workbooks :func:`read_source` opened."""
    for wb in books.values():
        if wb is not None:
            wb.close()
    books.clear()


def _unpacked_size(path: Path) -> int | None:
    try:
        with zipfile.ZipFile(path) as z:
            return sum(i.file_size for i in z.infolist())
    except (zipfile.BadZipFile, OSError, ValueError):
        return None  # openpyxl then says what is wrong with it


def _open(path: Path, label: str, problems: Problems, books: dict, max_bytes: int):
    """The workbook twice: saved values only, and formulas as text (to find formulas with no saved value)."""
    from openpyxl import load_workbook

    key = path.resolve()
    if key in books:
        return books[key]
    books[key] = None  # a workbook that cannot be opened is reported once
    unpacked = _unpacked_size(path)
    if unpacked is not None and unpacked > UNPACK_FACTOR * max_bytes:
        problems.add_limit(label, None, unpacked,
                           f"the workbook unpacks to {unpacked} bytes, over {UNPACK_FACTOR} times the file limit "
                           f"of {max_bytes} bytes; it is not read")
        return None
    try:
        values = load_workbook(path, read_only=True, data_only=True)
        formulas = load_workbook(path, read_only=True, data_only=False)
    except Exception as exc:  # openpyxl raises several types for a damaged file
        problems.add(label, None, None, None, f"cannot open the workbook: {type(exc).__name__}: {exc}")
        return None
    books[key] = _Book(values, formulas)
    return books[key]


class _Book:
    def __init__(self, values, formulas):
        self.values, self.formulas = values, formulas

    def close(self) -> None:
        self.values.close()
        self.formulas.close()


def _rows(ws, min_row: int, max_col: int | None):
    ws.reset_dimensions()  # never trust a declared size: it could claim a million rows and columns
    return ws.iter_rows(min_row=min_row, max_col=max_col, values_only=True)


def _read_sheet(path: Path, label: str, sheet: str | None, problems: Problems, books: dict,
                max_bytes: int, max_rows: int, what: str):
    book = _open(path, label, problems, books, max_bytes)
    if book is None:
        return None
    wb = book.values
    if sheet is None:
        if not wb.sheetnames:
            problems.add(label, None, None, None, "the workbook has no sheets")
            return None
        sheet = wb.sheetnames[0]
    elif sheet not in wb.sheetnames:
        problems.add(label, None, "sheet", sheet,
                     f"no such sheet; the workbook has {', '.join(repr(s) for s in wb.sheetnames)}")
        return None
    ws, wf = wb[sheet], book.formulas[sheet]
    if not hasattr(ws, "iter_rows"):  # a chart sheet
        problems.add(label, None, "sheet", sheet, "not a worksheet (a chart sheet?)")
        return None
    # The header is the first row with a value; the data rows are then read no
    # wider than it, so a row padded out to the last column costs nothing.
    header_line, width = None, 0
    for number, row in enumerate(_rows(ws, 1, _MAX_COLUMNS), 1):
        if number > max_rows:
            _over(problems, label, number, max_rows, what, sheet=True)
            return None
        if any(v is not None and str(v).strip() for v in row):
            header_line = number
            width = max(i for i, v in enumerate(row, 1) if v is not None and str(v).strip())
            break
    if header_line is None:
        return [], 0, 0
    out = []
    times = formulas = 0
    pairs = zip(_rows(ws, header_line, width), _rows(wf, header_line, width), strict=False)
    for number, (row, frow) in enumerate(pairs, header_line):
        if number - header_line > max_rows:
            _over(problems, label, number, max_rows, what, sheet=True)
            return None
        cells: list = []
        for v, f in zip(row, (*frow, *(None,) * (len(row) - len(frow))), strict=False):
            is_formula = isinstance(f, str) and f.startswith("=") and v != f
            if is_formula and v is None:
                cells.append(Unsaved(f))
                continue
            formulas += is_formula
            value, dropped = _workbook_value(v)
            times += dropped
            cells.append(value)
        out.append((number, cells))
    hidden_rows, merged = _hidden_rows_and_merges(book.values, ws)
    return out, times, formulas, ws.sheet_state != "visible", hidden_rows, merged


def _hidden_rows_and_merges(wb, ws) -> tuple[tuple[int, ...], tuple[str, ...]]:
    """The hidden rows and merged ranges of a sheet, read from its XML part.

    openpyxl's read-only sheets do not keep either, so the sheet's part is
    streamed once more (its unpacked size is already bounded). Python's
    expat refuses entity expansion attacks (expat 2.4.1 and later).
    """
    from xml.etree.ElementTree import iterparse

    path = getattr(ws, "_worksheet_path", None)
    archive = getattr(wb, "_archive", None)
    if path is None or archive is None:
        return (), ()
    hidden: list[int] = []
    merged: list[str] = []
    try:
        with archive.open(path) as fh:
            for _event, el in iterparse(fh):
                tag = el.tag.rsplit("}", 1)[-1]
                if tag == "row":
                    if el.get("hidden") in ("1", "true") and (number := el.get("r", "")).isdigit():
                        hidden.append(int(number))
                    el.clear()
                elif tag == "mergeCell" and (ref := el.get("ref")):
                    merged.append(ref)
                elif tag == "c":
                    el.clear()
    except (KeyError, OSError, SyntaxError, ValueError):
        return (), ()
    return tuple(hidden), tuple(merged)
