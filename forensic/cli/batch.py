"""``forensic batch``: check and windows analysis over every casefile under a folder."""

from __future__ import annotations

import sys
from pathlib import Path

import click

from ..batch import batch_table, find_casefiles, run_batch
from ..tables import to_csv
from ._base import main
from ._common import emit, emit_json, emit_xlsx, format_options, pick_format, say, table_text


@main.command()
@click.argument("folder", metavar="FOLDER", type=click.Path(file_okay=False, path_type=Path))
@click.option("--jobs", type=click.IntRange(1, 256), default=None, help="Worker processes (default: every core).")
@click.option("--report", "report_dir", type=click.Path(file_okay=False, path_type=Path), default=None,
              metavar="DIR", help="Also write each casefile's full report into DIR.")
@format_options
def batch(folder: Path, jobs: int | None, report_dir: Path | None, as_json: bool, as_csv: bool) -> None:
    """Check and analyse (windows, half-step, ledger) every casefile under FOLDER.

    Each casefile runs in its own process, on every core unless --jobs says
    otherwise; one failing casefile does not stop the rest. Prints a summary
    (casefile, valid, snapshots, slip, time, error); exit status 1 if any
    casefile failed.

    Example: forensic batch portfolio/ --jobs 2

    """
    paths = find_casefiles(folder)
    if not paths:
        raise click.ClickException(f"{folder}: no casefile (casefile.toml) found under this folder")
    if report_dir is not None and not report_dir.is_dir():
        raise click.ClickException(f"--report {report_dir}: no such folder; create it first")
    with click.progressbar(length=len(paths), label=f"{len(paths)} casefiles",
                           file=sys.stderr) as bar:
        rows = run_batch(folder, jobs=jobs, report_dir=report_dir, progress=lambda _row: bar.update(1))
    table = batch_table(rows)
    # The casefiles are loaded in the workers, so protect every file of every
    # casefile folder found: no output may land over one of them.
    protected = [f for p in paths for f in Path(p).rglob("*") if f.is_file()]
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
