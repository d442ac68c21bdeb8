"""The data model: plain, immutable records of a casefile.

Everything downstream (engine, analyses, report) reads these and never
changes them; a change (a fragnet inserted, progress applied) builds a new
object with :func:`dataclasses.replace`.

The vocabulary is that of the precedence diagramming method (PDM) and of
the casefile format (``casefiles/README.md``): an *activity* has an original
``duration`` and a ``remaining`` duration in whole working days of its
calendar; a *link* joins a predecessor to a successor with one of the four
relationship types FS, SS, FF, SF and a lag (negative = lead).
"""

from __future__ import annotations

import weakref
from collections import deque
from collections.abc import Callable, Iterable, Iterator, Mapping, Sequence
from dataclasses import dataclass, field
from datetime import date
from pathlib import Path

from forensic.core.errors import CasefileError, LimitExceeded, NotFoundError

__all__ = [
    "FrozenDict",
    "ACTIVITY_KINDS",
    "CATEGORIES",
    "CONCURRENCY_RULES",
    "CONSTRAINT_KINDS",
    "HARD_CONSTRAINTS",
    "LINK_TYPES",
    "PARTY_ROLES",
    "Activity",
    "Calendar",
    "Casefile",
    "Event",
    "Fragnet",
    "Link",
    "Party",
    "Project",
    "Snapshot",
    "SnapshotHead",
    "SnapshotSequence",
    "frozen_mapping",
]

ACTIVITY_KINDS = ("task", "opening-milestone", "closing-milestone")
LINK_TYPES = ("FS", "SS", "FF", "SF")
CONSTRAINT_KINDS = (
    "start-from",
    "start-by",
    "finish-from",
    "finish-by",
    "start-fixed",
    "finish-fixed",
)
# The four kinds that pull late dates; schedule-quality checks count these
# (casefile format, "Constraints").
HARD_CONSTRAINTS = ("start-by", "finish-by", "start-fixed", "finish-fixed")
PARTY_ROLES = ("owner", "contractor", "neutral")
CATEGORIES = ("excusable-compensable", "excusable-noncompensable", "non-excusable")
# The manifest's ``concurrency`` rule for concurrent days (casefile format v2).
CONCURRENCY_RULES = ("time-only", "apportion", "dominant")
# The category an event takes from its party's role when events.csv leaves it
# blank (casefile format, events.csv): owner risk is excusable and
# compensable, a neutral cause excusable only, the contractor's own delay
# neither (SCL Protocol 2nd ed., core principles 4-6; common practice).
DEFAULT_CATEGORY = {
    "owner": "excusable-compensable",
    "neutral": "excusable-noncompensable",
    "contractor": "non-excusable",
}


class FrozenDict(dict):
    """A dict that refuses every change after it is built: records stay immutable and serialise.

    Reads are the built-in dict's (as fast as a plain dict); every mutating
    method raises ``TypeError``. Unlike a ``types.MappingProxyType`` view it
    serialises (``__reduce__`` rebuilds it from a plain dict) and deep-copies,
    so casefiles and results can go to a process pool, a cache or a cluster.
    """

    __slots__ = ()

    def _refuse(self, *_args, **_kwargs):
        msg = "a casefile record is immutable; build a new one with dataclasses.replace"
        raise TypeError(msg)

    __setitem__ = __delitem__ = __ior__ = _refuse
    clear = pop = popitem = setdefault = update = _refuse

    def __reduce__(self):
        return (FrozenDict, (dict(self),))

    def __reduce_ex__(self, protocol):
        return self.__reduce__()

    def __copy__(self):
        return self

    def __deepcopy__(self, memo):
        from copy import deepcopy

        return FrozenDict({deepcopy(k, memo): deepcopy(v, memo) for k, v in self.items()})

    def __repr__(self) -> str:
        return f"FrozenDict({dict.__repr__(self)})"


def frozen_mapping(items: Mapping | None = None) -> Mapping:
    """A fresh immutable mapping (:class:`FrozenDict`) of ``items``, so records stay immutable."""
    return FrozenDict(items or {})


@dataclass(frozen=True, slots=True)
class Calendar:
    """A working-day calendar: a workweek, holidays, and extra working days.

    ``workdays`` holds three-letter lower-case day names (``"mon"`` ...).
    A date is a working day when its weekday is in ``workdays`` and it is
    not a holiday, or when it is listed in ``extra_workdays``.
    """

    id: str
    workdays: tuple[str, ...]
    holidays: tuple[date, ...] = ()
    extra_workdays: tuple[date, ...] = ()


@dataclass(frozen=True, slots=True)
class Party:
    """A party to whom work or delay can be attributed."""

    id: str
    name: str
    role: str  # owner | contractor | neutral


@dataclass(frozen=True, slots=True)
class Activity:
    """One activity of a snapshot, as recorded at its data date.

    Durations are whole working days of the activity's calendar.
    ``remaining`` is already resolved by the loader (blank = ``duration`` if
    not started, 0 if finished). ``calendar`` is ``None`` when the casefile
    left it blank (the project's default calendar then applies; quality
    checks report it). ``line`` is the source line, for messages.
    """

    id: str
    name: str
    duration: int
    kind: str = "task"
    remaining: int | None = None
    actual_start: date | None = None
    actual_finish: date | None = None
    calendar: str | None = None
    constraint: str | None = None
    constraint_date: date | None = None
    party: str | None = None
    area: str | None = None
    percent_complete: float | None = None
    crash_days: int | None = None
    crash_cost: float | None = None
    line: int | None = None

    @property
    def is_milestone(self) -> bool:
        return self.kind != "task"

    @property
    def is_finished(self) -> bool:
        return self.actual_finish is not None

    @property
    def is_started(self) -> bool:
        return self.actual_start is not None

    @property
    def status(self) -> str:
        """``finished``, ``in-progress`` or ``not-started``."""
        if self.actual_finish is not None:
            return "finished"
        if self.actual_start is not None:
            return "in-progress"
        return "not-started"

    @property
    def remaining_duration(self) -> int:
        """The remaining duration with the format's blank rule applied."""
        if self.remaining is not None:
            return self.remaining
        return 0 if self.actual_finish is not None else self.duration


@dataclass(frozen=True, slots=True)
class Link:
    """A precedence link: ``succ`` depends on ``pred`` by ``type`` and ``lag`` working days.

    The lag is counted on the successor's calendar; a negative lag is a lead.
    """

    pred: str
    succ: str
    type: str = "FS"
    lag: int = 0
    line: int | None = None

    @property
    def key(self) -> tuple[str, str, str]:
        """Identity of a link for comparisons: the pair and the type."""
        return (self.pred, self.succ, self.type)


@dataclass(frozen=True, slots=True, weakref_slot=True)
class Snapshot:
    """A schedule at a data date: the baseline or one update.

    ``activities`` is keyed by id in file order. ``sources`` maps ``"activities"``
    and ``"links"`` to the paths (relative to the casefile folder) they came from.
    (It can be weakly referenced, so a :class:`SnapshotSequence` hands out the
    object still in use rather than a second copy.)
    """

    id: str
    data_date: date
    activities: Mapping[str, Activity]
    links: tuple[Link, ...]
    role: str = "update"  # baseline | update
    sources: Mapping[str, str] = field(default_factory=frozen_mapping)

    @property
    def is_baseline(self) -> bool:
        return self.role == "baseline"


@dataclass(frozen=True, slots=True)
class SnapshotHead:
    """What the manifest says of a snapshot, known before its tables are read."""

    id: str
    data_date: date
    role: str = "update"


class SnapshotSequence(Sequence):
    """The snapshots of a casefile, each read from its files when it is asked for.

    ``heads`` are the snapshots oldest first; ``read(snapshot_id)`` reads
    and checks one snapshot (it raises the casefile's errors for that
    snapshot's files). The ``keep`` snapshots used last are held, and any
    snapshot still in use elsewhere is handed out again, not read twice;
    the rest are let go, so going through the snapshots in order holds a
    few at a time however many there are. It compares equal to any sequence
    of the same snapshots (a tuple of the snapshots read eagerly), copies and
    serialises as its heads and reader (what was read is not carried).
    """

    __slots__ = ("_alive", "_heads", "_keep", "_read", "_recent", "_seen")
    __hash__ = None  # type: ignore[assignment]

    def __init__(self, heads: Sequence[SnapshotHead], read: Callable[[str], Snapshot], keep: int = 2,
                 _alive: weakref.WeakValueDictionary | None = None, _seen: set[str] | None = None) -> None:
        self._heads = tuple(heads)
        self._read = read
        self._keep = keep
        self._recent: deque[Snapshot] = deque(maxlen=max(keep, 1))
        self._alive = weakref.WeakValueDictionary() if _alive is None else _alive
        self._seen: set[str] = set() if _seen is None else _seen  # the ids read (and so checked) once

    @property
    def heads(self) -> tuple[SnapshotHead, ...]:
        return self._heads

    @property
    def ids(self) -> tuple[str, ...]:
        return tuple(h.id for h in self._heads)

    @property
    def read(self) -> Callable[[str], Snapshot]:
        """The reader: a snapshot id -> the snapshot read afresh from its files."""
        return self._read

    def _get(self, head: SnapshotHead) -> Snapshot:
        snap = self._alive.get(head.id)
        if snap is None:
            snap = self._read(head.id)
            self._alive[head.id] = snap
            self._seen.add(head.id)
        if not any(s is snap for s in self._recent):
            self._recent.append(snap)
        return snap

    def note_checked(self, ids: Iterable[str]) -> None:
        """Count these snapshots as read and checked: a worker process read them with this sequence's reader.

        A copy of this sequence (pickled to another process) reads with the
        same reader and the same file hashes, so a problem it met was raised
        there; :meth:`check_rest` then does not read them again here.
        """
        known = {h.id for h in self._heads}
        self._seen.update(i for i in ids if i in known)

    def check_rest(self) -> None:
        """Read every snapshot not read yet, keeping none, so that its problems are raised.

        One :class:`~forensic.core.errors.CasefileError` lists the problems of
        all of them (a ceiling hit is raised alone, as the loader does), so a
        command that used some snapshots still refuses a casefile with a bad one.
        """
        problems: list = []
        for head in self._heads:
            if head.id in self._seen:
                continue
            try:
                self._read(head.id)
            except LimitExceeded:
                raise
            except CasefileError as exc:
                problems.extend(exc.problems)  # not marked read: asked again, it is refused again
                continue
            self._seen.add(head.id)
        if problems:
            raise CasefileError(problems)

    def __len__(self) -> int:
        return len(self._heads)

    def __getitem__(self, index):
        if isinstance(index, slice):
            return SnapshotSequence(self._heads[index], self._read, self._keep, self._alive, self._seen)
        return self._get(self._heads[index])

    def __iter__(self) -> Iterator[Snapshot]:
        for head in self._heads:
            yield self._get(head)

    def __eq__(self, other: object) -> bool:
        if not isinstance(other, Sequence) or isinstance(other, str | bytes):
            return NotImplemented
        if len(other) != len(self):
            return False
        if isinstance(other, SnapshotSequence) and other._read is self._read and other._heads == self._heads:
            return True
        return all(a == b for a, b in zip(self, other, strict=True))

    def __reduce__(self):
        return (SnapshotSequence, (self._heads, self._read, self._keep))

    def __repr__(self) -> str:
        return f"SnapshotSequence({', '.join(self.ids)})"


@dataclass(frozen=True, slots=True)
class Fragnet:
    """A fragment network that models a delay event, to be inserted into a snapshot.

    Its links may tie its new activities to activities of the snapshot it is
    inserted into (AACE RP 52R-06, time impact analysis).
    """

    id: str
    activities: Mapping[str, Activity]
    links: tuple[Link, ...]
    sources: Mapping[str, str] = field(default_factory=frozen_mapping)


@dataclass(frozen=True, slots=True)
class Event:
    """A delay event: what happened, who is responsible, when, and what it hit.

    ``start`` and ``finish`` are inclusive calendar dates. ``category`` is
    already resolved from the party's role when events.csv left it blank.
    ``days_lost`` is the optional stated cost: ``(activity, working days)``
    for each activity it hit, in the order of ``activities`` (empty when
    events.csv gives none; casefile format 2, events.csv ``days_lost``).
    """

    id: str
    title: str
    party: str
    category: str
    start: date
    finish: date
    activities: tuple[str, ...] = ()
    fragnet: str | None = None
    reference: str | None = None
    line: int | None = None
    days_lost: tuple[tuple[str, int], ...] = ()


@dataclass(frozen=True, slots=True)
class Project:
    """Project-wide settings from the manifest's ``[project]`` table."""

    name: str
    default_calendar: str
    completion: str | None = None
    contract_completion: date | None = None
    delay_unit: str = "calendar-days"  # or "working-days"
    progress_logic: str = "retained"  # or "override"
    critical_float: int = 0
    concurrency: str = "time-only"  # or "apportion" / "dominant": the rule for concurrent days


@dataclass(frozen=True, slots=True)
class Casefile:
    """A whole casefile: project settings, parties, calendars, snapshots, events, fragnets.

    ``snapshots`` are oldest first with strictly increasing data dates; the
    first of role ``baseline`` is the baseline. They are a tuple, or a
    :class:`SnapshotSequence` that reads each when asked for
    (``load_casefile(..., lazy=True)``). ``root`` is the folder it was
    loaded from (``None`` for a casefile built in memory). ``inputs`` maps
    each input file's relative path to its SHA-256, for the record of inputs.
    """

    project: Project
    calendars: Mapping[str, Calendar]
    parties: Mapping[str, Party]
    snapshots: Sequence[Snapshot]
    events: tuple[Event, ...] = ()
    fragnets: Mapping[str, Fragnet] = field(default_factory=frozen_mapping)
    root: Path | None = None
    inputs: Mapping[str, str] = field(default_factory=frozen_mapping)
    warnings: tuple[str, ...] = ()
    windows: tuple[str, ...] = ()  # optional user window boundaries (snapshot ids)

    @property
    def baseline(self) -> Snapshot:
        if isinstance(self.snapshots, SnapshotSequence):  # found by the manifest's roles, nothing else read
            roles = [h.role for h in self.snapshots.heads]
            return self.snapshots[roles.index("baseline") if "baseline" in roles else 0]
        for snap in self.snapshots:
            if snap.is_baseline:
                return snap
        return self.snapshots[0]

    @property
    def updates(self) -> tuple[Snapshot, ...]:
        return tuple(s for s in self.snapshots if not s.is_baseline)

    @property
    def snapshot_ids(self) -> tuple[str, ...]:
        """The snapshots' ids, oldest first (without reading a :class:`SnapshotSequence`)."""
        if isinstance(self.snapshots, SnapshotSequence):
            return self.snapshots.ids
        return tuple(s.id for s in self.snapshots)

    def snapshot(self, snapshot_id: str) -> Snapshot:
        """The snapshot with this id; ``NotFoundError`` naming the known ids otherwise."""
        ids = self.snapshot_ids
        if snapshot_id in ids:
            return self.snapshots[ids.index(snapshot_id)]
        known = ", ".join(ids)
        msg = f"no snapshot {snapshot_id!r} in the casefile (known: {known})"
        raise NotFoundError(msg)

    def event(self, event_id: str) -> Event:
        for ev in self.events:
            if ev.id == event_id:
                return ev
        known = ", ".join(e.id for e in self.events) or "none"
        msg = f"no event {event_id!r} in the casefile (known: {known})"
        raise NotFoundError(msg)
