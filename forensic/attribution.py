"""Attribution of every day of a window's slip: contributors, events, parties, concurrency, ledger.

The windows analysis (:mod:`forensic.windows`) says how far completion moved
in each window and splits it into a progress slip and a revision slip. This
module says *who and what* moved it.

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
* the driver *inherits* ``I = clamp(v(driver), 0, X)`` of the ``X`` days
  reaching ``a`` (for a gain, ``clamp(v(driver), X, 0)``), and ``a`` keeps
  ``X - I`` as its own share; the walk continues with ``X = I``;
* except that work not started at the later data date, placed by its
  engine driving predecessor, keeps nothing when that driver's variance has
  the sign of ``X``: the driver inherits all ``X``. Such work has no
  progress of its own in the window (the half-step keeps its plan), so what
  reaches it beyond its driver's variance is the same delay stretched by a
  non-working period of the calendars (a holiday or a shutdown crossed).

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
in date order (:func:`_take_out`): the activities the later update added
that are the event's (its fragnet's or its listed activities) are deleted,
their links bridged as the but-for analysis does; and, for an event whose
dates overlap the window, its listed activities not yet started get back
the earlier update's durations, and the links into them that the later
update added or removed are undone (a re-plan of the contractor's, say, is
an event of the contractor naming the re-planned work). The remainder is
*unattributed revision*.

Concurrency
-----------
Concurrent delay, in the SCL Protocol's sense, is the occurrence of two or
more delay events at the same time, one the employer's risk and one the
contractor's, whose effects are felt at the same time (SCL Delay and
Disruption Protocol, 2nd ed., core principle 10 and paras. 10.3-10.4, paragraph numbers from memory); AACE
RP 29R-03 (sec. 4.2) calls the test of it a but-for test of each party's
delays. Here "at the same time" is the window, and the test is run on the
whole window slip, progress and revision: on the later update, each party's
delays are removed alone, then all parties' at once. A party's delays are
(a) the days of lateness it owns on work not finished at the later data date
(its remaining duration is shortened by that many working days), and
(b) the revisions its events brought in (taken out as for the revision
shares above: added fragnet work deleted and bridged, re-planned durations
and links undone). With ``R(P)`` the days of the window's slip recovered by
removing party ``P`` alone and ``R(all)`` by removing all, the *concurrent*
days are ``max(0, R(all) - sum of max(0, R(P)))``: days that removing
either party's delays alone would not recover but removing both does. The
parties involved are those whose removal matters jointly but not alone
(``R(all) - R(all but P) > R(P)``); the events named are those behind the
involved parties' shares of the slip. The concurrent days are at most the
involved parties' positive shares (progress contributors and revision
shares); they are taken out of those shares, first out of each involved
party's excess over ``R(P)`` (so each party keeps the days only its own
delays explain), and reported with category ``concurrent``, so every sum
still adds up.

Ledger
------
Per window: days by category (excusable-compensable, excusable-
noncompensable, non-excusable), concurrent days, gains (negative shares),
days of activities with no performing party (``unassigned``) and
unattributed revision; their total is the window's slip. The cumulative
ledger's last row is the slip from the baseline's completion to the last
update's completion.

References
----------
AACE International Recommended Practice 29R-03, Forensic Schedule Analysis,
protocols 3.3 and 3.4 and section 4 (excusability, compensability,
concurrency).
Society of Construction Law, Delay and Disruption Protocol, 2nd ed. (2017),
core principles 10 and paras. 10-11.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass, replace
from datetime import date, timedelta
from typing import Any

import numpy as np

from .butfor import bridge_links
from .calendars import day_number, from_day_number, previous_workday, workdays_between
from .engine import ScheduleResult, schedule
from .model import CATEGORIES, DEFAULT_CATEGORY, Casefile, Event, Snapshot, frozen_mapping
from .tables import Table
from .windows import WindowRun, WindowsAnalysis, analyse_windows, unit_counter, unit_shift

__all__ = [
    "CONCURRENCY_RULE",
    "Concurrency",
    "Contributor",
    "DelayAnalysis",
    "Ledger",
    "LedgerEntry",
    "RevisionShare",
    "WindowAttribution",
    "analyse_delay",
    "attribute_window",
    "concurrency_table",
    "contributors_table",
    "delay_json",
    "ledger_table",
]

UNASSIGNED = "unassigned"
UNATTRIBUTED_REVISION = "unattributed-revision"
CONCURRENT = "concurrent"
CONCURRENCY_RULE = (
    "concurrent days = days of the window's whole slip (progress and revision) that removing "
    "either party's delays alone does not recover but removing both does: max(0, R(all) - sum "
    "of R(party)), each party's delays being its lateness on unfinished work and the revisions "
    "its events brought in (but-for test in the window; SCL Protocol 2nd ed., core principle 10; "
    "AACE RP 29R-03 sec. 4.2)"
)


@dataclass(frozen=True, slots=True)
class Contributor:
    """One activity's share of a window's progress slip, and who answers for it.

    ``event`` is ``None`` when no event covers the share (then it is
    unexplained, or a gain); ``category`` is one of the contract categories,
    ``"concurrent"``, or ``None`` for an activity with no performing party.
    """

    activity: str
    days: int
    event: str | None
    party: str
    category: str | None


@dataclass(frozen=True, slots=True)
class RevisionShare:
    """Days of a window's revision slip that an event's fragnet (or activities) brought in."""

    event: str
    days: int
    party: str
    category: str
    activities: tuple[str, ...]


@dataclass(frozen=True, slots=True)
class Concurrency:
    """The concurrency test of one window (see the module notes for the rule)."""

    days: int
    parties: tuple[str, ...]
    events: tuple[str, ...]
    recovered_alone: Mapping[str, int]
    recovered_together: int
    rule: str = CONCURRENCY_RULE


@dataclass(frozen=True, slots=True)
class WindowAttribution:
    """Every day of one window's slip, attributed.

    ``sum(contributors.days) == window.progress_slip``;
    ``sum(revision.days) + unattributed_revision == window.revision_slip``;
    ``sum(by_party.values()) + concurrent.days == window.slip``.
    ``unexplained`` counts the positive days that no event covers.
    """

    window_label: str
    contributors: tuple[Contributor, ...]
    revision: tuple[RevisionShare, ...]
    unattributed_revision: int
    by_party: Mapping[str, int]
    concurrent: Concurrency
    unexplained: int


@dataclass(frozen=True, slots=True)
class LedgerEntry:
    """Days by category for a window (or from the baseline to a window's end).

    ``total`` is the sum of every field but ``unexplained``, which is a memo:
    the part of the categories that no event explains.
    """

    window: str
    excusable_compensable: int
    excusable_noncompensable: int
    non_excusable: int
    concurrent: int
    gains: int
    unassigned: int
    unattributed_revision: int
    unexplained: int
    total: int


@dataclass(frozen=True, slots=True)
class Ledger:
    """The delay ledger: per window, cumulative, and whether it balances to the total slip."""

    windows: tuple[LedgerEntry, ...]
    cumulative: tuple[LedgerEntry, ...]
    total: LedgerEntry
    baseline_completion: date
    last_completion: date
    total_slip: int
    balanced: bool


@dataclass(frozen=True, slots=True)
class DelayAnalysis:
    """The windows analysis with every day attributed and the ledger."""

    unit: str
    windows: WindowsAnalysis
    attributions: tuple[WindowAttribution, ...]
    ledger: Ledger


# --- the walk along the driving path ---------------------------------------------


@dataclass(frozen=True, slots=True)
class _Ctx:
    casefile: Casefile
    run: WindowRun
    half: ScheduleResult
    before: ScheduleResult
    v: Mapping[str, int]
    preds: Mapping[str, tuple[tuple[str, str], ...]]


def _column(result: ScheduleResult, name: str) -> np.ndarray:
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


def _context(casefile: Casefile, run: WindowRun) -> _Ctx:
    count = unit_counter(casefile)
    half, before = run.half_result, run.before
    h_ids, b_ids = list(half.activities), list(before.activities)
    fh = _counts(count, _column(half, "finish_day"))
    fb = _counts(count, _column(before, "finish_day"))
    if h_ids != b_ids:  # align the earlier schedule on the half-step's activities
        pos = {a: i for i, a in enumerate(b_ids)}
        keep = [i for i, a in enumerate(h_ids) if a in pos]
        fh = fh[keep]
        fb = fb[[pos[h_ids[i]] for i in keep]]
        h_ids = [h_ids[i] for i in keep]
    v = dict(zip(h_ids, (fh - fb).tolist(), strict=True))
    preds: dict[str, list[tuple[str, str]]] = {}
    for link in run.half.links:
        preds.setdefault(link.succ, []).append((link.pred, link.type))
    return _Ctx(casefile, run, half, before, v, {k: tuple(x) for k, x in preds.items()})


def _calendar(ctx: _Ctx, aid: str):
    act = ctx.run.half.activities[aid]
    return ctx.casefile.calendars[act.calendar or ctx.casefile.project.default_calendar]


def _held(ctx: _Ctx, p: str, typ: str, a: str) -> bool:
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


def _driver(ctx: _Ctx, a: str, x: int) -> str | None:
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


def _split(ctx: _Ctx, a: str, x: int, local: bool) -> list[tuple[str, int]]:
    """Hand ``x`` days reaching ``a`` back along its driving path: [(activity, own share)].

    ``local`` stops at the first driver not finished at the later data date
    (its share is its own lateness; the rest is inherited from work in progress).
    """
    out: list[tuple[str, int]] = []
    seen: set[str] = set()
    while x != 0:
        seen.add(a)
        p = _driver(ctx, a, x)
        if p is None or p in seen:
            out.append((a, x))
            break
        vp = ctx.v[p]
        inherited = min(max(vp, 0), x) if x > 0 else max(min(vp, 0), x)
        if inherited and ctx.half[a].status == "not-started" and p in ctx.half[a].driving_predecessors:
            # Work not started keeps its plan: logic alone places it, so what
            # reaches it beyond its driver's variance is the calendars' effect
            # on that same delay (a non-working period crossed), not its own.
            inherited = x
        out.append((a, x - inherited))
        if inherited == 0 or (local and ctx.half[p].status != "finished"):
            break
        a, x = p, inherited
    return out


# --- events and parties ------------------------------------------------------------


def _overlap(ev: Event, start: date, end: date) -> int:
    """Calendar days of the event within the window [start, end)."""
    lo = max(ev.start, start)
    hi = min(ev.finish, end - timedelta(days=1))
    return (hi - lo).days + 1 if hi >= lo else 0


def _apportion(days: int, weights: Sequence[int]) -> list[int]:
    """Split ``days`` in proportion to ``weights`` so the parts add up (largest remainder)."""
    total = sum(weights)
    base = [days * w // total for w in weights]
    rest = days - sum(base)
    order = sorted(range(len(weights)), key=lambda i: (-(days * weights[i] % total), i))
    for i in order[:rest]:
        base[i] += 1
    return base


def _performer(ctx: _Ctx, aid: str) -> tuple[str, str | None]:
    act = ctx.run.half.activities.get(aid) or ctx.run.later.activities.get(aid)
    party = ctx.casefile.parties.get(act.party) if act is not None and act.party else None
    if party is None:
        return UNASSIGNED, None
    return party.id, DEFAULT_CATEGORY.get(party.role)


def _attribute(ctx: _Ctx, aid: str, days: int) -> list[Contributor]:
    w = ctx.run.window
    if days > 0:
        covering = [
            (ev, n)
            for ev in ctx.casefile.events
            if aid in ev.activities and (n := _overlap(ev, w.start, w.end)) > 0
        ]
        if covering:
            parts = _apportion(days, [n for _, n in covering])
            return [
                Contributor(aid, d, ev.id, ev.party, ev.category)
                for (ev, _), d in zip(covering, parts, strict=True)
                if d
            ]
    party, category = _performer(ctx, aid)
    return [Contributor(aid, days, None, party, category)]


# --- revision-borne delay: what an event's changes to the plan brought in ----------


def _event_ids(cf: Casefile, ev: Event) -> set[str]:
    ids = set(ev.activities)
    frag = cf.fragnets.get(ev.fragnet) if ev.fragnet else None
    if frag is not None:
        ids |= set(frag.activities)
    return ids


def _take_out(ctx: _Ctx, snap: Snapshot, events: Sequence[Event]) -> tuple[Snapshot, tuple[str, ...]]:
    """``snap`` (a version of the later update) with these events' revisions taken out.

    * Activities the later update added that are the events' (fragnet or
      listed activities) are deleted, their links bridged as the but-for
      analysis does (:func:`forensic.butfor.bridge_links`).
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
    added = set(w.added)
    acts = dict(snap.activities)
    links = list(snap.links)
    drop: set[str] = set()
    touched: list[str] = []
    added_here = [a for a in acts if a in added] if added else []
    for ev in events:
        ids = _event_ids(ctx.casefile, ev) if added_here else set()
        for aid in added_here:
            if aid in ids and aid not in drop:
                drop.add(aid)
                touched.append(aid)
        if _overlap(ev, w.start, w.end) == 0:
            continue
        listed = set(ev.activities)
        for aid in ev.activities:
            a, e = acts.get(aid), earlier.activities.get(aid)
            if a is None or e is None or aid in drop or a.is_started:
                continue
            if (a.duration, a.remaining_duration) != (e.duration, e.remaining_duration):
                acts[aid] = replace(a, duration=e.duration, remaining=e.remaining_duration)
                touched.append(aid)
        before_keys = {lk.key for lk in earlier.links}
        after_keys = {lk.key for lk in links}
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


def _revision(ctx: _Ctx) -> tuple[tuple[RevisionShare, ...], int]:
    cf, run = ctx.casefile, ctx.run
    count = unit_counter(cf)
    current = run.later
    c_prev = count(run.after.completion)
    shares = []
    for ev in sorted(cf.events, key=lambda e: (e.start, e.id)):
        nxt, hit = _take_out(ctx, current, [ev])
        if not hit:
            continue
        current = nxt
        c = count(schedule(current, cf.calendars, cf.project).completion)
        shares.append(RevisionShare(ev.id, c_prev - c, ev.party, ev.category, hit))
        c_prev = c
    return tuple(shares), run.window.revision_slip - sum(s.days for s in shares)


# --- concurrency: but-for inside the window ----------------------------------------


def _given_back(ctx: _Ctx, snap: Snapshot, give_back: Mapping[str, int]) -> Snapshot:
    """``snap`` (the later update) with each activity's remaining duration shortened by its given-back days."""
    acts = dict(snap.activities)
    res = ctx.run.after
    for aid, days in give_back.items():
        a = acts.get(aid)
        if a is None or days <= 0 or a.is_milestone or a.duration == 0 or a.is_finished:
            continue
        finish = res[aid].early_finish
        target = unit_shift(ctx.casefile, finish, days)
        cal = ctx.casefile.calendars[a.calendar or ctx.casefile.project.default_calendar]
        r = workdays_between(cal, target + timedelta(days=1), finish + timedelta(days=1))
        acts[aid] = replace(a, remaining=max(0, a.remaining_duration - r))
    return replace(snap, id=snap.id + "-butfor", activities=frozen_mapping(acts))


def _concurrency(ctx: _Ctx, chain: list[Contributor], revision: Sequence[RevisionShare]) -> Concurrency:
    cf = ctx.casefile
    count = unit_counter(cf)
    own: dict[str, dict[str, int]] = {}  # activity -> {party: days of its lateness}
    status = _column(ctx.half, "status").tolist()
    for aid, st in zip(ctx.half.activities, status, strict=True):
        if st == 2 or ctx.v.get(aid, 0) <= 0:  # 2: finished
            continue
        for owner, d in _split(ctx, aid, ctx.v[aid], local=True):
            if d <= 0:
                continue
            for c in _attribute(ctx, owner, d):
                own.setdefault(aid, {}).setdefault(c.party, 0)
                own[aid][c.party] += c.days
    revising: dict[str, list[Event]] = {}  # party -> its events that revised the plan here
    for ev in sorted(cf.events, key=lambda e: (e.start, e.id)):
        if _take_out(ctx, ctx.run.later, [ev])[1]:
            revising.setdefault(ev.party, []).append(ev)
    parties = sorted({p for m in own.values() for p in m} | set(revising))
    slip = ctx.run.window.slip
    if len(parties) < 2:
        return Concurrency(0, (), (), frozen_mapping({}), 0)

    runs: dict[frozenset[str], int] = {}  # each group is rescheduled once

    def recovered(group: set[str]) -> int:
        key = frozenset(group)
        if key not in runs:
            give = {a: sum(d for p, d in m.items() if p in group) for a, m in own.items()}
            snap = _given_back(ctx, ctx.run.later, give)
            snap, _ = _take_out(ctx, snap, [ev for p in sorted(group) for ev in revising.get(p, ())])
            res = schedule(snap, cf.calendars, cf.project)
            runs[key] = slip - (count(res.completion) - count(ctx.before.completion))
        return runs[key]

    alone = {p: recovered({p}) for p in parties}
    together = recovered(set(parties))
    days = max(0, together - sum(max(0, r) for r in alone.values()))
    # Who is involved matters only when there are concurrent days; the
    # "all but P" runs are skipped otherwise (they change nothing reported).
    involved = tuple(p for p in parties if together - recovered(set(parties) - {p}) > alone[p]) if days else ()
    held = sum(c.days for c in chain if c.party in involved and c.days > 0)
    held += sum(s.days for s in revision if s.party in involved and s.days > 0)
    days = min(days, held)
    # The events named are those behind the involved parties' shares of this
    # window's slip (on the controlling path, or revision), not every event
    # of theirs that made some path late.
    shares = [(c.party, c.event, c.days) for c in chain] + [(s.party, s.event, s.days) for s in revision]
    events = tuple(sorted({e for p, e, d in shares if p in involved and e and d > 0}))
    return Concurrency(days, involved if days else (), events if days else (), frozen_mapping(alone), together)


def _take_concurrent(
    chain: list[Contributor], revision: Sequence[RevisionShare], conc: Concurrency
) -> tuple[list[Contributor], list[RevisionShare]]:
    """Move the concurrent days out of the involved parties' shares (rule in the module notes).

    Each involved party ``P`` should keep ``R(P)``, the days only its own
    delays explain; so the days come first out of each party's excess over
    ``R(P)`` (largest excess first, within a party its largest share first,
    progress before revision on a tie), then, if any are left, out of the
    remaining shares largest first.
    """
    items = [(c.party, c.days, 0, i) for i, c in enumerate(chain) if c.party in conc.parties and c.days > 0]
    items += [(s.party, s.days, 1, i) for i, s in enumerate(revision) if s.party in conc.parties and s.days > 0]
    held: dict[str, int] = {}
    for party, d, _, _ in items:
        held[party] = held.get(party, 0) + d
    excess = {p: max(0, d - max(0, conc.recovered_alone.get(p, 0))) for p, d in held.items()}
    order = sorted(items, key=lambda t: (-excess[t[0]], t[0], -t[1], t[2], t[3]))
    left = conc.days
    taken: dict[tuple[int, int], int] = {}
    for party, d, kind, i in order:  # first out of each party's excess
        t = min(left, d, excess[party])
        if t:
            taken[(kind, i)] = t
            excess[party] -= t
            left -= t
    for _, d, kind, i in sorted(items, key=lambda t: (-t[1], t[2], t[3])):  # then largest first
        t = min(left, d - taken.get((kind, i), 0))
        if t > 0:
            taken[(kind, i)] = taken.get((kind, i), 0) + t
            left -= t

    def split(seq, kind):
        out = []
        for i, x in enumerate(seq):
            t = taken.get((kind, i), 0)
            if x.days - t:
                out.append(replace(x, days=x.days - t))
            if t:
                out.append(replace(x, days=t, category=CONCURRENT))
        return out

    return split(chain, 0), split(revision, 1)


# --- one window, all windows, the ledger -------------------------------------------


def attribute_window(casefile: Casefile, run: WindowRun) -> WindowAttribution:
    """Attribute every day of one window's slip (rules in the module notes).

    Parameters
    ----------
    casefile : Casefile
        Supplies events, parties, fragnets, calendars and the delay unit.
    run : WindowRun
        One window of :func:`forensic.windows.analyse_windows`.

    Returns
    -------
    WindowAttribution

    References
    ----------
    AACE RP 29R-03, protocol 3.4 and sec. 4; SCL Protocol 2nd ed., core
    principle 10 and para. 11.
    """
    ctx = _context(casefile, run)
    w = run.window
    steps = _split(ctx, run.half_result.completion_id, w.progress_slip, local=False)
    chain = [c for aid, d in reversed(steps) if d for c in _attribute(ctx, aid, d)]
    revision, unattributed = _revision(ctx)
    conc = _concurrency(ctx, chain, revision)
    if conc.days:
        contributors, shares = _take_concurrent(chain, revision, conc)
        revision = tuple(shares)
    else:
        contributors = chain
    by_party: dict[str, int] = {}
    for c in contributors:
        if c.category != CONCURRENT:
            by_party[c.party] = by_party.get(c.party, 0) + c.days
    for s in revision:
        if s.category != CONCURRENT:
            by_party[s.party] = by_party.get(s.party, 0) + s.days
    if unattributed:
        by_party[UNATTRIBUTED_REVISION] = unattributed
    by_party = {k: d for k, d in by_party.items() if d}
    unexplained = sum(c.days for c in contributors if c.event is None and c.days > 0)
    return WindowAttribution(
        window_label=w.label,
        contributors=tuple(contributors),
        revision=revision,
        unattributed_revision=unattributed,
        by_party=frozen_mapping(by_party),
        concurrent=conc,
        unexplained=unexplained,
    )


_FIELDS = {
    "excusable-compensable": "excusable_compensable",
    "excusable-noncompensable": "excusable_noncompensable",
    "non-excusable": "non_excusable",
}


def _entry(label: str, att: WindowAttribution) -> LedgerEntry:
    cols = dict.fromkeys(
        ("excusable_compensable", "excusable_noncompensable", "non_excusable", "concurrent", "gains", "unassigned"), 0
    )
    items: list[tuple[int, str | None]] = [(c.days, c.category) for c in att.contributors]
    items += [(s.days, s.category) for s in att.revision]
    for d, cat in items:
        if cat == CONCURRENT:
            cols["concurrent"] += d
        elif d < 0:
            cols["gains"] += d
        elif cat in CATEGORIES:
            cols[_FIELDS[cat]] += d
        else:
            cols["unassigned"] += d
    total = sum(cols.values()) + att.unattributed_revision
    return LedgerEntry(label, **cols, unattributed_revision=att.unattributed_revision, unexplained=att.unexplained, total=total)


def _add(label: str, a: LedgerEntry, b: LedgerEntry) -> LedgerEntry:
    names = [f for f in LedgerEntry.__slots__ if f != "window"]
    return LedgerEntry(label, *(getattr(a, f) + getattr(b, f) for f in names))


def analyse_delay(casefile: Casefile, windows: Sequence[str] | None = None) -> DelayAnalysis:
    """The windows analysis with the half-step split, attribution, concurrency and the ledger.

    Parameters
    ----------
    casefile : Casefile
    windows : sequence of snapshot ids, optional
        Window boundaries (see :func:`forensic.windows.window_boundaries`).

    Returns
    -------
    DelayAnalysis
        Its ledger's total equals the slip from the baseline's completion
        to the last update's completion (``ledger.balanced``).

    References
    ----------
    AACE RP 29R-03, protocols 3.3 and 3.4; SCL Protocol 2nd ed.
    """
    an = analyse_windows(casefile, windows)
    atts = tuple(attribute_window(casefile, run) for run in an.runs)
    per = tuple(_entry(a.window_label, a) for a in atts)
    cum = []
    running = None
    first = an.windows[0].from_id
    for e, w in zip(per, an.windows, strict=True):
        label = f"{first}-{w.to_id}"
        running = replace(e, window=label) if running is None else _add(label, running, e)
        cum.append(running)
    total = replace(cum[-1], window="total")
    balanced = total.total == an.total_slip and all(e.total == w.slip for e, w in zip(per, an.windows, strict=True))
    ledger = Ledger(per, tuple(cum), total, an.baseline_completion, an.last_completion, an.total_slip, balanced)
    return DelayAnalysis(an.unit, an, atts, ledger)


# --- tables and JSON ---------------------------------------------------------------


def contributors_table(analysis: DelayAnalysis) -> Table:
    """One row per contributor (and per revision share) of every window."""
    rows = []
    for att in analysis.attributions:
        for c in att.contributors:
            rows.append((att.window_label, "progress", c.activity, c.days, c.event, c.party, c.category))
        for s in att.revision:
            rows.append((att.window_label, "revision", s.activities, s.days, s.event, s.party, s.category))
        if att.unattributed_revision:
            rows.append((att.window_label, "revision", None, att.unattributed_revision, None, UNATTRIBUTED_REVISION, None))
    return Table("contributors", ("window", "effect", "activity", "days", "event", "party", "category"), tuple(rows))


def concurrency_table(analysis: DelayAnalysis) -> Table:
    """One row per window with concurrent days: the days, parties, events and the but-for figures."""
    rows = []
    for att in analysis.attributions:
        c = att.concurrent
        if c.days:
            alone = " ".join(f"{p}:{d}" for p, d in sorted(c.recovered_alone.items()))
            rows.append((att.window_label, c.days, c.parties, c.events, alone, c.recovered_together))
    return Table(
        "concurrency",
        ("window", "concurrent_days", "parties", "events", "recovered_alone", "recovered_together"),
        tuple(rows),
    )


LEDGER_COLUMNS = tuple(LedgerEntry.__slots__)


def ledger_table(analysis: DelayAnalysis, cumulative: bool = False) -> Table:
    """The ledger, per window (or cumulative), with a total row."""
    led = analysis.ledger
    entries = [*(led.cumulative if cumulative else led.windows), led.total]
    rows = tuple(tuple(getattr(e, f) for f in LEDGER_COLUMNS) for e in entries)
    return Table("ledger-cumulative" if cumulative else "ledger", LEDGER_COLUMNS, rows)


def _entry_json(e: LedgerEntry) -> dict[str, Any]:
    return {f: getattr(e, f) for f in LEDGER_COLUMNS}


def delay_json(analysis: DelayAnalysis) -> dict[str, Any]:
    """The ``forensic windows --json`` object (keys documented in docs/windows.md; a contract)."""
    windows = []
    for run, att in zip(analysis.windows.runs, analysis.attributions, strict=True):
        w = run.window
        windows.append(
            {
                "from": w.from_id,
                "to": w.to_id,
                "start": w.start,
                "end": w.end,
                "completion_before": w.completion_before,
                "completion_after": w.completion_after,
                "half_step_completion": w.half_step_completion,
                "slip": w.slip,
                "progress_slip": w.progress_slip,
                "revision_slip": w.revision_slip,
                "critical_path_before": list(w.critical_path_before),
                "critical_path_after": list(w.critical_path_after),
                "contributors": [
                    {"activity": c.activity, "days": c.days, "event": c.event, "party": c.party, "category": c.category}
                    for c in att.contributors
                ],
                "by_party": dict(att.by_party),
                "concurrent": {
                    "days": att.concurrent.days,
                    "parties": list(att.concurrent.parties),
                    "events": list(att.concurrent.events),
                    "recovered_alone": dict(att.concurrent.recovered_alone),
                    "recovered_together": att.concurrent.recovered_together,
                },
                "unexplained": att.unexplained,
                "revision": [
                    {"event": s.event, "days": s.days, "party": s.party, "category": s.category, "activities": list(s.activities)}
                    for s in att.revision
                ],
                "unattributed_revision": att.unattributed_revision,
                "added": list(w.added),
                "deleted": list(w.deleted),
                "path_joined": list(w.path_joined),
                "path_left": list(w.path_left),
            }
        )
    led = analysis.ledger
    return {
        "unit": analysis.unit,
        "windows": windows,
        "ledger": {
            "windows": [_entry_json(e) for e in led.windows],
            "cumulative": [_entry_json(e) for e in led.cumulative],
            "total": _entry_json(led.total),
            "baseline_completion": led.baseline_completion,
            "last_completion": led.last_completion,
            "total_slip": led.total_slip,
            "balanced": led.balanced,
            "concurrency_rule": CONCURRENCY_RULE,
        },
    }
