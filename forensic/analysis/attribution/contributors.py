"""Who and what moved a window's progress and revision slip: the driving-path walk, events, parties.

The windows analysis (:mod:`forensic.analysis.windows`) says how far completion moved
in each window and splits it into a progress slip and a revision slip. This
module hands the progress slip back along the driving path to the
activities that caused it (their *contributors*), gives each share to the
events that cover it or to the performing party, and measures the revision
slip each event brought in. :mod:`forensic.analysis.attribution.concurrency` tests the window for
concurrent delay on these shares; :mod:`forensic.analysis.attribution.delay` joins the two.

Contributor rule (progress slip)
--------------------------------
Let ``v(a)`` be activity ``a``'s finish variance in the window: its finish
in the half-step schedule minus its finish in the earlier update, in the
delay unit. Start at the half-step's completion with ``X`` = the progress
slip and walk back along the driving path:

* the *driver* of ``a`` is its engine driving predecessor (the one with the
  largest ``v``, the smallest for a gain); where ``a`` has none (it is held
  by the data date, or it is finished), a started or finished predecessor
  that held it: it finished (started, for SS/SF links) on or after ``a``'s
  planned start (finish, for FF/SF) in the earlier update, or against ``a``'s
  half-step start;
* the driver *inherits* ``I = clamp(v(driver) - (v(a) - X), 0, X)`` of
  the ``X`` days reaching ``a`` (for a gain, ``clamp(v(driver), X, 0)``),
  and ``a`` keeps ``X - I`` as its own share; the walk continues with
  ``X = I``. When ``v(a) > X`` the first ``v(a) - X`` days of ``a``'s
  variance were absorbed by float after ``a``; the driver's days came
  first, so they are the ones absorbed (float is used first come, first
  served: SCL Protocol 2nd ed., core principle 8, from memory). On the
  driving path, where no float is absorbed (``v(a) = X``), this is
  ``clamp(v(driver), 0, X)``;
* except that work not started at the later data date, placed by its
  engine driving predecessor, keeps nothing when that driver's variance has
  the sign of ``X``: the driver inherits all ``X``. Such work has no
  progress of its own in the window (the half-step keeps its plan), so what
  reaches it beyond its driver's variance is the same delay stretched by a
  non-working period of the calendars (a holiday or a shutdown crossed).

* except that a started activity held by work or logic that the later
  update's revisions brought in (an added activity, or a link the earlier
  update did not have, started or finished in the later update) hands the
  days on to that revision when it held ``a`` longer than the driver: its
  *hold* is its date in the later update against the latest date that
  would not have held ``a`` as the earlier update planned it. The half-step
  leaves the revision out, so without this rule the walk would give the
  delay it caused to late predecessors whose lateness float had absorbed,
  and grouping windows would move an event's days to another party. Added
  work keeps what reaches it, less what its own holding predecessor
  inherits (the same clamp); new logic leaves the days with ``a``, for the
  event that changed ``a``'s logic (one listing ``a``). Added work answers
  to the event whose fragnet or listed activities it is.

Each step hands on part of ``X`` and keeps the rest, so the shares add up to
the progress slip exactly, with no rounding. The clamp means no share is
larger than the days reaching it or of the other sign: a predecessor's
delay that float absorbed passes no days on.

Events and parties
------------------
An event covers a contributor when the activity is in the event's
``activities`` and the event's dates overlap the window (its start before
the later data date and its finish on or after the earlier one). A share
covered by several events is split in proportion to each one's days of
overlap with the window (largest-remainder rounding, ties in file order, so
the parts add up exactly). A share no event covers goes to the party that
performs the activity and is *unexplained*; a gain (negative share) always
goes to the performing party.

Revision effects go to the events that brought the revision in, measured by
taking each event's revisions out of the later update, one event at a time
in date order (:func:`take_out_events`): the activities the later update added
that are the event's (its fragnet's or its listed activities) are deleted,
their links bridged as the but-for analysis does; and, for an event whose
dates overlap the window, its listed activities not yet started get back
the earlier update's durations, and the links into them that the later
update added or removed are undone (a re-plan of the contractor's, say, is
an event of the contractor naming the re-planned work). The remainder is
*unattributed revision*.

Concurrency

References
----------
AACE International Recommended Practice 29R-03, Forensic Schedule Analysis,
protocols 3.3 and 3.4 and section 4 (excusability, compensability).
Society of Construction Law, Delay and Disruption Protocol, 2nd ed. (2017),
core principle 10 and para. 11.
"""

from __future__ import annotations

from collections.abc import Sequence
from datetime import timedelta

import numpy as np

from forensic.analysis.attribution.results import (
    Contributor,
    DelayAnalysis,
    RevisionShare,
    WindowContext,
)
from forensic.analysis.attribution.revision import event_activity_ids, event_overlap
from forensic.analysis.windows import WindowRun
from forensic.core.calendars import day_number, from_day_number, previous_workday
from forensic.core.engine import ScheduleResult
from forensic.core.model import DEFAULT_CATEGORY, Casefile, frozen_mapping
from forensic.core.tables import Table
from forensic.core.units import unit_counter

__all__ = ["UNASSIGNED", "UNATTRIBUTED_REVISION", "Contributor", "RevisionShare", "contributors_table"]

UNASSIGNED = "unassigned"
UNATTRIBUTED_REVISION = "unattributed-revision"


# --- the walk along the driving path ---------------------------------------------


def result_column(result: ScheduleResult, name: str) -> np.ndarray:
    """A per-activity result as an array in ``result.activities`` order.

    The engine keeps its results as arrays and builds a record only when one
    is asked for; reading the arrays keeps a 20,000-activity window from
    building 40,000 records just to compare finishes.
    """
    table = result.activities
    if hasattr(table, "column"):
        return table.column(name)
    if name == "finish_day":
        return np.array([day_number(table[a].early_finish) for a in table], dtype=np.int64)
    if name == "status":
        codes = {"not-started": 0, "in-progress": 1, "finished": 2}
        return np.array([codes[table[a].status] for a in table], dtype=np.int64)
    raise KeyError(name)


def _counts(count, days: np.ndarray) -> np.ndarray:
    """``count`` (a date -> cumulative unit count) applied to day numbers, once per distinct day."""
    uniq, inverse = np.unique(days, return_inverse=True)
    values = np.array([count(from_day_number(d)) for d in uniq.tolist()], dtype=np.int64)
    return values[inverse]


def window_context(casefile: Casefile, run: WindowRun) -> WindowContext:
    count = unit_counter(casefile)
    half, before = run.half_result, run.before
    h_ids, b_ids = list(half.activities), list(before.activities)
    fh = _counts(count, result_column(half, "finish_day"))
    fb = _counts(count, result_column(before, "finish_day"))
    if h_ids != b_ids:  # align the earlier schedule on the half-step's activities
        pos = {a: i for i, a in enumerate(b_ids)}
        keep = [i for i, a in enumerate(h_ids) if a in pos]
        fh = fh[keep]
        fb = fb[[pos[h_ids[i]] for i in keep]]
        h_ids = [h_ids[i] for i in keep]
    v = dict(zip(h_ids, (fh - fb).tolist(), strict=True))
    later: dict[str, list[tuple[str, str, bool]]] = {}
    same_logic = run.later.links is run.earlier.links and not run.window.added  # a slice inside a window
    earlier_keys = set() if same_logic else {lk.key for lk in run.earlier.links}
    if not same_logic and (run.window.added or len(earlier_keys) != len(run.later.links)
                           or earlier_keys != {lk.key for lk in run.later.links}):
        for link in run.later.links:
            new_link = link.key not in earlier_keys
            if new_link or link.pred not in v:
                later.setdefault(link.succ, []).append((link.pred, link.type, new_link))
    return WindowContext(
        casefile, run, half, before, v, _predecessors(run.half.links),
        frozen_mapping({k: tuple(x) for k, x in later.items()}),
    )


_PREDS: dict[int, tuple[tuple, dict]] = {}  # the last few links tuples' predecessor lists, by identity


def _predecessors(links: tuple) -> dict[str, tuple[tuple[str, str], ...]]:
    """Each successor's (predecessor, link type) pairs; kept for the last few links tuples (a window's
    slices and the concurrency reruns share the earlier update's links). Read-only for callers."""
    hit = _PREDS.get(id(links))
    if hit is not None and hit[0] is links:
        return hit[1]
    preds: dict[str, list[tuple[str, str]]] = {}
    for link in links:
        preds.setdefault(link.succ, []).append((link.pred, link.type))
    out = {k: tuple(x) for k, x in preds.items()}
    if len(_PREDS) >= 4:
        _PREDS.pop(next(iter(_PREDS)))
    _PREDS[id(links)] = (links, out)
    return out


def _calendar(ctx: WindowContext, aid: str):
    act = ctx.run.half.activities[aid]
    return ctx.casefile.calendars[act.calendar or ctx.casefile.project.default_calendar]


def _held(ctx: WindowContext, p: str, typ: str, a: str) -> bool:
    """Did started or finished predecessor ``p`` hold ``a`` (see the module notes)?"""
    hp, ha, ba = ctx.half[p], ctx.half[a], ctx.before[a]
    p_ref = hp.early_start if typ in ("SS", "SF") else hp.early_finish
    on_start = typ in ("FS", "SS")
    planned = ba.early_start if on_start else ba.early_finish
    actual = ha.early_start if on_start else ha.early_finish
    if p_ref >= planned:
        return True
    if typ in ("SS", "SF"):
        return p_ref >= actual
    return p_ref >= previous_workday(_calendar(ctx, p), actual - timedelta(days=1))


def _hold(ctx: WindowContext, p: str, typ: str, a: str) -> int:
    """Delay units by which ``p`` (as the later update has it) held ``a``'s planned start (finish).

    The later update's date of ``p`` that the link times from, against the
    latest such date that would not have held ``a`` at its start (finish)
    in the earlier update: the day before, on ``p``'s calendar, as in
    :func:`_held`. Positive when ``p`` held ``a`` beyond its plan.
    """
    count = unit_counter(ctx.casefile)
    rp, ba = ctx.run.after[p], ctx.before[a]
    p_ref = rp.early_start if typ in ("SS", "SF") else rp.early_finish
    planned = ba.early_start if typ in ("FS", "SS") else ba.early_finish
    act = ctx.run.later.activities[p]
    cal = ctx.casefile.calendars[act.calendar or ctx.casefile.project.default_calendar]
    limit = planned - timedelta(days=1) if typ in ("SS", "SF") else previous_workday(cal, planned - timedelta(days=1))
    return count(p_ref) - count(limit)


def _brought_in(ctx: WindowContext, a: str) -> dict[str, int]:
    """Predecessors that the later update's revisions put before started ``a``: {pred: hold}.

    Added work (an activity absent from the earlier update) and changed
    logic (a link the earlier update did not have) that is started or
    finished in the later update and held ``a`` (see :func:`_hold`). The
    half-step leaves both out, so without them the walk would hand the
    delay they caused to late predecessors whose lateness float absorbed.
    """
    if not ctx.later_preds or ctx.half[a].status == "not-started":
        return {}
    out: dict[str, int] = {}
    for p, typ, new_link in ctx.later_preds.get(a, ()):
        if p in ctx.v and not new_link:
            continue
        rp = ctx.run.after.activities.get(p)
        if rp is None or rp.status == "not-started" or ctx.before.activities.get(a) is None:
            continue
        h = _hold(ctx, p, typ, a)
        if h > 0:
            out[p] = max(h, out.get(p, 0))
    return out


def _added_driver(ctx: WindowContext, q: str) -> str | None:
    """The predecessor that held added work ``q`` in the later update (the latest to release it)."""
    rq = ctx.run.after[q]
    if rq.status == "not-started":
        return None
    best, best_ref = None, None
    for p, typ, _ in ctx.later_preds.get(q, ()):
        rp = ctx.run.after.activities.get(p)
        if rp is None or rp.status == "not-started":
            continue
        if typ in ("SS", "SF"):
            ref, need = rp.early_start, rq.early_start if typ == "SS" else rq.early_finish
        else:
            act = ctx.run.later.activities[p]
            cal = ctx.casefile.calendars[act.calendar or ctx.casefile.project.default_calendar]
            ref = rp.early_finish
            need = previous_workday(cal, (rq.early_start if typ == "FS" else rq.early_finish) - timedelta(days=1))
        if ref >= need and (best_ref is None or ref > best_ref):
            best, best_ref = p, ref
    return best


def _driver(ctx: WindowContext, a: str, x: int) -> str | None:
    cands = [p for p in ctx.half[a].driving_predecessors if p in ctx.v]
    if not cands:
        cands = [
            p
            for p, typ in ctx.preds.get(a, ())
            if p in ctx.v and ctx.half[p].status != "not-started" and _held(ctx, p, typ, a)
        ]
    if not cands:
        return None
    pick = max if x > 0 else min
    return pick(cands, key=lambda p: ctx.v[p])


def _revised_driver(ctx: WindowContext, a: str, x: int, p: str | None) -> tuple[str, int] | None:
    """A revision (added work or new logic) that held ``a`` more than the walk's driver ``p``, and its hold."""
    if x <= 0 or (p is not None and p in ctx.half[a].driving_predecessors):
        return None
    held = _brought_in(ctx, a)
    if not held:
        return None
    q = max(held, key=lambda k: held[k])
    if p is not None and held[q] <= ctx.v[p]:
        return None
    return q, held[q]


def split_slip(ctx: WindowContext, a: str, x: int, local: bool) -> list[tuple[str, int]]:
    """Hand ``x`` days reaching ``a`` back along its driving path: [(activity, own share)].

    ``local`` stops at the first driver not finished at the later data date
    (its share is its own lateness; the rest is inherited from work in progress).
    """
    out: list[tuple[str, int]] = []
    seen: set[str] = set()
    while x != 0:
        seen.add(a)
        if a not in ctx.v:  # added work (reached from the activity it held)
            p = _added_driver(ctx, a)
            if p is None or p in seen:
                out.append((a, x))
                break
            if p not in ctx.v:  # added work held by added work: the days pass on whole
                out.append((a, 0))
                a = p
                continue
        else:
            p = _driver(ctx, a, x)
            rev = _revised_driver(ctx, a, x, p)
            if rev is not None:
                # Held by work or logic that a revision brought in: the days it
                # held ``a`` are that revision's, whatever the grouping of windows.
                q, h = rev
                if q in ctx.v:  # new logic from existing work: the event that changed ``a``'s logic
                    out.append((a, x))
                    break
                inherited = min(h, x)
                out.append((a, x - inherited))
                if local and ctx.run.after[q].status != "finished":
                    break
                a, x = q, inherited
                continue
            if p is None or p in seen:
                out.append((a, x))
                break
        vp = ctx.v[p]
        if x < 0:
            inherited = max(min(vp, 0), x)
        elif vp > 0 and a in ctx.v and ctx.half[a].status == "not-started" and p in ctx.half[a].driving_predecessors:
            # Work not started keeps its plan: logic alone places it, so what
            # reaches it beyond its driver's variance is the calendars' effect
            # on that same delay (a non-working period crossed), not its own.
            inherited = x
        else:
            # Of ``a``'s variance only the last ``x`` days reach the completion;
            # the first ``v(a) - x`` were absorbed by float after ``a``. The
            # driver's days came first, so they were absorbed first (float is
            # used first come, first served: SCL Protocol 2nd ed., core
            # principle 8, from memory); ``a`` keeps its own days first.
            va = ctx.v.get(a, x)
            inherited = min(max(vp - max(va - x, 0), 0), x)
        out.append((a, x - inherited))
        if inherited == 0 or (local and ctx.half[p].status != "finished"):
            break
        a, x = p, inherited
    return out


# --- events and parties ------------------------------------------------------------


def apportion_days(days: int, weights: Sequence[int]) -> list[int]:
    """Split ``days`` in proportion to ``weights`` so the parts add up (largest remainder)."""
    total = sum(weights)
    base = [days * w // total for w in weights]
    rest = days - sum(base)
    order = sorted(range(len(weights)), key=lambda i: (-(days * weights[i] % total), i))
    for i in order[:rest]:
        base[i] += 1
    return base


def _performer(ctx: WindowContext, aid: str) -> tuple[str, str | None]:
    act = ctx.run.half.activities.get(aid) or ctx.run.later.activities.get(aid)
    party = ctx.casefile.parties.get(act.party) if act is not None and act.party else None
    if party is None:
        return UNASSIGNED, None
    return party.id, DEFAULT_CATEGORY.get(party.role)


def attribute_days(ctx: WindowContext, aid: str, days: int) -> list[Contributor]:
    w = ctx.run.window
    if days > 0:
        covering = [
            (ev, n)
            for ev in ctx.casefile.events
            if aid in ev.activities and (n := event_overlap(ev, w.start, w.end)) > 0
        ]
        if not covering and aid in w.added:
            # added work answers to the event that brought it in (its fragnet or listed work)
            covering = [
                (ev, max(1, event_overlap(ev, w.start, w.end)))
                for ev in ctx.casefile.events
                if aid in event_activity_ids(ctx.casefile, ev)
            ]
        if covering:
            parts = apportion_days(days, [n for _, n in covering])
            return [
                Contributor(aid, d, ev.id, ev.party, ev.category)
                for (ev, _), d in zip(covering, parts, strict=True)
                if d
            ]
    party, category = _performer(ctx, aid)
    return [Contributor(aid, days, None, party, category)]


# --- the table ---------------------------------------------------------------------


def contributors_table(analysis: DelayAnalysis) -> Table:
    """One row per contributor (and per revision share) of every window."""
    rows: list[tuple[object, ...]] = []
    for att in analysis.attributions:
        for c in att.contributors:
            rows.append((att.window_label, "progress", c.activity, c.days, c.event, c.party, c.category))
        for s in att.revision:
            rows.append((att.window_label, "revision", s.activities, s.days, s.event, s.party, s.category))
        if att.unattributed_revision:
            rows.append((att.window_label, "revision", None, att.unattributed_revision, None, UNATTRIBUTED_REVISION, None))
    return Table("contributors", ("window", "effect", "activity", "days", "event", "party", "category"), tuple(rows))
