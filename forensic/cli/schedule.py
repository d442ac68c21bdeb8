"""``forensic schedule``: the critical path of one snapshot."""

from __future__ import annotations

import gc
from collections.abc import Iterator
from contextlib import contextmanager
from pathlib import Path

import click

from forensic.core.engine import schedule_snapshot
from forensic.core.tables import schedule_json, schedule_table
from forensic.exchange.writers import to_csv

from ._base import main
from ._common import (
    casefile_argument,
    emit,
    emit_xlsx,
    format_options,
    limit_hinted,
    load_lazily,
    pick_format,
    say,
    stamped_json,
    table_text,
    whole_read_on_error,
)
from .snapshot_check import start_check


@main.command("schedule")
@casefile_argument
@click.option("--snapshot", "snapshot_id", metavar="ID", help="Snapshot to schedule (default: the latest).")
@format_options
def schedule_command(casefile: Path, snapshot_id: str | None, as_json: bool, as_csv: bool) -> None:
    """Schedule one snapshot of CASEFILE by the critical path method.

    Prints early and late dates, total and free float (working days of each
    activity's calendar), the critical flag, the driving predecessors and the
    longest path traced back from the completion (AACE RP 49R-06).

    Example: forensic schedule forensic-demo/riverside --snapshot U03 --json

    Example: forensic schedule forensic-demo/riverside --xlsx u10.xlsx

    """
    with _no_cycle_collection():
        _schedule_one(casefile, snapshot_id, as_json, as_csv)


@contextmanager
def _no_cycle_collection() -> Iterator[None]:
    """Python's cycle collector paused for one command (and restored after it).

    Loading and scheduling 50,000 activities allocates millions of objects
    that live to the end of the command and hold no reference cycles; the
    collector would scan them again and again (about a quarter of the
    command's time); reference counting frees them as usual. Nothing is
    frozen (:func:`gc.freeze` would keep every object alive at that moment
    out of later collections, a leak for a caller that runs commands in its
    own process, as the tests do).
    """
    was_on = gc.isenabled()
    gc.disable()
    try:
        yield
    finally:
        if was_on:
            gc.enable()


def _schedule_one(casefile: Path, snapshot_id: str | None, as_json: bool, as_csv: bool) -> None:
    cf = load_lazily(casefile)  # the snapshots read one at a time: a few held however many there are
    # Every loading command refuses a casefile with a bad snapshot: the others are checked while this one
    # is scheduled (in other processes when the casefile is large), and nothing is written before.
    check = start_check(cf, snapshot_id)
    # Its tables are read here, within the ceilings; on an error the casefile is read whole, so a bad
    # casefile is refused with every bad snapshot's problems, as when it was read whole first.
    with whole_read_on_error(casefile):
        with limit_hinted(), check.cancelled_on_error():
            snap = cf.snapshot(snapshot_id) if snapshot_id else cf.snapshots[-1]
        with limit_hinted(), check.finished_on_leaving():
            fmt = pick_format(as_json, as_csv)
            result = schedule_snapshot(cf, snap.id)
            text = stamped_json(schedule_json(result)) if fmt == "json" else None
            table = schedule_table(result, snap) if text is None else None
    if text is not None:
        # A generator: the table is built only when --xlsx asked for a workbook.
        emit_xlsx((schedule_table(result, snap) for _ in range(1)), cf)
        emit(text)
        return
    assert table is not None  # not JSON: built above
    emit_xlsx([table], cf)
    if fmt == "csv":
        emit(to_csv(table))
        return
    p = cf.project
    say(f"{p.name}: snapshot {snap.id}, data date {snap.data_date.isoformat()}")
    line = f"Forecast completion ({result.completion_id}): {result.completion.isoformat()}"
    if result.completion_float is not None:
        line += f", total float {result.completion_float} working days"
    say(line)
    if p.contract_completion is not None:
        late = (result.completion - p.contract_completion).days
        where = f"{abs(late)} calendar days {'after' if late > 0 else 'before'} it" if late else "on it"
        say(f"Contract completion: {p.contract_completion.isoformat()} (forecast {where})")
    say("Dates are inclusive working days; floats in working days of each activity's calendar.\n")
    keep = ("id", "name", "total_float", "critical", "early_start", "early_finish", "status", "late_start",
            "late_finish", "free_float", "longest_path")  # the columns kept longest at a narrow terminal
    emit(table_text(table, keep=keep))
    say(f"\nLongest path ({len(result.longest_path)} activities): " + ", ".join(result.longest_path))
    for n, chain in enumerate(result.longest_paths, 1):
        say(f"  chain {n} ({len(chain)} activities): " + " -> ".join(chain))
