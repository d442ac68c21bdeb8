"""``forensic compare``: what changed between two snapshots."""

from __future__ import annotations

from pathlib import Path

import click

from ..compare import CHANGE_KINDS, compare_json, compare_snapshots, compare_table
from ..tables import Table, dumps_json, to_csv, to_text
from ._base import main
from ._common import casefile_argument, emit, emit_xlsx, format_options, load, pick_format

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

    Example: forensic compare casefiles/riverside U01 U02 --json

    """
    cf = load(casefile)
    result = compare_snapshots(cf, old, new)
    emit_xlsx([compare_table(result)], cf)
    fmt = pick_format(as_json, as_csv)
    if fmt == "json":
        emit(dumps_json(compare_json(result)))
        return
    if fmt == "csv":
        emit(to_csv(compare_table(result)))
        return
    r = result
    click.echo(f"{cf.project.name}: {r.old_id} (data date {r.old_data_date.isoformat()}) -> "
               f"{r.new_id} (data date {r.new_data_date.isoformat()})")
    click.echo(f"Forecast completion ({r.completion_id}): {r.old_completion.isoformat()} -> "
               f"{r.new_completion.isoformat()} ({r.completion_change_days:+d} calendar days, "
               f"{r.completion_change_workdays:+d} working days)")
    click.echo(f"Completion float: {_f(r.old_completion_float)} -> {_f(r.new_completion_float)} working days")
    for sid, chains in ((r.old_id, r.old_longest_paths), (r.new_id, r.new_longest_paths)):
        for n, chain in enumerate(chains, 1):
            label = f"Longest path {sid}" + (f", chain {n}" if len(chains) > 1 else "")
            click.echo(f"{label}: " + " -> ".join(chain))
    if not r.changes:
        click.echo("\nNo changes.")
        return
    for kind in CHANGE_KINDS:
        group = r.of_kind(kind)
        if not group:
            continue
        click.echo(f"\n{_HEADINGS[kind]} ({len(group)}):")
        rows = tuple(
            ("*" if c.longest_path else "", c.activity,
             f"{c.pred} -> {c.succ}" if c.pred is not None else "", c.field, c.before, c.after, c.note)
            for c in group
        )
        emit(to_text(Table(kind, ("lp", "activity", "link", "field", "before", "after", "note"), rows)))
    click.echo("\n* on or touching the longest path of either snapshot.")


def _f(value: int | None) -> str:
    return "none (finished)" if value is None else str(value)
