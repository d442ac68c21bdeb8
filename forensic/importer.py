"""Build a casefile from tabular schedule exports, described by the user's mapping (:func:`import_casefile`).

The mapping is a TOML file the user writes about their own export: which
file (CSV) or workbook sheet (XLSX) holds each snapshot's activities and
links, each snapshot's data date, their column name for each of our fields,
their date formats, relationship-type codes, duration and lag units (days,
or hours with ``hours_per_day``), percent style, and the project settings,
parties and calendars. There are no presets for any product: the mapping
says everything. docs/import-export.md documents every key with a worked
example (examples/import/).

Each source row is converted to the casefile format's vocabulary, then read
by the loader's own row readers, so a bad value is reported with the
*source* file (or ``book.xlsx[sheet]``), its row number, the user's column
name and the value. The casefile is then written to a temporary sibling of
the output folder, loaded again with :func:`~forensic.casefile.load_casefile`
and checked with :func:`~forensic.validation.validate_casefile` (every
snapshot must schedule), and only then renamed into place. Nothing is
guessed: what the import dropped (source columns it did not use, blank
rows, times of day) or defaulted (a blank relationship type read as FS, a
duration rounded to whole days) is listed in the report.

Hostile sources are held to the loader's ceilings
(:class:`~forensic.casefile.Limits`: file size before reading, rows per
table, a workbook's unpacked size) and character rule, and a problem the
reload finds (a logic loop) is mapped back from the written casefile's file
and line to the user's source and row, so every message names what the
user can fix.

References
----------
AACE International Recommended Practice 29R-03, Forensic Schedule Analysis,
sec. 2.1 (source validation: the schedules analysed are identified, and
every change made to bring them into the analysis is recorded).
"""

from __future__ import annotations

import codecs
import math
import os
import re
import shutil
import tempfile
import tomllib
from collections import Counter
from dataclasses import dataclass, replace
from datetime import date, datetime
from pathlib import Path
from typing import Any

from ._csvread import Problems, Row, find_unsafe_char
from ._records import (
    ACTIVITY_COLUMNS,
    EVENT_COLUMNS,
    LINK_COLUMNS,
    read_activities,
    read_events,
    read_links,
)
from ._sources import SourceTable, Unsaved, close_books, read_source
from .casefile import _CALENDAR_KEYS, _PARTY_KEYS, _PROJECT_KEYS, Limits, load_casefile
from .errors import CasefileError, ImportMappingError, InputProblem, LimitExceeded, OutputError
from .model import (
    ACTIVITY_KINDS,
    CATEGORIES,
    CONSTRAINT_KINDS,
    LINK_TYPES,
    PARTY_ROLES,
    Calendar,
    Casefile,
    Fragnet,
    Party,
    Project,
    Snapshot,
    frozen_mapping,
)
from .validation import ValidationResult, validate_casefile
from .writer import write_casefile

__all__ = ["FIELDS", "FORMAT", "ImportReport", "import_casefile", "read_mapping"]

FORMAT = "forensic-import/1"
_TOP_KEYS = ("format", "workbook", "settings", "project", "party", "calendar", "snapshot",
             "events", "fragnet", "columns", "values")
_VALUE_KEYS = ("date_formats", "durations", "lags", "hours_per_day", "rounding", "percent", "blanks",
               "link_types", "kinds", "constraints", "categories", "encoding", "delimiter")
FIELDS = {  # our fields per table, required ones first (casefile format, version 1)
    "activities": ACTIVITY_COLUMNS[0] + ACTIVITY_COLUMNS[1],
    "links": LINK_COLUMNS[0] + LINK_COLUMNS[1],
    "events": EVENT_COLUMNS[0] + EVENT_COLUMNS[1],
}
_REQUIRED = {"activities": ACTIVITY_COLUMNS[0], "links": LINK_COLUMNS[0], "events": EVENT_COLUMNS[0]}
_DURATION_FIELDS = ("duration", "remaining", "crash_days")
_DATE_FIELDS = ("actual_start", "actual_finish", "constraint_date", "start", "finish")
_CODE_FIELDS = {"kind": ("kinds", ACTIVITY_KINDS), "type": ("link_types", LINK_TYPES),
                "constraint": ("constraints", CONSTRAINT_KINDS), "category": ("categories", CATEGORIES)}
_FORMULA_LEADS = ("=", "+", "-", "@", "\t", "\r")
_SAFE_ID = re.compile(r"^[A-Za-z0-9_-][A-Za-z0-9 ._-]{0,99}$")
_DEFAULTS = {  # what the casefile format does with a blank optional field
    ("activities", "kind"): "read as task",
    ("activities", "remaining"): "the duration if not started, 0 if finished",
    ("activities", "calendar"): "the default calendar applies",
    ("links", "type"): "read as FS",
    ("links", "lag"): "read as 0",
    ("events", "category"): "taken from the party's role",
}


@dataclass(frozen=True, slots=True)
class ImportReport:
    """What an import wrote and everything it dropped or defaulted on the way.

    ``notes`` lists each thing dropped or defaulted (with counts);
    ``warnings`` are the loader's and the engine's warnings on the result.
    """

    out: Path
    casefile: Casefile
    validation: ValidationResult
    notes: tuple[str, ...]
    warnings: tuple[str, ...]


@dataclass(frozen=True, slots=True)
class _Values:
    date_formats: tuple[str, ...]
    durations: str
    lags: str
    hours_per_day: float
    rounding: str
    percent: str
    blanks: frozenset[str]
    codes: dict[str, dict[str, str]]  # field -> their code (folded) -> ours
    encoding: str
    delimiter: str


class _Mapping:
    """The checked mapping file; problems name the mapping file and key."""

    def __init__(self, path: Path, problems: Problems, limits: Limits):
        self.path = path
        self.label = path.name
        self.base = path.parent
        self.problems = problems
        self.limits = limits
        doc = self._toml(path, self.label, None)
        if doc is None:
            return
        _walk_text(doc, "", self.label, problems)
        if doc and doc.get("format") != FORMAT:
            self._bad("format", doc.get("format"), f"expected format = {FORMAT!r} at the top of the mapping")
        for key in doc:
            if key not in _TOP_KEYS:
                self._bad(key, key, f"unknown mapping key; expected only {', '.join(_TOP_KEYS)}")
        self.notes: list[str] = []
        self.workbook = doc.get("workbook")
        self.settings = self._settings(doc)
        self.columns = self._columns(doc.get("columns", {}))
        self.values = self._values(doc.get("values", {}))
        self.snapshots = [self._spec(t, f"snapshot #{i}", ("id", "role", "data_date", "activities", "links"))
                          for i, t in enumerate(self._list(doc, "snapshot", True), 1)]
        self.fragnets = [self._spec(t, f"fragnet #{i}", ("id", "activities", "links"))
                         for i, t in enumerate(self._list(doc, "fragnet", False), 1)]
        self.events = self._ref(doc["events"], "events") if "events" in doc else None

    def _toml(self, path: Path, label: str, key: str | None) -> dict | None:
        """A TOML file read within the file ceiling; ``None`` (and a problem) if it cannot be read."""
        def bad(value: Any, message: str) -> None:
            self.problems.add(label, None, key, value, message)

        if not path.is_file():
            bad(str(path), "folder, expected a TOML file" if path.is_dir() else "file not found")
            return None
        size = path.stat().st_size
        if size > self.limits.max_file_bytes:
            self.problems.add_limit(label, None, size, f"file is {size} bytes, over the limit of "
                                    f"{self.limits.max_file_bytes} bytes; it is not read")
            return None
        with open(path, "rb") as fh:  # read-only; never written
            data = fh.read(self.limits.max_file_bytes + 1)
        try:
            text = data.decode("utf-8-sig")
        except UnicodeDecodeError as exc:
            bad(f"0x{data[exc.start:exc.start + 1].hex()} at byte {exc.start}", "not UTF-8 text; save it as UTF-8")
            return None
        try:
            return tomllib.loads(text)
        except tomllib.TOMLDecodeError as exc:
            bad(None, f"not valid TOML: {exc}")
        except RecursionError:  # arrays or tables nested thousands deep: hostile, not a mapping
            bad(None, "not valid TOML: nested too deeply")
        return None

    def _bad(self, key: str | None, value: Any, message: str) -> None:
        self.problems.add(self.label, None, key, value, message)

    def _list(self, doc: dict, name: str, required: bool) -> list[dict]:
        items = doc.get(name, [])
        if not isinstance(items, list) or not all(isinstance(t, dict) for t in items):
            self._bad(name, None, f"expected [[{name}]] tables")
            return []
        if required and not items:
            self._bad(name, None, f"missing; expected at least one [[{name}]] table")
        return items

    def _settings(self, doc: dict) -> dict:
        own = {k: doc[k] for k in ("project", "party", "calendar") if k in doc}
        if "settings" not in doc:
            return own
        if own:
            self._bad("settings", doc["settings"],
                      "give the project, parties and calendars either in the mapping or in the settings file, not both")
        path = self._file(doc["settings"], "settings")
        if path is None:
            return {}
        other = self._toml(path, f"{self.label}, settings file {path.name}", "settings")
        if other is None:
            return {}
        _walk_text({k: other[k] for k in ("project", "party", "calendar") if k in other}, "",
                   f"{self.label}, settings file {path.name}", self.problems)
        ignored = sorted(k for k in other if k not in ("project", "party", "calendar"))
        if ignored:
            self.notes.append(f"settings {path.name}: ignored keys {', '.join(ignored)} (only project, party and calendar are read)")
        return {k: other[k] for k in ("project", "party", "calendar") if k in other}

    def _file(self, value: Any, key: str) -> Path | None:
        if not isinstance(value, str) or not value.strip():
            self._bad(key, value, "expected a file path (relative to the mapping file) as a string")
            return None
        return self.base / value

    def _ref(self, value: Any, key: str) -> tuple[Path, str | None, str] | None:
        """A table reference: ``"file.csv"``, ``{sheet = "..."}`` (the workbook) or ``{file, sheet}``."""
        if isinstance(value, dict):
            for k in value:
                if k not in ("file", "sheet"):
                    self._bad(f"{key}.{k}", k, "unknown key; a table reference has only file and sheet")
            file = value.get("file", self.workbook)
            sheet = value.get("sheet")
            if file is None:
                self._bad(key, None, "no file: give file = ... here or workbook = ... at the top of the mapping")
                return None
            if sheet is not None and not isinstance(sheet, str):
                self._bad(f"{key}.sheet", sheet, "expected a sheet name as a string")
                return None
        else:
            file, sheet = value, None
        path = self._file(file, key)
        if path is None:
            return None
        label = path.name if sheet is None else f"{path.name}[{sheet}]"
        return path, sheet, label

    def _spec(self, t: dict, where: str, keys: tuple[str, ...]) -> dict:
        sid = t.get("id")
        where = f"{where.split(' ')[0]} {sid}" if isinstance(sid, str) and sid else where
        for k in t:
            if k not in keys:
                self._bad(f"{where}.{k}", k, f"unknown key; expected only {', '.join(keys)}")
        spec: dict[str, Any] = {"id": sid, "where": where, "role": t.get("role", "update")}
        if not isinstance(sid, str) or not sid.strip():
            self._bad(f"{where}.id", sid, "expected an id such as BL or U01")
        elif not _SAFE_ID.match(sid) or find_unsafe_char(sid) is not None:
            self._bad(f"{where}.id", sid, "the id names a casefile folder: use letters, digits, blanks, "
                      "'-', '_' and '.', not starting with '.' or a blank (at most 100 characters)")
        if "data_date" in keys:
            raw = t.get("data_date")
            spec["data_date"] = None
            if raw is None:
                self._bad(f"{where}.data_date", None, "required key is missing")
            elif isinstance(raw, date) and not isinstance(raw, datetime):
                spec["data_date"] = raw
            else:
                spec["data_date"] = _parse_date(str(raw), self.values.date_formats) if self.values else None
                if spec["data_date"] is None:
                    self._bad(f"{where}.data_date", raw, "expected a date such as 2026-01-05, or one in [values] date_formats")
        for what in ("activities", "links"):
            if what not in t:
                self._bad(f"{where}.{what}", None, "required key is missing")
                spec[what] = None
            else:
                spec[what] = self._ref(t[what], f"{where}.{what}")
        return spec

    def _columns(self, cols: Any) -> dict[str, dict[str, str]]:
        out: dict[str, dict[str, str]] = {k: {} for k in FIELDS}
        if not isinstance(cols, dict):
            self._bad("columns", cols, "expected [columns.activities], [columns.links], [columns.events] tables")
            return out
        for table, fields in cols.items():
            if table not in FIELDS:
                self._bad(f"columns.{table}", table, f"unknown table; expected {', '.join(FIELDS)}")
                continue
            if not isinstance(fields, dict):
                self._bad(f"columns.{table}", fields, "expected a table of our field = their column name")
                continue
            for field, theirs in fields.items():
                if field not in FIELDS[table]:
                    self._bad(f"columns.{table}.{field}", field,
                              f"unknown field; the {table} fields are {', '.join(FIELDS[table])}")
                elif not isinstance(theirs, str) or not theirs.strip():
                    self._bad(f"columns.{table}.{field}", theirs, "expected your column's name as a string")
                else:
                    out[table][field] = theirs.strip()
        return out

    def _values(self, v: Any) -> _Values:
        if not isinstance(v, dict):
            self._bad("values", v, "expected a [values] table")
            v = {}
        for k in v:
            if k not in _VALUE_KEYS:
                self._bad(f"values.{k}", k, f"unknown key; expected only {', '.join(_VALUE_KEYS)}")
        formats = v.get("date_formats", ["%Y-%m-%d"])
        if isinstance(formats, str):
            formats = [formats]
        if not isinstance(formats, list) or not formats or not all(isinstance(f, str) and "%" in f for f in formats):
            self._bad("values.date_formats", formats, 'expected a list of strftime patterns such as ["%d/%m/%Y"]')
            formats = ["%Y-%m-%d"]

        def choice(key: str, default: str, allowed: tuple[str, ...]) -> str:
            value = v.get(key, default)
            if value not in allowed:
                self._bad(f"values.{key}", value, f"expected one of {', '.join(allowed)}")
                return default
            return value

        durations = choice("durations", "days", ("days", "hours"))
        lags = choice("lags", "days", ("days", "hours"))
        hpd = v.get("hours_per_day", 8 if "hours" not in (durations, lags) else None)
        if hpd is None:
            self._bad("values.hours_per_day", None, "required when durations or lags are in hours")
            hpd = 8
        elif isinstance(hpd, bool) or not isinstance(hpd, (int, float)) or not 0 < hpd <= 24:
            self._bad("values.hours_per_day", hpd, "expected a number of hours between 0 and 24")
            hpd = 8
        blanks = v.get("blanks", [])
        if not isinstance(blanks, list) or not all(isinstance(b, str) for b in blanks):
            self._bad("values.blanks", blanks, 'expected a list of texts read as blank, such as ["-", "n/a"]')
            blanks = []
        codes: dict[str, dict[str, str]] = {}
        for field, (key, ours) in _CODE_FIELDS.items():
            table = {o.casefold(): o for o in ours}
            given = v.get(key, {})
            if not isinstance(given, dict):
                self._bad(f"values.{key}", given, "expected a table of our code = [your codes]")
                given = {}
            for mine, theirs in given.items():
                if mine not in ours:
                    self._bad(f"values.{key}.{mine}", mine, f"unknown code; ours are {', '.join(ours)}")
                    continue
                theirs = [theirs] if isinstance(theirs, str) else theirs
                if not isinstance(theirs, list) or not all(isinstance(t, str) for t in theirs):
                    self._bad(f"values.{key}.{mine}", theirs, "expected your code or a list of your codes")
                    continue
                for t in theirs:
                    folded = t.strip().casefold()
                    if folded in table and table[folded] != mine:
                        self._bad(f"values.{key}.{mine}", t, f"code already stands for {table[folded]}")
                    table[folded] = mine
            codes[field] = table
        return _Values(
            tuple(formats), durations, lags, float(hpd), choice("rounding", "refuse", ("refuse", "up", "nearest")),
            choice("percent", "number", ("number", "fraction")), frozenset(b.strip().casefold() for b in blanks),
            codes, self._encoding(v.get("encoding", "utf-8")), self._delimiter(v.get("delimiter", ",")),
        )

    def _encoding(self, value: Any) -> str:
        try:
            if not isinstance(value, str):
                raise LookupError(value)
            codecs.lookup(value)
        except LookupError:
            self._bad("values.encoding", value, 'expected a text encoding such as "utf-8", "cp1252" or "utf-16"')
            return "utf-8"
        return value

    def _delimiter(self, value: Any) -> str:
        if not isinstance(value, str) or len(value) != 1 or value in "\"\r\n" or find_unsafe_char(value):
            self._bad("values.delimiter", value, 'expected one character such as "," or ";" or "\\t"')
            return ","
        return value


def _parse_date(raw: str, formats: tuple[str, ...]) -> date | None:
    for fmt in (*formats, "%Y-%m-%d"):
        try:
            return datetime.strptime(raw, fmt).date()
        except ValueError:
            continue
    return None


class _Converter:
    """Turns source rows into casefile-format rows, counting what it drops and defaults."""

    def __init__(self, m: _Mapping, problems: Problems):
        self.m = m
        self.v = m.values
        self.problems = problems
        self.counts: Counter[str] = Counter()
        self.unused: dict[str, set[str]] = {}
        self.flagged: set[tuple[str, int, str]] = set()  # (label, line, field) already reported

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
            d = _parse_date(text, self.v.date_formats)
            if d is None:
                return bad(f"expected a date in one of the formats {', '.join(self.v.date_formats)}")
            return d.isoformat()
        if field in _CODE_FIELDS:
            ours = self.v.codes[field].get(text.casefold())
            if ours is None:
                key = _CODE_FIELDS[field][0]
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


def _num(value: float) -> str:
    return str(int(value)) if float(value).is_integer() else repr(value)


def _seq(value: Any) -> tuple:
    """A list as a tuple; anything else as a one-item tuple, for the loader to refuse by its key."""
    return tuple(value) if isinstance(value, (list, tuple)) else (value,)


def _walk_text(doc: Any, key: str, label: str, problems: Problems) -> None:
    """Refuse a control or text-direction character in any text of the mapping, naming its key."""
    if isinstance(doc, str):
        bad = find_unsafe_char(doc)
        if bad is not None:
            problems.add(label, None, key or None, bad[1],
                         "contains a control or text-direction character; expected printable text")
    elif isinstance(doc, dict):
        for k, v in doc.items():
            _walk_text(k, key, label, problems)
            _walk_text(v, f"{key}.{k}" if key else str(k), label, problems)
    elif isinstance(doc, list):
        for i, v in enumerate(doc, 1):
            _walk_text(v, f"{key} #{i}", label, problems)


def _settings(m: _Mapping, problems: Problems) -> tuple[Project | None, dict[str, Party], dict[str, Calendar]]:
    """Project, parties and calendars, lightly checked; the loader checks them fully after writing."""
    s = m.settings
    parties: dict[str, Party] = {}
    calendars: dict[str, Calendar] = {}
    for name in ("calendar", "party"):
        if name in s and (not isinstance(s[name], list) or not all(isinstance(t, dict) for t in s[name])):
            m._bad(name, None, f"expected [[{name}]] tables (two brackets: there may be several)")
            s = {k: v for k, v in s.items() if k != name}
    for i, t in enumerate(s.get("calendar", []), 1):
        bad = [k for k in t if k not in _CALENDAR_KEYS]
        for k in bad:
            m._bad(f"calendar #{i}.{k}", k, f"unknown key; expected only {', '.join(_CALENDAR_KEYS)}")
        if isinstance(t.get("id"), str):
            calendars[t["id"]] = Calendar(t["id"], _seq(t.get("workdays", ())),
                                          _seq(t.get("holidays", ())), _seq(t.get("extra_workdays", ())))
    if not calendars:
        m._bad("calendar", None, "missing; expected at least one [[calendar]] table (in the mapping or its settings file)")
    for i, t in enumerate(s.get("party", []), 1):
        for k in t:
            if k not in _PARTY_KEYS:
                m._bad(f"party #{i}.{k}", k, f"unknown key; expected only {', '.join(_PARTY_KEYS)}")
        if t.get("role") not in PARTY_ROLES:
            m._bad(f"party #{i}.role", t.get("role"), f"expected one of {', '.join(PARTY_ROLES)}")
        elif isinstance(t.get("id"), str):
            parties[t["id"]] = Party(t["id"], t.get("name"), t.get("role"))
    p = s.get("project")
    if not isinstance(p, dict):
        m._bad("project", None, "missing; expected a [project] table (in the mapping or its settings file)")
        return None, parties, calendars
    for k in p:
        if k not in _PROJECT_KEYS:
            m._bad(f"project.{k}", k, f"unknown key; expected only {', '.join(_PROJECT_KEYS)}")
    project = Project(p.get("name"), p.get("default_calendar"), p.get("completion"), p.get("contract_completion"),
                      p.get("delay_unit", "calendar-days"), p.get("progress_logic", "retained"),
                      p.get("critical_float", 0))
    return project, parties, calendars


def read_mapping(path: str | os.PathLike[str], *, limits: Limits | None = None) -> tuple[Casefile, tuple[str, ...]]:
    """Read the mapping and its sources into a casefile in memory, with the import notes.

    Parameters
    ----------
    path : str or path-like
        The mapping TOML.
    limits : Limits, optional
        The loader's ceilings, applied to the mapping and to every source:
        file size (checked before reading; a workbook also unpacked), and
        rows per table (activities and events tables: ``max_activities``;
        links tables: ``max_links``).

    Raises
    ------
    ImportMappingError
        Listing every problem of the mapping and of the source rows, each
        naming the mapping key, or the source file (``book.xlsx[sheet]``),
        row, column and value.
    LimitExceeded
        When a file or table is over a ceiling (only the ceilings are listed).
    """
    cf, notes, _back = _read(Path(path), limits or Limits())
    return cf, notes


def _raise(problems: Problems):
    if problems.limit_hit:  # tables not read whole: other problems may be echoes of the missing rows
        err = LimitExceeded(problems.limits)
        if len(err.problems) > 1:
            err.args = (f"{len(err.problems)} problems in the import:\n" + "\n".join(f"  {p}" for p in err.problems),)
        raise err
    raise ImportMappingError(problems.items)


def _read(path: Path, limits: Limits) -> tuple[Casefile, tuple[str, ...], tuple[dict, dict]]:
    """The casefile, the notes, and what :class:`_Origins` needs to name the sources."""
    problems = Problems()
    m = _Mapping(path, problems, limits)
    if problems:
        _raise(problems)
    project, parties, calendars = _settings(m, problems)
    if problems:  # without the parties and calendars, every row naming one would be reported too
        _raise(problems)
    conv = _Converter(m, problems)
    warnings: list[str] = []
    cal_ids = tuple(calendars)
    books: dict = {}
    try:
        return _read_all(m, conv, project, parties, calendars, cal_ids, books, problems, warnings)
    finally:
        close_books(books)


def _read_all(m: _Mapping, conv: _Converter, project, parties, calendars, cal_ids, books, problems, warnings):
    """Read every source table; cross-table checks only when every table could be read.

    A table that cannot be read at all (a missing column) leaves its ids
    unknown, so the checks that look ids up across tables (fragnet ties,
    the activities an event hit) wait for the next run rather than report a
    cascade of unknown ids.
    """
    complete = True

    def table(ref, what: str) -> list[Row] | None:
        nonlocal complete
        if ref is None:
            complete = False
            return None
        ceiling = m.limits.max_links if what == "links" else m.limits.max_activities
        src = read_source(ref[0], ref[2], ref[1], m.values.encoding, m.values.delimiter, problems, books,
                          max_bytes=m.limits.max_file_bytes, max_rows=ceiling, what=f"rows of {what}")
        rows = None if src is None else conv.rows(what, src)
        complete = complete and rows is not None
        return rows

    snapshots: list[Snapshot] = []
    all_ids: set[str] = set()
    for spec in m.snapshots:
        rows = table(spec["activities"], "activities")
        lrows = table(spec["links"], "links")
        if rows is None:
            continue
        acts = read_activities(rows, spec["activities"][2], calendars=cal_ids, parties=tuple(parties),
                               data_date=spec["data_date"], problems=problems, warnings=warnings)
        all_ids.update(acts.ids)
        if lrows is None or spec["data_date"] is None:
            continue
        finished = {a.id for a in acts.activities.values() if a.actual_finish is not None}
        links = read_links(lrows, spec["links"][2], known=acts.ids, finished=finished,
                           problems=problems, warnings=warnings)
        snapshots.append(Snapshot(spec["id"], spec["data_date"], frozen_mapping(acts.activities),
                                  tuple(links), spec["role"]))
    fragnets: dict[str, Fragnet] = {}
    for spec in m.fragnets:
        rows = table(spec["activities"], "activities")
        lrows = table(spec["links"], "links")
        if rows is None:
            continue
        acts = read_activities(rows, spec["activities"][2], calendars=cal_ids, parties=tuple(parties),
                               data_date=None, problems=problems, warnings=warnings)
        if lrows is None or not complete:
            continue
        links = read_links(lrows, spec["links"][2], known=set(acts.ids) | all_ids, finished=(),
                           problems=problems, warnings=warnings,
                           unknown_hint="no activity with this id in the fragnet or in any snapshot")
        fragnets[spec["id"]] = Fragnet(spec["id"], frozen_mapping(acts.activities), tuple(links))
    events = ()
    erows = table(m.events, "events") if m.events is not None else None
    if erows is not None and complete:
        events = tuple(read_events(erows, m.events[2], parties=parties, snapshot_ids=all_ids, problems=problems,
                                   fragnets={k: tuple(f.activities) for k, f in fragnets.items()}))
    conv.drop_echoes()
    if problems:
        _raise(problems)
    cf = Casefile(project, frozen_mapping(calendars), frozen_mapping(parties), tuple(snapshots),
                  events, frozen_mapping(fragnets))
    return cf, tuple(m.notes) + _notes(conv), (_origins(cf, m), m.columns)


def _notes(conv: _Converter) -> tuple[str, ...]:
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
    return tuple(notes)


def _origins(cf: Casefile, m: _Mapping) -> dict[str, tuple[str, tuple[int, ...]]]:
    """Each casefile table the writer will write -> (source label, source row of each written line).

    The writer (:mod:`forensic.writer`) writes a header, then one line per
    record in order, so line ``k + 2`` of the written file is record ``k``,
    whose ``line`` is its row in the source.
    """
    labels = {}
    for kind, specs in (("snapshots", m.snapshots), ("fragnets", m.fragnets)):
        for spec in specs:
            for what in ("activities", "links"):
                if spec[what] is not None:
                    labels[f"{kind}/{spec['id']}/{what}.csv"] = spec[what][2]
    out: dict[str, tuple[str, tuple[int, ...]]] = {}

    def put(rel: str, records) -> None:
        if rel in labels:
            out[rel] = (labels[rel], tuple(r.line or 0 for r in records))

    for snap in cf.snapshots:
        put(f"snapshots/{snap.id}/activities.csv", snap.activities.values())
        put(f"snapshots/{snap.id}/links.csv", snap.links)
    for frag in cf.fragnets.values():
        put(f"fragnets/{frag.id}/activities.csv", frag.activities.values())
        put(f"fragnets/{frag.id}/links.csv", frag.links)
    if m.events is not None:
        out["events.csv"] = (m.events[2], tuple(e.line or 0 for e in cf.events))
    return out


_LINES = re.compile(r"\b(lines?) (\d+(?:, \d+)*)")


class _Origins:
    """Maps the written casefile's files and lines back to the user's sources and rows."""

    def __init__(self, origins: dict[str, tuple[str, tuple[int, ...]]], mapping: str, m_columns):
        self.origins = origins
        self.mapping = mapping
        self.columns = m_columns

    def line(self, rel: str, line: int | None) -> int | None:
        rows = self.origins[rel][1]
        if line is None or not 2 <= line < len(rows) + 2:
            return line
        return rows[line - 2]

    def text(self, rel: str, text: str) -> str:
        """``text`` with every "line N" / "lines N, M" of ``rel`` turned into source rows."""
        return _LINES.sub(lambda h: f"{h.group(1)} " + ", ".join(
            str(self.line(rel, int(n))) for n in h.group(2).split(", ")), text)

    def problem(self, p: InputProblem) -> InputProblem:
        if p.file == "casefile.toml":
            return InputProblem(self.mapping, p.line, p.key, p.value, p.message)
        if p.file not in self.origins:
            return p
        table = p.file.rsplit("/", 1)[-1].removesuffix(".csv")
        key = self.columns.get(table, {}).get(p.key, p.key) if p.key else p.key
        return InputProblem(self.origins[p.file][0], self.line(p.file, p.line), key, p.value,
                            self.text(p.file, p.message))

    def warning(self, w: str) -> str:
        for rel, (label, _rows) in self.origins.items():
            if w.startswith(f"{rel}, line "):
                head, _, rest = w.partition(": ")
                return f"{label}, {self.text(rel, head[len(rel) + 2:])}: {self.text(rel, rest)}"
        return w


def import_casefile(mapping: str | os.PathLike[str], out: str | os.PathLike[str], *,
                    limits: Limits | None = None) -> ImportReport:
    """Build, validate and write a casefile from the sources a mapping describes.

    Parameters
    ----------
    mapping : str or path-like
        The mapping TOML (docs/import-export.md).
    out : str or path-like
        The casefile folder to create. It must not exist, or be empty.
    limits : Limits, optional
        The ceilings on file size and rows (:func:`read_mapping`); the
        written casefile is loaded within the same ceilings.

    Returns
    -------
    ImportReport
        The folder, the loaded casefile, its validation, and what was
        dropped or defaulted.

    Raises
    ------
    ImportMappingError
        For problems in the mapping or the source rows, or in the casefile
        built from them (as found by the loader); nothing is written.
    LimitExceeded
        When a mapping, settings or source file, or a table, is over a ceiling.
    OutputError
        When ``out`` exists and is not an empty folder.
    ScheduleError
        When a snapshot cannot be scheduled; nothing is written.

    References
    ----------
    AACE International Recommended Practice 29R-03, sec. 2.1 (source validation).
    """
    target = Path(out)
    if target.exists() and (not target.is_dir() or any(target.iterdir())):
        msg = f"{target}: already exists and is not an empty folder; give a new folder for the casefile"
        raise OutputError(msg)
    parent = target.parent if str(target.parent) else Path(".")
    if not parent.is_dir():
        msg = f"{target}: the folder {parent} does not exist"
        raise OutputError(msg)
    limits = limits or Limits()
    m_path = Path(mapping)
    cf, notes, (origins, columns) = _read(m_path, limits)
    back = _Origins(origins, m_path.name, columns)
    tmp = Path(tempfile.mkdtemp(prefix=f".{target.name}.", suffix=".part", dir=parent))
    try:
        write_casefile(cf, tmp)
        try:
            loaded = load_casefile(tmp, limits=limits)
        except CasefileError as exc:
            raise ImportMappingError([back.problem(p) for p in exc.problems]) from None
        validation = validate_casefile(loaded)
        validation = replace(validation, warnings=tuple(back.warning(w) for w in validation.warnings))
        if target.exists():
            target.rmdir()
        os.replace(tmp, target)
    except BaseException:
        shutil.rmtree(tmp, ignore_errors=True)
        raise
    final = load_casefile(target, limits=limits)
    return ImportReport(target, final, validation, notes, validation.warnings)
