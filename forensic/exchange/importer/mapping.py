"""Reading and checking the import mapping: the TOML file that describes the user's exports.

The mapping is a TOML file the user writes about their own export: which
file (CSV) or workbook sheet (XLSX) holds each snapshot's activities and
links, each snapshot's data date, their column name for each of our fields,
their date formats, relationship-type codes, duration and lag units (days,
or hours with ``hours_per_day``), percent style, and the project settings,
parties and calendars. There are no presets for any product: the mapping
says everything. docs/import-export.md documents every key with a worked
example (examples/import/).

Every problem names the mapping file (or its settings file) and the key.
The mapping and its settings file are held to the loader's file ceiling
(:class:`~forensic.casefile.Limits`) and character rule. The project,
parties and calendars are only lightly checked here; the loader checks them
fully when the written casefile is read back (:mod:`forensic.exchange.importer.importing`).

References
----------
AACE International Recommended Practice 29R-03, Forensic Schedule Analysis,
sec. 2.1 (source validation: the schedules analysed are identified, and
every change made to bring them into the analysis is recorded).
"""

from __future__ import annotations

import codecs
import re
import tomllib
from dataclasses import dataclass
from datetime import date, datetime
from pathlib import Path
from typing import Any, cast

from forensic.casefile.csvread import Problems, find_unsafe_char
from forensic.casefile.limits import Limits
from forensic.casefile.manifest import CALENDAR_KEYS, PARTY_KEYS, PROJECT_KEYS
from forensic.casefile.records import ACTIVITY_COLUMNS, EVENT_COLUMNS, LINK_COLUMNS
from forensic.core.model import (
    ACTIVITY_KINDS,
    CATEGORIES,
    CONSTRAINT_KINDS,
    LINK_TYPES,
    PARTY_ROLES,
    Calendar,
    Party,
    Project,
)

__all__ = ["FIELDS", "FORMAT"]

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
CODE_FIELDS = {"kind": ("kinds", ACTIVITY_KINDS), "type": ("link_types", LINK_TYPES),
                "constraint": ("constraints", CONSTRAINT_KINDS), "category": ("categories", CATEGORIES)}
_SAFE_ID = re.compile(r"^[A-Za-z0-9_-][A-Za-z0-9 ._-]{0,99}$")


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


class ImportMapping:
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
                spec["data_date"] = parse_mapped_date(str(raw), self.values.date_formats) if self.values else None
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
        for field, (key, ours) in CODE_FIELDS.items():
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
            info = codecs.lookup(value)
            # rot13, base64, hex, zlib... are codecs but not text encodings
            # (bytes-to-bytes or str-to-str); bytes.decode refuses them.
            if not getattr(info, "_is_text_encoding", True):
                raise LookupError(value)
        except LookupError:
            self._bad("values.encoding", value, 'expected a text encoding such as "utf-8", "cp1252" or "utf-16"')
            return "utf-8"
        return value

    def _delimiter(self, value: Any) -> str:
        if not isinstance(value, str) or len(value) != 1 or value in "\"\r\n" or find_unsafe_char(value):
            self._bad("values.delimiter", value, 'expected one character such as "," or ";" or "\\t"')
            return ","
        return value


def parse_mapped_date(raw: str, formats: tuple[str, ...]) -> date | None:
    for fmt in (*formats, "%Y-%m-%d"):
        try:
            return datetime.strptime(raw, fmt).date()
        except ValueError:
            continue
    return None


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


def import_settings(m: ImportMapping, problems: Problems) -> tuple[Project | None, dict[str, Party], dict[str, Calendar]]:
    """Project, parties and calendars, lightly checked; the loader checks them fully after writing."""
    s = m.settings
    parties: dict[str, Party] = {}
    calendars: dict[str, Calendar] = {}
    for name in ("calendar", "party"):
        if name in s and (not isinstance(s[name], list) or not all(isinstance(t, dict) for t in s[name])):
            m._bad(name, None, f"expected [[{name}]] tables (two brackets: there may be several)")
            s = {k: v for k, v in s.items() if k != name}
    for i, t in enumerate(s.get("calendar", []), 1):
        bad = [k for k in t if k not in CALENDAR_KEYS]
        for k in bad:
            m._bad(f"calendar #{i}.{k}", k, f"unknown key; expected only {', '.join(CALENDAR_KEYS)}")
        if isinstance(t.get("id"), str):
            calendars[t["id"]] = Calendar(t["id"], _seq(t.get("workdays", ())),
                                          _seq(t.get("holidays", ())), _seq(t.get("extra_workdays", ())))
    if not calendars:
        m._bad("calendar", None, "missing; expected at least one [[calendar]] table (in the mapping or its settings file)")
    for i, t in enumerate(s.get("party", []), 1):
        for k in t:
            if k not in PARTY_KEYS:
                m._bad(f"party #{i}.{k}", k, f"unknown key; expected only {', '.join(PARTY_KEYS)}")
        if t.get("role") not in PARTY_ROLES:
            m._bad(f"party #{i}.role", t.get("role"), f"expected one of {', '.join(PARTY_ROLES)}")
        elif isinstance(t.get("id"), str):
            parties[t["id"]] = Party(t["id"], t.get("name"), t.get("role"))
    p = s.get("project")
    if not isinstance(p, dict):
        m._bad("project", None, "missing; expected a [project] table (in the mapping or its settings file)")
        return None, parties, calendars
    for k in p:
        if k not in PROJECT_KEYS:
            m._bad(f"project.{k}", k, f"unknown key; expected only {', '.join(PROJECT_KEYS)}")
    # Taken as given (an absent name or calendar as None): the loader checks every value of the written
    # casefile and names what is missing or wrong, so the Project's types hold from then on.
    project = Project(cast(str, p.get("name")), cast(str, p.get("default_calendar")), p.get("completion"),
                      p.get("contract_completion"),
                      p.get("delay_unit", "calendar-days"), p.get("progress_logic", "retained"),
                      p.get("critical_float", 0))
    return project, parties, calendars
