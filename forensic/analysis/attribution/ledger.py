"""The delay ledger: every window's slip by category, cumulative from the baseline, and its tables.

:mod:`forensic.analysis.attribution.delay` gives each day of a window's slip to an event
or a party, with a category (or ``concurrent``, from
:mod:`forensic.analysis.attribution.concurrency`). The ledger adds those days up by category.

Ledger
------
Per window: days by category (excusable-compensable, excusable-
noncompensable, non-excusable), concurrent days, gains (negative shares),
days of activities with no performing party (``unassigned``) and
unattributed revision; their total is the window's slip. The cumulative
ledger's last row is the slip from the baseline's completion to the last
update's completion.

References
----------
AACE International Recommended Practice 29R-03, Forensic Schedule Analysis,
protocols 3.3 and 3.4 and section 4 (excusability, compensability,
concurrency).
Society of Construction Law, Delay and Disruption Protocol, 2nd ed. (2017),
core principles 10 and paras. 10-11.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import replace
from typing import Any

from forensic.analysis.attribution.concurrency import CONCURRENT
from forensic.analysis.attribution.results import (
    DelayAnalysis,
    Ledger,
    LedgerEntry,
    WindowAttribution,
)
from forensic.analysis.windows import WindowsAnalysis
from forensic.core.model import CATEGORIES
from forensic.core.tables import Table

__all__ = ["LEDGER_COLUMNS", "Ledger", "LedgerEntry", "build_ledger", "ledger_json", "ledger_table"]


_FIELDS = {
    "excusable-compensable": "excusable_compensable",
    "excusable-noncompensable": "excusable_noncompensable",
    "non-excusable": "non_excusable",
}


def _entry(label: str, att: WindowAttribution) -> LedgerEntry:
    cols = dict.fromkeys(
        ("excusable_compensable", "excusable_noncompensable", "non_excusable", "concurrent", "gains", "unassigned"), 0
    )
    items: list[tuple[int, str | None]] = [(c.days, c.category) for c in att.contributors]
    items += [(s.days, s.category) for s in att.revision]
    for d, cat in items:
        if cat == CONCURRENT:
            cols["concurrent"] += d
        elif d < 0:
            cols["gains"] += d
        elif cat in CATEGORIES:
            cols[_FIELDS[cat]] += d
        else:
            cols["unassigned"] += d
    total = sum(cols.values()) + att.unattributed_revision
    return LedgerEntry(label, **cols, unattributed_revision=att.unattributed_revision, unexplained=att.unexplained, total=total)


def _add(label: str, a: LedgerEntry, b: LedgerEntry) -> LedgerEntry:
    names = [f for f in LedgerEntry.__slots__ if f != "window"]
    return LedgerEntry(label, *(getattr(a, f) + getattr(b, f) for f in names))


def build_ledger(attributions: Sequence[WindowAttribution], windows: WindowsAnalysis) -> Ledger:
    """The ledger of the attributed windows: per window, cumulative, total, and whether it balances.

    Parameters
    ----------
    attributions : sequence of WindowAttribution
        One per window of ``windows``, in order
        (:func:`forensic.analysis.attribution.delay.attribute_window`).
    windows : WindowsAnalysis
        The windows analysis the attributions are of.

    Returns
    -------
    Ledger
        Balanced when its total equals the slip from the baseline's
        completion to the last update's completion and each window's row
        equals that window's slip.

    References
    ----------
    AACE RP 29R-03, protocols 3.3 and 3.4; SCL Protocol 2nd ed.
    """
    an = windows
    per = tuple(_entry(a.window_label, a) for a in attributions)
    cum = []
    running = None
    first = an.windows[0].from_id
    for e, w in zip(per, an.windows, strict=True):
        label = f"{first}-{w.to_id}"
        running = replace(e, window=label) if running is None else _add(label, running, e)
        cum.append(running)
    total = replace(cum[-1], window="total")
    balanced = total.total == an.total_slip and all(e.total == w.slip for e, w in zip(per, an.windows, strict=True))
    return Ledger(per, tuple(cum), total, an.baseline_completion, an.last_completion, an.total_slip, balanced)


# --- tables and JSON ---------------------------------------------------------------


LEDGER_COLUMNS = tuple(LedgerEntry.__slots__)


def ledger_table(analysis: DelayAnalysis, cumulative: bool = False) -> Table:
    """The ledger, per window (or cumulative), with a total row."""
    led = analysis.ledger
    entries = [*(led.cumulative if cumulative else led.windows), led.total]
    rows = tuple(tuple(getattr(e, f) for f in LEDGER_COLUMNS) for e in entries)
    return Table("ledger-cumulative" if cumulative else "ledger", LEDGER_COLUMNS, rows)


def _entry_json(e: LedgerEntry) -> dict[str, Any]:
    return {f: getattr(e, f) for f in LEDGER_COLUMNS}


def ledger_json(ledger: Ledger) -> dict[str, Any]:
    """The ledger part of the ``forensic windows --json`` object (docs/windows.md; a contract)."""
    return {
        "windows": [_entry_json(e) for e in ledger.windows],
        "cumulative": [_entry_json(e) for e in ledger.cumulative],
        "total": _entry_json(ledger.total),
        "baseline_completion": ledger.baseline_completion,
        "last_completion": ledger.last_completion,
        "total_slip": ledger.total_slip,
        "balanced": ledger.balanced,
    }
