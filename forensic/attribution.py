"""Attribution of every day of a window's slip: contributors, events, parties, concurrency, ledger.

The windows analysis (:mod:`forensic.windows`) says how far completion moved
in each window and splits it into a progress slip and a revision slip. This
module says *who and what* moved it, joining three steps, each in its own
module with its rule:

* :mod:`forensic.contributors`: the contributor rule (the progress slip
  handed back along the driving path), events and parties, and the revision
  shares of the events that brought revisions in;
* :mod:`forensic.concurrency`: the but-for test for concurrent delay inside
  the window, and taking the concurrent days out of the parties' shares;
* :mod:`forensic.ledger`: the days by category, per window and cumulative.

:func:`analyse_delay` runs them over every window; :func:`delay_json` is the
``forensic windows --json`` object. The records and tables of the three
modules are importable from here as well.

References
----------
AACE International Recommended Practice 29R-03, Forensic Schedule Analysis,
protocols 3.3 and 3.4 and section 4 (excusability, compensability,
concurrency).
Society of Construction Law, Delay and Disruption Protocol, 2nd ed. (2017),
core principles 10 and paras. 10-11.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

from .concurrency import (
    CONCURRENCY_RULE,
    CONCURRENT,
    Concurrency,
    _concurrency,
    _resolve,
    _take_concurrent,
    concurrency_table,
    rule_words,
)
from .contributors import (
    UNATTRIBUTED_REVISION,
    Contributor,
    RevisionShare,
    _attribute,
    _context,
    _revision,
    _split,
    contributors_table,
)
from .ledger import Ledger, LedgerEntry, build_ledger, ledger_json, ledger_table
from .model import Casefile, frozen_mapping
from .windows import WindowRun, WindowsAnalysis, analyse_windows

__all__ = [
    "CONCURRENCY_RULE",
    "Concurrency",
    "Contributor",
    "DelayAnalysis",
    "Ledger",
    "LedgerEntry",
    "RevisionShare",
    "WindowAttribution",
    "analyse_delay",
    "attribute_window",
    "concurrency_table",
    "contributors_table",
    "delay_json",
    "rule_words",
    "ledger_table",
]


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


@dataclass(frozen=True, slots=True)
class DelayAnalysis:
    """The windows analysis with every day attributed and the ledger."""

    unit: str
    windows: WindowsAnalysis
    attributions: tuple[WindowAttribution, ...]
    ledger: Ledger
    rule: str = "time-only"


# --- one window, all windows ---------------------------------------------------------


def attribute_window(casefile: Casefile, run: WindowRun) -> WindowAttribution:
    """Attribute every day of one window's slip.

    The rules are in the module notes of :mod:`forensic.contributors`
    (contributors, events, revision shares) and :mod:`forensic.concurrency`.

    Parameters
    ----------
    casefile : Casefile
        Supplies events, parties, fragnets, calendars and the delay unit.
    run : WindowRun
        One window of :func:`forensic.windows.analyse_windows`.

    Returns
    -------
    WindowAttribution

    References
    ----------
    AACE RP 29R-03, protocol 3.4 and sec. 4; SCL Protocol 2nd ed., core
    principle 10 and para. 11.
    """
    ctx = _context(casefile, run)
    w = run.window
    steps = _split(ctx, run.half_result.completion_id, w.progress_slip, local=False)
    chain = [c for aid, d in reversed(steps) if d for c in _attribute(ctx, aid, d)]
    revision, unattributed = _revision(ctx)
    conc = _concurrency(ctx, chain, revision)
    if conc.days:
        contributors, shares = _take_concurrent(chain, revision, conc)
        contributors, shares, conc = _resolve(casefile, contributors, shares, conc)
        revision = tuple(shares)
    else:
        contributors = chain
    by_party: dict[str, int] = {}
    for c in contributors:
        if c.category != CONCURRENT:
            by_party[c.party] = by_party.get(c.party, 0) + c.days
    for s in revision:
        if s.category != CONCURRENT:
            by_party[s.party] = by_party.get(s.party, 0) + s.days
    if unattributed:
        by_party[UNATTRIBUTED_REVISION] = unattributed
    by_party = {k: d for k, d in by_party.items() if d}
    unexplained = sum(c.days for c in contributors if c.event is None and c.days > 0)
    return WindowAttribution(
        window_label=w.label,
        contributors=tuple(contributors),
        revision=revision,
        unattributed_revision=unattributed,
        by_party=frozen_mapping(by_party),
        concurrent=conc,
        unexplained=unexplained,
    )


def analyse_delay(casefile: Casefile, windows: Sequence[str] | None = None) -> DelayAnalysis:
    """The windows analysis with the half-step split, attribution, concurrency and the ledger.

    Parameters
    ----------
    casefile : Casefile
    windows : sequence of snapshot ids, optional
        Window boundaries (see :func:`forensic.windows.window_boundaries`).

    Returns
    -------
    DelayAnalysis
        Its ledger's total equals the slip from the baseline's completion
        to the last update's completion (``ledger.balanced``).

    References
    ----------
    AACE RP 29R-03, protocols 3.3 and 3.4; SCL Protocol 2nd ed.
    """
    an = analyse_windows(casefile, windows)
    atts = tuple(attribute_window(casefile, run) for run in an.runs)
    return DelayAnalysis(an.unit, an, atts, build_ledger(atts, an), casefile.project.concurrency)


# --- JSON --------------------------------------------------------------------------


def delay_json(analysis: DelayAnalysis) -> dict[str, Any]:
    """The ``forensic windows --json`` object (keys documented in docs/windows.md; a contract)."""
    windows = []
    for run, att in zip(analysis.windows.runs, analysis.attributions, strict=True):
        w = run.window
        windows.append(
            {
                "from": w.from_id,
                "to": w.to_id,
                "start": w.start,
                "end": w.end,
                "completion_before": w.completion_before,
                "completion_after": w.completion_after,
                "half_step_completion": w.half_step_completion,
                "slip": w.slip,
                "progress_slip": w.progress_slip,
                "revision_slip": w.revision_slip,
                "critical_path_before": list(w.critical_path_before),
                "critical_path_after": list(w.critical_path_after),
                "contributors": [
                    {"activity": c.activity, "days": c.days, "event": c.event, "party": c.party, "category": c.category}
                    for c in att.contributors
                ],
                "by_party": dict(att.by_party),
                "concurrent": {
                    "days": att.concurrent.days,
                    "parties": list(att.concurrent.parties),
                    "events": list(att.concurrent.events),
                    "recovered_alone": dict(att.concurrent.recovered_alone),
                    "recovered_together": att.concurrent.recovered_together,
                    "rule": att.concurrent.rule,
                    "found": att.concurrent.found,
                    "by_rule": dict(att.concurrent.by_rule),
                },
                "unexplained": att.unexplained,
                "revision": [
                    {"event": s.event, "days": s.days, "party": s.party, "category": s.category, "activities": list(s.activities)}
                    for s in att.revision
                ],
                "unattributed_revision": att.unattributed_revision,
                "added": list(w.added),
                "deleted": list(w.deleted),
                "path_joined": list(w.path_joined),
                "path_left": list(w.path_left),
            }
        )
    return {
        "unit": analysis.unit,
        "windows": windows,
        "concurrency": {"rule": analysis.rule, "statement": rule_words(analysis.rule)},
        "ledger": {**ledger_json(analysis.ledger), "concurrency_rule": CONCURRENCY_RULE},
    }
