"""The practitioners' checks: what reviewers look for beyond the DCMA 14 points.

Open ends, out-of-sequence progress, activities without a calendar, links
to or from summary-like milestones, remaining durations larger than the
original, and percent complete inconsistent with the actual dates. The
thresholds are our own (common practice; no published figure); AACE RP
29R-03, sec. 2.1 and 2.2 (source validation, out-of-sequence progress) and
GAO-16-89G, best practices 2 and 6, describe the concerns.
"""

from __future__ import annotations

from collections.abc import Sequence

from forensic.core.engine import ScheduleResult
from forensic.core.model import Casefile, Link, Snapshot

from .checks import PRACTICE, QualityCheck, is_task, link_successors, ratio_check
from .sequence import out_of_sequence_links

__all__ = ["practitioners_checks"]


def practitioners_checks(
    casefile: Casefile, snap: Snapshot, result: ScheduleResult, live_links: Sequence[Link]
) -> list[QualityCheck]:
    """The practitioners' checks on ``snap`` (scheduled as ``result``; ``live_links``: the link population)."""
    acts = snap.activities
    open_acts = [a for a in acts.values() if not a.is_finished]
    has_pred = {link.succ for link in snap.links}
    has_succ = {link.pred for link in snap.links}
    # Open ends: everything unfinished except the start milestones (no
    # predecessor needed) and the completion (no successor needed).
    open_ends = [
        a.id for a in open_acts
        if (a.id not in has_pred and a.kind != "opening-milestone")
        or (a.id not in has_succ and a.id != result.completion_id)
    ]
    started = [a for a in acts.values() if a.is_started or (a.is_milestone and a.is_finished)]
    oos = link_successors(out_of_sequence_links(snap))
    no_cal = [a.id for a in acts.values() if a.calendar is None]
    # A milestone that gathers several predecessors and feeds several
    # successors acts as a summary: every successor then waits for every
    # predecessor, which can hide the real driving logic (common practice).
    n_in: dict[str, int] = {}
    n_out: dict[str, int] = {}
    for link in snap.links:
        n_in[link.succ] = n_in.get(link.succ, 0) + 1
        n_out[link.pred] = n_out.get(link.pred, 0) + 1
    hubs = {
        a.id for a in open_acts
        if a.is_milestone and n_in.get(a.id, 0) >= 2 and n_out.get(a.id, 0) >= 2
    }
    hub_links = [link for link in live_links if link.pred in hubs or link.succ in hubs]
    tasks = [a for a in open_acts if is_task(a)]
    over = [a.id for a in tasks if a.remaining_duration > a.duration]
    with_pct = [(a, pct) for a in acts.values() if (pct := a.percent_complete) is not None]
    pct_bad = [
        a.id for a, pct in with_pct
        if (a.status == "not-started" and pct > 0)
        or (a.status == "finished" and pct < 100)
        or (a.status == "in-progress" and pct >= 100)
    ]
    return [
        ratio_check(None, "open-ends", "Open ends: unfinished activities without a predecessor or a successor",
                    open_ends, len(open_acts), "<=", 0.0, PRACTICE),
        ratio_check(None, "out-of-sequence", "Out-of-sequence progress: actual dates that break a link",
                    oos, len(started), "<=", 0.0, PRACTICE),
        ratio_check(None, "no-calendar", "Activities without a calendar (default applied)",
                    no_cal, len(acts), "<=", 0.0, PRACTICE),
        ratio_check(None, "summary-milestone-links",
                    "Links to or from summary-like milestones (2+ predecessors and 2+ successors)",
                    sorted(hubs), len(live_links), "<=", 5.0, PRACTICE, links=hub_links,
                    count=len(hub_links)),
        ratio_check(None, "remaining-over-duration", "Remaining duration larger than original duration",
                    over, len(tasks), "<=", 0.0, PRACTICE),
        ratio_check(None, "percent-vs-actuals", "Percent complete inconsistent with actual dates",
                    pct_bad, len(with_pct), "<=", 0.0, PRACTICE),
    ]

