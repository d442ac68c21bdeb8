"""Out-of-sequence progress: links whose actual dates run in the wrong order.

The successor's side of a link happened before the predecessor's side it
waits for, judged from actual dates only and timed as the engine times
links (common practice; AACE RP 29R-03, sec. 2.2 on out-of-sequence
progress). Used by the practitioners' checks and by the comparison of two
updates.
"""

from __future__ import annotations

from datetime import date, timedelta

from forensic.core.model import Activity, Link, Snapshot

__all__ = ["out_of_sequence_links"]


def _instant_of_start(a: Activity) -> date | None:
    """The day a start-timed link (SS, SF) passes on, from actual dates (engine rules)."""
    if a.kind == "closing-milestone":
        d = a.actual_finish or a.actual_start
        return None if d is None else d + timedelta(days=1)
    return a.actual_start or (a.actual_finish if a.is_milestone else None)


def _instant_of_finish(a: Activity) -> date | None:
    """The day a finish-timed link (FS, FF) passes on, from actual dates (engine rules)."""
    if a.kind == "opening-milestone":
        return a.actual_start or a.actual_finish
    d = a.actual_finish or (a.actual_start if a.is_milestone else None)
    return None if d is None else d + timedelta(days=1)


def out_of_sequence_links(snap: Snapshot) -> tuple[Link, ...]:
    """The links whose actual dates run out of sequence (the successor's side came first).

    An FS or SS successor started, or an FF or SF successor finished, before
    the predecessor's finish (FS, FF) or start (SS, SF) that the link waits
    for, or while that predecessor has not reached it. Lags are not
    considered: this is about the order of the work, from actual dates only,
    timed as the engine times links (common practice; AACE RP 29R-03, sec.
    2.2 on out-of-sequence progress).
    """
    acts = snap.activities
    bad: list[Link] = []
    for link in snap.links:
        p, s = acts[link.pred], acts[link.succ]
        pred_day = _instant_of_start(p) if link.type in ("SS", "SF") else _instant_of_finish(p)
        succ_day = _instant_of_start(s) if link.type in ("FS", "SS") else _instant_of_finish(s)
        if succ_day is None:
            continue  # the successor's side has not happened: nothing out of order yet
        if pred_day is None or succ_day < pred_day:
            bad.append(link)
    return tuple(bad)

