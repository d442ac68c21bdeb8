"""``forensic compare``: what changed between two snapshots."""

from __future__ import annotations

from pathlib import Path

import click

from forensic.analysis.compare import CHANGE_KINDS, compare_json, compare_snapshots, compare_table
from forensic.core.tables import Table
from forensic.exchange.writers import to_csv

from ._base import main
from ._common import (
    casefile_argument,
    emit,
    emit_json,
    emit_xlsx,
    format_options,
    limit_hinted,
    load_lazily,
    pick_format,
    say,
    table_text,
    whole_read_on_error,
)
from .snapshot_check import start_check

_HEADINGS = {
    "activity-added": "Activities added",
    "activity-deleted": "Activities deleted",
    "name": "Names changed",
    "duration": "Original durations changed",
    "remaining": "Remaining durations changed",
    "calendar": "Calendars changed",
    "constraint": "Constraints changed",
    "party": "Parties changed",
    "area": "Areas changed",
    "link-added": "Links added",
    "link-deleted": "Links deleted",
    "link-changed": "Links changed",
    "actual-revised": "Actual dates revised after they were reported",
    "progress-backwards": "Progress that went backwards",
    "reopened": "Finished activities reopened",
    "out-of-sequence": "Progress reported out of sequence",
    "longest-path-joined": "Joined the longest path",
    "longest-path-left": "Left the longest path",
    "completion-moved": "Forecast completion moved",
    "completion-float": "Completion float changed",
}


@main.command("compare")
@casefile_argument
@click.argument("old", metavar="OLD")
@click.argument("new", metavar="NEW")
@format_options
def compare_command(casefile: Path, old: str, new: str, as_json: bool, as_csv: bool) -> None:
    """List what changed in CASEFILE from snapshot OLD to snapshot NEW.

    Changes are grouped by kind: activities added and deleted; names,
    durations, calendars, constraints, parties and areas edited; links added,
    deleted and changed; actual dates revised after they were reported;
    progress that went backwards; reopened work; progress out of sequence; the longest path in each and
    who joined or left it; and the move in forecast completion and its float.
    A `*` marks a change on or touching the longest path of either snapshot
    (AACE RP 29R-03, sec. 2.3; AACE RP 49R-06).

    Example: forensic compare forensic-demo/riverside U01 U02 --json

    """
    cf = load_lazily(casefile)  # the two snapshots read here, the others checked meanwhile
    check = start_check(cf, [i for i in (old, new) if i in cf.snapshot_ids])
    with whole_read_on_error(casefile), limit_hinted():  # a refusal worded by the whole read
        with check.cancelled_on_error():
            for sid in (old, new):
                cf.snapshot(sid)  # read first; an unknown id is refused here
        with check.finished_on_leaving():
            result = compare_snapshots(cf, old, new)
    if result.old_data_date > result.new_data_date:
        # Allowed (a reviewer may want it), but almost always a slip: say so on stderr.
        click.echo(f"warning: the order is reversed: OLD {result.old_id} (data date {result.old_data_date.isoformat()}) "
                   f"is later than NEW {result.new_id} (data date {result.new_data_date.isoformat()}), so every change "
                   f"reads backwards; give the older snapshot first (forensic compare CASEFILE {result.new_id} "
                   f"{result.old_id})", err=True)
    emit_xlsx([compare_table(result)], cf)
    fmt = pick_format(as_json, as_csv)
    if fmt == "json":
        emit_json(compare_json(result))
        return
    if fmt == "csv":
        emit(to_csv(compare_table(result)))
        return
    r = result
    say(f"{cf.project.name}: {r.old_id} (data date {r.old_data_date.isoformat()}) -> "
               f"{r.new_id} (data date {r.new_data_date.isoformat()})")
    say(f"Forecast completion ({r.completion_id}): {r.old_completion.isoformat()} -> "
               f"{r.new_completion.isoformat()} ({r.completion_change_days:+d} calendar days, "
               f"{r.completion_change_workdays:+d} working days)")
    say(f"Completion float: {_f(r.old_completion_float)} -> {_f(r.new_completion_float)} working days")
    for sid, chains in ((r.old_id, r.old_longest_paths), (r.new_id, r.new_longest_paths)):
        for n, chain in enumerate(chains, 1):
            label = f"Longest path {sid}" + (f", chain {n}" if len(chains) > 1 else "")
            say(f"{label}: " + " -> ".join(chain))
    if not r.changes:
        say("\nNo changes.")
        return
    for kind in CHANGE_KINDS:
        group = r.of_kind(kind)
        if not group:
            continue
        say(f"\n{_HEADINGS[kind]} ({len(group)}):")
        rows = tuple(
            ("*" if c.longest_path else "", c.activity,
             f"{c.pred} -> {c.succ}" if c.pred is not None else "", c.field, c.before, c.after, c.note)
            for c in group
        )
        table = Table(kind, ("lp", "activity", "link", "field", "before", "after", "note"), rows)
        emit(table_text(table, keep=("lp", "activity", "field", "before", "after", "link")))
    say("\n* on or touching the longest path of either snapshot.")


def _f(value: int | None) -> str:
    return "none (finished)" if value is None else str(value)
