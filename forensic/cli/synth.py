"""``forensic synth``: write a synthetic casefile (for scale tests and the benchmark)."""

from __future__ import annotations

import sys
from pathlib import Path

import click

from forensic.casefile.synthetic import generate_casefile
from forensic.casefile.writing import check_new_folder, write_new_casefile

from ._base import main


@main.command()
@click.argument("out_dir", metavar="OUT_DIR", type=click.Path(file_okay=False, path_type=Path))
@click.option("--activities", type=click.IntRange(10, 1_000_000), default=1000, show_default=True,
              help="Activities in the baseline (about).")
@click.option("--updates", type=click.IntRange(0, 240), default=12, show_default=True,
              help="Monthly updates after the baseline.")
@click.option("--seed", type=int, default=0, show_default=True, help="Random seed; the same seed gives the same files.")
@click.option("--links-per-activity", type=click.FloatRange(1.0, 10.0), default=2.0, show_default=True,
              help="Links per activity.")
def synth(out_dir: Path, activities: int, updates: int, seed: int, links_per_activity: float) -> None:
    """Write an invented casefile of a large programme to OUT_DIR (new or empty).

    Areas and phases of work chains with cross-links of every type, leads and
    lags, three calendars, constraints and milestones, and a run of updates
    with simulated progress, slips and revisions (docs/benchmark.md). The
    folder appears complete or not at all.

    Example: forensic synth /tmp/big --activities 20000 --updates 24 --seed 1

    """
    check_new_folder(out_dir)
    with click.progressbar(length=updates + 1, label="Simulating updates", file=sys.stderr) as bar:
        state = {"done": 0}

        def tick(done: int, total: int) -> None:
            bar.update(done - state["done"])
            state["done"] = done

        cf = generate_casefile(activities, updates=updates, seed=seed,
                               links_per_activity=links_per_activity, progress=tick)
    click.echo("Writing files ...", err=True)
    folder = write_new_casefile(cf, out_dir)
    last = cf.snapshots[-1]
    click.echo(
        f"wrote {folder}: {len(cf.snapshots)} snapshots, {len(last.activities)} activities and "
        f"{len(last.links)} links in the last, {len(cf.events)} events"
    )
