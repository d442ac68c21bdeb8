"""``forensic windows``: the windows analysis, its attribution and the delay ledger."""

from __future__ import annotations

from pathlib import Path

import click

from ..asbuilt import as_planned_vs_as_built, asbuilt_table
from ..attribution import (
    CONCURRENCY_RULE,
    analyse_delay,
    concurrency_table,
    contributors_table,
    delay_json,
    ledger_table,
    rule_words,
)
from ..tables import dumps_json, to_csv, to_text
from ..windows import windows_table
from ._base import main
from ._common import casefile_argument, emit, emit_xlsx, format_options, load, pick_format, status

_TABLES = ("windows", "contributors", "ledger", "cumulative", "as-built")


@main.command("windows")
@casefile_argument
@click.option(
    "--windows", "bounds", metavar="IDS",
    help="Comma-separated snapshot ids that bound the windows, e.g. U01,U04,U08 "
    "(the baseline and the last update are always added), or 'auto': at the updates "
    "where the driving path changes.",
)
@click.option("--table", type=click.Choice(_TABLES), default="windows", show_default=True, help="Table printed by --csv.")
@format_options
def windows_command(casefile: Path, bounds: str | None, table: str, as_json: bool, as_csv: bool) -> None:
    """Windows analysis of CASEFILE with the half-step split and the delay ledger.

    For each window between updates: completion before and after, the slip
    (in the casefile's delay unit; a gain is negative) split into progress
    and revision by the half-step schedule, the activities, events and
    parties it is attributed to, concurrent days, and the ledger (AACE RP
    29R-03 protocols 3.3/3.4; SCL Protocol 2nd ed.). Rules: docs/windows.md.

    Example: forensic windows casefiles/riverside --windows U02,U04 --json

    """
    status(f"Loading {casefile} ...")
    cf = load(casefile)
    ids = [s.strip() for s in bounds.split(",") if s.strip()] if bounds else None
    status(f"Analysing {len(cf.snapshots) - 1} windows of {len(cf.snapshots[-1].activities)} activities (Ctrl-C stops) ...")
    an = analyse_delay(cf, ids)
    tables = {
        "windows": lambda: windows_table(an.windows),
        "contributors": lambda: contributors_table(an),
        "ledger": lambda: ledger_table(an),
        "cumulative": lambda: ledger_table(an, cumulative=True),
        "as-built": lambda: asbuilt_table(as_planned_vs_as_built(cf)),
    }
    emit_xlsx((make() for make in tables.values()), cf)
    fmt = pick_format(as_json, as_csv)
    if fmt == "json":
        emit(dumps_json(delay_json(an)))
        return
    if fmt == "csv":
        emit(to_csv(tables[table]()))
        return
    led = an.ledger
    click.echo(f"{cf.project.name}: windows analysis, slips in {an.unit} (a gain is negative)")
    click.echo(
        f"Baseline completion {led.baseline_completion.isoformat()}, last update "
        f"{led.last_completion.isoformat()}: total slip {led.total_slip}.\n"
    )
    emit(to_text(tables["windows"]()))
    click.echo("\nContributors (progress) and revision shares:")
    emit(to_text(tables["contributors"]()))
    conc = concurrency_table(an)
    click.echo("\nConcurrency (but-for in each window):")
    if conc.rows:
        emit(to_text(conc))
    else:
        click.echo("no concurrent days in any window")
    click.echo(f"Rule: {CONCURRENCY_RULE}.")
    click.echo(f"Concurrency rule (casefile concurrency): {rule_words(an.rule)}.")
    click.echo("\nLedger per window:")
    emit(to_text(tables["ledger"]()))
    click.echo("\nLedger cumulative:")
    emit(to_text(tables["cumulative"]()))
    click.echo("\nThe ledger " + ("balances" if led.balanced else "DOES NOT balance") + " to the total slip.")
    click.echo("Results support, and do not replace, a qualified scheduling professional's judgement.")
