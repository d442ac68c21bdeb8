"""Read and validate a casefile folder into the model (:func:`load_casefile`).

A casefile is a folder with a TOML manifest (``casefile.toml``) and CSV
tables: the activities and links of each snapshot, the delay events, and
the fragnets (``casefiles/README.md`` documents it for users; the contract
is the casefile format, version 1). The loader is the only part of the
library that reads input files. It opens them read-only, records the
SHA-256 of each in :attr:`Casefile.inputs`, and checks everything it can
before anything is scheduled: a casefile with any problem is refused whole
with one :class:`~forensic.core.errors.CasefileError` listing every problem, each
naming the file, the line or manifest key, and the value. Nothing is guessed.

Decisions the format leaves open, made here:

- Unknown manifest keys and unknown CSV columns are errors (a misspelt
  optional key would otherwise be silently ignored).
- An activity in progress must state its remaining duration.
- An event's ``activities`` must each be in some snapshot or in the
  event's own fragnet (error): a slip there would drop the event from the
  attribution without a word.
- Fragnets are the sub-folders of ``fragnets/``; an event names one by its
  folder name. A fragnet activity may reuse the id of a snapshot activity
  (the same work, once a later update incorporates the change); a clash
  with the snapshot a fragnet is inserted into is refused when it is
  inserted (:func:`forensic.analysis.impact.insert_fragnet`), not on loading.
- The baseline must be the first (oldest) snapshot.
"""

from __future__ import annotations

import os
import tomllib
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
    read_table,
    read_text,
    resolve_inside,
    unsafe_message,
)
from forensic.casefile.limits import Limits
from forensic.casefile.records import (
    ACTIVITY_COLUMNS,
    EVENT_COLUMNS,
    LINK_COLUMNS,
    check_fragnet_loops,
    check_loops,
    check_span,
    read_activities,
    read_events,
    read_links,
)
from forensic.core.calendars import DAY_NAMES
from forensic.core.errors import CasefileError, LimitExceeded, printable
from forensic.core.model import (
    CONCURRENCY_RULES,
    PARTY_ROLES,
    Calendar,
    Casefile,
    Fragnet,
    Party,
    Project,
    Snapshot,
    frozen_mapping,
)

__all__ = ["FORMAT", "MANIFEST", "Limits", "load_casefile"]

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

_TOP_KEYS = ("format", "project", "party", "calendar", "snapshot", "events", "windows")
PROJECT_KEYS = ("name", "default_calendar", "completion", "contract_completion",
                 "delay_unit", "progress_logic", "critical_float", "concurrency")
PARTY_KEYS = ("id", "name", "role")
CALENDAR_KEYS = ("id", "workdays", "holidays", "extra_workdays")
_SNAPSHOT_KEYS = ("id", "role", "data_date", "activities", "links")


def load_casefile(path: str | os.PathLike[str], *, limits: Limits | None = None) -> Casefile:
    """Load a casefile folder (or its ``casefile.toml``) into a :class:`~forensic.core.model.Casefile`.

    Parameters
    ----------
    path : str or path-like
        The casefile folder, or the path of its manifest ``casefile.toml``.
    limits : Limits, optional
        Ceilings on file size and on activities and links per table.

    Returns
    -------
    Casefile
        With ``inputs`` (relative path -> SHA-256 of each file read) and
        ``warnings`` (for example links into finished activities).

    Raises
    ------
    CasefileError
        Listing every problem found, each with file, line or key, and value.
    LimitExceeded
        (a ``CasefileError``) when a file or table is over a ceiling.

    Notes
    -----
    Every snapshot is also checked for logic loops, since the critical path
    method has no solution on a cyclic network (Kelley and Walker 1959); the
    check is Kahn's topological sort, then Tarjan's strongly connected
    components (via networkx) to name each loop.

    References
    ----------
    AACE International Recommended Practice 29R-03, Forensic Schedule
    Analysis, sec. 2 (source validation: the schedules analysed must be
    identified and checked before any analysis).
    """
    limits = limits or Limits()
    problems = Problems()
    hashes: dict[str, str] = {}
    warnings: list[str] = []
    root = Path(path)
    if root.name == MANIFEST and root.is_file():
        root = root.parent
    if not root.is_dir():
        problems.add(str(path), None, None, None, "casefile folder not found")
        _raise(problems)
    # The manifest is held to the rule of every input: it stays inside the
    # casefile folder once symbolic links are followed.
    if (root / MANIFEST).is_symlink() and resolve_inside(root, MANIFEST, problems, MANIFEST, "casefile.toml") is None:
        _raise(problems)
    text = read_text(root / MANIFEST, MANIFEST, limits.max_file_bytes, problems, hashes)
    if text is None:
        _raise(problems)
    try:
        doc = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        problems.add(MANIFEST, None, None, None, f"not valid TOML: {exc}")
        _raise(problems)
    except RecursionError:  # arrays or tables nested thousands deep: hostile, not a manifest
        problems.add(MANIFEST, None, None, None, "not valid TOML: nested too deeply")
        _raise(problems)
    except ValueError as exc:  # an integer of over 4,300 digits (Python's int-string limit)
        problems.add(MANIFEST, None, None, None, f"not valid TOML: a value cannot be read ({exc})")
        _raise(problems)
    m = _Manifest(doc, root, problems)
    ctx = {"calendars": tuple(m.calendars), "parties": tuple(m.parties),
           "problems": problems, "warnings": warnings, "memo": {},
           "calendar_objs": m.calendars, "default_calendar": m.project.default_calendar if m.project else None}

    snapshots: list[Snapshot] = []
    snapshot_ids: set[str] = set()
    for spec in m.snapshot_specs:
        snap, ids = _read_snapshot(spec, root, limits, hashes, ctx)
        snapshot_ids.update(ids)
        if snap is not None:
            snapshots.append(snap)
    fragnets, unreadable = _read_fragnets(root, limits, hashes, snapshot_ids, snapshots, ctx)
    events = ()
    if m.events_path is not None:
        rel, full = m.events_path
        text = read_text(full, rel, limits.max_file_bytes, problems, hashes)
        rows = None if text is None else read_table(text, rel, *EVENT_COLUMNS, limits.max_activities, problems)
        if rows is not None:
            events = tuple(read_events(
                rows, rel, parties=m.parties, snapshot_ids=snapshot_ids, problems=problems,
                fragnets={k: tuple(f.activities) for k, f in fragnets.items()}, unreadable=unreadable))
    if m.project is not None and m.project.completion and snapshot_ids \
            and m.project.completion not in snapshot_ids:
        problems.add(MANIFEST, None, "project.completion", m.project.completion,
                     "no activity with this id in any snapshot")
    if problems:
        _raise(problems)
    return Casefile(
        project=m.project, calendars=frozen_mapping(m.calendars), parties=frozen_mapping(m.parties),
        snapshots=tuple(snapshots), events=events, fragnets=frozen_mapping(fragnets), root=root,
        inputs=frozen_mapping(sorted(hashes.items())), warnings=tuple(warnings), windows=m.windows,
    )


def _raise(problems: Problems):
    # Over a ceiling, the tables were not read whole, so other problems may
    # only be echoes of the missing rows: report the ceilings alone.
    if problems.limit_hit:
        raise LimitExceeded(problems.limits)
    raise CasefileError(problems.items)


def _read_snapshot(spec, root: Path, limits: Limits, hashes, ctx) -> tuple[Snapshot | None, set[str]]:
    """Read one snapshot's two tables; returns the snapshot (``None`` if unreadable) and its ids."""
    sid, role, data_date, paths = spec
    problems = ctx["problems"]
    sources = {what: hit[0] for what, hit in paths.items() if hit is not None}
    table = None
    links: list = []
    if "activities" in sources:
        rel, full = paths["activities"]
        text = read_text(full, rel, limits.max_file_bytes, problems, hashes)
        rows = None if text is None else read_table(text, rel, *ACTIVITY_COLUMNS, limits.max_activities, problems)
        if rows is not None:
            table = read_activities(rows, rel, data_date=data_date, calendars=ctx["calendars"],
                                    parties=ctx["parties"], problems=problems, warnings=ctx["warnings"],
                                    memo=ctx["memo"].setdefault("activities", {}))
            if not table.ids:
                problems.add(rel, None, None, None, f"snapshot {sid} has no activities")
    if "links" in sources:
        rel, full = paths["links"]
        text = read_text(full, rel, limits.max_file_bytes, problems, hashes)
        rows = None if text is None else read_table(text, rel, *LINK_COLUMNS, limits.max_links, problems)
        if rows is not None and table is not None:
            finished = {a.id for a in table.activities.values() if a.actual_finish is not None}
            links = read_links(rows, rel, known=table.ids, finished=finished,
                               problems=problems, warnings=ctx["warnings"],
                               memo=ctx["memo"].setdefault("links", {}))
            before = len(problems)
            check_loops(list(table.ids), links, rel, problems)
            if len(problems) == before:
                check_span(table.activities, links, ctx["calendar_objs"], ctx["default_calendar"],
                           paths["activities"][0], problems)
    ids = set() if table is None else set(table.ids)
    if table is None or len(sources) < 2 or data_date is None or sid is None:
        return None, ids
    snap = Snapshot(sid, data_date, frozen_mapping(table.activities), tuple(links),
                    role, frozen_mapping(sources))
    return snap, ids


def _read_fragnets(root: Path, limits: Limits, hashes, snapshot_ids: set[str], snapshots: list[Snapshot],
                   ctx) -> tuple[dict[str, Fragnet], set[str]]:
    """The fragnets read, and the names of the fragnet folders that could not be read.

    A folder whose problem is already reported (a missing or bad file) is
    still a fragnet the events may name: :func:`read_events` does not
    report it again as unknown, nor the activities an event gives with it.
    """
    problems = ctx["problems"]
    folder = root / "fragnets"
    fragnets: dict[str, Fragnet] = {}
    unreadable: set[str] = set()
    if not folder.exists() and not folder.is_symlink():
        return fragnets, unreadable
    if resolve_inside(root, "fragnets", problems, "fragnets", "fragnets") is None:
        return fragnets, unreadable
    if not folder.is_dir():
        problems.add("fragnets", None, None, None,
                     "is a file, expected a folder holding one sub-folder per fragnet")
        return fragnets, _Everything()  # the events' fragnets are echoes of this problem
    subs = sorted(p for p in folder.iterdir() if p.is_dir())
    for sub in subs:
        name = sub.name
        if name.startswith("."):
            # Hidden folders (.git, editor backups) are not fragnets; say so,
            # since an event naming one would otherwise find it missing.
            ctx["warnings"].append(f"fragnets/{printable(name)}: a folder whose name starts with a dot is ignored, "
                                   "not read as a fragnet")
            continue
        bad = find_unsafe_char(name)
        if bad is not None:
            problems.add(f"fragnets/{name}", None, None, bad[1],
                         "a fragnet folder name may not contain control or text-direction characters")
            continue
        if not check_id(name, f"fragnets/{name}", None, "folder name", problems):
            continue  # an event names a fragnet by its folder: held to the rules of an id
        unreadable.add(name)  # until it is read whole
        found = {}
        for what in ("activities", "links"):
            hit = resolve_inside(root, f"fragnets/{name}/{what}.csv", problems, f"fragnets/{name}", what)
            if hit is not None:
                found[what] = hit
        if len(found) < 2:
            continue
        rel, full = found["activities"]
        text = read_text(full, rel, limits.max_file_bytes, problems, hashes)
        rows = None if text is None else read_table(text, rel, *ACTIVITY_COLUMNS, limits.max_activities, problems)
        if rows is None:
            continue
        table = read_activities(rows, rel, data_date=None, calendars=ctx["calendars"],
                                parties=ctx["parties"], problems=problems, warnings=ctx["warnings"])
        # A fragnet activity may share its id with activities of snapshots: the
        # same work once a later update takes the change in (so but-for and
        # windows can recognise it). Only a clash with the snapshot it is
        # inserted into is refused, at insertion time (forensic.analysis.impact.insert_fragnet).
        lrel, lfull = found["links"]
        text = read_text(lfull, lrel, limits.max_file_bytes, problems, hashes)
        rows = None if text is None else read_table(text, lrel, *LINK_COLUMNS, limits.max_links, problems)
        if rows is None:
            continue
        links = read_links(rows, lrel, known=set(table.ids) | snapshot_ids, finished=(),
                           problems=problems, warnings=ctx["warnings"],
                           unknown_hint="no activity with this id in the fragnet or in any snapshot")
        before = len(problems)
        check_loops(list(table.ids), links, lrel, problems)
        if len(problems) == before:
            check_fragnet_loops(table.ids, links, snapshots, lrel, problems)
        if len(problems) == before:
            check_span(table.activities, links, ctx["calendar_objs"], ctx["default_calendar"], rel, problems)
        fragnets[name] = Fragnet(name, frozen_mapping(table.activities), tuple(links),
                                 frozen_mapping({"activities": rel, "links": lrel}))
        unreadable.discard(name)
    return fragnets, unreadable


class _Everything(set):
    """A set that holds every name (every fragnet is unreadable when ``fragnets`` is not a folder)."""

    def __contains__(self, item) -> bool:
        return True


class _Manifest:
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
            if key not in _TOP_KEYS:
                self._bad(key, key, f"unknown manifest key; expected only {', '.join(_TOP_KEYS)}")
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
        elif None not in (pid, name, role):
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
        self._keys(t, _SNAPSHOT_KEYS, where)
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
