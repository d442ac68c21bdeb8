"""The tables and JSON of time impact analysis (:mod:`forensic.analysis.impact`).

One function per table or JSON object; the keys are a contract, documented
in docs/impact-and-butfor.md.
"""

from __future__ import annotations

from forensic.analysis.impact import ContemporaneousSeries, ImpactResult, ImpactSeries
from forensic.core.tables import Table

__all__ = [
    "contemporaneous_json",
    "contemporaneous_table",
    "float_table",
    "impact_json",
    "milestones_table",
    "series_json",
    "series_table",
]


def milestones_table(result: ImpactResult) -> Table:
    """Every milestone before and after the event, with its impact in the delay unit."""
    return Table(
        f"impact-{result.event}-milestones",
        ("id", "name", "before", "after", "impact"),
        tuple((m.id, m.name, m.before, m.after, m.impact) for m in result.milestones),
    )


def float_table(result: ImpactResult) -> Table:
    """Total float consumed or gained on the paths the event touched (working days of each activity's calendar).

    ``consumed`` is the float used up (0 when the activity gained float) and
    ``gained`` the float won (0 when it lost), so that a gain reads as a gain
    and never as a negative consumption.
    """
    return Table(
        f"impact-{result.event}-float",
        ("id", "name", "float_before", "float_after", "consumed", "gained"),
        tuple((c.id, c.name, c.before, c.after, max(0, c.consumed), max(0, -c.consumed)) for c in result.float_consumed),
    )


def series_table(series: ImpactSeries) -> Table:
    """One row per event: its impact alone, and its increment in the cumulative analysis."""
    step = {s.event: s for s in series.steps}
    return Table(
        "impact-series",
        ("event", "start", "into", "impact_alone", "cumulative_increment", "completion_alone", "completion_cumulative"),
        tuple(
            (r.event, step[r.event].start, r.into, r.impact, step[r.event].impact,
             r.completion_after, step[r.event].completion_after)
            for r in series.individual
        ),
    )


def impact_json(result: ImpactResult) -> dict:
    """The ``forensic impact --json`` object; its keys are a contract (docs/impact-and-butfor.md)."""
    return {
        "event": result.event,
        "into": result.into,
        "completion_before": result.completion_before,
        "completion_after": result.completion_after,
        "impact": result.impact,
        "milestones": [
            {"id": m.id, "name": m.name, "before": m.before, "after": m.after, "impact": m.impact}
            for m in result.milestones
        ],
        "critical_path": list(result.critical_path),
        "represented_as": result.represented_as,
        "days": result.days,
        "events": [
            {"event": r.event, "represented_as": r.how, "days": dict(r.days), "why": r.why}
            for r in result.represented
        ],
        "warnings": list(result.warnings),
    }


def series_json(series: ImpactSeries) -> dict:
    """The ``forensic impact --cumulative --json`` object (docs/impact-and-butfor.md)."""
    c = series.cumulative
    return {
        "unit": series.unit.replace(" ", "-"),  # the manifest's spelling, as in every JSON output
        "individual": [impact_json(r) for r in series.individual],
        "cumulative": {
            **impact_json(c),
            "steps": [
                {"event": s.event, "start": s.start, "completion_before": s.completion_before,
                 "completion_after": s.completion_after, "impact": s.impact}
                for s in series.steps
            ],
        },
        "sum_of_individual": series.sum_of_individual,
        "non_additivity": series.non_additivity,
        "into": c.into,
        "warnings": list(series.warnings),
    }


def contemporaneous_table(series: ContemporaneousSeries) -> Table:
    """One row per step of the contemporaneous series, with the running total."""
    return Table(
        "impact-contemporaneous",
        ("event", "into", "represented_as", "completion_before", "completion_after", "impact", "running_total"),
        tuple((s.event, s.into, s.represented_as, s.completion_before, s.completion_after, s.impact, s.running_total)
              for s in series.steps),
    )


def contemporaneous_json(series: ContemporaneousSeries) -> dict:
    """The ``forensic impact --series --json`` object (docs/impact-and-butfor.md)."""
    return {
        "unit": series.unit.replace(" ", "-"),
        "steps": [
            {"event": s.event, "into": s.into, "completion_before": s.completion_before,
             "completion_after": s.completion_after, "impact": s.impact, "represented_as": s.represented_as,
             "running_total": s.running_total, "carried_forward": s.carried}
            for s in series.steps
        ],
        "total": series.total,
        "windows_total": series.windows_total,
        "difference_from_windows": series.difference_from_windows,
        "warnings": list(series.warnings),
    }
