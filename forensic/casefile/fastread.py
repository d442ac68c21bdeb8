"""The loader's vectorised fast path: a snapshot's activities.csv and links.csv read column by column.

A table is screened with numpy (every line of the header's width, no quote
but around a whole cell), then split into columns: a table with no quote
at all by one :meth:`str.split` of its rows, one with quoted cells by the
:mod:`csv` module (the row-wise reader's own parser); then it is checked
column by column, with the built-in iterators and numpy. The fast path only ever *proves a table clean*: each function
returns ``None`` as soon as a vectorised screen says that any rule of the
row-wise reader (:mod:`forensic.casefile.csvread`, :mod:`forensic.casefile.records`)
might fire (a quote, a lone carriage return, a row of another width, a
blank row, a padded cell it cannot strip the same way, a non-ASCII id, a
duplicate, an unknown reference, a value a parser refuses, a date rule),
and the loader then reads that table row by row, so every problem is
worded by the existing code, exactly as before. Distinct values of a
column (durations, dates, lags, percentages) are parsed once, by the
row-wise parsers themselves, so a value means the same on both paths.

Records are built from the columns. Like the row-wise reader, the fast
path keeps a ``memo`` of activities shared by the snapshots of a casefile
(here a row's text -> its record), so an activity unchanged from an
earlier snapshot is built once and its record shared (or, moved to another
line, rebuilt from it); links are built straight from the columns, with
the activities' own id strings.

References
----------
AACE International Recommended Practice 29R-03, Forensic Schedule
Analysis, sec. 2 (source validation: the schedules must be identified and
checked before any analysis); the checks themselves are those of the
row-wise reader.
"""

from __future__ import annotations

import csv
import dataclasses
import io
import re
from collections.abc import Callable, Collection
from datetime import date
from operator import attrgetter

import numpy as np

from forensic.casefile.csvread import (
    MAX_DURATION,
    MAX_ID_CHARS,
    MAX_TEXT_CHARS,
    Problems,
    parse_date,
    parse_int,
    parse_number,
)
from forensic.casefile.records import ActivityTable
from forensic.casefile.slotted import built
from forensic.core.model import ACTIVITY_KINDS, CONSTRAINT_KINDS, LINK_TYPES, Activity, Link
from forensic.core.network import topological_levels

__all__ = ["Frame", "fast_activities", "fast_links", "frame_table", "has_no_loop"]

# A cell with blanks at either end (other than the line ending itself).
_PADDED = re.compile(r"(?:^|,)[^\S\r\n]|[^\S\r\n](?:,|\r?$)", re.M)
# A quoted cell on one line: the whole cell between its separators, quotes doubled inside.
_QUOTED = re.compile(r'(?:^|(?<=,))"(?:[^"\r\n]|"")*"(?=,|\r?$)', re.M)
_NEWLINE, _COMMA, _CR = 10, 44, 13

Frame = tuple[tuple[str, ...], dict[str, list[str]], list[int], list[str]]
"""A table read by :func:`frame_table`: its header, its columns (stripped cells), each row's line and text."""


def frame_table(text: str, required: tuple[str, ...], optional: tuple[str, ...], max_rows: int) -> Frame | None:
    """Read a CSV table into columns, or ``None`` when the row-wise reader must read it.

    ``None`` whenever reading it row by row could record a problem or read
    it otherwise: a quote other than around a whole cell on one line, a lone
    carriage return, a header not on line 1, quoted or with any problem, a
    non-blank row of another width, a wholly blank row, a line over the
    ``csv`` field limit, no row, or more than ``max_rows``.
    """
    if text.count("\r") != text.count("\r\n"):
        return None
    first = text.partition("\n")[0]
    quoted = '"' in text
    shape = _QUOTED.sub(_placeholder, text) if quoted else text
    if '"' in shape or '"' in first:
        return None
    header = tuple(cell.strip() for cell in first.split(","))
    allowed = required + optional
    if (not all(header) or len(set(header)) != len(header) or any(h not in allowed for h in header)
            or any(c not in header for c in required)):
        return None
    screened = _data_lines(shape, len(header))
    if screened is None:
        return None
    lines, padded = screened
    padded = padded or quoted  # blanks inside quotes are stripped too
    every = text.split("\n")
    if not lines.size or lines.size > max_rows or max(map(len, every)) >= csv.field_size_limit():
        return None
    lines = lines.tolist()
    texts = [every[k - 1] for k in lines]
    columns = _read_columns(text, header, quoted, len(lines))
    if columns is None:
        return None
    cols = {name: list(map(str.strip, col)) if padded else col for name, col in zip(header, columns, strict=True)}
    if padded and not all(map(any, zip(*cols.values(), strict=True))):
        return None
    return header, cols, lines, texts


def _read_columns(text: str, header: tuple[str, ...], quoted: bool, n: int) -> list[list[str]] | None:
    """The table's columns as read by pandas (its C parser, every cell a string, no type guessing).

    ``None`` unless pandas reads exactly ``n`` data rows of the header's
    width (the screen above has made sure a row-wise reading would agree).
    pandas is imported here, so a command that reads no large table never
    loads it.
    """
    import pandas as pd

    try:
        df = pd.read_csv(io.StringIO(text), header=None, skiprows=1, names=list(header), index_col=False,
                         dtype=str, keep_default_na=False, na_filter=False, engine="c",
                         quoting=csv.QUOTE_MINIMAL if quoted else csv.QUOTE_NONE, skip_blank_lines=True)
    except (ValueError, pd.errors.ParserError):
        return None
    if len(df) != n:
        return None
    return [df[name].tolist() for name in header]


def _placeholder(match: re.Match) -> str:
    """A quoted cell as the shape of its line: one character, or nothing for an empty cell."""
    return "q" if len(match.group()) > 2 else ""


def _data_lines(text: str, width: int) -> tuple[np.ndarray, bool] | None:
    """The 1-based line of each data row, and whether a cell may need stripping.

    ``None`` if a non-empty line has another width than the header or a row
    is wholly blank (commas only).
    """
    data = np.frombuffer(text.encode("utf-8"), dtype=np.uint8)
    ends = np.flatnonzero(data == _NEWLINE)
    if not data.size or data[-1] != _NEWLINE:
        ends = np.append(ends, data.size)
    starts = np.concatenate(([0], ends[:-1] + 1))
    length = ends - starts
    cr = (length > 0) & (data[np.maximum(ends - 1, 0)] == _CR)
    length = length - cr
    commas = np.flatnonzero(data == _COMMA)
    counts = np.searchsorted(commas, ends) - np.searchsorted(commas, starts)
    full = length > 0
    if not full[0] or (counts[full] != width - 1).any() or (full & (length == counts)).any():
        return None
    number = np.arange(1, length.size + 1)
    return number[full][1:], _padded(data, text)


_SPACE = 32


def _padded(data: np.ndarray, text: str) -> bool:
    """Whether a cell may start or end with a blank (then every cell is stripped as ``str.strip`` does).

    In ASCII text: whether any blank byte stands next to a comma or at either
    end of a line (a carriage return counts as the end).
    """
    if not text.isascii():
        return _PADDED.search(text) is not None
    # Every blank byte (and a few other control bytes, which at worst only cost a strip).
    blank = np.flatnonzero((data <= _SPACE) & (data != _NEWLINE) & (data != _CR))
    if not blank.size:
        return False
    before = data[np.maximum(blank - 1, 0)]
    after = data[np.minimum(blank + 1, data.size - 1)]
    return bool(((blank == 0) | (blank == data.size - 1) | _EDGE_BYTE[before] | _EDGE_BYTE[after]).any())


_EDGE_BYTE = np.zeros(256, dtype=bool)
_EDGE_BYTE[[_NEWLINE, _COMMA, _CR]] = True


def _by_value(values: list[str], parse: Callable[[str, Problems], object]) -> list | None:
    """Each cell parsed, distinct values once (blank -> ``None``); ``None`` if the parser refuses one."""
    scratch = Problems()
    parsed = {raw: parse(raw, scratch) if raw else None for raw in dict.fromkeys(values)}
    if len(scratch):
        return None
    if len(parsed) == 1:  # a column of one value (often all blank)
        return [*parsed.values()] * len(values)
    return list(map(parsed.__getitem__, values))


def _column(cols: dict[str, list[str]], name: str, n: int) -> list[str]:
    return cols[name] if name in cols else [""] * n


def _allowed(values: list[str], choices: Collection[str]) -> bool:
    """Every cell blank or one of ``choices``."""
    return set(values) <= {"", *choices}


def _plain_ids(ids: list[str]) -> bool:
    """Every id of 1 to ``MAX_ID_CHARS`` printable ASCII characters without blanks, and no id twice."""
    if not ids or min(map(len, ids)) < 1 or max(map(len, ids)) > MAX_ID_CHARS:
        return False
    joined = "".join(ids)
    return joined.isascii() and joined.isprintable() and " " not in joined and len(set(ids)) == len(ids)


def _longest(values: list[str]) -> int:
    return max(map(len, values), default=0)


def _parse_activity_columns(cols, n, rel, calendars, parties) -> dict | None:
    """The parsed columns of a clean activities table (before the rules across columns), or ``None``."""
    col = {name: _column(cols, name, n) for name in (
        "id", "name", "kind", "duration", "remaining", "actual_start", "actual_finish", "calendar",
        "constraint", "constraint_date", "party", "area", "percent_complete", "crash_days", "crash_cost")}
    if not _plain_ids(col["id"]):
        return None
    if "" in col["name"] or _longest(col["name"]) > MAX_TEXT_CHARS or _longest(col["area"]) > MAX_TEXT_CHARS:
        return None
    if "" in col["duration"] or not _allowed(col["kind"], ACTIVITY_KINDS):
        return None
    if not (_allowed(col["calendar"], calendars) and _allowed(col["party"], parties)
            and _allowed(col["constraint"], CONSTRAINT_KINDS)):
        return None
    whole = lambda raw, p: parse_int(raw, rel, None, "", p)  # noqa: E731
    out = {"duration": _by_value(col["duration"], whole), "remaining": _by_value(col["remaining"], whole),
           "crash_days": _by_value(col["crash_days"], whole),
           "percent_complete": _by_value(col["percent_complete"],
                                         lambda raw, p: parse_number(raw, rel, None, "", p, maximum=100.0)),
           "crash_cost": _by_value(col["crash_cost"], lambda raw, p: parse_number(raw, rel, None, "", p))}
    for name in ("actual_start", "actual_finish", "constraint_date"):
        out[name] = _by_value(col[name], lambda raw, p: parse_date(raw, rel, None, "", p))
    if any(v is None for v in out.values()):
        return None
    return {**col, **{f"parsed_{k}": v for k, v in out.items()}}


def _as_array(values: list) -> np.ndarray:
    arr = np.empty(len(values), dtype=object)
    arr[:] = values
    return arr


def _resolve_activity_rules(p: dict, n: int, data_date: date | None):
    """The rules across columns; returns (start, finish, remaining, warned rows) or ``None``."""
    dur, rem, crash = (_as_array(p[f"parsed_{k}"]) for k in ("duration", "remaining", "crash_days"))
    start, finish = _as_array(p["parsed_actual_start"]), _as_array(p["parsed_actual_finish"])
    has_rem, has_start, has_finish = rem != None, start != None, finish != None  # noqa: E711
    has_crash = crash != None  # noqa: E711
    if (crash[has_crash] > dur[has_crash]).any():
        return None
    constraint = np.array(p["constraint"], dtype=object) != ""
    cdate = np.array(p["constraint_date"], dtype=object) != ""
    if (constraint != cdate).any():
        return None
    task = np.array(p["kind"], dtype=object)
    task = (task == "") | (task == "task")
    mile = ~task
    both = has_start & has_finish
    if ((mile & (dur != 0)).any() or (mile & has_rem & (rem != 0)).any()
            or (mile & both & (start != finish)).any()):
        return None
    ordered = task & both
    if (task & has_finish & ~has_start).any() or (finish[ordered] < start[ordered]).any():
        return None
    if data_date is not None and ((start[has_start] >= data_date).any() or (finish[has_finish] >= data_date).any()):
        return None
    merged = np.where(has_start, start, finish)
    start = np.where(mile, merged, start)
    finish = np.where(mile, merged, finish)
    if (task & has_finish & has_rem & (rem != 0)).any():
        return None
    in_progress = task & ~has_finish & has_start
    if (in_progress & ~has_rem).any():
        return None
    warned = in_progress & has_rem & (rem == 0)
    rem = np.where(mile | (task & has_finish), 0, rem)
    rem = np.where(task & ~has_finish & ~has_start & ~has_rem, dur, rem)
    return start.tolist(), finish.tolist(), rem.tolist(), warned


def fast_activities(
    frame: Frame,
    rel: str,
    *,
    calendars: Collection[str],
    parties: Collection[str],
    data_date: date | None,
    warnings: list[str],
    memo: dict | None = None,
) -> ActivityTable | None:
    """A snapshot's activities from a clean table, as :func:`~forensic.casefile.records.read_activities` reads them.

    ``None`` (and nothing recorded) when any row might hold a problem or a
    warning other than "in progress with remaining 0": the caller then
    reads the table row by row.
    """
    header, cols, lines, texts = frame
    n = len(lines)
    p = _parse_activity_columns(cols, n, rel, calendars, parties)
    if p is None:
        return None
    rules = _resolve_activity_rules(p, n, data_date)
    if rules is None:
        return None
    start, finish, rem, warned = rules
    bucket = {} if memo is None else memo.setdefault(("line", header), {})
    records = list(map(bucket.get, texts))  # an unchanged row's record from an earlier snapshot
    new = [i for i, act in enumerate(records) if act is None]
    if new:
        blank_none = lambda values: [v or None for v in values]  # noqa: E731
        fields: tuple[list, ...] = (p["id"], p["name"], p["parsed_duration"], [k or "task" for k in p["kind"]], rem, start, finish,
                  blank_none(p["calendar"]), blank_none(p["constraint"]), p["parsed_constraint_date"],
                  blank_none(p["party"]), blank_none(p["area"]), p["parsed_percent_complete"],
                  p["parsed_crash_days"], p["parsed_crash_cost"], lines)
        if len(new) < n:
            fields = tuple(list(map(col.__getitem__, new)) for col in fields)
        for i, act in zip(new, built(Activity, fields), strict=True):
            records[i] = act
        keep = warned.tolist()
        bucket.update((texts[i], records[i]) for i in new if not keep[i])
    moved = [i for i, act, line in zip(range(n), records, lines, strict=True) if act.line != line]
    if moved:  # the same records on other lines (every other field shared with the earlier record)
        old = zip(*map(_ALL_BUT_LINE, map(records.__getitem__, moved)), strict=True)
        for i, act in zip(moved, built(Activity, (*old, list(map(lines.__getitem__, moved)))), strict=True):
            records[i] = bucket[texts[i]] = act
    ids = list(map(_ID, records))  # an unchanged activity's id string is shared with earlier snapshots
    table = ActivityTable(rel)
    table.activities.update(zip(ids, records, strict=True))
    table.ids.update(zip(ids, lines, strict=True))
    warn_rows = np.flatnonzero(warned).tolist()
    warnings.extend(f"{rel}, line {lines[i]}: activity {ids[i]} is in progress with remaining 0 "
                    "and no actual_finish" for i in warn_rows)
    return table


_ID = attrgetter("id")
_ALL_BUT_LINE = attrgetter(*[f.name for f in dataclasses.fields(Activity)][:-1])  # ``line`` is the last field


def fast_links(
    frame: Frame,
    rel: str,
    *,
    known: Collection[str],
    finished: Collection[str],
    warnings: list[str],
) -> tuple[list[Link], tuple[np.ndarray, ...]] | None:
    """A snapshot's links from a clean table, as :func:`~forensic.casefile.records.read_links` reads them.

    Returns the links and their columns ``(pred, succ, type, lag)``: the
    positions in ``known`` of the ends (for :func:`has_no_loop`), the type
    as an index of ``LINK_TYPES`` and the lag (for the span check).

    ``None`` (and nothing recorded) when any row might hold a problem: a
    blank or unknown end, a link to itself, an unknown type, a lag the
    parser refuses, a duplicate. The warnings of links into finished work
    from unfinished work are the row-wise reader's, in line order.
    """
    _, cols, lines, texts = frame
    n = len(lines)
    pred, succ = cols["pred"], cols["succ"]
    ends = list(known)
    at = dict(zip(ends, range(len(ends)), strict=True))
    lp, ls = _positions(at, pred), _positions(at, succ)
    if lp is None or ls is None or (lp == ls).any():
        return None
    code = _positions({"": 0, **{t: i for i, t in enumerate(LINK_TYPES)}}, _column(cols, "type", n))
    if code is None:
        return None  # blank is FS (code 0)
    ltype = list(map(LINK_TYPES.__getitem__, code.tolist()))
    lags = _by_value(_column(cols, "lag", n), lambda raw, p: parse_int(
        raw, rel, None, "lag", p, minimum=None, maximum=MAX_DURATION,
        what="a lag in whole working days (negative for a lead)"))
    if lags is None or _repeats((lp * len(ends) + ls) * len(LINK_TYPES) + code):
        return None
    done = np.zeros(len(ends), dtype=bool)
    done[[at[a] for a in finished if a in at]] = True
    warn = done[ls] & ~done[lp]
    # The ends are the activity table's own id strings (shared with its records and, for an
    # unchanged activity, with earlier snapshots); a link is built straight from the columns,
    # which is faster than looking a row up in a memo (a moved row needs a new record anyway).
    lag_list = [lag or 0 for lag in lags]
    named = _as_array(ends)
    links = built(Link, (named[lp].tolist(), named[ls].tolist(), ltype, lag_list, lines))
    warnings.extend(f"{rel}, line {lines[i]}: link {pred[i]} -> {succ[i]} has no effect, "
                    f"because {succ[i]} is finished and {pred[i]} is not" for i in np.flatnonzero(warn).tolist())
    return links, (lp, ls, code, np.array(lag_list, dtype=np.int64))


def _repeats(keys: np.ndarray) -> bool:
    """Whether a key occurs twice (sorted neighbours; ``np.unique`` would import ``numpy.ma``)."""
    ordered = np.sort(keys)
    return bool((ordered[1:] == ordered[:-1]).any())


def _positions(at: dict[str, int], values: list[str]) -> np.ndarray | None:
    """The position in ``at`` of each value; ``None`` if one is not there."""
    try:
        return np.fromiter(map(at.__getitem__, values), np.int64, len(values))
    except KeyError:
        return None


def has_no_loop(n: int, lp: np.ndarray, ls: np.ndarray) -> bool:
    """Whether a network of ``n`` activities has no logic loop (Kahn's algorithm, a frontier at a time).

    ``lp`` and ``ls`` are the positions of each link's ends. ``True`` proves
    that :func:`~forensic.casefile.loops.check_loops` would find nothing; on
    ``False`` the loader runs it to name the loops.
    """
    return bool((topological_levels(n, lp, ls) >= 0).all())
