"""Read and validate a casefile folder into the model (:func:`load_casefile`).

A casefile is a folder with a TOML manifest (``casefile.toml``) and CSV
tables: the activities and links of each snapshot, the delay events, and
the fragnets (``casefiles/README.md`` documents it for users; the contract
is the casefile format, version 2). The loader is the only part of the
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

Read lazily (``lazy=True``), the loader reads the manifest, the events and
the fragnets whole, and of each snapshot only its files' bytes (their
SHA-256 and encoding) and the ids of its activities, which the events and
the project's completion are checked against; each snapshot's tables are
read and checked in full when it is first asked for
(:class:`~forensic.core.model.SnapshotSequence`), with the same problems
(file, line, value) raised then for that snapshot alone, and a file
changed since the casefile was loaded refused. The loops a fragnet closes
with a snapshot are checked as that snapshot is read (worded, as here,
with every snapshot where the loop closes). Going through the snapshots in
order holds a few at a time (``forensic windows``, ``forensic schedule``);
``SnapshotSequence.check_rest`` reads those a command did not use, so every
command still refuses a casefile with a bad snapshot before writing anything.
"""

from __future__ import annotations

import contextlib
import csv
import io
import os
import tomllib
from collections.abc import Sequence
from pathlib import Path
from typing import NoReturn

from forensic.casefile.csvread import Problems, read_table, read_text, resolve_inside
from forensic.casefile.fragnets import read_fragnets
from forensic.casefile.limits import Limits
from forensic.casefile.loops import check_fragnet_loops, check_loops
from forensic.casefile.manifest import (
    CALENDAR_KEYS,
    FORMAT,
    MANIFEST,
    PARTY_KEYS,
    PROJECT_KEYS,
    Manifest,
)
from forensic.casefile.records import (
    ACTIVITY_COLUMNS,
    EVENT_COLUMNS,
    LINK_COLUMNS,
    read_activities,
    read_events,
    read_links,
)
from forensic.casefile.span import check_span
from forensic.core.errors import CasefileError, LimitExceeded
from forensic.core.model import (
    Casefile,
    Event,
    Fragnet,
    Snapshot,
    SnapshotHead,
    SnapshotSequence,
    frozen_mapping,
)

# FORMAT, MANIFEST, the manifest's key lists and Limits are defined in
# forensic.casefile.manifest and forensic.casefile.limits; they are named
# here too, where they were first published.
__all__ = ["CALENDAR_KEYS", "FORMAT", "MANIFEST", "PARTY_KEYS", "PROJECT_KEYS", "Limits", "load_casefile"]


def load_casefile(path: str | os.PathLike[str], *, limits: Limits | None = None, vectorised: bool | None = None,
                  lazy: bool = False) -> Casefile:
    """Load a casefile folder (or its ``casefile.toml``) into a :class:`~forensic.core.model.Casefile`.

    Parameters
    ----------
    path : str or path-like
        The casefile folder, or the path of its manifest ``casefile.toml``.
    limits : Limits, optional
        Ceilings on file size and on activities and links per table.
    vectorised : bool, optional
        Internal: ``True`` reads every snapshot table by :mod:`forensic.casefile.fastread`,
        ``False`` row by row; by default tables of 256 KiB or more (the same casefile either way).
    lazy : bool, default False
        ``True`` reads each snapshot's tables when it is first asked for
        (``snapshots`` is then a :class:`~forensic.core.model.SnapshotSequence`;
        module notes): the same casefile, its ``warnings`` those of the
        manifest, events and fragnets only.

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
    root, doc = _manifest_doc(path, limits, problems, hashes)
    m = Manifest(doc, root, problems)
    ctx = {"calendars": tuple(m.calendars), "parties": tuple(m.parties),
           "problems": problems, "warnings": warnings, "memo": {}, "vectorised": vectorised,
           "calendar_objs": m.calendars, "default_calendar": m.project.default_calendar if m.project else None}

    read: list[Snapshot] = []
    snapshot_ids: set[str] = set()
    heads: list[SnapshotHead] = []
    for spec in m.snapshot_specs:
        if lazy:
            head, ids = _scan_snapshot(spec, root, limits, hashes, problems)
            if head is not None:
                heads.append(head)
        else:
            snap, ids = _read_snapshot(spec, root, limits, hashes, ctx)
            if snap is not None:
                read.append(snap)
        snapshot_ids.update(ids)
    fragnets, unreadable = read_fragnets(root, limits, hashes, snapshot_ids, read, ctx)
    events: tuple[Event, ...] = ()
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
    if problems or m.project is None:  # a missing [project] is one of the problems
        _raise(problems)
    snapshots: Sequence[Snapshot]
    if lazy:
        reader = _SnapshotReader(m.snapshot_specs, root, limits, vectorised, dict(hashes), fragnets,
                                {k: ctx[k] for k in _READER_CTX})
        snapshots = SnapshotSequence(heads, reader)
    else:
        snapshots = tuple(read)
    return Casefile(
        project=m.project, calendars=frozen_mapping(m.calendars), parties=frozen_mapping(m.parties),
        snapshots=snapshots, events=events, fragnets=frozen_mapping(fragnets), root=root,
        inputs=frozen_mapping(dict(sorted(hashes.items()))), warnings=tuple(warnings), windows=m.windows,
    )


def _manifest_doc(path, limits: Limits, problems: Problems, hashes) -> tuple[Path, dict]:
    """The casefile folder and its manifest's TOML document; the problem raised if either cannot be read."""
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
    return root, doc


def _raise(problems: Problems) -> NoReturn:
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
        table = None if text is None else _fast_activities(text, rel, data_date, limits, ctx)
        rows = None if text is None or table is not None else read_table(
            text, rel, *ACTIVITY_COLUMNS, limits.max_activities, problems)
        if rows is not None:
            table = read_activities(rows, rel, data_date=data_date, calendars=ctx["calendars"],
                                    parties=ctx["parties"], problems=problems, warnings=ctx["warnings"],
                                    memo=ctx["memo"].setdefault("activities", {}))
        if table is not None:
            if not table.ids:
                problems.add(rel, None, None, None, f"snapshot {sid} has no activities")
    if "links" in sources:
        rel, full = paths["links"]
        text = read_text(full, rel, limits.max_file_bytes, problems, hashes)
        finished = set() if table is None else {a.id for a in table.activities.values() if a.actual_finish is not None}
        fast = None if text is None or table is None else _fast_links(text, rel, table.ids, finished, limits, ctx)
        rows = None if text is None or fast is not None else read_table(
            text, rel, *LINK_COLUMNS, limits.max_links, problems)
        columns = None
        if fast is not None:
            links, columns = fast
        elif rows is not None and table is not None:
            links = read_links(rows, rel, known=table.ids, finished=finished,
                               problems=problems, warnings=ctx["warnings"],
                               memo=ctx["memo"].setdefault("links", {}))
        if table is not None and (fast is not None or rows is not None):
            before = len(problems)
            if columns is None or not _no_loop(len(table.ids), columns):
                check_loops(list(table.ids), links, rel, problems)
            if len(problems) == before:
                same = columns is not None and len(table.activities) == len(table.ids)
                check_span(table.activities, links, ctx["calendar_objs"], ctx["default_calendar"],
                           paths["activities"][0], problems, link_columns=columns if same else None)
    ids = set() if table is None else set(table.ids)
    if table is None or len(sources) < 2 or data_date is None or sid is None:
        return None, ids
    snap = Snapshot(sid, data_date, frozen_mapping(table.activities), tuple(links),
                    role, frozen_mapping(sources))
    return snap, ids


def _scan_snapshot(spec, root: Path, limits: Limits, hashes, problems: Problems) -> tuple[SnapshotHead | None, set[str]]:
    """A snapshot read lazily: its files' bytes checked and hashed, and its activity ids (not checked here)."""
    sid, role, data_date, paths = spec
    ids: set[str] = set()
    for what in ("activities", "links"):
        if paths.get(what) is None:
            continue
        rel, full = paths[what]
        text = read_text(full, rel, limits.max_file_bytes, problems, hashes)
        if text is not None and what == "activities":
            ids = _ids_of(text)
    if sid is None or data_date is None or any(paths.get(w) is None for w in ("activities", "links")):
        return None, ids  # the manifest's problem is reported
    return SnapshotHead(sid, data_date, role), ids


def _ids_of(text: str) -> set[str]:
    """The ``id`` cells of an activities table, read leniently: the table is checked when it is read."""
    if '"' not in text and text.count("\r") == text.count("\r\n"):
        return _unquoted_ids_of(text)
    return _csv_ids_of(text)


def _unquoted_ids_of(text: str) -> set[str]:
    """:func:`_csv_ids_of` for a table with no quote and no lone carriage return, by splitting lines.

    With no quote character and every carriage return ending a line, the
    ``csv`` module's rows are the lines split at commas (an empty line is an
    empty row); a line at or over its field limit makes it refuse the table.
    """
    lines = text.replace("\r\n", "\n").split("\n")
    at = next((k for k, line in enumerate(lines) if any(c.strip() for c in line.split(","))), None)
    if at is None or max(map(len, lines)) > csv.field_size_limit():
        return _csv_ids_of(text)
    header = [c.strip() for c in lines[at].split(",")]
    if "id" not in header:
        return set()
    col = header.index("id")
    rest = lines[at + 1:]
    if col == 0:
        ids = {line.partition(",")[0].strip() for line in rest}
    else:
        ids = {cells[col].strip() for cells in (line.split(",", col + 1) for line in rest) if len(cells) > col}
    ids.discard("")
    return ids


def _csv_ids_of(text: str) -> set[str]:
    """The ``id`` cells as the ``csv`` module reads them (any table)."""
    rows = csv.reader(io.StringIO(text, newline=""))
    try:
        header = next((r for r in rows if any(c.strip() for c in r)), None)
        col = [c.strip() for c in header].index("id") if header else -1
        if col < 0:
            return set()
        return {r[col].strip() for r in rows if len(r) > col and r[col].strip()}
    except (csv.Error, ValueError):
        return set()


# What a lazily read snapshot needs of the loader's context.
_READER_CTX = ("calendars", "parties", "calendar_objs", "default_calendar")


class _SnapshotReader:
    """Reads one snapshot of a casefile loaded lazily, with the checks of :func:`load_casefile`.

    A problem in the snapshot's tables raises the loader's
    :class:`~forensic.core.errors.CasefileError` naming file, line and value;
    a file whose SHA-256 differs from the one taken when the casefile was
    loaded is refused (its record of inputs would not be what was analysed).
    """

    def __init__(self, specs, root: Path, limits: Limits, vectorised: bool | None, hashes: dict[str, str],
                 fragnets: dict[str, Fragnet], ctx: dict) -> None:
        self.specs = {spec[0]: spec for spec in specs}
        self.root, self.limits, self.vectorised = root, limits, vectorised
        self.hashes, self.fragnets, self.ctx = hashes, fragnets, ctx

    def __call__(self, snapshot_id: str) -> Snapshot:
        snap, problems = self._raw(snapshot_id)
        if snap is not None and not problems:
            for f in self.fragnets.values():
                scratch = Problems()
                check_fragnet_loops(list(f.activities), list(f.links), [snap], f.sources.get("links", ""), scratch)
                if scratch:  # worded as the loader words it: every snapshot where the loop closes
                    check_fragnet_loops(list(f.activities), list(f.links), self._every(snap),
                                        f.sources.get("links", ""), problems)
        if problems or snap is None:
            _raise(problems)
        return snap

    def size(self, snapshot_id: str) -> int:
        """The bytes of one snapshot's table files on disk now (0 for a file that cannot be found)."""
        total = 0
        for hit in self.specs[snapshot_id][3].values():
            if hit is not None:
                with contextlib.suppress(OSError):
                    total += os.stat(hit[1]).st_size
        return total

    def _raw(self, snapshot_id: str) -> tuple[Snapshot | None, Problems]:
        """One snapshot read and checked on its own, and its problems (a changed file among them)."""
        problems = Problems()
        hashes: dict[str, str] = {}
        ctx = {**self.ctx, "problems": problems, "warnings": [], "memo": {}, "vectorised": self.vectorised}
        snap, _ = _read_snapshot(self.specs[snapshot_id], self.root, self.limits, hashes, ctx)
        for rel, digest in hashes.items():
            if self.hashes.get(rel) != digest:
                problems.add(rel, None, None, None, "the file changed after the casefile was loaded; load it again")
        return snap, problems

    def _every(self, snap: Snapshot):
        """Every readable snapshot in order, one at a time (``snap`` as it is)."""
        for sid in self.specs:
            if sid == snap.id:
                yield snap
                continue
            other, problems = self._raw(sid)
            if other is not None and not problems:
                yield other


# A table this long or longer takes the fast path unless ``vectorised`` says otherwise: below
# it, reading row by row is about as quick, and a small casefile is not kept waiting for pandas.
_FAST_FROM_CHARS = 256 * 1024


def _fast(text: str, ctx) -> bool:
    return ctx["vectorised"] if ctx["vectorised"] is not None else len(text) >= _FAST_FROM_CHARS


def _fast_activities(text: str, rel: str, data_date, limits: Limits, ctx):
    """The activities table by the vectorised fast path, or ``None`` to read it row by row."""
    if not _fast(text, ctx):
        return None
    # fastread (numpy screens; pandas reads the columns) is imported only when a table takes the fast path
    from forensic.casefile.fastread import fast_activities, frame_table

    frame = frame_table(text, *ACTIVITY_COLUMNS, limits.max_activities)
    if frame is None:
        return None
    return fast_activities(frame, rel, calendars=ctx["calendars"], parties=ctx["parties"], data_date=data_date,
                           warnings=ctx["warnings"], memo=ctx["memo"].setdefault("activities", {}))


def _fast_links(text: str, rel: str, known, finished, limits: Limits, ctx):
    """The links table by the vectorised fast path, or ``None`` to read it row by row."""
    if not _fast(text, ctx):
        return None
    from forensic.casefile.fastread import fast_links, frame_table

    frame = frame_table(text, *LINK_COLUMNS, limits.max_links)
    if frame is None:
        return None
    return fast_links(frame, rel, known=known, finished=finished, warnings=ctx["warnings"])


def _no_loop(n: int, columns) -> bool:
    from forensic.casefile.fastread import has_no_loop

    return has_no_loop(n, columns[0], columns[1])
