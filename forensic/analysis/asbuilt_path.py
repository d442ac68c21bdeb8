"""The as-built critical path: the work that actually drove completion, window by window, joined up.

Each window (one update to the next) is read on the update current at its
start: the activities on that update's longest path that were worked in the
window (started before the later data date and not finished before the
earlier one, by the later update's actual dates) are the window's piece of
the as-built critical path; they are the work that was controlling
completion while it was being done. The pieces are joined in window order,
each activity once (in the first window that worked it while critical),
and after the latest update the remaining longest path is added as the
forecast part. An activity's dates are its actual dates where the record
has them, else the latest update's forecast.

This is the contemporaneous reading of the as-built critical path: AACE RP
49R-06 (identifying the critical path from the contemporaneous updates,
from memory) and AACE RP 29R-03, MIP 3.3 / 3.4 (the observational methods
read each update's critical path as it stood), set against the static
as-planned versus as-built comparison of MIPs 3.1 and 3.2
(:mod:`forensic.analysis.asbuilt`). It identifies which work drove completion; it
attributes no delay (that is the windows analysis).

References
----------
AACE International Recommended Practice 49R-06, Identifying the Critical Path (2010).
AACE International Recommended Practice 29R-03, Forensic Schedule Analysis (2011), secs. 3.1-3.4.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from datetime import date

from forensic.core.engine import ScheduleResult
from forensic.core.model import Casefile

__all__ = ["AsBuiltPathStep", "as_built_critical_path"]


@dataclass(frozen=True, slots=True)
class AsBuiltPathStep:
    """One activity of the as-built critical path and the window in which it drove completion.

    ``window`` is ``"EARLIER-LATER"`` for a window, or the latest update's
    id for the forecast part (``forecast`` true: the dates are forecasts).
    ``start`` and ``finish`` are actual where recorded, else the latest
    update's early dates.
    """

    window: str
    activity: str
    name: str
    start: date
    finish: date
    actual_start: bool
    actual_finish: bool
    forecast: bool


def as_built_critical_path(casefile: Casefile, schedules: Sequence[ScheduleResult]) -> tuple[AsBuiltPathStep, ...]:
    """The as-built critical path of a casefile (``schedules`` one per snapshot, in the casefile's order)."""
    snaps = casefile.snapshots
    latest, latest_res = snaps[-1], schedules[-1]
    seen: set[str] = set()
    steps: list[AsBuiltPathStep] = []

    def step(window: str, aid: str, forecast: bool) -> AsBuiltPathStep | None:
        act = latest.activities.get(aid)
        x = latest_res.activities.get(aid)
        if act is None or x is None:
            return None  # deleted by a later update: it drove nothing that the record completes
        start = act.actual_start or x.early_start
        finish = act.actual_finish or x.early_finish
        return AsBuiltPathStep(window, aid, act.name, start, finish, act.actual_start is not None,
                               act.actual_finish is not None, forecast)

    for (earlier, res), later in zip(zip(snaps, schedules, strict=True), snaps[1:], strict=False):
        label = f"{earlier.id}-{later.id}"
        for aid in res.longest_path:
            if aid in seen:
                continue
            done = later.activities.get(aid)
            if done is None or done.actual_start is None:
                continue
            worked = done.actual_start < later.data_date and (
                done.actual_finish is None or done.actual_finish >= earlier.data_date
            )
            if worked:
                s = step(label, aid, False)
                if s is not None:
                    seen.add(aid)
                    steps.append(s)
    for aid in latest_res.longest_path:
        if aid not in seen and latest_res.activities[aid].status != "finished":
            s = step(latest.id, aid, True)
            if s is not None:
                seen.add(aid)
                steps.append(s)
    return tuple(steps)
