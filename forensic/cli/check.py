"""``forensic check``: load and validate a casefile."""

from __future__ import annotations

from pathlib import Path

import click

from ..tables import Table, dumps_json, to_csv, to_text
from ..validation import validate_casefile
from ._base import main
from ._common import casefile_argument, emit, emit_xlsx, format_options, load, pick_format


@main.command()
@casefile_argument
@format_options
def check(casefile: Path, as_json: bool, as_csv: bool) -> None:
    """Load and validate every snapshot of CASEFILE.

    Exit status 1 with one message per problem when the casefile is invalid;
    warnings (open ends, links with no effect) are listed and do not fail it.

    Example: forensic check casefiles/riverside

    """
    cf = load(casefile)
    result = validate_casefile(cf)
    table = Table(
        "snapshots",
        ("snapshot", "role", "data_date", "activities", "links", "completion", "completion_float", "critical", "longest_path"),
        tuple(
            (s.id, s.role, s.data_date, s.activities, s.links, s.completion, s.completion_float, s.critical, s.longest_path_length)
            for s in result.snapshots
        ),
    )
    emit_xlsx([table], cf)
    fmt = pick_format(as_json, as_csv)
    if fmt == "json":
        emit(dumps_json({"valid": True, "snapshots": table.records(), "warnings": list(result.warnings)}))
        return
    if fmt == "csv":
        emit(to_csv(table))
    else:
        click.echo(f"{cf.project.name}: the casefile is valid ({len(cf.snapshots)} snapshots).")
        emit(to_text(table))
    if result.warnings:
        click.echo(f"{len(result.warnings)} warning(s):", err=True)
        for w in result.warnings:
            click.echo(f"  warning: {w}", err=True)
