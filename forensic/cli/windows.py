"""``forensic windows``: the windows analysis, its attribution and the delay ledger."""

from __future__ import annotations

from pathlib import Path

import click

from forensic.analysis.asbuilt import as_planned_vs_as_built, asbuilt_table
from forensic.analysis.attribution.delay import (
    CONCURRENCY_RULE,
    analyse_delay,
    concurrency_table,
    contributors_table,
    delay_json,
    ledger_table,
    rule_words,
)
from forensic.analysis.attribution.floatuse import float_ledger, float_used_table
from forensic.analysis.windows import windows_table
from forensic.cli.windows_jobs import attribute_in_processes, jobs_for
from forensic.exchange.writers import to_csv

from ._base import main
from ._common import (
    casefile_argument,
    check_every_snapshot,
    emit,
    emit_json,
    emit_xlsx,
    format_options,
    limit_hinted,
    load_lazily,
    pick_format,
    say,
    status,
    status_shown,
    table_text,
    whole_read_on_error,
)

# The columns kept longest when a text table must fit a narrow terminal (--wide shows all).
_WINDOW_KEEP = ("window", "slip", "completion_before", "completion_after", "progress_slip", "revision_slip",
                "half_step_completion")
_LEDGER_KEEP = ("window", "total", "excusable_compensable", "excusable_noncompensable", "non_excusable",
                "concurrent", "gains")

_TABLES = ("windows", "contributors", "ledger", "cumulative", "float-used", "as-built")


@main.command("windows")
@casefile_argument
@click.option(
    "--windows", "bounds", metavar="IDS",
    help="Comma-separated snapshot ids that bound the windows, e.g. U01,U04,U08 "
    "(the baseline and the last update are always added), or 'auto': at the updates "
    "where the driving path changes.",
)
@click.option("--table", type=click.Choice(_TABLES), default=None,
              help="Table printed by --csv (default: windows); refused without --csv.")
@click.option("--jobs", default="auto", metavar="N|auto", callback=lambda c, p, v: _jobs_value(v),
              help="Processes that attribute the windows, each a run of consecutive windows (the result is "
              "the same); auto: every core from 5,000 activities and 4 windows, else 1.")
@format_options
def windows_command(casefile: Path, bounds: str | None, table: str | None, jobs: str, as_json: bool,
                    as_csv: bool) -> None:
    """Windows analysis of CASEFILE with the half-step split and the delay ledger.

    For each window between updates: completion before and after, the slip
    (in the casefile's delay unit; a gain is negative) split into progress
    and revision by the half-step schedule, the activities, events and
    parties it is attributed to, concurrent days, and the ledger (AACE RP
    29R-03 protocols 3.3/3.4; SCL Protocol 2nd ed.). Rules: docs/windows.md.

    Example: forensic windows forensic-demo/riverside --windows U02,U04 --json

    """
    if table is not None and not as_csv:
        raise click.UsageError("--table chooses the table printed by --csv: add --csv")
    table = table or "windows"
    status(f"Loading {casefile} ...")
    cf = load_lazily(casefile)  # each snapshot read as its window comes: a few held at a time (issue 20)
    ids = [s.strip() for s in bounds.split(",") if s.strip()] if bounds else None
    # A refusal on the way reads the casefile whole, for the whole read's error (every bad snapshot).
    with whole_read_on_error(casefile):
        if status_shown():  # reading the last update for its size only when it is shown
            status(f"Analysing {len(cf.snapshots) - 1} windows of {len(cf.snapshots[-1].activities)} activities "
                   "(Ctrl-C stops) ...")
        with limit_hinted():  # a snapshot read as its window comes may be over a ceiling
            an = _analysed(cf, ids, jobs)
        check_every_snapshot(cf)  # those between grouped windows too, before anything is written
    tables = {
        "windows": lambda: windows_table(an.windows),
        "contributors": lambda: contributors_table(an),
        "ledger": lambda: ledger_table(an),
        "cumulative": lambda: ledger_table(an, cumulative=True),
        "float-used": lambda: float_used_table(an),
        "as-built": lambda: asbuilt_table(as_planned_vs_as_built(cf)),
    }
    with limit_hinted():
        emit_xlsx((make() for make in tables.values()), cf)
    fmt = pick_format(as_json, as_csv)
    if fmt == "json":
        emit_json(delay_json(an))
        return
    if fmt == "csv":
        emit(to_csv(tables[table]()))
        return
    led = an.ledger
    say(f"{cf.project.name}: windows analysis, slips in {an.unit} (a gain is negative)")
    say(
        f"Baseline completion {led.baseline_completion.isoformat()}, last update "
        f"{led.last_completion.isoformat()}: total slip {led.total_slip}.\n"
    )
    emit(table_text(tables["windows"](), keep=_WINDOW_KEEP))
    say("\nContributors (progress) and revision shares:")
    emit(table_text(tables["contributors"]()))
    conc = concurrency_table(an)
    say("\nConcurrency (but-for in each slice of each window):")
    if conc.rows:
        emit(table_text(conc))
    else:
        say("no concurrent days in any window")
    say(f"Rule: {CONCURRENCY_RULE}.")
    say(f"Concurrency rule (casefile concurrency): {rule_words(an.rule)}.")
    say("\nLedger per window:")
    emit(table_text(tables["ledger"](), keep=_LEDGER_KEEP))
    say("\nLedger cumulative:")
    emit(table_text(tables["cumulative"](), keep=_LEDGER_KEEP))
    say("\nThe ledger " + ("balances" if led.balanced else "DOES NOT balance") + " to the total slip.")
    fl = float_ledger(an)
    say(f"\nFloat used on paths within {fl.margin} working days of critical, in {an.unit} "
        "(float-days, not delay; docs/windows.md, the float ledger):")
    if fl.total:
        parties = ", ".join(f"{p} {d}" for p, d in sorted(fl.cumulative.items()))
        say(f"cumulative {fl.total}: {parties}")
        emit(table_text(tables["float-used"]()))
    else:
        say("no float used on near-critical paths")
    say("Results support, and do not replace, a qualified scheduling professional's judgement.")


def _jobs_value(value: str) -> str:
    """``--jobs``: ``auto`` or a whole number of processes, at least 1."""
    if value == "auto" or (value.isdigit() and int(value) >= 1):
        return value
    raise click.BadParameter(f"{value!r} is neither 'auto' nor a whole number of processes (1 or more)")


def _analysed(cf, ids: list[str] | None, jobs: str):
    """The windows attributed in one process, or in several (forensic.cli.windows_jobs; the same result)."""
    if jobs == "1" or ids == ["auto"]:  # auto windows: found by scheduling every update in turn, here
        n = 1
    else:
        n = jobs_for(cf, len(cf.snapshots) - 1 if ids is None else len(ids) + 1, jobs)
    if n == 1:
        return analyse_delay(cf, ids, keep_runs=False)  # figures only: memory of a few snapshots (issue 20)
    return attribute_in_processes(cf, ids, n)
