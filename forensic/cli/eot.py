"""``forensic eot``: the delay summary per event, every method side by side, reconciled."""

from __future__ import annotations

from pathlib import Path

import click

from ._base import main
from ._common import (
    casefile_argument,
    emit,
    emit_json,
    emit_xlsx,
    format_options,
    load,
    pick_format,
    say,
    table_text,
)
from ._progress import status_printer

_TABLES = ("events", "methods", "reconciliation", "sensitivity")


@main.command("eot")
@casefile_argument
@click.option("--snapshot", "snapshot_id", metavar="ID",
              help="Summarise up to this update (default: the latest); later updates are left out.")
@click.option("--table", type=click.Choice(_TABLES), default="events", show_default=True, help="Table printed by --csv.")
@format_options
def eot_command(casefile: Path, snapshot_id: str | None, table: str, as_json: bool, as_csv: bool) -> None:
    """The delay summary per event of CASEFILE: windows, time impact and but-for side by side.

    For each event: its days by each method (null, with the reason, where a
    method does not apply), how it is represented, and its concurrent,
    excusable and compensable days; each method's totals by category; the
    windows days no event explains; the causes of each difference between
    methods; and the windows totals under alternative settings (AACE RP
    29R-03; RP 52R-06; SCL Protocol 2nd ed.). Days attributed by each
    method, not entitlement. Keys and rules: docs/eot.md.

    Example: forensic eot casefiles/riverside --json --out eot.json

    """
    from dataclasses import replace

    from forensic.analysis.eot import delay_summary, eot_json, eot_tables
    from forensic.core.errors import NotFoundError
    from forensic.exchange.writers import to_csv

    cf = load(casefile)
    if snapshot_id is not None:
        ids = [s.id for s in cf.snapshots]
        if snapshot_id not in ids:
            raise NotFoundError(f"--snapshot: no snapshot {snapshot_id!r} (known: {', '.join(ids)})")
        cf = replace(cf, snapshots=cf.snapshots[: ids.index(snapshot_id) + 1],
                     windows=tuple(w for w in cf.windows if w in ids[: ids.index(snapshot_id) + 1]))
    summary = delay_summary(cf, progress=status_printer("eot"))
    tables = dict(zip(_TABLES, eot_tables(summary), strict=True))
    emit_xlsx(tables.values(), cf)
    fmt = pick_format(as_json, as_csv)
    if fmt == "json":
        emit_json(eot_json(summary))
        return
    if fmt == "csv":
        emit(to_csv(tables[table]))
        return
    c = summary.completion
    say(f"{cf.project.name}: delay summary per event, days in {summary.unit} attributed by each method")
    say(f"Baseline completion {c['baseline'].isoformat()}, latest {c['latest'].isoformat()}: slip {c['slip']}."
               + (f" Contract completion {c['contract'].isoformat()}." if c["contract"] else "") + "\n")
    emit(table_text(tables["events"]))
    say("\nTotals by method and category:")
    emit(table_text(tables["methods"]))
    say("\nWhy the methods differ:")
    emit(table_text(tables["reconciliation"]))
    say(f"\nSensitivity of the windows split (moved: a party's share changes by more than {summary.tolerance}):")
    emit(table_text(tables["sensitivity"]))
    for note in summary.notes:
        say(f"\n{note}")
