"""``forensic report``: the PDF narrative report of a casefile."""

from __future__ import annotations

from pathlib import Path

import click

from forensic.casefile.outputs import atomic_write, check_output

from ..report import DEFAULT_TEMPLATE, build_report, builtin_templates, load_template
from ._base import main
from ._common import casefile_argument, load
from ._progress import status_printer


@main.command("report")
@casefile_argument
@click.option(
    "--template",
    "template_name",
    default=DEFAULT_TEMPLATE,
    show_default=True,
    metavar="NAME",
    help=f"A shipped template ({', '.join(builtin_templates()) or 'none found'}) or a path to your own .toml.",
)
@click.option(
    "--out",
    type=click.Path(dir_okay=False, path_type=Path),
    help="PDF file to write (default: <casefile folder>-<template>.pdf in the current folder).",
)
@click.option(
    "--recover-days",
    type=click.IntRange(min=1),
    metavar="N",
    help="Add the acceleration analysis: the least-cost plan to recover N days (delay unit) on the latest update.",
)
def report_command(casefile: Path, template_name: str, out: Path | None, recover_days: int | None) -> None:
    """Write the PDF narrative report of CASEFILE.

    The template chooses the sections, their order, headings and wording
    (see report_templates/README.md). The same casefile, template and
    settings give a byte-identical PDF; the file is written atomically and
    never over a casefile input.

    Example: forensic report forensic-demo/riverside --template monthly --out riverside-monthly.pdf

    """
    template = load_template(template_name)
    if out is None:
        out = Path(f"{casefile.resolve().name}-{template.name}.pdf")
    check_output(out)  # refused before the casefile is read (docs/robustness.md, "Outputs")
    cf = load(casefile)
    shown = template_name if not template_name.endswith(".toml") else Path(template_name).name
    command = f"forensic report {casefile.resolve().name} --template {shown}"
    if recover_days is not None:
        command += f" --recover-days {recover_days}"
    pdf = build_report(cf, template, command=command, recover_days=recover_days, progress=status_printer("report"))
    protected = [cf.root / rel for rel in cf.inputs] if cf.root is not None else []
    atomic_write(out, pdf, protected)
    click.echo(f"wrote {out} ({template.title}, {len(pdf) // 1024} KiB)", err=True)
