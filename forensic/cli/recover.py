"""``forensic recover``: the cheapest acceleration to meet a target completion."""

from __future__ import annotations

from datetime import date
from pathlib import Path

import click

from forensic.analysis.recovery.acceleration import recover
from forensic.analysis.recovery.results import DEFAULT_TIME_LIMIT, OBJECTIVES
from forensic.analysis.recovery.tables import (
    recovery_curve_table,
    recovery_json,
    recovery_plan_table,
)
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
    say,
    status,
    table_text,
    whole_read_on_error,
)
from .snapshot_check import start_check


@main.command("recover")
@casefile_argument
@click.option("--snapshot", "snapshot_id", metavar="ID", required=True, help="Snapshot whose remaining work is shortened.")
@click.option("--target", type=click.DateTime(formats=["%Y-%m-%d"]), metavar="DATE",
              help="Completion wanted on or before this date (YYYY-MM-DD).")
@click.option("--days", type=click.IntRange(min=1), metavar="N",
              help="Days to recover, in the project's delay unit (working days: of the completion's "
                   "calendar), back from the current completion.")
@click.option("--objective", type=click.Choice(OBJECTIVES), default="cost", show_default=True,
              help="cost: least total cost; count: fewest activities shortened, then least cost.")
@click.option("--time-limit", "time_limit", type=float, default=DEFAULT_TIME_LIMIT, show_default=True,
              metavar="SECONDS",
              help="Seconds for the optimiser in all; when reached, the best plan found is shown as "
                   "not proven least-cost.")
@format_options
def recover_command(
    casefile: Path, snapshot_id: str, target, days: int | None, objective: str, time_limit: float,
    as_json: bool, as_csv: bool,
) -> None:
    """Plan the cheapest way to win back days on a snapshot of CASEFILE.

    Shortens remaining activities by whole working days within their
    crash_days, at crash_cost per day (the time-cost trade-off of Kelley and
    Walker 1959, Kelley 1961 and Fulkerson 1961, solved exactly as a
    mixed-integer program in the engine's own time, every calendar included),
    and reschedules every plan with the engine. Prints the plan, the new
    completion, the cost and the time-cost curve (steps in working days of the
    completion's calendar). Give --target or --days. See docs/recovery.md.

    Example: forensic recover casefiles/riverside --snapshot U03 --days 10 --objective count

    """
    if (target is None) == (days is None):
        raise click.UsageError("give one of --target DATE and --days N")
    cf = load_lazily(casefile)  # the snapshot read here, the others checked meanwhile
    check = start_check(cf, [snapshot_id] if snapshot_id in cf.snapshot_ids else [])
    with whole_read_on_error(casefile), limit_hinted():  # a refusal worded by the whole read
        with check.cancelled_on_error():
            cf.snapshot(snapshot_id)  # read first; an unknown id is refused here
        check.finish()  # before the solver's run, which may take minutes: a bad casefile is refused at once
    wanted: date | None = target.date() if target is not None else None
    status(f"Planning the recovery on {snapshot_id} (time limit {time_limit:g} s; Ctrl-C stops) ...")
    result = recover(cf, snapshot_id, target=wanted, days=days, objective=objective, time_limit=time_limit)
    emit_xlsx([recovery_plan_table(result), recovery_curve_table(result)], cf)
    if as_json:
        emit_json(recovery_json(result))
        return
    if as_csv:
        emit(to_csv(recovery_plan_table(result)))
        return
    plan = result.plan
    say(f"{cf.project.name}: snapshot {result.snapshot_id}, data date {result.data_date.isoformat()}")
    say(f"Current completion ({result.completion_id}): {result.current_completion.isoformat()}")
    say(f"Target: {plan.target.isoformat()}; objective: {result.objective}")
    cal = result.working_days_calendar
    say(
        f"New completion (rescheduled): {plan.completion.isoformat()}, {plan.working_days_recovered} working "
        f"days of calendar {cal} ({plan.calendar_days_recovered} calendar days) recovered, cost {plan.cost:g}, "
        f"{len(plan.shortenings)} activities shortened"
    )
    say(
        f"Earliest achievable completion: {result.earliest_completion.isoformat()} "
        f"({result.max_working_days} working days of the completion's calendar {cal})\n"
    )
    if not result.proven:
        say(
            f"Not proven least-cost: the time limit of {result.time_limit:g} s was reached; the best plans "
            "found are shown (raise --time-limit to prove them).\n"
        )
    if plan.shortenings:
        emit(table_text(recovery_plan_table(result)))
    else:
        say("The current schedule already meets the target; nothing is shortened.")
    if result.curve:
        say(f"\nTime-cost curve (least cost per working day of calendar {cal} recovered):")
        emit(table_text(recovery_curve_table(result)))
    for w in result.warnings:
        say(f"warning: {w}", err=True)
    say("\nThese figures support, and do not replace, the judgement of a qualified scheduling professional.")
