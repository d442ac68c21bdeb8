"""Writing a casefile folder from the model (the inverse of :mod:`forensic.casefile.reading`).

Used by the synthetic generator, the importer and the tests. Files are
written with ``\\n`` line endings and a fixed column order, so the same
casefile always gives the same bytes. Each file is written atomically.
"""

from __future__ import annotations

import csv
import io
from collections.abc import Iterable, Mapping
from datetime import date
from pathlib import Path

from forensic.casefile.outputs import check_folder, replace_file, staged_folder
from forensic.core.model import Activity, Casefile, Event, Link

__all__ = ["ACTIVITY_COLUMNS", "EVENT_COLUMNS", "LINK_COLUMNS", "check_new_folder", "write_casefile", "write_new_casefile"]

ACTIVITY_COLUMNS = (
    "id",
    "name",
    "kind",
    "duration",
    "remaining",
    "actual_start",
    "actual_finish",
    "calendar",
    "constraint",
    "constraint_date",
    "party",
    "area",
    "percent_complete",
    "crash_days",
    "crash_cost",
)
LINK_COLUMNS = ("pred", "succ", "type", "lag")
EVENT_COLUMNS = ("id", "title", "party", "category", "start", "finish", "activities", "fragnet", "reference")


def _fmt(value) -> str:
    if value is None:
        return ""
    if isinstance(value, date):
        return value.isoformat()
    if isinstance(value, float) and value.is_integer():
        return str(int(value))
    return str(value)


def _csv(columns: tuple[str, ...], rows: Iterable[tuple]) -> str:
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(columns)
    for row in rows:
        w.writerow([_fmt(v) for v in row])
    return buf.getvalue()


def activities_csv(activities: Iterable[Activity]) -> str:
    """activities.csv text for these activities."""
    rows = []
    for a in activities:
        remaining = a.remaining
        if remaining is not None and a.actual_start is None and remaining == a.duration:
            remaining = None
        rows.append(
            (
                a.id, a.name, a.kind, a.duration, remaining, a.actual_start, a.actual_finish,
                a.calendar, a.constraint, a.constraint_date, a.party, a.area,
                a.percent_complete, a.crash_days, a.crash_cost,
            )
        )
    return _csv(ACTIVITY_COLUMNS, rows)


def links_csv(links: Iterable[Link]) -> str:
    """links.csv text for these links."""
    return _csv(LINK_COLUMNS, ((k.pred, k.succ, k.type, k.lag) for k in links))


def _days_lost(e: Event) -> str:
    values = {n for _, n in e.days_lost}
    if len(values) == 1 and len(e.days_lost) == len(e.activities):
        return str(values.pop())
    return " ".join(f"{a}:{n}" for a, n in e.days_lost)


def events_csv(events: Iterable[Event]) -> str:
    """events.csv text for these events; the ``days_lost`` column only when some event states it."""
    events = list(events)
    rows = [(e.id, e.title, e.party, e.category, e.start, e.finish, " ".join(e.activities), e.fragnet, e.reference)
            for e in events]
    if not any(e.days_lost for e in events):
        return _csv(EVENT_COLUMNS, rows)
    at = EVENT_COLUMNS.index("reference")
    return _csv((*EVENT_COLUMNS[:at], "days_lost", *EVENT_COLUMNS[at:]),
                ((*r[:at], _days_lost(e) if e.days_lost else None, *r[at:]) for r, e in zip(rows, events, strict=True)))


_ESCAPES = {"\\": "\\\\", '"': '\\"', "\n": "\\n", "\t": "\\t", "\r": "\\r"}


def _toml_value(value) -> str:
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, (int, float)):
        return repr(value)
    if isinstance(value, date):
        return value.isoformat()
    if isinstance(value, (list, tuple)):
        return "[" + ", ".join(_toml_value(v) for v in value) + "]"
    s = "".join(_ESCAPES.get(c, f"\\u{ord(c):04x}" if ord(c) < 0x20 or ord(c) == 0x7F else c) for c in str(value))
    return f'"{s}"'


def _table(header: str, items: Mapping[str, object]) -> str:
    lines = [header]
    lines += [f"{k} = {_toml_value(v)}" for k, v in items.items() if v is not None]
    return "\n".join(lines) + "\n"


def manifest_toml(cf: Casefile, *, events_file: str | None) -> str:
    """casefile.toml text for ``cf`` with snapshots under ``snapshots/<id>/``."""
    p = cf.project
    parts = ['format = "forensic-casefile/2"\n']
    if events_file:
        parts.append(f'events = "{events_file}"\n')
    if cf.windows:
        parts.append(f"windows = {_toml_value(list(cf.windows))}\n")
    parts.append(
        _table(
            "[project]",
            {
                "name": p.name,
                "completion": p.completion,
                "contract_completion": p.contract_completion,
                "default_calendar": p.default_calendar,
                "delay_unit": p.delay_unit,
                "progress_logic": p.progress_logic,
                "critical_float": p.critical_float,
                # Written only when not the default, so casefiles that never set it keep their bytes.
                "concurrency": p.concurrency if p.concurrency != "time-only" else None,
            },
        )
    )
    for party in cf.parties.values():
        parts.append(_table("[[party]]", {"id": party.id, "name": party.name, "role": party.role}))
    for cal in cf.calendars.values():
        parts.append(
            _table(
                "[[calendar]]",
                {
                    "id": cal.id,
                    "workdays": list(cal.workdays),
                    "holidays": list(cal.holidays),
                    "extra_workdays": list(cal.extra_workdays),
                },
            )
        )
    for snap in cf.snapshots:
        items: dict[str, object] = {"id": snap.id}
        if snap.is_baseline:
            items["role"] = "baseline"
        items["data_date"] = snap.data_date
        items["activities"] = f"snapshots/{snap.id}/activities.csv"
        items["links"] = f"snapshots/{snap.id}/links.csv"
        parts.append(_table("[[snapshot]]", items))
    return "\n".join(parts)


def _put(path: Path, text: str) -> None:
    replace_file(path, text.encode("utf-8"))


def write_casefile(cf: Casefile, folder: str | Path) -> Path:
    """Write ``cf`` as a casefile folder (created if needed); return the folder.

    Layout: ``casefile.toml``, ``snapshots/<id>/activities.csv`` and
    ``links.csv``, ``events.csv`` when there are events, and
    ``fragnets/<id>/`` for each fragnet. Each file is replaced atomically;
    this library function applies no output policy (the commands use
    :func:`write_new_casefile`, which does). Folders and files follow the
    umask.
    """
    root = Path(folder)
    root.mkdir(parents=True, exist_ok=True)
    for snap in cf.snapshots:
        d = root / "snapshots" / snap.id
        d.mkdir(parents=True, exist_ok=True)
        _put(d / "activities.csv", activities_csv(snap.activities.values()))
        _put(d / "links.csv", links_csv(snap.links))
    for frag in cf.fragnets.values():
        d = root / "fragnets" / frag.id
        d.mkdir(parents=True, exist_ok=True)
        _put(d / "activities.csv", activities_csv(frag.activities.values()))
        _put(d / "links.csv", links_csv(frag.links))
    events_file = None
    if cf.events:
        events_file = "events.csv"
        _put(root / events_file, events_csv(cf.events))
    _put(root / "casefile.toml", manifest_toml(cf, events_file=events_file))
    return root


def check_new_folder(folder: str | Path) -> Path:
    """Raise ``OutputError`` unless ``folder`` is new or empty, its parent exists, and it is outside any casefile.

    The rules are :func:`forensic.casefile.outputs.check_folder`'s (docs/robustness.md, "Outputs").
    """
    check_folder(folder, what="casefile")
    return Path(folder)


def write_new_casefile(cf: Casefile, folder: str | Path) -> Path:
    """Write ``cf`` as a new casefile folder, all at once or not at all; return the folder.

    The folder must not exist or be empty (``OutputError`` otherwise: a
    casefile is never written over). The files go to a hidden temporary
    folder beside it, which is renamed into place when complete, so an
    interrupted run leaves no partial casefile (:func:`forensic.casefile.outputs.staged_folder`).
    """
    with staged_folder(folder, what="casefile") as tmp:
        write_casefile(cf, tmp)
    return Path(folder)
