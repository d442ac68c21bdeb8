"""The windows split under reasonable alternative settings: how stable the answer is.

Each row re-runs the windows analysis with one setting changed (window
grouping, progress logic, critical float, concurrency rule) and flags a
row whose split by party moves by more than a stated tolerance from the
analysis as run. A split that moves depends on that setting; one that does
not is robust to it (AACE RP 29R-03, sec. 4, on the sensitivity of an
observational analysis to window selection; SCL Protocol 2nd ed., Part B;
both from memory). Used by :mod:`forensic.analysis.eot`.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, replace

from forensic.analysis.attribution.delay import DelayAnalysis, analyse_delay
from forensic.analysis.runcache import RunCache
from forensic.analysis.windows import auto_boundaries
from forensic.core.model import Casefile, frozen_mapping

__all__ = ["SensitivityRow", "sensitivity_rows"]


@dataclass(frozen=True, slots=True)
class SensitivityRow:
    """The windows totals under one alternative setting; ``moved`` when a party's share moves beyond the tolerance."""

    setting: str
    value: str
    excusable_compensable: int
    excusable_noncompensable: int
    non_excusable: int
    concurrent: int
    by_party: Mapping[str, int]
    slip: int
    moved: bool


def _quarterly(casefile: Casefile) -> tuple[str, ...]:
    ids = [s.id for s in casefile.snapshots]
    picked = ids[::3]
    if picked[-1] != ids[-1]:
        picked.append(ids[-1])
    return tuple(picked)


def _row(setting: str, value: str, delay: DelayAnalysis, base: Mapping[str, int] | None, tolerance: int) -> SensitivityRow:
    t = delay.ledger.total
    parties: dict[str, int] = {}
    for att in delay.attributions:
        for p, d in att.by_party.items():
            parties[p] = parties.get(p, 0) + d
    parties = {p: d for p, d in sorted(parties.items()) if d}
    moved = False
    if base is not None:
        keys = set(base) | set(parties)
        moved = any(abs(parties.get(k, 0) - base.get(k, 0)) > tolerance for k in keys)
    return SensitivityRow(setting, value, t.excusable_compensable, t.excusable_noncompensable, t.non_excusable,
                          t.concurrent, frozen_mapping(parties), delay.ledger.total_slip, moved)


def sensitivity_rows(casefile: Casefile, base: DelayAnalysis, tolerance: int,
                     progress: Callable[[str], None], *, cache: RunCache | None = None) -> tuple[SensitivityRow, ...]:
    """The ``as analysed`` row of ``base``, then one row per alternative setting (see the module notes).

    ``cache`` (the caller's :class:`~forensic.analysis.runcache.RunCache`)
    lets the rows share what they have in common: the schedules of the
    same updates under the same settings, the windows a grouping shares
    with another, and everything but the treatment of the concurrent days
    for a row that changes only the concurrency rule. What a row adds that
    no later row reuses is kept in a scoped cache and let go when it is no
    longer needed, so the caller's cache is left as the analysis left it.
    """
    runs = base.windows.runs
    bounds = [r.window.from_id for r in runs] + [runs[-1].window.to_id]
    first = _row("as analysed", "windows at " + ", ".join(bounds), base, None, tolerance)
    rows = [first]
    ref = dict(first.by_party)
    monthly = tuple(s.id for s in casefile.snapshots)
    variants: list[tuple[str, str, Casefile, Sequence[str] | None]] = []
    if tuple(bounds) != monthly:
        variants.append(("window grouping", "every update", casefile, monthly))
    if _quarterly(casefile) != tuple(bounds) and len(monthly) > 3:
        variants.append(("window grouping", "quarterly (every third update)", casefile, _quarterly(casefile)))
    auto = auto_boundaries(casefile, cache=cache)
    if tuple(auto) != tuple(bounds):
        variants.append(("window grouping", "auto (at the updates where the driving path changes)", casefile, auto))
    other = "override" if casefile.project.progress_logic == "retained" else "retained"
    variants.append(("progress logic", other,
                     replace(casefile, project=replace(casefile.project, progress_logic=other)), None))
    for cf in (0, 5):
        if cf != casefile.project.critical_float:
            variants.append(("critical float", f"{cf} working days",
                             replace(casefile, project=replace(casefile.project, critical_float=cf)), None))
    for rule in ("time-only", "apportion", "dominant"):
        if rule != casefile.project.concurrency:
            variants.append(("concurrency rule", rule,
                             replace(casefile, project=replace(casefile.project, concurrency=rule)), None))
    # What a row computes that no later row reuses is kept only while it is needed (a scoped cache):
    # the groupings (listed first) share theirs with each other; a row under other project settings
    # keeps its own; a concurrency-rule row reuses the analysis as run, which the caller's cache holds.
    grouping = cache.scoped() if cache is not None else None
    for setting, value, variant_casefile, variant_bounds in variants:
        progress(f"sensitivity: {setting} {value}")
        if setting != "window grouping":
            grouping = None  # the groupings are done: their runs go
        if cache is None or setting == "concurrency rule":
            row_cache = cache
        else:
            row_cache = grouping if setting == "window grouping" else cache.scoped()
        delay = analyse_delay(variant_casefile, variant_bounds, cache=row_cache)
        rows.append(_row(setting, value, delay, ref, tolerance))
    return tuple(rows)
