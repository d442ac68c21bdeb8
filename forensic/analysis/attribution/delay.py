"""Attribution of every day of a window's slip: contributors, events, parties, concurrency, ledger.

The windows analysis (:mod:`forensic.analysis.windows`) says how far completion moved
in each window and splits it into a progress slip and a revision slip. This
module says *who and what* moved it, joining three steps, each in its own
module with its rule:

* :mod:`forensic.analysis.attribution.contributors`: the contributor rule (the progress slip
  handed back along the driving path), events and parties, and the revision
  shares of the events that brought revisions in;
* :mod:`forensic.analysis.attribution.concurrency`: the but-for test for concurrent delay inside
  the window, and taking the concurrent days out of the parties' shares;
* :mod:`forensic.analysis.attribution.ledger`: the days by category, per window and cumulative.

:func:`analyse_delay` runs them over every window; :func:`delay_json` is the
``forensic windows --json`` object. The records and tables of the three
modules are importable from here as well.

References
----------
AACE International Recommended Practice 29R-03, Forensic Schedule Analysis,
protocols 3.3 and 3.4 and section 4 (excusability, compensability,
concurrency).
Society of Construction Law, Delay and Disruption Protocol, 2nd ed. (2017),
core principles 10 and paras. 10-11.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, replace
from datetime import date, timedelta
from typing import Any

from forensic.analysis.attribution.concurrency import (
    CONCURRENCY_RULE,
    CONCURRENT,
    concurrency_table,
    find_concurrency,
    resolve_concurrency,
    rule_words,
    take_concurrent,
)
from forensic.analysis.attribution.contributors import (
    UNATTRIBUTED_REVISION,
    attribute_days,
    contributors_table,
    split_slip,
    window_context,
)
from forensic.analysis.attribution.floatuse import (
    float_ledger,
    float_ledger_json,
    float_used_json,
    window_float_use,
)
from forensic.analysis.attribution.ledger import (
    build_ledger,
    ledger_json,
    ledger_table,
)
from forensic.analysis.attribution.results import (
    Concurrency,
    Contributor,
    DelayAnalysis,
    Ledger,
    LedgerEntry,
    Pacing,
    PathFloatUse,
    RevisionShare,
    Slice,
    SliceDelay,
    WindowAttribution,
    WindowContext,
    sum_counts,
)
from forensic.analysis.attribution.revision import revision_shares
from forensic.analysis.runcache import RunCache, cached_schedule
from forensic.analysis.slices import DailyProgress, daily_progress, path_switch_cuts, slice_cuts
from forensic.analysis.windows import WindowRun, iter_window_runs, window_run, windows_analysis
from forensic.core.calendars import workdays_between
from forensic.core.engine import ScheduleResult
from forensic.core.model import Casefile, Snapshot, frozen_mapping

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
    "rule_words",
    "ledger_table",
]


def _pacing(ctx, chain, revision) -> tuple[Pacing, ...]:
    """Possible pacing in one slice (flag only; the analyst decides).

    Where an owner's delay drives the slice (a positive owner share of its
    slip), a late activity whose own lateness is the contractor's and that
    passes no day to the slip ran late inside the float the owner's delay
    made (its lateness in working days is more than its total float in the
    earlier update, yet its float in the slice's half-step is not negative):
    it is listed with its days of lateness, as *possible pacing*
    (SCL Protocol 2nd ed., Part B guidance on pacing; AACE RP 29R-03
    sec. 4.2, from memory). Nothing is moved in the figures.
    """
    cf = ctx.casefile
    roles = {p.id: p.role for p in cf.parties.values()}
    owners = sorted({x.event for x in (*chain, *revision) if x.days > 0 and roles.get(x.party) == "owner" and x.event})
    if not owners:
        return ()
    on_path = {c.activity for c in chain if c.days}
    w = ctx.run.window
    out = []
    for aid in ctx.half.activities:
        v = ctx.v.get(aid, 0)
        if v <= 0 or aid in on_path or ctx.half[aid].status == "finished":
            continue
        b, h = ctx.before[aid], ctx.half[aid]
        if b.total_float is None or h.total_float is None or h.total_float < 0:
            continue
        act = ctx.run.half.activities[aid]
        cal = cf.calendars[act.calendar or cf.project.default_calendar]
        late = workdays_between(cal, b.early_finish + timedelta(days=1), h.early_finish + timedelta(days=1))
        if late <= b.total_float:  # within its own float: it would not have delayed completion alone
            continue
        for owner_aid, d in split_slip(ctx, aid, v, local=True):
            if d <= 0 or owner_aid in on_path:
                continue
            for c in attribute_days(ctx, owner_aid, d):
                if roles.get(c.party) == "contractor":
                    out.append(Pacing(w.start, w.end, owner_aid, c.event, c.party, c.days, tuple(owners)))
    merged: dict[tuple, Pacing] = {}
    for x in out:
        key = (x.activity, x.event)
        merged[key] = x if key not in merged else replace(merged[key], days=max(merged[key].days, x.days))
    return tuple(merged.values())


# --- one window, all windows ---------------------------------------------------------


def attribute_window(casefile: Casefile, run: WindowRun, *, cache: RunCache | None = None) -> WindowAttribution:
    """Attribute every day of one window's slip.

    The rules are in the module notes of :mod:`forensic.analysis.attribution.contributors`
    (contributors, events, revision shares) and :mod:`forensic.analysis.attribution.concurrency`.
    The window is first cut into slices where the delay events acting in it
    stop overlapping (:func:`forensic.analysis.windows.slice_cuts`), the progress at
    each cut reconstructed from the two updates
    (:func:`forensic.analysis.windows.slice_snapshot`); each slice is attributed on
    its own and the figures are summed, so delays in different slices are
    sequential and never concurrent (SCL Protocol 2nd ed., core principle
    10 and Part B on concurrency). The concurrent days are then treated by
    the casefile's ``concurrency`` rule (``time-only``, ``apportion``,
    ``dominant``).

    Parameters
    ----------
    casefile : Casefile
        Supplies events, parties, fragnets, calendars and the delay unit.
    run : WindowRun
        One window of :func:`forensic.analysis.windows.analyse_windows`.
    cache : RunCache, optional
        One call's cache (:mod:`forensic.analysis.runcache`): the attribution
        before the concurrency rule is computed once per window and
        settings, so a second rule only re-treats the concurrent days.

    Returns
    -------
    WindowAttribution

    References
    ----------
    AACE RP 29R-03, protocol 3.4 and sec. 4; SCL Protocol 2nd ed., core
    principle 10 and para. 11.
    """
    if cache is None:
        found, float_used = _window_found(casefile, run, None)
    else:
        found, float_used = cache.get(casefile, "attribution before the rule", (run.earlier, run.later),
                                      lambda: _window_found(casefile, run, cache), extra=run.revision_start)
    parts = [_attribute_slice(casefile, f, run.window.label) for f in found]
    if len(parts) == 1:
        return replace(parts[0], float_used=float_used)
    by_party = sum_counts(p.by_party for p in parts)
    concs = [p.concurrent for p in parts]
    alone = sum_counts(c.recovered_alone for c in concs)
    conc = Concurrency(
        days=sum(c.days for c in concs),
        parties=tuple(sorted({x for c in concs for x in c.parties})),
        events=tuple(sorted({x for c in concs for x in c.events})),
        recovered_alone=frozen_mapping(alone),
        recovered_together=sum(c.recovered_together for c in concs),
        rule=casefile.project.concurrency,
        found=sum(c.found for c in concs),
        critical=frozen_mapping({}),
        by_rule=frozen_mapping(sum_counts(c.by_rule for c in concs)),
    )
    return WindowAttribution(
        window_label=run.window.label,
        contributors=tuple(c for p in parts for c in p.contributors),
        revision=tuple(s for p in parts for s in p.revision),
        unattributed_revision=sum(p.unattributed_revision for p in parts),
        by_party=frozen_mapping({k: d for k, d in by_party.items() if d}),
        concurrent=conc,
        unexplained=sum(p.unexplained for p in parts),
        slices=tuple(x for p in parts for x in p.slices),
        pacing=tuple(x for p in parts for x in p.pacing),
        float_used=float_used,
    )


@dataclass(frozen=True, slots=True)
class _Found:
    """One slice's attribution before the concurrency rule: it does not depend on the rule."""

    run: WindowRun
    chain: tuple[Contributor, ...]
    revision: tuple[RevisionShare, ...]
    unattributed: int
    pacing: tuple[Pacing, ...]
    concurrency: Concurrency


def _window_found(casefile: Casefile, run: WindowRun,
                  cache: RunCache | None) -> tuple[tuple[_Found, ...], tuple[PathFloatUse, ...]]:
    """Each slice of a window (the whole window when there is no cut) attributed up to the rule, and
    the float the window used on near-critical paths (both independent of the rule)."""
    ctx = window_context(casefile, run)
    float_used = window_float_use(casefile, run, ctx=ctx)
    known = {id(s): (s, r) for s, r in ((run.earlier, run.before), (run.half, run.half_result), (run.later, run.after))}

    def sched(snap: Snapshot) -> ScheduleResult:
        """Each snapshot of this window (its ends, the days probed, the cuts) scheduled once."""
        hit = known.get(id(snap))
        if hit is None or hit[0] is not snap:
            hit = known[id(snap)] = (snap, cached_schedule(cache, casefile, snap))
        return hit[1]

    progress: list[DailyProgress] = []  # built on the first day asked for: most windows never ask

    def on_day(t: date) -> Snapshot:
        if not progress:
            progress.append(daily_progress(casefile, run.earlier, run.later))
        return progress[0].on(t)

    switches = path_switch_cuts(casefile, run.earlier, run.later, sched, on_day=on_day,
                                first=run.before, last=run.half_result, half=run.half)
    cuts = sorted({*slice_cuts(casefile, run.window.start, run.window.end), *switches})
    if progress:  # the days probed and not cut on are done with
        kept = {t: progress[0].days[t] for t in cuts if t in progress[0].days}
        progress[0].days.clear()
        progress[0].days.update(kept)
        alive = {id(x) for x in (run.earlier, run.half, run.later, *kept.values())}
        for key in [k for k in known if k not in alive]:
            del known[key]
    if not cuts:
        return (_find_slice(casefile, run, ctx),), float_used
    snaps = [run.earlier, *map(on_day, cuts), run.later]
    runs = [window_run(casefile, a, b, sched) for a, b in zip(snaps, snaps[1:], strict=False)]
    # the revisions are all in the last slice (the later update's plan): an
    # event of any slice of the window may have brought them in
    runs[-1] = replace(runs[-1], revision_start=run.window.start)
    return tuple(_find_slice(casefile, r) if r.window.slip or r.window.progress_slip else _quiet_slice(casefile, r)
                 for r in runs), float_used


def _quiet_slice(casefile: Casefile, run: WindowRun) -> _Found:
    """A slice in which completion did not move, by progress or revision: nothing to attribute.

    The walk of a slip of 0 names no contributor, a plan unchanged inside
    the window has no revision share, and a concurrency test can find no
    concurrent day where no party holds a day of the slip (the days found
    are capped by the involved parties' shares), so the reruns are skipped.
    """
    return _Found(run, (), (), 0, (), Concurrency(0, (), (), frozen_mapping({}), 0, rule=casefile.project.concurrency))


def _find_slice(casefile: Casefile, run: WindowRun, ctx: WindowContext | None = None) -> _Found:
    """The contributors, revision shares, pacing and concurrency test of one slice (module notes)."""
    ctx = ctx or window_context(casefile, run)
    steps = split_slip(ctx, run.half_result.completion_id, run.window.progress_slip, local=False)
    chain = [c for aid, d in reversed(steps) if d for c in attribute_days(ctx, aid, d)]
    revision, unattributed = revision_shares(ctx)
    pacing = _pacing(ctx, chain, revision)
    conc = find_concurrency(ctx, chain, revision)
    return _Found(run, tuple(chain), revision, unattributed, pacing, conc)


def _attribute_slice(casefile: Casefile, found: _Found, label: str) -> WindowAttribution:
    """One slice attributed: its concurrent days treated by the casefile's rule (module notes)."""
    run, w = found.run, found.run.window
    revision = found.revision
    conc = replace(found.concurrency, rule=casefile.project.concurrency)
    if conc.days:
        contributors, shares = take_concurrent(list(found.chain), revision, conc)
        contributors, shares, conc = resolve_concurrency(casefile, contributors, shares, conc)
        revision = tuple(shares)
    else:
        contributors = list(found.chain)
    by_party: dict[str, int] = {}
    for c in contributors:
        if c.category != CONCURRENT:
            by_party[c.party] = by_party.get(c.party, 0) + c.days
    for s in revision:
        if s.category != CONCURRENT:
            by_party[s.party] = by_party.get(s.party, 0) + s.days
    unattributed = found.unattributed
    if unattributed:
        by_party[UNATTRIBUTED_REVISION] = unattributed
    by_party = {k: d for k, d in by_party.items() if d}
    unexplained = sum(c.days for c in contributors if c.event is None and c.days > 0)
    delays = tuple(
        [SliceDelay(c.activity, c.event, c.party, c.days) for c in contributors if c.days]
        + [SliceDelay(" ".join(s.activities), s.event, s.party, s.days) for s in revision if s.days]
    )
    return WindowAttribution(
        pacing=found.pacing,
        window_label=label,
        slices=(Slice(w.start, w.end, run.half_result.longest_path, delays),),
        contributors=tuple(contributors),
        revision=revision,
        unattributed_revision=unattributed,
        by_party=frozen_mapping(by_party),
        concurrent=conc,
        unexplained=unexplained,
    )


def analyse_delay(casefile: Casefile, windows: Sequence[str] | None = None, *,
                  cache: RunCache | None = None, keep_runs: bool = True) -> DelayAnalysis:
    """The windows analysis with the half-step split, attribution, concurrency and the ledger.

    Parameters
    ----------
    casefile : Casefile
    windows : sequence of snapshot ids, optional
        Window boundaries (see :func:`forensic.analysis.windows.window_boundaries`).
    cache : RunCache, optional
        One call's cache (:mod:`forensic.analysis.runcache`), for a caller
        that runs the analysis more than once (the sensitivity rows).
    keep_runs : bool, default True
        ``False`` keeps each window's figures and attribution only, not its
        snapshots and schedules (``windows.runs == ()``): each window is
        attributed as soon as it is run and its schedules dropped, so memory
        holds a few snapshots however many updates there are (``forensic windows``).

    Returns
    -------
    DelayAnalysis
        Its ledger's total equals the slip from the baseline's completion
        to the last update's completion (``ledger.balanced``).

    References
    ----------
    AACE RP 29R-03, protocols 3.3 and 3.4; SCL Protocol 2nd ed.
    """
    runs, figures, found = [], [], []
    for run in iter_window_runs(casefile, windows, cache=cache):
        found.append(attribute_window(casefile, run, cache=cache))
        figures.append(run.window)
        if keep_runs:
            runs.append(run)
        del run  # the window's snapshots and schedules go before the next window is run
    an = windows_analysis(casefile, figures, tuple(runs))
    atts = tuple(found)
    return DelayAnalysis(an.unit, an, atts, build_ledger(atts, an), casefile.project.concurrency)


# --- JSON --------------------------------------------------------------------------


def delay_json(analysis: DelayAnalysis) -> dict[str, Any]:
    """The ``forensic windows --json`` object (keys documented in docs/windows.md; a contract)."""
    windows = []
    for w, att in zip(analysis.windows.windows, analysis.attributions, strict=True):
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
                    "rule": att.concurrent.rule,
                    "found": att.concurrent.found,
                    "by_rule": dict(att.concurrent.by_rule),
                },
                "unexplained": att.unexplained,
                "pacing": [
                    {"start": x.start, "end": x.end, "activity": x.activity, "event": x.event,
                     "party": x.party, "days": x.days, "owner_events": list(x.owner_events)}
                    for x in att.pacing
                ],
                "slices": [
                    {
                        "start": sl.start,
                        "end": sl.end,
                        "driving_path": list(sl.driving_path),
                        "delays": [
                            {"activity": d.activity, "event": d.event, "party": d.party, "days": d.days}
                            for d in sl.delays
                        ],
                    }
                    for sl in att.slices
                ],
                "float_used": float_used_json(att.float_used),
                "revision": [
                    {"event": s.event, "days": s.days, "party": s.party, "category": s.category, "activities": list(s.activities)}
                    for s in att.revision
                ],
                "unattributed_revision": att.unattributed_revision,
                "added": list(w.added),
                "deleted": list(w.deleted),
                "path_joined": list(w.path_joined),
                "path_left": list(w.path_left),
                "path_switched": list(w.path_switched),
                "stable": not w.path_switched,
            }
        )
    return {
        "unit": analysis.unit,
        "windows": windows,
        "concurrency": {"rule": analysis.rule, "statement": rule_words(analysis.rule)},
        "ledger": {**ledger_json(analysis.ledger), "concurrency_rule": CONCURRENCY_RULE},
        "float_ledger": float_ledger_json(float_ledger(analysis), analysis.unit),
    }
