"""The result types of attribution, shared by contributors, concurrency, the ledger and the whole.

Every type here is a frozen record; ``contributors``, ``concurrency``,
``ledger`` and ``delay`` import them and this module imports none of
those back, so the attribution package has no cycle. The rules that fill
them are documented in those modules (AACE RP 29R-03 MIP 3.3/3.4; SCL
Delay and Disruption Protocol, 2nd ed., on concurrency).
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field
from datetime import date

from forensic.analysis.windows import WindowRun, WindowsAnalysis
from forensic.core.engine import ScheduleResult
from forensic.core.model import Casefile, frozen_mapping

__all__ = [
    "Concurrency",
    "Contributor",
    "DelayAnalysis",
    "FloatDelay",
    "Ledger",
    "LedgerEntry",
    "Pacing",
    "PathFloatUse",
    "RevisionShare",
    "Slice",
    "SliceDelay",
    "WindowAttribution",
    "WindowContext",
    "sum_counts",
]


@dataclass(frozen=True, slots=True)
class Contributor:
    """One activity's share of a window's progress slip, and who answers for it.

    ``event`` is ``None`` when no event covers the share (then it is
    unexplained, or a gain); ``category`` is one of the contract categories,
    ``"concurrent"``, or ``None`` for an activity with no performing party.
    """

    activity: str
    days: int
    event: str | None
    party: str
    category: str | None


@dataclass(frozen=True, slots=True)
class RevisionShare:
    """Days of a window's revision slip that an event's fragnet (or activities) brought in."""

    event: str
    days: int
    party: str
    category: str
    activities: tuple[str, ...]


@dataclass(frozen=True, slots=True)
class WindowContext:
    """One window's schedules and lookups, shared by the walk along the driving path and the concurrency test.

    ``v`` is each activity's slip in the delay unit from the earlier update
    to the half-step; ``preds`` the earlier update's predecessors (id, link
    type); ``later_preds`` the later update's, with whether the link is new.
    """

    casefile: Casefile
    run: WindowRun
    half: ScheduleResult
    before: ScheduleResult
    v: Mapping[str, int]
    preds: Mapping[str, tuple[tuple[str, str], ...]]
    later_preds: Mapping[str, tuple[tuple[str, str, bool], ...]]


@dataclass(frozen=True, slots=True)
class Concurrency:
    """The concurrency test of one window (see the module notes for the rule).

    ``found`` is the concurrent days the test finds; ``days`` those that stay
    concurrent under ``rule`` (all of them under ``time-only``, none under
    ``apportion``, none under ``dominant`` unless the parties tie);
    ``by_rule`` the concurrent days the rule gave to each party.
    """

    days: int
    parties: tuple[str, ...]
    events: tuple[str, ...]
    recovered_alone: Mapping[str, int]
    recovered_together: int
    rule: str = "time-only"
    found: int = 0
    critical: Mapping[str, int] = field(default_factory=frozen_mapping)
    by_rule: Mapping[str, int] = field(default_factory=frozen_mapping)


@dataclass(frozen=True, slots=True)
class LedgerEntry:
    """Days by category for a window (or from the baseline to a window's end).

    ``total`` is the sum of every field but ``unexplained``, which is a memo:
    the part of the categories that no event explains.
    """

    window: str
    excusable_compensable: int
    excusable_noncompensable: int
    non_excusable: int
    concurrent: int
    gains: int
    unassigned: int
    unattributed_revision: int
    unexplained: int
    total: int


@dataclass(frozen=True, slots=True)
class Ledger:
    """The delay ledger: per window, cumulative, and whether it balances to the total slip."""

    windows: tuple[LedgerEntry, ...]
    cumulative: tuple[LedgerEntry, ...]
    total: LedgerEntry
    baseline_completion: date
    last_completion: date
    total_slip: int
    balanced: bool


@dataclass(frozen=True, slots=True)
class SliceDelay:
    """One share of a slice's slip: the activity (or a revision's activities), event, party, days."""

    activity: str
    event: str | None
    party: str
    days: int


@dataclass(frozen=True, slots=True)
class Slice:
    """A part of a window between two cut dates, attributed on its own (see :func:`attribute_window`).

    ``driving_path`` is the longest path of the slice's half-step schedule.
    """

    start: date
    end: date
    driving_path: tuple[str, ...]
    delays: tuple[SliceDelay, ...]


@dataclass(frozen=True, slots=True)
class Pacing:
    """A contractor's lateness that float from an owner delay of the same slice absorbed: possible pacing, not decided."""

    start: date
    end: date
    activity: str
    event: str | None
    party: str
    days: int
    owner_events: tuple[str, ...]


@dataclass(frozen=True, slots=True)
class FloatDelay:
    """One delay's use of a path's float: the activity, the event covering it (or None), the party, days."""

    activity: str
    event: str | None
    party: str
    days: int


@dataclass(frozen=True, slots=True)
class PathFloatUse:
    """The float one near-critical path used in a window.

    ``activities`` is the path (its work, earlier update, in planned date
    order); ``activity`` the one it is read at (the most delayed);
    ``float_before`` its float in the earlier update and ``used`` the part
    the window's delays used, both in the delay unit.
    """

    activity: str
    activities: tuple[str, ...]
    float_before: int
    used: int
    by_party: Mapping[str, int]
    delays: tuple[FloatDelay, ...]


@dataclass(frozen=True, slots=True)
class WindowAttribution:
    """Every day of one window's slip, attributed.

    ``sum(contributors.days) == window.progress_slip``;
    ``sum(revision.days) + unattributed_revision == window.revision_slip``;
    ``sum(by_party.values()) + concurrent.days == window.slip``.
    ``unexplained`` counts the positive days that no event covers.
    """

    window_label: str
    contributors: tuple[Contributor, ...]
    revision: tuple[RevisionShare, ...]
    unattributed_revision: int
    by_party: Mapping[str, int]
    concurrent: Concurrency
    unexplained: int
    slices: tuple[Slice, ...] = ()
    pacing: tuple[Pacing, ...] = ()
    float_used: tuple[PathFloatUse, ...] = ()


@dataclass(frozen=True, slots=True)
class DelayAnalysis:
    """The windows analysis with every day attributed and the ledger."""

    unit: str
    windows: WindowsAnalysis
    attributions: tuple[WindowAttribution, ...]
    ledger: Ledger
    rule: str = "time-only"


def sum_counts(maps: Iterable[Mapping[str, int]]) -> dict[str, int]:
    """Days per key added over several mappings (per party, per window or per slice), in first-seen order."""
    out: dict[str, int] = {}
    for m in maps:
        for k, d in m.items():
            out[k] = out.get(k, 0) + d
    return out
