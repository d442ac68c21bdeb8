"""Converting the user's source rows to the casefile format's vocabulary, counting what is dropped.

Each source row is converted to the casefile format's vocabulary (our field
names, ISO dates, whole working days, our relationship and constraint
codes), then read by the loader's own row readers, so a bad value is
reported with the *source* file (or ``book.xlsx[sheet]``), its row number,
the user's column name and the value. Nothing is guessed: what the import
dropped (source columns it did not use, blank rows, times of day) or
defaulted (a blank relationship type read as FS, a duration rounded to
whole days) is counted here and listed in the import report
(:func:`conversion_notes`).

References
----------
AACE International Recommended Practice 29R-03, Forensic Schedule Analysis,
sec. 2.1 (source validation: every change made to bring the schedules into
the analysis is recorded).
"""

from __future__ import annotations

import math
import re
from collections import Counter
from datetime import date

from forensic.casefile.csvread import Problems, Row, find_unsafe_char
from forensic.casefile.records import ACTIVITY_COLUMNS, EVENT_COLUMNS, LINK_COLUMNS
from forensic.exchange.importer.mapping import CODE_FIELDS, FIELDS, ImportMapping, parse_mapped_date
from forensic.exchange.importer.sources import SourceTable, Unsaved

__all__: list[str] = []

_REQUIRED = {"activities": ACTIVITY_COLUMNS[0], "links": LINK_COLUMNS[0], "events": EVENT_COLUMNS[0]}
_DURATION_FIELDS = ("duration", "remaining", "crash_days")
_DATE_FIELDS = ("actual_start", "actual_finish", "constraint_date", "start", "finish")
_FORMULA_LEADS = ("=", "+", "-", "@", "\t", "\r")
# A number as a source writes it: ASCII digits, a sign, one decimal point.
# float() would also take 1e1, 1_0, full-width or Arabic-Indic digits, "inf"
# and "nan"; each is refused rather than read as a number without a word.
_PLAIN = re.compile(r"^[+-]?([0-9]+(\.[0-9]*)?|\.[0-9]+)$")
_DEFAULTS = {  # what the casefile format does with a blank optional field
    ("activities", "kind"): "read as task",
    ("activities", "remaining"): "the duration if not started, 0 if finished",
    ("activities", "calendar"): "the default calendar applies",
    ("links", "type"): "read as FS",
    ("links", "lag"): "read as 0",
    ("events", "category"): "taken from the party's role",
}


class Converter:
    """Turns source rows into casefile-format rows, counting what it drops and defaults."""

    def __init__(self, m: ImportMapping, problems: Problems):
        self.m = m
        self.v = m.values
        self.problems = problems
        self.counts: Counter[str] = Counter()
        self.unused: dict[str, set[str]] = {}
        self.flagged: set[tuple[str, int, str]] = set()  # (label, line, field) already reported
        self.remarks: list[str] = []  # what a reader of the workbook would not see (hidden, merged)

    def drop_echoes(self) -> None:
        """Drop the row readers' second report of a value this converter already reported."""
        self.problems.items = [p for p in self.problems.items
                               if (p.file, p.line, p.key) not in self.flagged
                               or p.message.startswith(f"{p.key}: ")]

    def rows(self, table: str, source: SourceTable) -> list[Row] | None:
        """The source's rows under our field names, or ``None`` if a column is missing."""
        mapped = self.m.columns[table]
        found = set(source.header)
        where: dict[str, str] = {}
        listing = ", ".join(repr(h) for h in source.header if h)
        bad = False
        for field in FIELDS[table]:
            theirs = mapped.get(field)
            if theirs is not None:
                if theirs not in found:
                    self.problems.add(source.label, 1, field, theirs,
                                      f"column for {field} not found; the columns found are {listing}")
                    bad = True
                else:
                    where[field] = theirs
            elif field in found:
                where[field] = field
            elif field in _REQUIRED[table]:
                self.problems.add(source.label, 1, field, None,
                                  f"no column for the required field {field}; map it under [columns.{table}] "
                                  f"{field} = \"...\"; the columns found are {listing}")
                bad = True
        if bad:
            return None
        self.unused.setdefault(table, set()).update(h for h in source.header if h and h not in where.values())
        for field in FIELDS[table]:
            if field not in where and (table, field) in _DEFAULTS:
                self.counts[f"{table}: no column for {field}; {_DEFAULTS[table, field]}"] += len(source.rows)
        self.counts[f"{table}: wholly blank rows skipped"] += source.blank_rows
        self.counts[f"{table}: time of day dropped from workbook date cells"] += source.times_dropped
        self.counts[f"{table}: workbook formulas read by their saved value (never evaluated)"] += source.formulas
        if source.hidden_sheet:
            self.remarks.append(f"{table}: {source.label} is a hidden sheet; it was read like any other")
        if source.hidden_rows:
            self.remarks.append(f"{table}: {source.label}: hidden rows read like any other "
                                f"({len(source.hidden_rows)}: {_lines(source.hidden_rows)})")
        if source.merged:
            self.remarks.append(f"{table}: {source.label}: merged cells, each read as its top-left cell with the "
                                f"others blank ({len(source.merged)}: {_lines(source.merged)})")
        index = {h: i for i, h in enumerate(source.header)}
        out = []
        for line, cells in source.rows:
            row = {}
            for field, theirs in where.items():
                raw = cells[index[theirs]]
                row[field] = self._value(table, field, theirs, raw, source.label, line)
            out.append(Row(line, row))
        return out

    def _value(self, table: str, field: str, column: str, raw: str | date, label: str, line: int) -> str:
        if isinstance(raw, Unsaved):
            self.problems.add(label, line, column, str(raw),
                              f"{field}: a formula with no saved value; formulas are never evaluated, so open "
                              "the workbook in a spreadsheet program and save it (or paste the values)")
            self.flagged.add((label, line, field))
            return ""
        if isinstance(raw, date):
            if field in _DATE_FIELDS:
                return raw.isoformat()
            raw = raw.isoformat()
        text = raw.strip()
        if text.casefold() in self.v.blanks:
            text = ""
        if not text:
            if (table, field) in _DEFAULTS:
                self.counts[f"{table}: {field} blank; {_DEFAULTS[table, field]}"] += 1
            return ""

        def bad(message: str) -> str:
            self.problems.add(label, line, column, text, f"{field}: {message}")
            self.flagged.add((label, line, field))
            return text

        unsafe = find_unsafe_char(text)
        if unsafe is not None:
            self.problems.add(label, line, column, unsafe[1], f"{field}: contains a control or text-direction "
                              "character (the casefile format refuses them); expected printable text")
            self.flagged.add((label, line, field))
            return ""

        if text.startswith("'") and text[1:2] in _FORMULA_LEADS:
            # our own exports neutralise such text (OWASP); read it back as written
            self.counts[f"{table}: leading apostrophe removed before a formula character"] += 1
            text = text[1:]
        if field in _DATE_FIELDS:
            d = parse_mapped_date(text, self.v.date_formats)
            if d is None:
                return bad(f"expected a date in one of the formats {', '.join(self.v.date_formats)}")
            return d.isoformat()
        if field in CODE_FIELDS:
            ours = self.v.codes[field].get(text.casefold())
            if ours is None:
                key = CODE_FIELDS[field][0]
                return bad(f"unknown code; expected one of {', '.join(sorted(set(self.v.codes[field].values())))} "
                           f"or a code listed in [values] {key}")
            if ours != text:
                self.counts[f"{table}: {field} codes translated"] += 1
            return ours
        if field in _DURATION_FIELDS or field == "lag":
            unit = self.v.lags if field == "lag" else self.v.durations
            return self._days(table, field, unit, text, bad)
        if field == "percent_complete":
            number = text.removesuffix("%").strip()
            try:
                if not _PLAIN.match(number):
                    raise ValueError(number)
                value = float(number)
            except ValueError:
                return bad("expected a percentage such as 45, 45% or (with percent = \"fraction\") 0.45")
            if self.v.percent == "fraction" and not text.endswith("%"):
                value *= 100
            if text.endswith("%"):
                self.counts[f"{table}: percent signs removed"] += 1
            return _num(value)
        if field == "activities":
            return " ".join(text.replace(",", " ").replace(";", " ").split())
        return text

    def _days(self, table: str, field: str, unit: str, text: str, bad) -> str:
        if not _PLAIN.match(text):
            return bad(f"expected a number of {unit} written plainly, in the digits 0-9 "
                       "(no exponent such as 1e1, no underscore, no other digits)")
        try:
            value = float(text)
        except ValueError:
            return bad(f"expected a number of {unit}")
        if not math.isfinite(value):
            return bad(f"expected a number of {unit}")
        days = value / self.v.hours_per_day if unit == "hours" else value
        whole = round(days)
        if abs(days - whole) < 1e-9:
            if unit == "hours":
                self.counts[f"{table}: {field} converted from hours to days ({self.v.hours_per_day:g} hours a day)"] += 1
            return str(whole)
        if self.v.rounding == "refuse":
            return bad(f"{text} {unit} is {days:g} days, not a whole number of working days; "
                       "set [values] rounding = \"up\" or \"nearest\" to round it")
        rounded = math.floor(abs(days) + 0.5) if self.v.rounding == "nearest" else math.ceil(abs(days))
        rounded = int(math.copysign(rounded, days))
        self.counts[f"{table}: {field} rounded {self.v.rounding} to whole working days"] += 1
        return str(rounded)


def _lines(items) -> str:
    """The first ten items, then a count of the rest."""
    shown = ", ".join(map(str, list(items)[:10]))
    return shown if len(items) <= 10 else f"{shown} and {len(items) - 10} more"


def _num(value: float) -> str:
    return str(int(value)) if float(value).is_integer() else repr(value)


def conversion_notes(conv: Converter) -> tuple[str, ...]:
    """What was dropped or defaulted, table by table (activities, links, events)."""
    notes = []
    for table in FIELDS:
        cols = conv.unused.get(table)
        if cols:
            notes.append(f"{table}: source columns not used (dropped): {', '.join(sorted(cols))}")
        for what, n in conv.counts.items():
            if n and what.startswith(f"{table}: "):
                unit = "" if "rows" in what else " rows" if "no column" in what else " cells"
                if n == 1:
                    unit = unit.removesuffix("s")
                notes.append(f"{what} ({n}{unit})")
        notes += [r for r in conv.remarks if r.startswith(f"{table}: ")]
    return tuple(notes)
