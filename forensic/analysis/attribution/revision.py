"""Revision-borne delay: what each event's changes to the plan brought into a window.

The half-step (:mod:`forensic.analysis.windows`) splits a window's slip into
progress and revision. The revision part is handed to the events that
brought the revisions in by taking each event's revisions out of the later
update, one event at a time in date order (:func:`take_out_events`), and
rescheduling: the completion each removal wins back is that event's share
(:func:`revision_shares`); the remainder is unattributed revision. The rule
in full is in the module notes of
:mod:`forensic.analysis.attribution.contributors` ("Events and parties").

References
----------
AACE International Recommended Practice 29R-03, Forensic Schedule Analysis,
protocols 3.3 and 3.4 (the half-step, bifurcated windows).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import replace
from datetime import date, timedelta

from forensic.analysis.attribution.results import RevisionShare, WindowContext
from forensic.analysis.butfor import bridge_links
from forensic.core.engine import schedule
from forensic.core.model import Casefile, Event, Link, Snapshot, frozen_mapping
from forensic.core.units import unit_counter

__all__ = ["event_activity_ids", "event_overlap", "revision_shares", "take_out_events"]


def event_overlap(ev: Event, start: date, end: date) -> int:
    """Calendar days of the event within the window [start, end)."""
    lo = max(ev.start, start)
    hi = min(ev.finish, end - timedelta(days=1))
    return (hi - lo).days + 1 if hi >= lo else 0


def event_activity_ids(cf: Casefile, ev: Event) -> set[str]:
    """The activities that are the event's: those it lists and those of its fragnet."""
    ids = set(ev.activities)
    frag = cf.fragnets.get(ev.fragnet) if ev.fragnet else None
    if frag is not None:
        ids |= set(frag.activities)
    return ids


def take_out_events(ctx: WindowContext, snap: Snapshot, events: Sequence[Event]) -> tuple[Snapshot, tuple[str, ...]]:
    """``snap`` (a version of the later update) with these events' revisions taken out.

    * Activities the later update added that are the events' (fragnet or
      listed activities) are deleted, their links bridged as the but-for
      analysis does (:func:`forensic.analysis.butfor.bridge_links`).
    * For an event whose dates overlap the window: each activity it lists
      that both updates have and the later one shows not started gets back
      the earlier update's duration and remaining duration; links into the
      activities it lists that the later update added are dropped, and
      those it removed are put back.

    Returns the new snapshot and the ids of the activities touched (empty
    when the events changed nothing in this window).
    """
    run = ctx.run
    w = run.window
    earlier = run.earlier
    acts = dict(snap.activities)
    links: Sequence[Link] = snap.links
    drop: set[str] = set()
    touched: list[str] = []
    added_here = [a for a in w.added if a in acts]  # in the later update's order, as acts are
    for ev in events:
        ids = event_activity_ids(ctx.casefile, ev) if added_here else set()
        for aid in added_here:
            if aid in ids and aid not in drop:
                drop.add(aid)
                touched.append(aid)
        if event_overlap(ev, run.revision_start or w.start, w.end) == 0:
            continue
        listed = set(ev.activities)
        for aid in ev.activities:
            a, e = acts.get(aid), earlier.activities.get(aid)
            if a is None or e is None or aid in drop or a.is_started:
                continue
            if (a.duration, a.remaining_duration) != (e.duration, e.remaining_duration):
                acts[aid] = replace(a, duration=e.duration, remaining=e.remaining_duration)
                touched.append(aid)
        if links is earlier.links and not drop:
            continue  # the same links as the earlier update (a slice inside a window): none to change
        # Only links into the listed activities can change (a key holds its successor).
        before_keys = {lk.key for lk in earlier.links if lk.succ in listed}
        after_keys = {lk.key for lk in links if lk.succ in listed}
        kept = []
        for lk in links:
            if lk.succ in listed and lk.key not in before_keys and lk.pred not in drop:
                touched.append(lk.succ)
                continue
            kept.append(lk)
        for lk in earlier.links:
            if lk.succ in listed and lk.key not in after_keys and lk.pred in acts and lk.succ in acts:
                kept.append(lk)
                touched.append(lk.succ)
        links = kept
    if not touched:
        return snap, ()
    for aid in drop:
        del acts[aid]
    if drop:
        links = bridge_links(links, drop)
    out = replace(snap, activities=frozen_mapping(acts), links=tuple(links))
    return out, tuple(dict.fromkeys(touched))


def revision_shares(ctx: WindowContext) -> tuple[tuple[RevisionShare, ...], int]:
    """Each event's share of the window's revision slip, and the unattributed rest."""
    cf, run = ctx.casefile, ctx.run
    count = unit_counter(cf)
    current = run.later
    c_prev = count(run.after.completion)
    shares = []
    for ev in sorted(cf.events, key=lambda e: (e.start, e.id)):
        nxt, hit = take_out_events(ctx, current, [ev])
        if not hit:
            continue
        current = nxt
        c = count(schedule(current, cf.calendars, cf.project).completion)
        shares.append(RevisionShare(ev.id, c_prev - c, ev.party, ev.category, hit))
        c_prev = c
    return tuple(shares), run.window.revision_slip - sum(s.days for s in shares)
