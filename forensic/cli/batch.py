"""``forensic batch``: check and windows analysis over every casefile under a folder."""

from __future__ import annotations

import sys
from functools import partial
from pathlib import Path

import click

from forensic.casefile.outputs import MANIFEST
from forensic.cli.portfolio import (
    batch_table,
    check_report_dir,
    find_casefiles,
    report_names,
    run_batch,
)
from forensic.cli.portfolio_cluster import run_on_cluster
from forensic.exchange.writers import to_csv

from ._base import main
from ._common import emit, emit_json, emit_xlsx, format_options, pick_format, say, table_text


@main.command()
@click.argument("folder", metavar="FOLDER", type=click.Path(file_okay=False, path_type=Path))
@click.option("--jobs", type=click.IntRange(1, 256), default=None, help="Worker processes (default: every core).")
@click.option("--cluster", metavar="ADDRESS", default=None,
              help="Send the casefiles to the Dask distributed scheduler at ADDRESS (tcp://host:8786) "
                   "instead of the local processes; needs the 'cluster' extra and a file system shared "
                   "with the workers.")
@click.option("--report", "report_dir", type=click.Path(file_okay=False, path_type=Path), default=None,
              metavar="DIR", help="Also write each casefile's full report into DIR.")
@format_options
def batch(folder: Path, jobs: int | None, cluster: str | None, report_dir: Path | None,
          as_json: bool, as_csv: bool) -> None:
    """Check and analyse (windows, half-step, ledger) every casefile under FOLDER.

    Each casefile runs in its own process, on every core unless --jobs says
    otherwise; one failing casefile does not stop the rest. Prints a summary
    (casefile, valid, snapshots, slip, time, error); exit status 1 if any
    casefile failed.

    With --cluster the casefiles run on an existing Dask distributed cluster
    instead (docs/benchmark.md, "A portfolio beyond one machine"); the summary is the same, row for row.

    Example: forensic batch portfolio/ --jobs 2

    """
    if cluster is not None and jobs is not None:
        raise click.UsageError("--jobs is for the local processes; with --cluster the cluster's workers run the casefiles")
    paths = find_casefiles(folder)
    if not paths:
        raise click.ClickException(f"{folder}: no casefile (casefile.toml) found under this folder")
    names = {}
    if report_dir is not None:
        check_report_dir(report_dir)  # decided before anything runs (docs/robustness.md, "Outputs")
        names = report_names(paths, folder)
    with click.progressbar(length=len(paths), label=f"{len(paths)} casefiles",
                           file=sys.stderr) as bar:
        runner = None if cluster is None else partial(run_on_cluster, address=cluster)
        rows = run_batch(folder, jobs=jobs, report_dir=report_dir, progress=lambda _row: bar.update(1),
                         runner=runner)
    table = batch_table(rows)
    if names:
        click.echo(f"reports in {report_dir}, named by each casefile's path under {folder}:", err=True)
        valid = {r.casefile: r.valid for r in rows}
        for p in paths:
            failed = "" if valid[str(p)] else " (not written: the casefile failed)"
            click.echo(f"  {p} -> {names[p]}{failed}", err=True)
    # Nothing is written inside any casefile folder (forensic.casefile.outputs); the
    # manifests are named so that a refusal says "over a casefile input".
    protected = [Path(p) / MANIFEST for p in paths]
    emit_xlsx([table], protected=protected)
    fmt = pick_format(as_json, as_csv)
    if fmt == "json":
        # Each row also lists every problem of a failed casefile (file, line, key, value, message).
        # The casefiles are read in the workers: the version is stamped, inputs_sha256 stays empty.
        records = [{**rec, "problems": [{"file": p.file, "line": p.line, "key": p.key, "value": p.value,
                                         "message": p.message} for p in r.problems]}
                   for rec, r in zip(table.records(), rows, strict=True)]
        emit_json({"casefiles": records, "failed": sum(not r.valid for r in rows)}, protected=protected)
    elif fmt == "csv":
        emit(to_csv(table), protected=protected)
    else:
        emit(table_text(table), protected=protected)
        say(f"\n{sum(r.valid for r in rows)} of {len(rows)} casefiles valid and analysed.")
    if any(not r.valid for r in rows):
        raise SystemExit(1)
