"""The CSV, JSON and text writers of tables, with formula neutralisation.

The writers return text; the CLI and the export write it.

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
import operator
import re
import textwrap
from collections.abc import Sequence
from datetime import date
from itertools import chain, compress, repeat
from types import ModuleType
from typing import Any

from forensic.core.tables import Table, is_number

try:  # a fast, well-kept encoder; the standard library's is the fallback with the same text
    import orjson

    _orjson: ModuleType | None = orjson
    _ORJSON_OPTIONS = orjson.OPT_INDENT_2 | orjson.OPT_NON_STR_KEYS
except ImportError:  # pragma: no cover - orjson is a declared dependency
    _orjson = None

__all__ = ["dumps_json", "neutralise", "to_csv", "to_text"]

_FORMULA_LEADS = ("=", "+", "-", "@", "\t", "\r")
_BARE_OPERATOR = re.compile(r"[=<>]{1,2}")


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


_VALUES = operator.methodcaller("values")


def _plain_floats(obj: Any) -> bool:
    """Refuse NaN and infinities anywhere in ``obj``; true when every float prints without an exponent.

    JSON has no NaN or infinity (the standard encoder's ``allow_nan=False``).
    Python writes floats from 1e16 up and below 1e-4 with an exponent
    (``1e+16``, ``1e-05``) where orjson writes ``1e16``, ``1e-5``: such a
    value sends the text to the standard encoder, so the bytes never depend
    on which encoder ran.

    The values are visited one nesting level at a time with the built-in
    iterators (``map``, ``compress``, ``chain``, ``zip``), so a large
    schedule is screened at C speed rather than one Python step a value: a
    level of dicts of one size is cut into its columns (the values at one
    place in each dict), and a column holding only text, numbers other than
    floats, dates and the like is left at once. A non-finite number is then
    named by :func:`_refuse_non_finite`, the walk value by value.
    """
    columns: list[Sequence[Any]] = [[obj]]
    floats: list[float] = []
    while columns:
        deeper: list[Sequence[Any]] = []
        for column in columns:
            kinds = set(map(type, column))
            if float in kinds:
                floats.extend(compress(column, map(operator.is_, map(type, column), repeat(float))))
            dicts = {t for t in kinds if issubclass(t, dict)}
            nested = dicts | (kinds & {list, tuple})
            if not nested:
                continue
            inner = column if nested == kinds else list(compress(column, map(nested.__contains__, map(type, column))))
            if nested == dicts and len(set(map(len, inner))) == 1:
                deeper.extend(zip(*map(_VALUES, inner), strict=True))  # one column a place in the dicts
                continue
            values = [v.values() if isinstance(v, dict) else v for v in inner] if dicts else inner
            deeper.append(list(chain.from_iterable(values)))
        columns = deeper
    if not floats:
        return True
    if not all(map(math.isfinite, floats)):
        _refuse_non_finite(obj)
    sizes = list(map(abs, floats))
    return max(sizes) < 1e16 and min(filter(None, sizes), default=1.0) >= 1e-4


def _refuse_non_finite(obj: Any) -> None:
    """Raise ``ValueError`` naming the non-finite number met first by a depth-first walk of ``obj``."""
    stack = [obj]
    while stack:
        v = stack.pop()
        t = type(v)
        if t is float:
            if not math.isfinite(v):
                msg = f"cannot write {v!r} as JSON (not a finite number)"
                raise ValueError(msg)
        elif isinstance(v, dict):
            stack.extend(v.values())
        elif t is list or t is tuple:
            stack.extend(v)


def dumps_json(obj: Any) -> str:
    """Deterministic JSON: dates as ISO strings, UTF-8 text, two-space indent, trailing newline.

    Encoded by orjson when it is installed (a compiled encoder, several times
    faster than the standard library's on large schedules) with the same
    text: the same keys in the same order, two-space indentation, ``": "``
    between key and value, UTF-8 characters as themselves, dates as ISO
    strings. NaN and infinities are refused before encoding, as the standard
    encoder's ``allow_nan=False`` does. Values orjson does not take (integers
    beyond 64 bits) and floats Python writes with an exponent fall back to the standard library encoder, which gives
    the same text for everything both accept.
    """
    if _orjson is not None and _plain_floats(obj):
        try:
            return _orjson.dumps(obj, default=_json_default, option=_ORJSON_OPTIONS).decode("utf-8") + "\n"
        except (TypeError, _orjson.JSONEncodeError):
            pass  # the standard encoder below gives the precise error, or the text
    return json.dumps(obj, default=_json_default, ensure_ascii=False, indent=2, allow_nan=False) + "\n"


_ID_COLUMNS = frozenset({"id", "activity", "window", "event", "snapshot", "casefile", "party", "from", "to"})


def _noun(column: str, n: int) -> str:
    """The count that stands for a list of ids ("21 activities"), named after its column."""
    if "event" in column:
        return f"{n} event" if n == 1 else f"{n} events"
    if "part" in column:
        return f"{n} party" if n == 1 else f"{n} parties"
    return f"{n} activity" if n == 1 else f"{n} activities"


def _split_header(name: str) -> tuple[str, str]:
    """A header on two lines at the underscore that makes the wider line narrowest."""
    cuts = [i for i, ch in enumerate(name) if ch == "_"]
    if not cuts:
        return name, ""
    i = min(cuts, key=lambda k: (max(k, len(name) - k - 1), k))
    return name[:i], name[i + 1:]


def to_text(table: Table, max_width: int = 40, width: int | None = None,
            keep: tuple[str, ...] = ()) -> str:
    """A fixed-width text table for the terminal; numbers right-aligned.

    Cells longer than ``max_width`` are cut with "…". With ``width`` (the
    terminal's columns) a wider table is fitted to it, step by step: a list
    of ids becomes its count ("21 activities"), headers break at an
    underscore onto two lines, text cells (names; never the first column
    nor an identifier such as ``id``) are cut down to 12 characters, and if it is still too wide the columns least needed are
    left out (those not in ``keep``, from the right; then ``keep`` from its
    end) and a last line names them. ``width=None`` gives the full table.
    """
    ncol = len(table.columns)
    number = [all(is_number(r[c]) for r in table.rows if r[c] is not None)
              and any(r[c] is not None for r in table.rows) for c in range(ncol)]
    is_list = [any(isinstance(r[c], (list, tuple)) for r in table.rows) for c in range(ncol)]

    def show(v: Any, limit: int | None = max_width) -> str:
        text = "" if v is None else _cell(v) if not isinstance(v, str) else v
        text = str(text).replace("\n", " ")
        return text if limit is None or len(text) <= limit else text[: limit - 1].rstrip() + "…"

    body = [[show(v) for v in row] for row in table.rows]
    headers = [[name] for name in table.columns]

    def natural(c: int) -> int:
        return max([len(h) for h in headers[c]] + [len(r[c]) for r in body])

    def total(cols: list[int], widths: dict[int, int]) -> int:
        return sum(widths[c] for c in cols) + 2 * (len(cols) - 1)

    cols = list(range(ncol))
    widths = {c: natural(c) for c in cols}
    dropped: list[str] = []
    if width is not None and total(cols, widths) > width:
        # 1. Lists of ids become counts.
        for c in cols:
            if is_list[c]:
                for r, row in zip(body, table.rows, strict=True):
                    v = row[c]
                    if isinstance(v, (list, tuple)) and len(v) > 1:
                        r[c] = _noun(table.columns[c], len(v))
        widths = {c: natural(c) for c in cols}
    if width is not None and total(cols, widths) > width:
        # 2. Headers on two lines; 3. text cut to 12 characters at least; 4. columns left out.
        headers = [list(_split_header(name)) for name in table.columns]
        # Text columns may be cut, never the first column nor an identifier column.
        text_col = [c > 0 and table.columns[c] not in _ID_COLUMNS and not number[c]
                    and any(isinstance(r[c], str) for r in table.rows) for c in range(ncol)]
        full = {c: natural(c) for c in cols}
        least = {c: max([len(h) for h in headers[c]] + [min(full[c], 12)]) if text_col[c] else full[c]
                 for c in cols}
        order = [table.columns.index(k) for k in keep if k in table.columns]
        order += [c for c in cols if c not in order]
        while len(cols) > 1 and total(cols, least) > width:
            gone = next(c for c in reversed(order) if c in cols)
            cols.remove(gone)
            dropped.append(table.columns[gone])
        widths = dict(least)
        spare = width - total(cols, widths)
        for c in (c for c in order if c in cols and text_col[c]):
            grow = min(spare, full[c] - widths[c])
            widths[c] += grow
            spare -= grow
        body = [[show(v, widths[c]) if c in cols else "" for c, v in enumerate(r)] for r in body]
    headers = [[h for h in hs if h] or [""] for hs in headers]
    height = max(len(headers[c]) for c in cols)

    def line(cells: list[str]) -> str:
        out = [cells[i].rjust(widths[c]) if number[c] else cells[i].ljust(widths[c]) for i, c in enumerate(cols)]
        return "  ".join(out).rstrip()

    lines = [line([(headers[c] + [""] * height)[k] for c in cols]) for k in range(height)]
    lines.append("  ".join("-" * widths[c] for c in cols))
    lines += [line([r[c] for c in cols]) for r in body]
    if dropped:
        note = f"({len(dropped)} of {ncol} columns not shown: {', '.join(sorted(dropped, key=table.columns.index))}; --wide shows every column)"
        lines += textwrap.wrap(note, width=max(width or 0, 20), break_on_hyphens=False, break_long_words=False)
    return "\n".join(lines) + "\n"
