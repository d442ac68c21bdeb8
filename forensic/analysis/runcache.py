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
  must not depend on that rule (no schedule, window run, as-built schedule
  or attribution before the rule is applied reads it).
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

    def __init__(self) -> None:
        self._family: Casefile | None = None
        self._store: dict[tuple, tuple[tuple[object, ...], object]] = {}

    def serves(self, casefile: Casefile) -> bool:
        """Whether ``casefile`` differs from the first one seen in its project settings at most."""
        if self._family is None:
            self._family = casefile
            return True
        return all(getattr(casefile, n) is getattr(self._family, n) for n in _FAMILY)

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
        hit = self._store.get(key)
        if hit is not None and all(a is b for a, b in zip(hit[0], objs, strict=True)):
            return hit[1]  # type: ignore[return-value]
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
