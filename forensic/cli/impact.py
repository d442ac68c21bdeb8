"""``forensic impact`` (time impact analysis) and ``forensic but-for`` (collapsed as-built)."""

from __future__ import annotations

from pathlib import Path

import click

from forensic.analysis.butfor import as_built_table, but_for, but_for_json, but_for_table
from forensic.analysis.impact import ImpactResult, time_impact, time_impact_series, time_impacts
from forensic.analysis.impact_tables import (
    contemporaneous_json,
    contemporaneous_table,
    float_table,
    impact_json,
    milestones_table,
    series_json,
    series_table,
)
from forensic.core.tables import Table
from forensic.exchange.writers import to_csv

from ._base import main
from ._common import (
    casefile_argument,
    emit,
    emit_json,
    emit_xlsx,
    fit,
    format_options,
    load,
    say,
    status,
    table_text,
)

_PROGRESS_NOTE = (
    "Progress to the event's start is assumed as planned in the unimpacted schedule "
    "(work finished or in progress by its early dates)."
)


def _impact_text(r: ImpactResult) -> str:
    lines = [f"Event {r.event} into {r.into}"]
    if r.progressed_to is not None:
        lines.append(f"Progressed to {r.progressed_to.isoformat()}. {_PROGRESS_NOTE}")
    lines.append(
        f"Completion ({r.completion_id}): {r.completion_before.isoformat()} -> "
        f"{r.completion_after.isoformat()}, time impact {r.impact} {r.unit}"
    )
    if r.inserted:
        lines.append("Fragnet activities inserted: " + " ".join(r.inserted))
    for rep in r.represented:
        if rep.how == "not-represented":
            lines.append(f"{rep.event} not represented (nothing inserted): {rep.why}")
        elif rep.how != "fragnet":
            lines.append(f"{rep.event} represented as {rep.how}: {rep.why}")
    for h in r.hold_ups:
        how = next((rep.how for rep in r.represented if rep.event == h.event), "")
        lines.append(f"{h.activity} extended by {h.days} working days ({how})")
    out = "\n".join(lines) + "\n\nMilestones\n" + table_text(milestones_table(r))
    if r.float_consumed:
        out += "\nTotal float consumed or gained on the paths touched (working days)\n" + table_text(float_table(r))
    out += f"\nLongest path after ({len(r.critical_path)} activities): " + " -> ".join(r.critical_path) + "\n"
    return out


def _warn(warnings) -> None:
    for w in warnings:
        say(f"warning: {w}", err=True)


@main.command("impact")
@casefile_argument
@click.option("--event", "events", metavar="ID", multiple=True, help="Event to analyse (repeat for several).")
@click.option("--into", metavar="SNAPSHOT", help="Unimpacted snapshot (default: the last on or before the event).")
@click.option("--all", "all_events", is_flag=True, help="Every event, each alone.")
@click.option("--cumulative", is_flag=True,
              help="Also insert the events cumulatively, in date order, into one update.")
@click.option("--series", is_flag=True,
              help="Insert each event into the last update before it, carrying the result forward (MIP 3.7).")
@click.option("--progress-to-event", is_flag=True,
              help="First bring the unimpacted schedule to the event's start, as planned.")
@format_options
def impact_command(
    casefile: Path,
    events: tuple[str, ...],
    into: str | None,
    all_events: bool,
    cumulative: bool,
    series: bool,
    progress_to_event: bool,
    as_json: bool,
    as_csv: bool,
) -> None:
    """Time impact analysis: insert an event's fragnet and reschedule (AACE RP 52R-06).

    The unimpacted schedule is the snapshot whose data date is the last on or
    before the event's start, unless --into names another. The impact is in
    the project's delay unit. With several events (--event repeated, or
    --all) each is analysed alone; --cumulative adds them one after another
    in date order into one update and reports the difference from the sum
    (non-additivity). --series (AACE RP 29R-03 MIP 3.7) inserts each event
    into its own unimpacted update, carries the impacted result forward,
    and compares the running total with the windows analysis.

    An event is inserted as its fragnet, else as the working days events.csv
    states it lost (days_lost), else as the days estimated from the record;
    one that can be none of these is reported as not represented.

    Example: forensic impact forensic-demo/riverside --event EV03 --json

    """
    if not events and not all_events:
        raise click.UsageError("give --event ID (one or more) or --all")
    if events and all_events:
        raise click.UsageError("choose --event or --all, not both")
    if series and (cumulative or into):
        raise click.UsageError("--series inserts each event into its own update: not with --cumulative or --into")
    cf = load(casefile)
    ids = list(events) if events else None
    n = len(ids) if ids else len(cf.events)
    status(f"Inserting {n} event{'s' if n != 1 else ''} into the unimpacted updates (Ctrl-C stops) ...")
    if series:
        run = time_impact_series(cf, ids, progress_to_event=progress_to_event)
        _warn(run.warnings)
        emit_xlsx([contemporaneous_table(run)], cf)
        if as_json:
            emit_json(contemporaneous_json(run))
            return
        if as_csv:
            emit(to_csv(contemporaneous_table(run)))
            return
        click.echo(f"{cf.project.name}: {len(run.steps)} events, each into the last update before it "
                   f"(AACE RP 29R-03 MIP 3.7), impacts in {run.unit}")
        if progress_to_event:
            click.echo(_PROGRESS_NOTE)
        emit(table_text(contemporaneous_table(run)))
        click.echo(f"\nTotal {run.total} {run.unit}; the windows analysis measures {run.windows_total} over the "
                   f"record: a difference of {run.difference_from_windows:+d}.")
        return
    if cumulative:
        impacts = time_impacts(cf, ids, into=into, progress_to_event=progress_to_event)
        _warn([*(w for r in impacts.individual for w in r.warnings), *impacts.warnings])
        emit_xlsx([series_table(impacts)], cf)
        if as_json:
            emit_json(series_json(impacts))
            return
        if as_csv:
            emit(to_csv(series_table(impacts)))
            return
        c = impacts.cumulative
        say(f"{cf.project.name}: {len(impacts.individual)} events, impacts in {impacts.unit}")
        if progress_to_event:
            say(_PROGRESS_NOTE)
        emit(table_text(series_table(impacts)))
        say(
            f"\nCumulative into {c.into} (data date {cf.snapshot(c.into).data_date.isoformat()}): "
            f"{c.completion_before.isoformat()} -> {c.completion_after.isoformat()}, "
            f"{c.impact} {impacts.unit}. Sum of impacts alone: {impacts.sum_of_individual}; "
            f"difference (non-additivity): {impacts.non_additivity}."
        )
        return
    if ids is None:
        ids = [e.id for e in cf.events]
        if not ids:
            raise click.ClickException("the casefile has no event")
    results = [time_impact(cf, e, into=into, progress_to_event=progress_to_event) for e in ids]
    _warn(w for r in results for w in r.warnings)
    emit_xlsx([t for r in results for t in (milestones_table(r), float_table(r))], cf)
    if as_json:
        if len(results) == 1 and not all_events:
            emit_json(impact_json(results[0]))
        else:
            emit_json([impact_json(r) for r in results])
        return
    if as_csv:
        tables = [milestones_table(r) for r in results]
        rows = tuple((r.event, r.into, *row) for r, t in zip(results, tables, strict=True) for row in t.rows)
        emit(to_csv(Table("impact-milestones", ("event", "into", *tables[0].columns), rows)))
        return
    click.echo(fit("\n".join(_impact_text(r) for r in results)), nl=False)


@main.command("but-for")
@casefile_argument
@click.option("--party", metavar="ID", help="Remove every event of this party.")
@click.option("--event", metavar="ID", help="Remove this one event.")
@click.option("--snapshot", "snapshot_id", metavar="ID", help="Build the as-built from this snapshot (default: the last).")
@format_options
def but_for_command(
    casefile: Path, party: str | None, event: str | None, snapshot_id: str | None, as_json: bool, as_csv: bool
) -> None:
    """But-for analysis: collapse the as-built schedule (AACE RP 29R-03, MIP 3.8).

    Builds the as-built schedule from the last update, takes out one party's
    delays (--party), one event's (--event), or by default each party's in
    turn and then all owner delays together, reschedules, and reports the
    but-for completion and its difference from the as-built completion.

    Example: forensic but-for forensic-demo/riverside --party OWN

    """
    if party and event:
        raise click.UsageError("choose --party or --event, not both")
    cf = load(casefile)
    status("Building the as-built schedule and collapsing it (Ctrl-C stops) ...")
    report = but_for(cf, party=party, event=event, snapshot_id=snapshot_id)
    _warn([*report.as_built.warnings, *(w for c in report.cases for w in c.warnings)])
    emit_xlsx([but_for_table(report), as_built_table(report)], cf)
    if as_json:
        emit_json(but_for_json(report))
        return
    if as_csv:
        emit(to_csv(but_for_table(report)))
        return
    b = report.as_built
    say(f"{cf.project.name}: as-built from {b.source}, completion {b.completion.isoformat()}")
    say(f"Pinned where logic does not explain the start: {' '.join(b.pins) or 'none'}")
    for p, s, t, n, lag in b.relinked:
        say(f"Relinked (actual dates contradict it): {p} -> {s} {t} now {n}" + (f" lag {lag}" if n != "dropped" else ""))
    say("\nDelays in the as-built")
    emit(table_text(as_built_table(report)))
    say("\nBut-for cases")
    emit(table_text(but_for_table(report)))
    for e in b.events:
        if e.how == "not-represented":
            say(f"{e.event} not represented: {e.why}")
    if report.overlap is not None:
        say(f"\nOverlap: {report.overlap}. {report.overlap_note}")
