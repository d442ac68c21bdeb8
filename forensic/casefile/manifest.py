"""The casefile manifest (``casefile.toml``): its format version, its keys and their checks.

:class:`Manifest` checks the parsed TOML document key by key (the format
version, the calendars, the parties, the project, the snapshots in data-date
order with the baseline first, the events file and the window boundaries)
and sends every problem to the collector, naming the key and the value;
nothing is guessed (AACE RP 29R-03, sec. 2, source validation). The format
is documented for users in ``casefiles/README.md``.
"""

from __future__ import annotations

from collections import Counter
from datetime import date, datetime
from pathlib import Path

from forensic.casefile.csvread import (
    MAX_DATES,
    MAX_DURATION,
    Problems,
    check_id,
    check_text,
    check_year,
    find_unsafe_char,
    resolve_inside,
    unsafe_message,
)
from forensic.core.calendars import DAY_NAMES
from forensic.core.model import CONCURRENCY_RULES, PARTY_ROLES, Calendar, Party, Project

__all__ = [
    "CALENDAR_KEYS",
    "FORMAT",
    "MANIFEST",
    "OLD_FORMAT",
    "OLD_FORMAT_MESSAGE",
    "PARTY_KEYS",
    "PROJECT_KEYS",
    "SNAPSHOT_KEYS",
    "TOP_KEYS",
    "Manifest",
]

FORMAT = "forensic-casefile/2"
# Version 1 used other words for the constraint and milestone kinds. It is
# refused with one message rather than read silently, so that no old word is
# ever taken for a new one (casefile format, "Versions").
OLD_FORMAT = "forensic-casefile/1"
OLD_FORMAT_MESSAGE = (
    "version 1 of the casefile format is no longer read; version 2 renamed the constraint kinds "
    "(start-from, start-by, finish-from, finish-by, start-fixed, finish-fixed) and the milestone "
    "kinds (opening-milestone, closing-milestone): rename them, set format = 'forensic-casefile/2', "
    "see casefiles/README.md, section Versions"
)
MANIFEST = "casefile.toml"

TOP_KEYS = ("format", "project", "party", "calendar", "snapshot", "events", "windows")
PROJECT_KEYS = ("name", "default_calendar", "completion", "contract_completion",
                 "delay_unit", "progress_logic", "critical_float", "concurrency")
PARTY_KEYS = ("id", "name", "role")
CALENDAR_KEYS = ("id", "workdays", "holidays", "extra_workdays")
SNAPSHOT_KEYS = ("id", "role", "data_date", "activities", "links")



class Manifest:
    """The checked content of ``casefile.toml``; problems go to the collector."""

    def __init__(self, doc: dict, root: Path, problems: Problems):
        self.problems = problems
        self.root = root
        self.calendars: dict[str, Calendar] = {}
        self.parties: dict[str, Party] = {}
        self.snapshot_specs: list[tuple] = []
        self.events_path: tuple[str, Path] | None = None
        self.windows: tuple[str, ...] = ()
        self.project: Project | None = None

        fmt = doc.get("format")
        if fmt is None:
            self._bad("format", None, f"missing; expected format = {FORMAT!r} at the top of the manifest")
        elif fmt == OLD_FORMAT:
            self._bad("format", fmt, OLD_FORMAT_MESSAGE)
        elif fmt != FORMAT:
            self._bad("format", fmt, f"unknown casefile format; this version reads {FORMAT!r}")
        for key in doc:
            if key not in TOP_KEYS:
                self._bad(key, key, f"unknown manifest key; expected only {', '.join(TOP_KEYS)}")
        for i, t in enumerate(self._tables(doc, "calendar", required=True), 1):
            self._calendar(t, f"calendar #{i}")
        for i, t in enumerate(self._tables(doc, "party", required=False), 1):
            self._party(t, f"party #{i}")
        self._project(doc.get("project"))
        for i, t in enumerate(self._tables(doc, "snapshot", required=True), 1):
            self._snapshot(t, f"snapshot #{i}")
        self._check_snapshot_order()
        if "events" in doc:
            self.events_path = resolve_inside(root, doc["events"], problems, MANIFEST, "events")
        if "windows" in doc:
            self._windows(doc["windows"])

    # -- small typed getters ------------------------------------------------
    def _bad(self, key: str, value, message: str) -> None:
        self.problems.add(MANIFEST, None, key, value, message)

    def _tables(self, doc: dict, name: str, required: bool) -> list[dict]:
        items = doc.get(name)
        if items is None:
            if required:
                self._bad(name, None, f"missing; expected at least one [[{name}]] table")
            return []
        if not isinstance(items, list) or not all(isinstance(t, dict) for t in items):
            self._bad(name, None, f"expected [[{name}]] tables")
            return []
        return items

    def _keys(self, table: dict, allowed: tuple[str, ...], where: str) -> None:
        for key in table:
            if key not in allowed:
                hint = ""
                if key in ("events", "windows"):
                    hint = (f"; {key} is a top-level key: put it above the first [table], since "
                            "in TOML a key after a table header belongs to that table")
                self._bad(f"{where}.{key}", key, f"unknown key; expected only {', '.join(allowed)}{hint}")

    def _str(self, table: dict, key: str, where: str, required: bool = True, choices=None) -> str | None:
        value = table.get(key)
        if value is None:
            if required:
                self._bad(f"{where}.{key}", None, "required key is missing")
            return None
        if not isinstance(value, str) or not value.strip():
            self._bad(f"{where}.{key}", value, "expected a non-empty string")
            return None
        unsafe = find_unsafe_char(value)
        if unsafe is not None:
            self._bad(f"{where}.{key}", unsafe[1], unsafe_message(unsafe[1], "contains"))
            return None
        if key in ("id", "default_calendar", "completion"):
            if not check_id(value, MANIFEST, None, f"{where}.{key}", self.problems):
                return None
        elif not check_text(value, MANIFEST, None, f"{where}.{key}", self.problems):
            return None
        if choices is not None and value not in choices:
            self._bad(f"{where}.{key}", value, f"expected one of {', '.join(choices)}")
            return None
        return value

    def _date(self, value, key: str) -> date | None:
        if isinstance(value, str):
            try:
                value = date.fromisoformat(value)
            except ValueError:
                self._bad(key, value, "expected a date such as 2026-01-05")
                return None
        if isinstance(value, datetime) or not isinstance(value, date):
            self._bad(key, value, "expected a date such as 2026-01-05 (no time of day)")
            return None
        return check_year(value, MANIFEST, None, key, self.problems)

    def _dates(self, table: dict, key: str, where: str) -> tuple[date, ...]:
        values = table.get(key, [])
        if not isinstance(values, list):
            self._bad(f"{where}.{key}", values, "expected a list of dates such as [2026-12-25]")
            return ()
        if len(values) > MAX_DATES:
            self._bad(f"{where}.{key}", f"{len(values)} dates",
                      f"over the ceiling of {MAX_DATES} dates in one list; the list is not read")
            return ()
        out = [d for d in (self._date(v, f"{where}.{key}") for v in values) if d is not None]
        # One pass (a Counter), each duplicate reported once however often it repeats.
        for d, n in sorted(Counter(out).items()):
            if n > 1:
                self._bad(f"{where}.{key}", d.isoformat(), "date listed twice" if n == 2 else f"date listed {n} times")
        return tuple(sorted(set(out)))

    # -- tables -------------------------------------------------------------
    def _calendar(self, t: dict, where: str) -> None:
        cid = self._str(t, "id", where)
        where = f"calendar {cid}" if cid else where
        self._keys(t, CALENDAR_KEYS, where)
        days = t.get("workdays")
        names: list[str] = []
        if not isinstance(days, list) or not all(isinstance(d, str) for d in days):
            self._bad(f"{where}.workdays", days, 'expected a list of day names such as ["mon", "tue"]')
        else:
            for d in days:
                if d not in DAY_NAMES:
                    self._bad(f"{where}.workdays", d, f"unknown day name; expected {', '.join(DAY_NAMES)}")
                elif d in names:
                    self._bad(f"{where}.workdays", d, "day listed twice")
                else:
                    names.append(d)
            if not days:
                self._bad(f"{where}.workdays", "[]", "a calendar needs at least one working day of the week")
        holidays = self._dates(t, "holidays", where)
        extra = self._dates(t, "extra_workdays", where)
        for d in sorted(set(holidays) & set(extra)):
            self._bad(f"{where}.extra_workdays", d.isoformat(), "date is also listed as a holiday")
        if cid is None:
            return
        if cid in self.calendars:
            self._bad(f"{where}.id", cid, "duplicate calendar id")
            return
        ordered = tuple(n for n in DAY_NAMES if n in names)
        self.calendars[cid] = Calendar(cid, ordered, holidays, extra)

    def _party(self, t: dict, where: str) -> None:
        self._keys(t, PARTY_KEYS, where)
        pid = self._str(t, "id", where)
        name = self._str(t, "name", where)
        role = self._str(t, "role", where, choices=PARTY_ROLES)
        if pid is not None and pid in self.parties:
            self._bad(f"{where}.id", pid, "duplicate party id")
        elif pid is not None and name is not None and role is not None:
            self.parties[pid] = Party(pid, name, role)

    def _project(self, t) -> None:
        if not isinstance(t, dict):
            self._bad("project", None if t is None else t, "missing; expected a [project] table")
            return
        self._keys(t, PROJECT_KEYS, "project")
        name = self._str(t, "name", "project")
        cal = self._str(t, "default_calendar", "project")
        if cal is not None and cal not in self.calendars:
            self._bad("project.default_calendar", cal,
                      f"unknown calendar; the manifest defines {', '.join(self.calendars) or 'none'}")
        completion = self._str(t, "completion", "project", required=False)
        contract = None
        if "contract_completion" in t:
            contract = self._date(t["contract_completion"], "project.contract_completion")
        unit = self._str(t, "delay_unit", "project", required=False,
                         choices=("calendar-days", "working-days")) or "calendar-days"
        logic = self._str(t, "progress_logic", "project", required=False,
                          choices=("retained", "override")) or "retained"
        crit = t.get("critical_float", 0)
        if isinstance(crit, bool) or not isinstance(crit, int) or abs(crit) > MAX_DURATION:
            self._bad("project.critical_float", crit, "expected a whole number of working days")
            crit = 0
        conc = self._str(t, "concurrency", "project", required=False,
                         choices=CONCURRENCY_RULES) or "time-only"
        if name is not None and cal is not None:
            self.project = Project(name, cal, completion, contract, unit, logic, crit, conc)

    def _snapshot(self, t: dict, where: str) -> None:
        sid = self._str(t, "id", where)
        where = f"snapshot {sid}" if sid else where
        self._keys(t, SNAPSHOT_KEYS, where)
        if sid is not None and any(s[0] == sid for s in self.snapshot_specs):
            self._bad(f"{where}.id", sid, "duplicate snapshot id")
        role = self._str(t, "role", where, required=False, choices=("baseline", "update"))
        data_date = None
        if "data_date" not in t:
            self._bad(f"{where}.data_date", None, "required key is missing")
        else:
            data_date = self._date(t["data_date"], f"{where}.data_date")
        paths = {}
        for key in ("activities", "links"):
            if key not in t:
                self._bad(f"{where}.{key}", None, "required key is missing")
                continue
            paths[key] = resolve_inside(self.root, t[key], self.problems, MANIFEST, f"{where}.{key}")
        self.snapshot_specs.append((sid, role or "update", data_date, paths))

    def _check_snapshot_order(self) -> None:
        specs = self.snapshot_specs
        baselines = [s for s in specs if s[1] == "baseline"]
        if specs and len(baselines) != 1:
            found = ", ".join(str(s[0]) for s in baselines) or "none"
            self._bad("snapshot.role", found, 'expected exactly one snapshot with role = "baseline"')
        elif specs and specs[0][1] != "baseline":
            self._bad(f"snapshot {baselines[0][0]}.role", "baseline",
                      "the baseline must be the first (oldest) snapshot")
        last = None
        for sid, _role, dd, _paths in specs:
            if dd is None:
                continue
            if last is not None and dd <= last[1]:
                self._bad(f"snapshot {sid}.data_date", dd.isoformat(),
                          f"data dates must strictly increase; snapshot {last[0]} has {last[1].isoformat()}")
            last = (sid, dd)

    def _windows(self, value) -> None:
        if not isinstance(value, list) or not all(isinstance(v, str) for v in value):
            self._bad("windows", value, 'expected a list of snapshot ids such as ["U01", "U04"]')
            return
        order = [s[0] for s in self.snapshot_specs]
        last = -1
        for sid in value:
            if sid not in order:
                self._bad("windows", sid, f"no snapshot with this id; the manifest defines {', '.join(map(str, order))}")
                continue
            if order.index(sid) <= last:
                self._bad("windows", sid, "window boundaries must be distinct and in snapshot order")
            last = order.index(sid)
        self.windows = tuple(value)
