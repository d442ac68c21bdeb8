"""``forensic export``: every table of a casefile to a workbook, a CSV folder and/or JSON."""

from __future__ import annotations

import json
from pathlib import Path

import click

from forensic.casefile.outputs import atomic_write, check_output
from forensic.exchange.export import (
    casefile_tables,
    check_csv_dir,
    tables_json,
    to_xlsx,
    write_csv_dir,
)
from forensic.exchange.writers import dumps_json

from ._base import main
from ._common import casefile_argument, load, provenance
from ._progress import status_printer


@main.command("export")
@casefile_argument
@click.option("--xlsx", type=click.Path(path_type=Path, dir_okay=False), metavar="FILE",
              help="One formatted workbook with a sheet per table.")
@click.option("--csv-dir", type=click.Path(path_type=Path, file_okay=False), metavar="DIR",
              help="A folder with one CSV file per table (created if needed).")
@click.option("--json", "json_file", type=click.Path(path_type=Path, dir_okay=False), metavar="FILE",
              help="One JSON file with every table (keys in docs/import-export.md).")
@click.option("--recover-days", type=click.IntRange(min=1), metavar="N",
              help="Also plan a recovery of N days (the project's delay unit) and export the plan.")
@click.option("--recover-snapshot", metavar="ID", help="Snapshot for --recover-days (default: the latest).")
@click.option("--no-inputs", is_flag=True, help="Leave out the input tables (activities, links, events, fragnets).")
def export_command(casefile: Path, xlsx: Path | None, csv_dir: Path | None, json_file: Path | None,
                   recover_days: int | None, recover_snapshot: str | None, no_inputs: bool) -> None:
    """Run every analysis on CASEFILE and write all their tables.

    Tables: the inputs (activities and links per snapshot, events,
    fragnets), the schedule of each snapshot, the quality scorecard, the
    comparison of each update with the one before, windows, contributors, the
    ledger, as-planned vs as-built, the time impact of each event, but-for,
    and a recovery plan with --recover-days. Analyses that cannot run on this
    casefile are listed and skipped. Text cells are neutralised against
    formula injection; workbook dates are date cells.

    Example: forensic export forensic-demo/riverside --xlsx riverside.xlsx --csv-dir riverside-tables

    """
    if not (xlsx or csv_dir or json_file):
        raise click.UsageError("give at least one of --xlsx FILE, --csv-dir DIR and --json FILE")
    if recover_snapshot and recover_days is None:
        raise click.UsageError("--recover-snapshot needs --recover-days N")
    cf = load(casefile)
    protected = [cf.root / rel for rel in cf.inputs] if cf.root is not None else []
    # Every refusal is decided before any analysis runs and before anything is written.
    files = [f for f in (xlsx, json_file) if f]
    if len(files) == 2 and check_output(files[0]) == check_output(files[1]):
        raise click.UsageError("--xlsx and --json name the same file")
    for f in files:
        check_output(f, protected)
    if csv_dir:
        folder = check_csv_dir(csv_dir, protected)
        if any(check_output(f).is_relative_to(folder) for f in files):
            raise click.UsageError("--xlsx and --json go outside the --csv-dir folder (it is replaced whole)")
    result = casefile_tables(cf, recover_days=recover_days, recover_snapshot=recover_snapshot,
                             inputs=not no_inputs, progress=status_printer("export"))
    for line in result.skipped:
        click.echo(f"skipped: {line}", err=True)
    if xlsx:
        atomic_write(xlsx, to_xlsx(result.tables, title=cf.project.name), protected)
        click.echo(f"wrote {xlsx} ({len(result.tables)} sheets)", err=True)
    if csv_dir:
        paths = write_csv_dir(result.tables, csv_dir, protected)
        click.echo(f"wrote {len(paths)} CSV files to {csv_dir}", err=True)
    if json_file:
        doc = {**json.loads(tables_json(result.tables)), **provenance(cf)}  # traced like every JSON output
        atomic_write(json_file, dumps_json(doc), protected)
        click.echo(f"wrote {json_file}", err=True)
