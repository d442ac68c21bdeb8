"""``forensic check``: load and validate a casefile; with ``--quality``, the quality scorecard."""

from __future__ import annotations

from pathlib import Path

import click

from forensic.analysis.quality.assessment import assess_casefile
from forensic.analysis.quality.checks import QualityCheck
from forensic.analysis.quality.tables import quality_json, quality_table
from forensic.casefile.validation import validate_casefile
from forensic.core.errors import MAX_LISTED, ForensicError, printable
from forensic.core.model import Casefile
from forensic.core.tables import Table
from forensic.exchange.writers import to_csv

from ._base import main
from ._common import (
    casefile_argument,
    emit,
    emit_json,
    emit_xlsx,
    format_options,
    load,
    pick_format,
    say,
    status,
    table_text,
)


@main.command()
@casefile_argument
@click.option("--quality", is_flag=True,
              help="Score each snapshot: the DCMA 14-point assessment and practitioners' checks.")
@click.option("--snapshot", "snapshot_ids", metavar="ID", multiple=True,
              help="With --quality: only this snapshot (repeat for more; default: all).")
@format_options
def check(casefile: Path, quality: bool, snapshot_ids: tuple[str, ...], as_json: bool, as_csv: bool) -> None:
    """Load and validate every snapshot of CASEFILE.

    Exit status 1 with one message per problem when the casefile is invalid;
    warnings (open ends, links with no effect) are listed and do not fail it.

    With --quality, print a scorecard per snapshot instead: the DCMA 14-point
    assessment (DCMA-EA PAM 200.1, October 2012) with its thresholds, and
    practitioners' checks (open ends, out-of-sequence progress, ...). Each
    check shows its count, denominator, threshold, result and the failing
    activities. A failed check is a finding to review, not a verdict.

    Examples:

      forensic check forensic-demo/riverside

      forensic check forensic-demo/riverside --quality --snapshot U02 --json

    """
    if snapshot_ids and not quality:
        raise click.UsageError("--snapshot needs --quality")
    fmt = pick_format(as_json, as_csv)
    status(f"Loading {casefile} ...")
    try:
        cf = load(casefile)
        if not quality:
            status(f"Scheduling {len(cf.snapshots)} snapshots ...")
            result = validate_casefile(cf)
    except (ForensicError, click.ClickException) as exc:
        if fmt != "json":
            raise
        _invalid_json(casefile, exc)
        raise
    if quality:
        _quality(cf, snapshot_ids, fmt)
        return
    table = Table(
        "snapshots",
        ("snapshot", "role", "data_date", "activities", "links", "completion", "completion_float", "critical", "longest_path"),
        tuple(
            (s.id, s.role, s.data_date, s.activities, s.links, s.completion, s.completion_float, s.critical, s.longest_path_length)
            for s in result.snapshots
        ),
    )
    emit_xlsx([table], cf)
    if fmt == "json":
        emit_json({"valid": True, "snapshots": table.records(), "warnings": list(result.warnings)})
        return
    if fmt == "csv":
        emit(to_csv(table))
    else:
        say(f"{cf.project.name}: the casefile is valid ({len(cf.snapshots)} snapshots).")
        emit(table_text(table))
    if result.warnings:
        say(f"{len(result.warnings)} warning(s):", err=True)
        for w in result.warnings[:MAX_LISTED]:
            say(f"  warning: {printable(w)}", err=True)
        if len(result.warnings) > MAX_LISTED:  # --json lists them all
            say(f"  ... and {len(result.warnings) - MAX_LISTED} more warnings not listed "
                       "(--json lists every one)", err=True)


def _problem_records(exc: Exception) -> list[dict[str, object]]:
    """Each problem as ``{"file", "line", "key", "value", "message"}`` (``InputProblem``'s fields)."""
    cause = exc.__context__ if isinstance(exc, click.ClickException) else exc  # a limit hit, re-worded
    problems = getattr(cause, "problems", None) or getattr(exc, "problems", None)
    if problems:
        return [{"file": p.file, "line": p.line, "key": p.key, "value": p.value, "message": p.message}
                for p in problems]
    # An error with no file position (a folder not found, a schedule that cannot be computed).
    message = exc.format_message() if isinstance(exc, click.ClickException) else str(exc)
    return [{"file": None, "line": None, "key": None, "value": None, "message": message}]


def _invalid_json(casefile: Path, exc: Exception) -> None:
    """``check --json`` on an invalid casefile: ``{"valid": false, "problems": [...]}`` on stdout.

    The caller then re-raises, so the ``Error: ...`` lines still reach stderr
    and the exit status is 1. The casefile did not load, so every file under
    its folder is protected from ``--out``.
    """
    folder = Path(casefile)
    protected = [f for f in folder.rglob("*") if f.is_file()] if folder.is_dir() else []
    if folder.is_file():
        protected.append(folder)
    emit_json({"valid": False, "problems": _problem_records(exc)}, protected=protected)


def _limit(c: QualityCheck) -> str:
    if not c.comparison:
        return ""
    unit = "%" if c.unit == "percent" else "" if c.unit == "index" else " wd"
    limit = f"{c.limit:g}"
    return f"{c.comparison} {limit}{unit}"


def _shown(c: QualityCheck) -> str:
    if c.value is None:
        return ""
    return f"{c.value:g}%" if c.unit == "percent" else f"{c.value:g}"


def _quality(cf: Casefile, snapshot_ids: tuple[str, ...], fmt: str) -> None:
    reports = assess_casefile(cf, snapshot_ids or None)
    emit_xlsx([quality_table(reports)], cf)
    if fmt == "json":
        emit_json(quality_json(reports))
        return
    if fmt == "csv":
        emit(to_csv(quality_table(reports)))
        return
    say(f"{cf.project.name}: schedule quality (DCMA-EA PAM 200.1, Oct 2012; practitioners' checks)")
    for r in reports:
        n_fail = len(r.failed)
        say(
            f"\nSnapshot {r.snapshot_id}, data date {r.data_date.isoformat()}: {r.incomplete_tasks} "
            f"incomplete tasks, {n_fail} check(s) failed (baseline {r.baseline_id})"
        )
        rows = tuple(
            (c.number if c.number is not None else "-", c.key, c.count, c.denominator, _shown(c), _limit(c),
             c.status, " ".join(c.activities[:6]) + (" …" if len(c.activities) > 6 else ""))
            for c in r.checks
        )
        table = Table("quality", ("no.", "check", "count", "of", "value", "threshold", "result", "activities"), rows)
        emit(table_text(table, max_width=48))
        for c in r.checks:
            if c.number in (12, 13) and c.note:
                say(f"  {c.number}: {c.note}")
    say(
        "\nThresholds of points 1-14 are DCMA-EA PAM 200.1's; the others are common practice. "
        "The scorecard supports, and does not replace, a scheduling professional's review."
    )
