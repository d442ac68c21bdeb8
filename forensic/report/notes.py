"""Explanatory sentences that keep a figure from misleading: why counts differ, key dates, float to the contract.

Used by the summary, float-erosion and longest-path sections
(:mod:`forensic.report.sections`). They count rows of the engine's results
and read the trend; every date and float is the analysis's own.
"""

from __future__ import annotations

from collections.abc import Sequence

from reportlab.platypus import Flowable

from forensic.analysis.nearcritical import KEY_DATE_CONSTRAINTS
from forensic.analysis.trend import SnapshotTrend, delay_between

from .narrative import (
    ReportContext,
    activity_name,
    common_fields,
    count_words,
    critical_counts,
    days_words,
    float_words,
    join_words,
    long_date,
    text_or_none,
)
from .pdf import paragraphs
from .templates import Section

__all__ = ["contract_float_sentence", "critical_notes", "key_date_words"]


def critical_notes(ctx: ReportContext, section: Section, row: SnapshotTrend) -> list[Flowable]:
    """Say why the critical count and the longest path differ at one snapshot, when they do."""
    res = ctx.trend.schedules[[r.snapshot_id for r in ctx.trend.snapshots].index(row.snapshot_id)]
    c = critical_counts(res, row.longest_path)
    crit = ctx.casefile.project.critical_float
    reasons = []
    if c.off_path_negative:
        reasons.append(f"{c.off_path_negative} with negative float, held by a key date or a constraint earlier than "
                       "the work can finish, and so critical to that date rather than to the completion")
    if c.off_path - c.off_path_negative:
        reasons.append(f"{c.off_path - c.off_path_negative} with a total float of at most {float_words(crit)} on a path "
                       "that ties with the longest path or meets it on another calendar")
    if c.path_float_min is None:
        path_float = ""
    elif c.path_float_min == c.path_float_max:
        path_float = float_words(c.path_float_min)
    else:
        path_float = f"{c.path_float_min} to {float_words(c.path_float_max)}"
    fields = common_fields(ctx)
    fields.update(
        snapshot=row.snapshot_id, critical=c.critical, critical_float=crit, path_count=count_words(c.path_count, "activity", "activities"),
        off_path=c.off_path, off_path_reasons=join_words(reasons), path_not_critical=c.path_not_critical, path_float=path_float,
    )
    out: list[Flowable] = []
    if c.off_path:
        out += paragraphs(text_or_none(ctx, section, "critical_off_path", fields))
    if c.path_not_critical:
        out += paragraphs(text_or_none(ctx, section, "path_not_critical", fields))
    return out


def key_date_words(ctx: ReportContext) -> list[str]:
    """Each key milestone that is late against its key date or lost float in the latest update, for reading.

    A key milestone is late when its forecast is after the date of its
    finish-by (or finish-fixed, start-by, start-fixed) constraint in the
    latest update, the contractual or sectional date it carries (casefile
    format, Constraints); it lost float when its total float fell from the
    update before. Finished milestones are left out. The days late are in
    the project's delay unit (:func:`forensic.analysis.trend.delay_between`).
    """
    t = ctx.trend
    if len(t.snapshots) < 2:
        return []
    last, prev = t.snapshots[-1], t.snapshots[-2]
    snap = ctx.casefile.snapshot(last.snapshot_id)
    words = []
    for m in t.milestones:
        tf, when = last.milestone_floats.get(m), last.milestone_dates.get(m)
        act = snap.activities.get(m)
        if tf is None or when is None or act is None:
            continue
        parts = []
        if act.constraint in KEY_DATE_CONSTRAINTS and act.constraint_date is not None \
                and when > act.constraint_date:
            late = delay_between(ctx.casefile, act.constraint_date, when)
            parts.append(f"{days_words(t.delay_unit, late)} after its key date of {long_date(act.constraint_date)}")
        before = prev.milestone_floats.get(m)
        if before is not None and tf < before:
            parts.append(f"{float_words(before - tf)} of float lost since {prev.snapshot_id}")
        if parts:
            words.append(f"{activity_name(ctx.casefile, m, last.snapshot_id)} ({m}), forecast {long_date(when)}, "
                         f"total float {float_words(tf)}: " + " and ".join(parts))
    return words


def contract_float_sentence(ctx: ReportContext, section: Section, mid: str, rows: Sequence[SnapshotTrend]) -> str | None:
    """The float of a milestone to its contractual date, first and last in scope (beside the network float).

    Network float is measured against the schedule's own completion, which
    moves as the project slips; float to the contractual date (the contract
    completion, or a key date's constraint) is negative when the forecast is
    late (:func:`forensic.analysis.trend.contract_float`; GAO-16-89G best practice 6).
    """
    when = ctx.trend.contract_dates.get(mid)
    have = [r for r in rows if r.contract_floats.get(mid) is not None]
    if when is None or not have:
        return None
    a, b = have[0], have[-1]
    fields = common_fields(ctx)
    fields.update(
        milestone=mid, name=activity_name(ctx.casefile, mid, b.snapshot_id),
        contract_date=long_date(when), first_snapshot=a.snapshot_id, last_snapshot=b.snapshot_id,
        first_float=float_words(a.contract_floats[mid]), last_float=float_words(b.contract_floats[mid]),
        network_float=float_words(b.completion_float if mid == b.completion_id else b.milestone_floats.get(mid)),
    )
    return text_or_none(ctx, section, "contract", fields)
