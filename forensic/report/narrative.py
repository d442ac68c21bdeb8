"""The generated narrative: sentences filled from the analyses' result objects.

The wording is the template's; this module picks which sentence applies
(later, earlier or unchanged; eroded, gained or steady) and supplies the
placeholder values, formatted for reading: dates as "4 May 2026", days as
whole numbers with the unit in the right number ("1 calendar day",
"12 working days"). Every value comes from a result object; the only
arithmetic here is choosing the sign words and taking absolute values for
the reader ("14 days later" rather than "+14 days").
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from datetime import date, timedelta
from typing import Any

from forensic.analysis.trend import SnapshotTrend, TrendResult
from forensic.core.model import Casefile
from forensic.core.version import __version__

from .templates import Section, Template, fill

__all__ = [
    "MONTHS",
    "CriticalCounts",
    "count_words",
    "critical_counts",
    "ReportContext",
    "common_fields",
    "long_date",
    "days_words",
    "join_words",
    "milestone_sentence",
    "party_words",
    "move_sentence",
    "path_words",
    "short_date",
    "unit_words",
    "window_last_day",
]

MONTHS = (
    "January", "February", "March", "April", "May", "June",
    "July", "August", "September", "October", "November", "December",
)


@dataclass(frozen=True, slots=True)
class ReportContext:
    """Everything a section renders from: the casefile, the template, the results, the run."""

    casefile: Casefile
    template: Template
    trend: TrendResult
    command: str
    font: str
    version: str = __version__
    delay: Any = None  # forensic.analysis.attribution.delay.DelayAnalysis, when a section needs it
    impacts: Any = None  # forensic.analysis.impact.ImpactSeries
    recovery: Any = None  # forensic.analysis.recovery.RecoveryResult, when --recover-days was given
    recover_days: int | None = None
    quality: Any = None  # tuple of forensic.analysis.quality.QualityReport, one per snapshot
    comparisons: Any = None  # tuple of forensic.analysis.compare.Comparison, one per consecutive pair
    butfor: Any = None  # forensic.analysis.butfor.ButForReport
    asbuilt: Any = None  # tuple of forensic.analysis.asbuilt.AsBuiltRow
    eot: Any = None  # forensic.analysis.eot.DelaySummary, when a section needs it
    left_out: frozenset[str] = frozenset()  # section kinds with nothing to show for this casefile


@dataclass(frozen=True, slots=True)
class CriticalCounts:
    """Why the count of critical activities and the longest path can differ, counted from one schedule.

    ``critical`` counts the engine's critical flags (total float at most the
    critical float, work not finished); ``path_count`` the activities of the
    longest path. ``off_path`` are critical activities not on the longest
    path, ``off_path_negative`` those of them with negative float (held by a
    key date or constraint earlier than the work can finish, so critical to
    that date rather than to the completion). ``path_not_critical`` are
    unfinished longest-path activities whose float is above the critical
    float, with the smallest and largest such float in working days: float
    is counted on each activity's own calendar, and where paths on different
    working weeks meet, the chain that drives the completion can keep some
    float. AACE RP 49R-06 (from memory: in schedules with several calendars
    or constraints, lowest float does not identify the critical path; the
    longest path does).
    """

    critical: int
    path_count: int
    off_path: int
    off_path_negative: int
    path_not_critical: int
    path_float_min: int | None
    path_float_max: int | None


def critical_counts(result: Any, longest_path: Sequence[str]) -> CriticalCounts:
    """Count the critical activities against the longest path of one :class:`~forensic.core.engine.ScheduleResult`."""
    on_path = set(longest_path)
    critical = result.critical_ids
    off = [a for a in critical if a not in on_path]
    negative = [a for a in off if (result.activities[a].total_float or 0) < 0]
    loose = [
        result.activities[a].total_float for a in longest_path
        if result.activities[a].status != "finished" and not result.activities[a].critical
        and result.activities[a].total_float is not None
    ]
    return CriticalCounts(
        critical=len(critical), path_count=len(longest_path), off_path=len(off), off_path_negative=len(negative),
        path_not_critical=len(loose), path_float_min=min(loose, default=None), path_float_max=max(loose, default=None),
    )


def count_words(n: int, one: str, many: str | None = None) -> str:
    """``1 activity``, ``21 activities``: a count with its noun in the right number."""
    return f"{n} {one if n == 1 else many or one + 's'}"


def long_date(d: date | None) -> str:
    """``4 May 2026`` (English month names, no locale)."""
    return "—" if d is None else f"{d.day} {MONTHS[d.month - 1]} {d.year}"


def window_last_day(window: Any) -> date:
    """The last day a window covers: the day before its later data date.

    A data date is the first day of the work still to do (common practice;
    the casefile format defines it so), so the progress a window observes
    runs from its earlier data date up to the day before its later one. The
    window BL-U01 with data dates 2 March and 7 April covers 2 March to
    6 April, and the next window starts on 7 April: printed so, consecutive
    windows never share a day under the inclusive reading of dates.
    """
    return window.end - timedelta(days=1)


def short_date(d: date | None) -> str:
    """``4 May 2026`` with a three-letter month, for tables."""
    return "—" if d is None else f"{d.day} {MONTHS[d.month - 1][:3]} {d.year}"


def unit_words(delay_unit: str, n: int | None = None) -> str:
    """``calendar days`` / ``working days``, singular for exactly one."""
    word = "working day" if delay_unit == "working-days" else "calendar day"
    return word if n is not None and abs(n) == 1 else word + "s"


CATEGORY_WORDS = {
    "excusable-compensable": "excusable and compensable",
    "excusable-noncompensable": "excusable, not compensable",
    "non-excusable": "not excusable",
    "concurrent": "concurrent",
    None: "no party assigned",
}


def party_words(cf: Casefile, party_id: str) -> str:
    """A party's name for reading (its id when the casefile has no such party)."""
    special = {"unassigned": "no party assigned", "unattributed-revision": "revisions no event explains"}
    if party_id in special:
        return special[party_id]
    p = cf.parties.get(party_id)
    return p.name if p is not None else party_id


def join_words(items: Sequence[str], empty: str = "none") -> str:
    """``a``, ``a and b``, ``a, b and c``."""
    items = list(items)
    if not items:
        return empty
    return items[0] if len(items) == 1 else ", ".join(items[:-1]) + " and " + items[-1]


def days_words(delay_unit: str, n: int) -> str:
    """``14 calendar days``, ``1 working day``."""
    return f"{n} {unit_words(delay_unit, n)}"


def float_words(value: int | None) -> str:
    """A total float for reading: ``-12 working days``, or ``none (finished)``."""
    if value is None:
        return "none (finished)"
    return f"{value} working day" + ("" if abs(value) == 1 else "s")


def common_fields(ctx: ReportContext) -> dict[str, Any]:
    cf = ctx.casefile
    snaps = cf.snapshots
    return {
        "project": cf.project.name,
        "baseline": cf.baseline.id,
        "latest": snaps[-1].id,
        "first_data_date": long_date(snaps[0].data_date),
        "last_data_date": long_date(snaps[-1].data_date),
        "unit": unit_words(cf.project.delay_unit),
    }


def activity_name(cf: Casefile, activity_id: str, snapshot_id: str | None = None) -> str:
    """The activity's name in that snapshot (else in the latest snapshot that has it)."""
    snaps = [cf.snapshot(snapshot_id)] if snapshot_id else []
    for snap in [*snaps, *reversed(cf.snapshots)]:
        act = snap.activities.get(activity_id)
        if act is not None:
            return act.name
    return activity_id


def path_words(ctx: ReportContext, row: SnapshotTrend, limit: int = 3) -> tuple[str, int]:
    """The next activities on the longest path (not yet finished), as ``name (id)``, and how many remain."""
    cf = ctx.casefile
    res = ctx.trend.schedules[[s.snapshot_id for s in ctx.trend.snapshots].index(row.snapshot_id)]
    remaining = [a for a in row.longest_path if res.activities[a].status != "finished"]
    shown = [f"{activity_name(cf, a, row.snapshot_id)} ({a})" for a in remaining[:limit]]
    if len(remaining) > limit:
        shown.append(f"{len(remaining) - limit} more")
    if not shown:
        return "no remaining activity", 0
    words = shown[0] if len(shown) == 1 else ", ".join(shown[:-1]) + " and " + shown[-1]
    return words, len(remaining)


def move_sentence(ctx: ReportContext, section: Section, row: SnapshotTrend, prev: SnapshotTrend | None) -> str:
    """The completion-trend sentence for one snapshot (``first``, ``later``, ``earlier`` or ``unchanged``)."""
    unit = ctx.trend.delay_unit
    fields = common_fields(ctx)
    fields.update(
        snapshot=row.snapshot_id,
        data_date=long_date(row.data_date),
        completion=long_date(row.completion),
        completion_id=row.completion_id,
        completion_name=activity_name(ctx.casefile, row.completion_id, row.snapshot_id),
        float=float_words(row.completion_float),
    )
    where = f"{ctx.template.path.name}, section {section.number} ({section.kind})"
    if prev is None or row.movement is None:
        return fill(section.texts["first"], fields, where + ", text.first")
    path, count = path_words(ctx, row)
    fields.update(
        previous=prev.snapshot_id,
        previous_data_date=long_date(prev.data_date),
        previous_completion=long_date(prev.completion),
        days=abs(row.movement),
        days_unit=unit_words(unit, row.movement),
        slip=abs(row.slip),
        slip_unit=unit_words(unit, row.slip),
        path=path,
        path_count=count,
    )
    key = "later" if row.movement > 0 else "earlier" if row.movement < 0 else "unchanged"
    return fill(section.texts[key], fields, f"{where}, text.{key}")


def milestone_sentence(ctx: ReportContext, section: Section, milestone: str, rows: Sequence[SnapshotTrend]) -> str | None:
    """How a milestone's float moved from the first to the last snapshot shown (``eroded``, ``gained``, ``steady``)."""
    where = f"{ctx.template.path.name}, section {section.number} ({section.kind})"
    have = [r for r in rows if milestone in r.milestone_floats and r.milestone_floats[milestone] is not None]
    fields = common_fields(ctx)
    fields.update(milestone=milestone, name=ctx.trend.milestone_names.get(milestone, milestone))
    if not have:
        text = section.texts.get("missing")
        if text is None:
            return None
        fields.update(first_snapshot="", first_float="", last_snapshot="", last_float="", change="", first_date="", last_date="")
        return fill(text, fields, f"{where}, text.missing")
    a, b = have[0], have[-1]
    fa, fb = a.milestone_floats[milestone], b.milestone_floats[milestone]
    assert fa is not None and fb is not None  # ``have`` keeps only rows with a float
    change = fb - fa
    fields.update(
        first_snapshot=a.snapshot_id,
        first_float=float_words(fa),
        last_snapshot=b.snapshot_id,
        last_float=float_words(fb),
        change=float_words(abs(change)),
        first_date=long_date(a.milestone_dates[milestone]),
        last_date=long_date(b.milestone_dates[milestone]),
    )
    key = "eroded" if change < 0 else "gained" if change > 0 else "steady"
    return fill(section.texts[key], fields, f"{where}, text.{key}")


def text_or_none(ctx: ReportContext, section: Section, key: str, extra: Mapping[str, Any] | None = None) -> str | None:
    """Fill the section's optional text ``key`` (``None`` when the template leaves it out)."""
    text = section.texts.get(key)
    if text is None:
        return None
    fields = common_fields(ctx)
    fields.update(extra or {})
    return fill(text, fields, f"{ctx.template.path.name}, section {section.number} ({section.kind}), text.{key}")
