"""Concurrent delay in a window: the but-for test inside the window, and taking concurrent days out.

:mod:`forensic.analysis.attribution.contributors` gives each day of a window's slip to an
activity, an event and a party. This module asks whether two parties'
delays were concurrent in the window and, where they were, moves those
days out of the parties' shares into the category ``concurrent``, so every
sum still adds up.

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

The test runs on each slice of a window (see :mod:`forensic.analysis.attribution.delay`),
so only delays that act on overlapping dates can be concurrent. The
casefile's ``concurrency`` rule then says what the concurrent days mean
(:data:`RULE_WORDS`): ``time-only`` keeps them apart (time, no money);
``apportion`` splits them in the ratio of the parties' critical delay,
``R(all) - R(all but P)``; ``dominant`` gives them to the party with the
longest critical delay, and keeps them concurrent on a tie.

References
----------
AACE International Recommended Practice 29R-03, Forensic Schedule Analysis,
section 4.2 (concurrency, the but-for test of each party's delays).
Society of Construction Law, Delay and Disruption Protocol, 2nd ed. (2017),
core principle 10 and paras. 10.3-10.4 (paragraph numbers from memory).
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import replace
from datetime import timedelta

from forensic.analysis.attribution.contributors import (
    apportion_days,
    attribute_days,
    result_column,
    split_slip,
)
from forensic.analysis.attribution.results import (
    Concurrency,
    Contributor,
    DelayAnalysis,
    RevisionShare,
    WindowContext,
)
from forensic.analysis.attribution.revision import take_out_events
from forensic.core.calendars import workdays_between
from forensic.core.engine import schedule
from forensic.core.model import DEFAULT_CATEGORY, Casefile, Event, Snapshot, frozen_mapping
from forensic.core.tables import Table
from forensic.core.units import unit_counter, unit_shift

__all__ = ["CONCURRENCY_RULE", "CONCURRENT", "RULE_WORDS", "Concurrency", "concurrency_table", "rule_words"]

CONCURRENT = "concurrent"
CONCURRENCY_RULE = (
    "concurrent days = days of a slice's whole slip (progress and revision) that removing "
    "either party's delays alone does not recover but removing both does: max(0, R(all) - sum "
    "of R(party)), each party's delays being its lateness on unfinished work and the revisions "
    "its events brought in (but-for test in each slice of a window, a window being cut where "
    "its events stop overlapping and where the driving path switches, so delays on different "
    "dates are never concurrent; SCL Protocol 2nd ed., core principle 10; AACE RP 29R-03 sec. 4.2)"
)


# What each rule of the manifest's ``concurrency`` key does with the concurrent
# days (casefile format v2, [project] concurrency), printed with every result.
RULE_WORDS = {
    "time-only": (
        "time-only: concurrent days give time to both sides and money to neither "
        "(SCL Protocol 2nd ed., core principle 10 and Part B guidance on concurrency)"
    ),
    "apportion": (
        "apportion: concurrent days are split between the parties in the ratio of their critical "
        "delay, the days each party's delays alone would cost, R(all) - R(all but the party) "
        "(largest remainder; AACE RP 29R-03 sec. 4.2, apportionment, from memory)"
    ),
    "dominant": (
        "dominant: concurrent days go to the party whose delay drives completion, the one with "
        "the longest critical delay; on a tie they stay concurrent (time-only) "
        "(dominant cause approach; SCL Protocol 2nd ed., Part B, from memory)"
    ),
}


def rule_words(rule: str) -> str:
    """The statement of a concurrency rule, for output and the report's method statement."""
    return RULE_WORDS.get(rule, rule)


# --- concurrency: but-for inside the window ----------------------------------------


def _given_back(ctx: WindowContext, snap: Snapshot, give_back: Mapping[str, int]) -> Snapshot:
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


def find_concurrency(ctx: WindowContext, chain: list[Contributor], revision: Sequence[RevisionShare]) -> Concurrency:
    cf = ctx.casefile
    count = unit_counter(cf)
    own: dict[str, dict[str, int]] = {}  # activity -> {party: days of its lateness}
    status = result_column(ctx.half, "status").tolist()
    for aid, st in zip(ctx.half.activities, status, strict=True):
        if st == 2 or ctx.v.get(aid, 0) <= 0:  # 2: finished
            continue
        for owner, d in split_slip(ctx, aid, ctx.v[aid], local=True):
            if d <= 0:
                continue
            for c in attribute_days(ctx, owner, d):
                own.setdefault(aid, {}).setdefault(c.party, 0)
                own[aid][c.party] += c.days
    revising: dict[str, list[Event]] = {}  # party -> its events that revised the plan here
    for ev in sorted(cf.events, key=lambda e: (e.start, e.id)):
        if take_out_events(ctx, ctx.run.later, [ev])[1]:
            revising.setdefault(ev.party, []).append(ev)
    parties = sorted({p for m in own.values() for p in m} | set(revising))
    slip = ctx.run.window.slip
    if len(parties) < 2:
        return Concurrency(0, (), (), frozen_mapping({}), 0, rule=cf.project.concurrency)

    runs: dict[frozenset[str], int] = {}  # each group is rescheduled once

    def recovered(group: set[str]) -> int:
        key = frozenset(group)
        if key not in runs:
            give = {a: sum(d for p, d in m.items() if p in group) for a, m in own.items()}
            snap = _given_back(ctx, ctx.run.later, give)
            snap, _ = take_out_events(ctx, snap, [ev for p in sorted(group) for ev in revising.get(p, ())])
            res = schedule(snap, cf.calendars, cf.project)
            runs[key] = slip - (count(res.completion) - count(ctx.before.completion))
        return runs[key]

    alone = {p: recovered({p}) for p in parties}
    together = recovered(set(parties))
    days = max(0, together - sum(max(0, r) for r in alone.values()))
    # Who is involved matters only when there are concurrent days; the
    # "all but P" runs are skipped otherwise (they change nothing reported).
    critical = {p: together - recovered(set(parties) - {p}) for p in parties} if days else {}
    involved = tuple(p for p in parties if critical[p] > alone[p]) if days else ()
    held = sum(c.days for c in chain if c.party in involved and c.days > 0)
    held += sum(s.days for s in revision if s.party in involved and s.days > 0)
    days = min(days, held)
    # The events named are those behind the involved parties' shares of this
    # window's slip (on the controlling path, or revision), not every event
    # of theirs that made some path late.
    shares = [(c.party, c.event, c.days) for c in chain] + [(s.party, s.event, s.days) for s in revision]
    events = tuple(sorted({e for p, e, d in shares if p in involved and e and d > 0}))
    return Concurrency(
        days, involved if days else (), events if days else (), frozen_mapping(alone), together,
        rule=cf.project.concurrency, found=days,
        critical=frozen_mapping({p: critical[p] for p in involved}) if days else frozen_mapping({}),
    )


def _quotas(conc: Concurrency) -> dict[str, int]:
    """The concurrent days each involved party answers for under the rule (empty: they stay concurrent).

    ``apportion`` splits them in the ratio of the parties' critical delay
    (``critical``: what each party's delays alone cost, R(all) - R(all but
    it)), largest remainder, ties in party order; ``dominant`` gives them
    all to the party with the longest critical delay, and leaves them
    concurrent when two parties tie.
    """
    if not conc.days or conc.rule == "time-only":
        return {}
    parties = list(conc.parties)
    weights = [max(0, conc.critical.get(p, 0)) for p in parties]
    if not sum(weights):
        return {}
    if conc.rule == "apportion":
        return dict(zip(parties, apportion_days(conc.days, weights), strict=True))
    top = max(weights)
    if weights.count(top) > 1:
        return {}
    return {parties[weights.index(top)]: conc.days}


def resolve_concurrency(
    cf: Casefile, chain: list[Contributor], revision: list[RevisionShare], conc: Concurrency
) -> tuple[list[Contributor], list[RevisionShare], Concurrency]:
    """Give the concurrent days to the parties as the rule says (``time-only``: unchanged).

    Each party's quota is taken first from the concurrent pieces cut from its
    own shares (they get back the category of their event, or of the
    performing party's role); a party whose quota is larger than its pieces
    takes the rest on its largest share; pieces beyond the quotas go.
    Every sum still adds up: the quotas add up to the concurrent days.
    """
    quota = _quotas(conc)
    if not quota:
        return chain, revision, conc

    def category(x: Contributor) -> str | None:
        if x.event is not None:
            return cf.event(x.event).category
        party = cf.parties.get(x.party)
        return DEFAULT_CATEGORY.get(party.role) if party else None

    left = dict(quota)
    out: list[list] = [[], []]
    spare: list[list] = [[], []]  # concurrent days beyond their party's quota, by kind
    for kind, seq in ((0, chain), (1, revision)):
        for x in seq:
            if x.category != CONCURRENT:
                out[kind].append(x)
                continue
            give = min(x.days, left.get(x.party, 0))
            if give:
                left[x.party] -= give
                if isinstance(x, RevisionShare):  # a revision share always names its event
                    out[kind].append(replace(x, days=give, category=cf.event(x.event).category))
                else:
                    out[kind].append(replace(x, days=give, category=category(x)))
            if x.days - give:
                spare[kind].append(replace(x, days=x.days - give))
    # A party whose quota is larger than its own concurrent pieces takes the
    # rest from the spare days of the same kind (progress stays progress,
    # revision stays revision, so both sums still hold): on its largest share
    # of that kind, else on its event named in the concurrency, else on the
    # spare piece itself in its name.
    for party in sorted(left):
        for kind in (0, 1):
            while left[party] > 0 and spare[kind]:
                piece = spare[kind][0]
                take = min(left[party], piece.days)
                left[party] -= take
                if take == piece.days:
                    spare[kind].pop(0)
                else:
                    spare[kind][0] = replace(piece, days=piece.days - take)
                own = [(x.days, -i, i) for i, x in enumerate(out[kind]) if x.party == party and x.days > 0]
                if own:
                    i = max(own)[2]
                    out[kind][i] = replace(out[kind][i], days=out[kind][i].days + take)
                    continue
                ev = next((cf.event(e) for e in conc.events if cf.event(e).party == party), None)
                known = cf.parties.get(party)
                cat = ev.category if ev else DEFAULT_CATEGORY.get(known.role) if known is not None else None
                if kind == 0:
                    act = ev.activities[0] if ev is not None and ev.activities else piece.activity
                    out[0].append(Contributor(act, take, ev.id if ev else None, party, cat))
                else:
                    out[1].append(replace(piece, days=take, party=party, event=ev.id if ev else piece.event, category=cat))
    merged = []
    for kind in (0, 1):  # a piece given back next to the share it was cut from is one share again
        rows: list = []
        for x in out[kind]:
            if rows and (rows[-1].party, rows[-1].event, rows[-1].category, _what(rows[-1])) == (x.party, x.event, x.category, _what(x)):
                rows[-1] = replace(rows[-1], days=rows[-1].days + x.days)
            else:
                rows.append(x)
        merged.append(rows)
    return merged[0], merged[1], replace(conc, days=0, by_rule=frozen_mapping(quota))


def _what(x) -> object:
    return x.activity if isinstance(x, Contributor) else x.activities


def take_concurrent(
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


# --- the table ---------------------------------------------------------------------


def concurrency_table(analysis: DelayAnalysis) -> Table:
    """One row per window with concurrent days: the days, parties, events and the but-for figures."""
    rows = []
    for att in analysis.attributions:
        c = att.concurrent
        if c.found:
            alone = " ".join(f"{p}:{d}" for p, d in sorted(c.recovered_alone.items()))
            rows.append((att.window_label, c.days, c.parties, c.events, alone, c.recovered_together))
    return Table(
        "concurrency",
        ("window", "concurrent_days", "parties", "events", "recovered_alone", "recovered_together"),
        tuple(rows),
    )
