"""Results computed once within one call and handed out again: schedules, window runs, attributions.

The engine and the analyses are pure functions of plain data, so what one
step of a call computed for the same inputs can serve a later step of the
same call. The delay summary (:mod:`forensic.analysis.eot`) schedules the same
updates for the windows analysis, time impact, but-for and each
sensitivity row (AACE RP 29R-03, sec. 4, on testing the sensitivity of an
analysis to its settings); a :class:`RunCache` made by that call and passed
down explicitly lets each be computed once. It is never global: it lives as
long as the call that made it holds it, and nothing outside that call sees it.

Rules
-----
* An entry is keyed on the objects it was computed from, by identity, and
  holds them, so an identity cannot be reused while the entry lives.
* A casefile is served only when every part of it but the project is the
  very object of the first casefile the cache saw (a sensitivity row changes
  the project settings only); any other casefile is computed afresh.
* The key holds the project settings except the concurrency rule: an entry
  must not depend on that rule (no schedule, window run, as-built schedule,
  time impact or attribution before the rule is applied reads it).
* A :meth:`RunCache.scoped` cache serves its parent's entries and keeps
  what it computes itself, which goes when the scoped cache goes: a step
  whose results no later step reuses (a sensitivity row under other
  settings) keeps the memory it needs only while it runs.
"""

from __future__ import annotations

from collections.abc import Callable, Hashable, Sequence
from dataclasses import fields, replace
from typing import TypeVar

from forensic.core.engine import ScheduleResult, schedule
from forensic.core.model import Casefile, Snapshot

__all__ = ["RunCache", "cached_schedule"]

T = TypeVar("T")

_FAMILY = tuple(f.name for f in fields(Casefile) if f.name != "project")


class RunCache:
    """What one call has computed, keyed by the inputs' identity and the settings (see the module notes)."""

    def __init__(self, parent: RunCache | None = None) -> None:
        self._parent = parent
        self._family: Casefile | None = None
        self._store: dict[tuple, tuple[tuple[object, ...], object]] = {}

    def scoped(self) -> RunCache:
        """A cache that serves this one's entries and keeps its own (see the module notes)."""
        return RunCache(self)

    @property
    def kept(self) -> int:
        """How many entries this cache keeps itself (not its parent's)."""
        return len(self._store)

    def serves(self, casefile: Casefile) -> bool:
        """Whether ``casefile`` differs from the first one seen in its project settings at most."""
        if self._parent is not None:
            return self._parent.serves(casefile)
        if self._family is None:
            self._family = casefile
            return True
        return all(getattr(casefile, n) is getattr(self._family, n) for n in _FAMILY)

    def _found(self, key: tuple, objs: tuple[object, ...]) -> tuple[bool, object]:
        """The entry for ``key`` computed from these very objects, here or in a parent."""
        hit = self._store.get(key)
        if hit is not None and all(a is b for a, b in zip(hit[0], objs, strict=True)):
            return True, hit[1]
        if self._parent is not None:
            return self._parent._found(key, objs)
        return False, None

    def get(self, casefile: Casefile, kind: str, objects: Sequence[object], compute: Callable[[], T],
            extra: Hashable = ()) -> T:
        """The value of ``compute()`` for these inputs, computed on the first call only.

        ``kind`` names what is computed, ``objects`` are the inputs taken by
        identity, ``extra`` the inputs taken by value.
        """
        if not self.serves(casefile):
            return compute()
        objs = tuple(objects)
        key = (kind, tuple(id(o) for o in objs), extra, replace(casefile.project, concurrency=""))
        found, known = self._found(key, objs)
        if found:
            return known  # type: ignore[return-value]
        value = compute()
        self._store[key] = (objs, value)
        return value

    def schedule(self, casefile: Casefile, snapshot: Snapshot) -> ScheduleResult:
        """The schedule of ``snapshot`` with the casefile's calendars and settings."""
        return self.get(casefile, "schedule", (snapshot,),
                        lambda: schedule(snapshot, casefile.calendars, casefile.project))


def cached_schedule(cache: RunCache | None, casefile: Casefile, snapshot: Snapshot) -> ScheduleResult:
    """The schedule of ``snapshot``, from ``cache`` when there is one."""
    if cache is None:
        return schedule(snapshot, casefile.calendars, casefile.project)
    return cache.schedule(casefile, snapshot)
