"""Completion trend and float erosion across the snapshots of a casefile.

Every snapshot (the baseline and each update) is scheduled by the engine;
this module reads the results side by side: the forecast completion against
the data date (the completion trend), the total float of the completion and
of the key milestones update by update (float erosion), how the remaining
activities spread over float bands, and the longest path of each snapshot.

These are the observational measures of AACE RP 29R-03 (method implementation
protocol 3.3, observational / dynamic / contemporaneous as-is: the forecast
of each update read as it stood) and the float-trend reading recommended by
the GAO Schedule Assessment Guide (GAO-16-89G, best practice 6, on
monitoring total float over time). The slip of a snapshot is counted in the
project's delay unit: calendar days, or working days on the project's
default calendar (casefile format, ``delay_unit``).

References
----------
AACE International Recommended Practice 29R-03, Forensic Schedule Analysis (2011), sec. 3.3.
US GAO, Schedule Assessment Guide, GAO-16-89G (2015), best practice 6.
AACE International Recommended Practice 49R-06, Identifying the Critical Path.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from datetime import date, timedelta

from forensic.core.calendars import workdays_between
from forensic.core.engine import ScheduleResult, schedule
from forensic.core.model import Casefile, frozen_mapping

__all__ = [
    "DEFAULT_BAND_EDGES",
    "FloatBand",
    "SnapshotTrend",
    "TrendResult",
    "completion_trend",
    "contract_float",
    "delay_between",
]

# Band edges in working days: (< 0), [0, 1), [1, 6), [6, 21), [21, ...).
# Negative, zero, one working week, one working month and beyond are the
# bands practitioners usually read (common practice).
DEFAULT_BAND_EDGES: tuple[int, ...] = (0, 1, 6, 21)


@dataclass(frozen=True, slots=True)
class FloatBand:
    """A band of total float ``lo <= float < hi`` in working days (``None`` = open end)."""

    label: str
    lo: int | None
    hi: int | None

    def holds(self, value: int) -> bool:
        return (self.lo is None or value >= self.lo) and (self.hi is None or value < self.hi)


@dataclass(frozen=True, slots=True)
class SnapshotTrend:
    """One snapshot's place in the trend.

    ``slip`` is the forecast completion's movement from the baseline's and
    ``movement`` from the previous snapshot's (``None`` for the baseline),
    both in the delay unit (positive = later). ``variance`` is the forecast
    against the contractual completion (positive = after it; ``None`` when
    the casefile gives none). ``milestone_floats`` is the *network* total
    float (to the project's own finish, as the engine computes it); it
    stays 0 on a completion that is late, because the network's finish
    moves with it. ``contract_floats`` is the float *to the contractual
    date*: for the completion the contract completion, for a key milestone
    its sectional or key date (the baseline's start-by, finish-by or fixed
    constraint), in working days of its calendar, negative when the
    forecast is after the date (see :func:`contract_float`). ``band_counts`` holds the number of activities
    not finished in each float band; ``finished`` counts the rest.
    """

    snapshot_id: str
    role: str
    data_date: date
    completion_id: str
    completion: date
    completion_float: int | None
    slip: int
    movement: int | None
    variance: int | None
    milestone_dates: Mapping[str, date | None]
    milestone_floats: Mapping[str, int | None]
    band_counts: tuple[int, ...]
    finished: int
    critical: int
    longest_path: tuple[str, ...]
    contract_floats: Mapping[str, int | None] = field(default_factory=frozen_mapping)


@dataclass(frozen=True, slots=True)
class TrendResult:
    """The trend of every snapshot, oldest first, with the settings used."""

    delay_unit: str
    baseline_completion: date
    contract_completion: date | None
    bands: tuple[FloatBand, ...]
    milestones: tuple[str, ...]
    milestone_names: Mapping[str, str]
    snapshots: tuple[SnapshotTrend, ...]
    schedules: tuple[ScheduleResult, ...]
    contract_dates: Mapping[str, date] = field(default_factory=frozen_mapping)

    @property
    def latest(self) -> SnapshotTrend:
        return self.snapshots[-1]


def delay_between(casefile: Casefile, earlier: date, later: date) -> int:
    """Days from ``earlier`` to ``later`` in the project's delay unit (negative when earlier).

    Calendar days, or working days of the project's default calendar in
    ``(earlier, later]``: the count of :func:`forensic.core.units.unit_counter`
    that the windows ledger uses, so a Friday-to-Sunday move on a five-day
    week is 0 and Friday-to-Monday 1 (common practice; tests/test_delay_units.py).
    """
    if casefile.project.delay_unit == "working-days":
        cal = casefile.calendars[casefile.project.default_calendar]
        return workdays_between(cal, earlier + timedelta(days=1), later + timedelta(days=1))
    return (later - earlier).days


_KEY_DATE_KINDS = {"finish-by": "finish", "finish-fixed": "finish", "start-by": "start", "start-fixed": "start"}


def contract_float(cal, forecast: date, contractual: date) -> int:
    """Working days of ``cal`` from a forecast date to its contractual date: float to the contract.

    ``workdays in [forecast + 1, contractual + 1)``: 0 when the forecast is on
    the date, negative (``-workdays in [contractual + 1, forecast + 1)``)
    when it is after it, as total float is negative against a date that is
    missed (AACE RP 49R-06, negative float against a constraint; GAO-16-89G
    best practice 6: float erosion measured against the required dates).
    """
    return workdays_between(cal, forecast + timedelta(days=1), contractual + timedelta(days=1))


def _contract_dates(casefile: Casefile, keys: Sequence[str], completion: str) -> dict[str, tuple[str, date]]:
    """Milestone -> (date kind, contractual date): the completion and the baseline's key dates."""
    out: dict[str, tuple[str, date]] = {}
    if casefile.project.contract_completion is not None:
        out[completion] = ("finish", casefile.project.contract_completion)
    for k in keys:
        a = casefile.baseline.activities.get(k)
        if a is not None and a.constraint in _KEY_DATE_KINDS and a.constraint_date is not None and k not in out:
            out[k] = (_KEY_DATE_KINDS[a.constraint], a.constraint_date)
    return out


def make_bands(edges: Sequence[int]) -> tuple[FloatBand, ...]:
    """Float bands from increasing edges: below the first, between each pair, from the last."""
    edges = sorted(set(int(e) for e in edges))
    if not edges:
        return (FloatBand("all", None, None),)
    bands = [FloatBand(f"below {edges[0]}" if edges[0] != 0 else "negative", None, edges[0])]
    for lo, hi in zip(edges, edges[1:], strict=False):
        label = f"{lo}" if hi == lo + 1 else f"{lo} to {hi - 1}"
        bands.append(FloatBand(label, lo, hi))
    bands.append(FloatBand(f"{edges[-1]} or more", edges[-1], None))
    return tuple(bands)


def _key_milestones(casefile: Casefile, wanted: Sequence[str] | None, limit: int) -> tuple[str, ...]:
    """The completion, then the baseline's constrained milestones, then its other milestones."""
    base = casefile.baseline
    ids = list(dict.fromkeys(wanted)) if wanted else []
    if not wanted:
        comp = casefile.project.completion
        milestones = [a for a in base.activities.values() if a.is_milestone and a.id != comp]
        constrained = [a.id for a in milestones if a.constraint is not None]
        others = [a.id for a in milestones if a.constraint is None and a.kind == "closing-milestone"]
        ids = [*constrained, *others][:limit]
    return tuple(ids)


def completion_trend(
    casefile: Casefile,
    *,
    milestones: Sequence[str] | None = None,
    band_edges: Sequence[int] = DEFAULT_BAND_EDGES,
    milestone_limit: int = 4,
    schedules: Sequence[ScheduleResult] | None = None,
) -> TrendResult:
    """Schedule every snapshot and read the completion trend and float erosion.

    Parameters
    ----------
    casefile : Casefile
    milestones : sequence of activity ids, optional
        Key milestones whose float is followed; by default the baseline's
        milestones with a date constraint, then its other finish milestones,
        up to ``milestone_limit`` (the completion is always followed).
    band_edges : sequence of int
        Edges of the float bands in working days (see :func:`make_bands`).
    schedules : sequence of ScheduleResult, optional
        Results already computed for every snapshot, in casefile order.

    Returns
    -------
    TrendResult

    References
    ----------
    AACE RP 29R-03, sec. 3.3 (observational as-is); GAO-16-89G, best practice 6.
    """
    if schedules is None:
        schedules = [schedule(s, casefile.calendars, casefile.project) for s in casefile.snapshots]
    schedules = tuple(schedules)
    bands = make_bands(band_edges)
    keys = _key_milestones(casefile, milestones, milestone_limit)
    names = {k: _milestone_name(casefile, k) for k in keys}
    base_completion = schedules[0].completion
    contract = casefile.project.contract_completion
    cdates = _contract_dates(casefile, keys, schedules[0].completion_id)
    rows = []
    previous: date | None = None
    for snap, res in zip(casefile.snapshots, schedules, strict=True):
        counts, finished = _band_counts(res, bands)
        mdates = {}
        mfloats = {}
        for k in keys:
            scheduled = res.activities.get(k)
            mdates[k] = None if scheduled is None else scheduled.early_finish
            mfloats[k] = None if scheduled is None else scheduled.total_float
        rows.append(
            SnapshotTrend(
                snapshot_id=snap.id,
                role=snap.role,
                data_date=snap.data_date,
                completion_id=res.completion_id,
                completion=res.completion,
                completion_float=res.completion_float,
                slip=delay_between(casefile, base_completion, res.completion),
                movement=None if previous is None else delay_between(casefile, previous, res.completion),
                variance=None if contract is None else delay_between(casefile, contract, res.completion),
                milestone_dates=frozen_mapping(mdates),
                milestone_floats=frozen_mapping(mfloats),
                band_counts=counts,
                finished=finished,
                critical=len(res.critical_ids),
                longest_path=res.longest_path,
                contract_floats=frozen_mapping(_contract_floats(casefile, snap, res, cdates)),
            )
        )
        previous = res.completion
    return TrendResult(
        delay_unit=casefile.project.delay_unit,
        baseline_completion=base_completion,
        contract_completion=contract,
        bands=bands,
        milestones=keys,
        milestone_names=frozen_mapping(names),
        snapshots=tuple(rows),
        schedules=schedules,
        contract_dates=frozen_mapping({k: d for k, (_, d) in cdates.items()}),
    )


def _milestone_name(casefile: Casefile, k: str) -> str:
    """The name of a followed milestone in the first snapshot that has it (its id when none does)."""
    for snap in casefile.snapshots:
        if k in snap.activities:
            return snap.activities[k].name
    return k


def _band_counts(res: ScheduleResult, bands) -> tuple[tuple[int, ...], int]:
    """Unfinished activities per float band, and the finished ones (no float)."""
    counts = [0] * len(bands)
    finished = 0
    for x in res.activities.values():
        if x.total_float is None:
            finished += 1
            continue
        for b, band in enumerate(bands):
            if band.holds(x.total_float):
                counts[b] += 1
                break
    return tuple(counts), finished


def _contract_floats(casefile: Casefile, snap, res: ScheduleResult, cdates) -> dict[str, int | None]:
    """Each followed date's float to its contractual date in this snapshot (None when it is not there)."""
    out: dict[str, int | None] = {}
    for k, (kind, cdate) in cdates.items():
        scheduled = res.activities.get(k)
        act = snap.activities.get(k)
        if scheduled is None or act is None:
            out[k] = None
            continue
        cal = casefile.calendars[act.calendar or casefile.project.default_calendar]
        forecast = scheduled.early_start if kind == "start" else scheduled.early_finish
        out[k] = contract_float(cal, forecast, cdate)
    return out
