"""``forensic import``: build a casefile from spreadsheet exports described by a mapping."""

from __future__ import annotations

from pathlib import Path

import click

from forensic.casefile.reading import Limits
from forensic.core.errors import LimitExceeded
from forensic.exchange.importer.importing import import_casefile

from ._base import main
from ._common import limit_hint


@main.command("import")
@click.argument("mapping", metavar="MAPPING.toml", type=click.Path(path_type=Path, dir_okay=False))
@click.option("--out", required=True, type=click.Path(path_type=Path, file_okay=False), metavar="CASEFILE_DIR",
              help="The casefile folder to create (new, or empty).")
@click.pass_context
def import_command(ctx: click.Context, mapping: Path, out: Path) -> None:
    """Build a casefile in CASEFILE_DIR from the CSV or XLSX files MAPPING.toml describes.

    The mapping names the source files or sheets of each snapshot, their
    column names, date formats, relationship codes, units and the project
    settings (docs/import-export.md). The casefile is loaded and every
    snapshot scheduled before it is moved into place; nothing is written if
    anything is wrong. What was dropped or defaulted is listed. The
    group's --max-file-mb, --max-activities and --max-links ceilings apply
    to the mapping and every source (give them before "import").

    Example: forensic import examples/import/mapping.toml --out kestrel

    """
    try:
        report = import_casefile(mapping, out, limits=ctx.find_object(Limits))
    except LimitExceeded as exc:
        raise click.ClickException(f"{exc}\n{limit_hint(exc)}") from None
    cf = report.casefile
    acts = sum(len(s.activities) for s in cf.snapshots)
    links = sum(len(s.links) for s in cf.snapshots)
    click.echo(f"wrote {report.out}: {len(cf.snapshots)} snapshots, {acts} activities, {links} links, "
               f"{len(cf.events)} events, {len(cf.fragnets)} fragnets; every snapshot schedules.")
    if report.notes:
        click.echo("Dropped or defaulted:")
        for note in report.notes:
            click.echo(f"  {note}")
    for w in report.warnings:
        click.echo(f"warning: {w}", err=True)
    click.echo(f"Next: forensic check {report.out} (or forensic schedule {report.out})")
