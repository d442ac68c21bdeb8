"""``forensic demo``: copy the demo casefile and run the main job on it."""

from __future__ import annotations

from pathlib import Path

import click

from forensic.analysis.attribution.delay import analyse_delay
from forensic.casefile.demo import DEMO_NAME, copy_demo
from forensic.casefile.outputs import atomic_write, check_folder, refuse_casefile_paths
from forensic.casefile.validation import validate_casefile

from ..report import DEFAULT_TEMPLATE, build_report
from ._base import main
from ._common import load


@main.command()
@click.option(
    "--out",
    type=click.Path(file_okay=False, path_type=Path),
    default=Path("forensic-demo"),
    show_default=True,
    help="Folder to copy the demo casefile into.",
)
def demo(out: Path) -> None:
    """Copy the demo casefile to a folder, run the main job on it and write its report.

    Nothing is written inside the installed package; the copy is yours to
    read, change and re-run.

    Example: forensic demo --out /tmp/forensic-demo

    """
    # Refused before anything is copied: never inside a casefile folder (docs/robustness.md, "Outputs").
    refuse_casefile_paths(out, ())
    if (out / DEMO_NAME).exists():
        refuse_casefile_paths(out / f"{DEMO_NAME}-{DEFAULT_TEMPLATE}.pdf", ())
    elif out.exists():  # a new --out folder is created by the copy; an existing one is checked first
        check_folder(out / DEMO_NAME, what="demo casefile")
    folder = copy_demo(out)
    click.echo(f"Demo casefile copied to {folder}")
    cf = load(folder)
    result = validate_casefile(cf)
    click.echo(f"{cf.project.name}: valid, {len(cf.snapshots)} snapshots, {len(result.warnings)} warning(s).")
    base = result.schedules[0]
    last = result.schedules[-1]  # validation already scheduled every snapshot
    click.echo(f"Baseline {cf.baseline.id} forecasts completion on {base.completion.isoformat()}.")
    click.echo(
        f"Latest update {last.snapshot_id} (data date {last.data_date.isoformat()}) forecasts "
        f"{last.completion.isoformat()}, {(last.completion - base.completion).days} calendar days later."
    )
    for n, chain in enumerate(last.longest_paths, 1):
        label = "Longest path now" + (f", chain {n}" if len(last.longest_paths) > 1 else "")
        click.echo(f"{label}: " + " -> ".join(chain))
    delay = analyse_delay(cf)
    t = delay.ledger.total
    unit = cf.project.delay_unit.replace("-", " ")
    click.echo(
        f"Windows analysis ({len(delay.ledger.windows)} windows, {unit}): slip {t.total} = "
        f"excusable and compensable {t.excusable_compensable}, excusable not compensable "
        f"{t.excusable_noncompensable}, not excusable {t.non_excusable}, concurrent {t.concurrent}, "
        f"gains {t.gains}, unattributed revision {t.unattributed_revision}, unassigned {t.unassigned}."
    )
    report = out / f"{folder.name}-{DEFAULT_TEMPLATE}.pdf"
    pdf = build_report(cf, DEFAULT_TEMPLATE, command=f"forensic report {folder.name} --template {DEFAULT_TEMPLATE}")
    atomic_write(report, pdf, [folder / rel for rel in cf.inputs])
    click.echo(f"Report written to {report}")
    click.echo(f"Next: forensic windows {folder}   (the window table, contributors and the ledger)")
    click.echo("The results support, and do not replace, the judgement of a qualified scheduling professional.")
