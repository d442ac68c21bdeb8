"""The result types of time impact analysis (:mod:`forensic.analysis.impact`).

One event's impact (:class:`ImpactResult`: completion and milestones before
and after, float consumed, the impacted longest path), several events alone
and cumulatively (:class:`ImpactSeries`), and the contemporaneous series
(:class:`ContemporaneousSeries`, AACE RP 29R-03 MIP 3.7).
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date

from forensic.analysis.event_cost import Representation

__all__ = [
    "ContemporaneousSeries",
    "CumulativeStep",
    "FloatChange",
    "HoldUp",
    "ImpactResult",
    "ImpactSeries",
    "MilestoneChange",
    "SeriesStep",
]


@dataclass(frozen=True, slots=True)
class MilestoneChange:
    """One milestone's date in the unimpacted and the impacted schedule; ``impact`` in the delay unit."""

    id: str
    name: str
    before: date
    after: date
    impact: int


@dataclass(frozen=True, slots=True)
class FloatChange:
    """Total float of one activity on a touched path, before and after; ``consumed`` = before - after.

    Floats are working days of the activity's own calendar.
    """

    id: str
    name: str
    before: int
    after: int
    consumed: int


@dataclass(frozen=True, slots=True)
class HoldUp:
    """Working days added to an activity to represent an event that has no fragnet."""

    event: str
    activity: str
    days: int


@dataclass(frozen=True, slots=True)
class ImpactResult:
    """The time impact of one event (or several inserted together) on one schedule.

    ``event`` is the event id (ids joined by ``+`` when several are inserted
    together); ``into`` the id of the unimpacted snapshot; ``progressed_to``
    the date progress was brought to first (``None`` when it was not).
    ``impact`` is the completion's move in ``unit`` (the project's delay
    unit). ``inserted`` lists the fragnet activities added; ``hold_ups`` the
    added durations of events without a fragnet. ``critical_path`` is the
    longest path of the impacted schedule (AACE RP 49R-06).
    """

    event: str
    into: str
    progressed_to: date | None
    completion_id: str
    completion_before: date
    completion_after: date
    impact: int
    unit: str
    milestones: tuple[MilestoneChange, ...]
    float_consumed: tuple[FloatChange, ...]
    critical_path: tuple[str, ...]
    inserted: tuple[str, ...]
    hold_ups: tuple[HoldUp, ...] = ()
    warnings: tuple[str, ...] = ()
    represented: tuple[Representation, ...] = ()

    @property
    def represented_as(self) -> str:
        """The representation of the event (kinds joined by ``+`` when several were inserted together)."""
        return "+".join(r.how for r in self.represented)

    @property
    def days(self) -> dict[str, int]:
        """Working days each activity was given (fragnet activities: their durations), summed over the events."""
        out: dict[str, int] = {}
        for rep in self.represented:
            for aid, n in rep.days:
                out[aid] = out.get(aid, 0) + n
        return out


@dataclass(frozen=True, slots=True)
class CumulativeStep:
    """One step of a cumulative analysis: the completion before and after this event was added."""

    event: str
    start: date
    completion_before: date
    completion_after: date
    impact: int


@dataclass(frozen=True, slots=True)
class ImpactSeries:
    """Several events: each alone, and cumulatively in date order.

    ``individual`` holds each event alone against its own unimpacted
    schedule; ``cumulative`` all of them inserted in date order into the
    snapshot ``cumulative.into``, with ``steps`` the increment each added.
    ``non_additivity`` is ``sum_of_individual - cumulative.impact``.
    """

    individual: tuple[ImpactResult, ...]
    cumulative: ImpactResult
    steps: tuple[CumulativeStep, ...]
    sum_of_individual: int
    non_additivity: int
    unit: str
    warnings: tuple[str, ...] = ()


@dataclass(frozen=True, slots=True)
class SeriesStep:
    """One step of the contemporaneous series: one event inserted into its own unimpacted update.

    ``carried`` is true when the event went into the impacted result of the
    step before (both events' unimpacted update is the same); ``running_total``
    is the sum of the impacts so far, in the delay unit.
    """

    event: str
    into: str
    completion_before: date
    completion_after: date
    impact: int
    represented_as: str
    running_total: int
    carried: bool


@dataclass(frozen=True, slots=True)
class ContemporaneousSeries:
    """Every event in date order, each inserted into the last update before it (AACE RP 29R-03, MIP 3.7).

    ``total`` is the sum of the steps' impacts; ``windows_total`` the slip
    the windows analysis measures over the whole record (the last update's
    completion against the baseline's); ``difference_from_windows`` is
    ``total - windows_total``: the slip the modelled events do not explain
    (negative), or the modelled delay the record did not show (positive).
    """

    unit: str
    steps: tuple[SeriesStep, ...]
    total: int
    windows_total: int
    difference_from_windows: int
    warnings: tuple[str, ...] = ()
