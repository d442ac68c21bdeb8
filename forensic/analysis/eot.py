"""The delay summary per event: every method side by side, reconciled, and how stable the answer is.

One table per claim. For each recorded event: its days by the windows
analysis (its share of the ledger, concurrent days apart), by time impact
alone, by time impact in series and by but-for (the event's own case),
with ``None`` and the reason where a method does not apply, and how the
event is represented in each. Then each method's totals by category, the
windows days that no event explains (``not_from_events``: performance
without an event, work no party is assigned, revisions no event explains,
gains, and the concurrent days that are shared between events), so that
the events' windows days plus ``not_from_events`` make the slip; the
differences between methods with their causes in days and words; and the
windows totals re-run under reasonable alternative settings.

Choosing between methods, and cross-checking one against another, is the
analyst's work: AACE RP 29R-03 (sec. 1.4 and 5, choosing a method; the
observational and modelled methods give different answers for stated
reasons) and the SCL Delay and Disruption Protocol 2nd ed. (Part B,
choice of method; core principle 10 and para. 10 on concurrency; from
memory). This module states the figures each method gives and why they
differ; it never states entitlement. The days are in the casefile's delay
unit.

Pure functions over the model and the analyses; nothing is read or written.

References
----------
AACE International Recommended Practice 29R-03, Forensic Schedule Analysis (2011).
AACE International Recommended Practice 52R-06, Time Impact Analysis (2017).
Society of Construction Law, Delay and Disruption Protocol, 2nd ed. (2017).
"""

from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

from forensic.analysis.attribution.concurrency import CONCURRENT
from forensic.analysis.attribution.contributors import UNASSIGNED
from forensic.analysis.attribution.delay import DelayAnalysis, analyse_delay
from forensic.analysis.butfor import but_for
from forensic.analysis.impact import time_impact_series, time_impacts
from forensic.analysis.runcache import RunCache
from forensic.analysis.sensitivity import SensitivityRow, sensitivity_rows
from forensic.core.errors import NotFoundError
from forensic.core.model import Casefile, frozen_mapping
from forensic.core.tables import Table

__all__ = [
    "METHODS",
    "Cause",
    "DelaySummary",
    "EventSummary",
    "MethodTotals",
    "Reconciliation",
    "SensitivityRow",
    "delay_summary",
    "eot_json",
    "eot_tables",
]

METHODS = ("windows", "impact", "impact_series", "but_for")
EXCUSABLE = ("excusable-compensable", "excusable-noncompensable")


@dataclass(frozen=True, slots=True)
class EventSummary:
    """One event, its days by each method (``None`` where a method does not apply) and how it is represented."""

    event: str
    title: str
    party: str
    category: str
    reference: str | None
    start: Any
    finish: Any
    days: Mapping[str, int | None]
    represented_as: Mapping[str, str]
    reasons: Mapping[str, str]
    concurrent: int
    excusable: int
    compensable: int


@dataclass(frozen=True, slots=True)
class MethodTotals:
    """A method's days by category (events only for the modelled methods; the whole ledger for windows)."""

    excusable_compensable: int
    excusable_noncompensable: int
    non_excusable: int
    concurrent: int | None
    total: int
    extra: Mapping[str, int] = field(default_factory=frozen_mapping)


@dataclass(frozen=True, slots=True)
class Cause:
    """One cause of a difference between two methods: its days (``None`` when it cannot be counted) and words."""

    cause: str
    days: int | None
    explanation: str


@dataclass(frozen=True, slots=True)
class Reconciliation:
    """Two methods' event totals, their difference and its causes (the counted causes add up to it)."""

    methods: tuple[str, str]
    difference: int
    causes: tuple[Cause, ...]


@dataclass(frozen=True, slots=True)
class DelaySummary:
    """The delay summary of a casefile (see the module notes); ``unit`` is the delay unit."""

    unit: str
    completion: Mapping[str, Any]
    events: tuple[EventSummary, ...]
    methods: Mapping[str, MethodTotals]
    not_from_events: Mapping[str, int]
    reconciliation: tuple[Reconciliation, ...]
    sensitivity: tuple[SensitivityRow, ...]
    tolerance: int
    notes: tuple[str, ...] = ()


# --- per method, per event -----------------------------------------------------------------


def windows_by_event(delay: DelayAnalysis) -> tuple[dict[str, int], dict[str, int], dict[str, int]]:
    """Each event's net windows days (not concurrent), its concurrent days, and the days from no event.

    An event's windows days are the contributor and revision days the
    attribution gave it, concurrent days left out; its concurrent days are
    the concurrent days of every window whose concurrency names it (shared:
    the same days appear against each event of the window). The days from no
    event are split into ``performance`` (late work with no event, charged
    to the party performing it), ``unassigned`` (work with no party),
    ``unattributed_revision`` (revisions no event explains), ``gains``
    (negative days with no event) and ``concurrent`` (each window's
    concurrent days once).
    """
    own: dict[str, int] = {}
    shared: dict[str, int] = {}
    rest = {"performance": 0, "unassigned": 0, "unattributed_revision": 0, "gains": 0, "concurrent": 0}
    for att in delay.attributions:
        for c in att.contributors:
            if c.category == CONCURRENT:
                continue
            if c.event is not None:
                own[c.event] = own.get(c.event, 0) + c.days
            elif c.days < 0:
                rest["gains"] += c.days
            elif c.party == UNASSIGNED:
                rest["unassigned"] += c.days
            else:
                rest["performance"] += c.days
        for s in att.revision:
            if s.category != CONCURRENT:
                own[s.event] = own.get(s.event, 0) + s.days
        rest["unattributed_revision"] += att.unattributed_revision
        rest["concurrent"] += att.concurrent.days
        for e in att.concurrent.events:
            shared[e] = shared.get(e, 0) + att.concurrent.days
    return own, shared, rest


def _impact_alone(casefile: Casefile, cache: RunCache) -> tuple[dict[str, tuple[int | None, str, str]], dict[str, str]]:
    """Each event's time impact alone: (days, represented as, reason), and the update each went into."""
    series = time_impacts(casefile, [e.id for e in casefile.events], cache=cache)
    out: dict[str, tuple[int | None, str, str]] = {}
    into = {r.event: r.into for r in series.individual if r.represented_as != "not-represented"}
    for r in series.individual:
        how = r.represented_as
        if how == "not-represented":
            why = "; ".join(rep.why for rep in r.represented if rep.why) or "nothing can be inserted for it"
            out[r.event] = (None, how, why)
        else:
            out[r.event] = (r.impact, how, f"inserted alone into {r.into}, its unimpacted update, as {how}")
    return out, into


def _impact_series(casefile: Casefile, cache: RunCache) -> dict[str, tuple[int | None, str, str]]:
    """Each event's step in the contemporaneous series (AACE RP 29R-03, MIP 3.7)."""
    series = time_impact_series(casefile, cache=cache)
    out: dict[str, tuple[int | None, str, str]] = {}
    for st in series.steps:
        if st.represented_as == "not-represented":
            out[st.event] = (None, st.represented_as, f"nothing could be inserted into {st.into} for it")
        else:
            carried = " (the impacted result of the step before, carried forward)" if st.carried else ""
            out[st.event] = (st.impact, st.represented_as, f"inserted into {st.into}{carried}")
    return out


def _but_for_each(casefile: Casefile, cache: RunCache) -> dict[str, tuple[int | None, str, str]]:
    """Each event's own but-for case, removed from the latest as-built schedule: (days, represented as, reason).

    The as-built schedule is built once for all the events (``cache``).
    """
    out: dict[str, tuple[int | None, str, str]] = {}
    for e in casefile.events:
        report = but_for(casefile, event=e.id, cache=cache)
        case = report.cases[0]
        rep = next((d for d in report.as_built.events if d.event == e.id), None)
        how = rep.how if rep is not None else "not-represented"
        if e.id in case.not_represented or how == "not-represented":
            why = (rep.why if rep is not None and rep.why else "the as-built record holds nothing the event can be taken out of")
            out[e.id] = (None, "not-represented", why)
            continue
        out[e.id] = (case.difference, how, f"removed from the as-built schedule of {report.as_built.source}")
    return out


def _category_totals(events: Sequence[EventSummary], method: str, concurrent: int | None) -> MethodTotals:
    sums = {c: 0 for c in ("excusable-compensable", "excusable-noncompensable", "non-excusable")}
    for e in events:
        d = e.days.get(method)
        if d is not None and e.category in sums:
            sums[e.category] += d
    total = sum(sums.values()) + (concurrent or 0)
    return MethodTotals(sums["excusable-compensable"], sums["excusable-noncompensable"], sums["non-excusable"],
                        concurrent, total)


# --- reconciliation ------------------------------------------------------------------------


def _total(events: Sequence[EventSummary], method: str) -> int:
    return sum(e.days[method] or 0 for e in events)


def _reconcile(events: Sequence[EventSummary], a: str, b: str, impact_into: Mapping[str, str],
               concurrent: int) -> Reconciliation:
    """The difference of the events' totals by methods ``a`` and ``b`` and its causes, which add up to it."""
    diff = _total(events, a) - _total(events, b)
    causes: list[Cause] = []
    only_a = [e for e in events if e.days[a] is not None and e.days[b] is None]
    only_b = [e for e in events if e.days[b] is not None and e.days[a] is None]
    counted = 0
    if only_a or only_b:
        days = _total(only_a, a) - _total(only_b, b)
        names = ", ".join(f"{e.event} ({b if e in only_a else a})" for e in [*only_a, *only_b])
        causes.append(Cause("events not represented", days,
                            f"events one method cannot represent, with the method that cannot: {names}"))
        counted += days
    both = [e for e in events if e.days[a] is not None and e.days[b] is not None]
    if "windows" in (a, b) and any(e.concurrent for e in both):
        # Each window's concurrent days once: the windows analysis sets them apart from every event.
        days = -concurrent if a == "windows" else concurrent
        if days:
            causes.append(Cause("concurrency treatment", days,
                                "the windows analysis sets concurrent days apart from each event "
                                "(shown in the event's concurrent days); the modelled methods count them in the event"))
            counted += days
    rest = diff - counted
    if a == "impact" and b == "impact_series" or a == "impact_series" and b == "impact":
        causes.append(Cause("non-additivity of impacts", rest,
                            "events inserted one by one each use the float of paths the others also use; in series "
                            "each event meets the schedule already impacted by those before it"))
    else:
        bases = sorted(set(impact_into.values()))
        base_words = {
            "windows": "the windows analysis observes each update's own progress and revisions",
            "impact": f"time impact inserts each event into its own unimpacted update ({', '.join(bases) or 'none'})",
            "impact_series": "time impact in series carries each impacted update forward",
            "but_for": "but-for takes the event out of the as-built schedule of the latest update",
        }
        causes.append(Cause("different base schedule and float used before the event", rest,
                            f"{base_words[a]}, while {base_words[b]}; an event meets different float in each"))
    return Reconciliation((a, b), diff, tuple(causes))


# --- the summary ---------------------------------------------------------------------------


def delay_summary(
    casefile: Casefile,
    *,
    delay: DelayAnalysis | None = None,
    sensitivity: bool = True,
    progress: Callable[[str], None] | None = None,
    cache: RunCache | None = None,
) -> DelaySummary:
    """The delay summary per event of ``casefile`` (see the module notes).

    Parameters
    ----------
    casefile : Casefile
        With at least two snapshots and one event.
    delay : DelayAnalysis, optional
        The windows analysis, when the caller has it already (reused, not recomputed).
    sensitivity : bool
        Re-run the windows analysis under the alternative settings.
    progress : callable, optional
        Called with each step's name.
    cache : RunCache, optional
        The caller's cache for this casefile (a report shares its schedules,
        window runs, time impacts and as-built schedule with the summary);
        by default one made for this call.

    References
    ----------
    AACE RP 29R-03 (choice of method; the cross-check between methods);
    RP 52R-06 (time impact); SCL Protocol 2nd ed. (choice of method; concurrency).
    """
    step = progress or (lambda _s: None)
    if len(casefile.snapshots) < 2:
        msg = "the delay summary needs a baseline and at least one update"
        raise NotFoundError(msg)
    if not casefile.events:
        msg = "the casefile records no event; there is nothing to summarise per event"
        raise NotFoundError(msg)
    if cache is None:
        cache = RunCache()  # this call's: the methods and sensitivity rows share their schedules
    step("windows analysis")
    delay = delay or analyse_delay(casefile, casefile.windows or None, cache=cache)
    own, shared, rest = windows_by_event(delay)
    step("time impact of each event")
    impacts, into = _impact_alone(casefile, cache)
    step("time impact series")
    in_series = _impact_series(casefile, cache)
    step("but-for case of each event")
    butfor = _but_for_each(casefile, cache)
    events = []
    for e in casefile.events:
        w = own.get(e.id, 0)
        imp, imp_how, imp_why = impacts[e.id]
        ser, ser_how, ser_why = in_series.get(e.id, (None, "not-represented", "not in the series"))
        bf, bf_how, bf_why = butfor[e.id]
        days = {"windows": w, "impact": imp, "impact_series": ser, "but_for": bf}
        how = {"windows": "observed", "impact": imp_how, "impact_series": ser_how, "but_for": bf_how}
        why = {"windows": "its share of the windows ledger", "impact": imp_why, "impact_series": ser_why,
               "but_for": bf_why}
        excusable = w if e.category in EXCUSABLE else 0
        compensable = w if e.category == "excusable-compensable" else 0
        events.append(EventSummary(
            e.id, e.title, e.party, e.category, e.reference, e.start, e.finish, frozen_mapping(days),
            frozen_mapping(how), frozen_mapping(why), shared.get(e.id, 0), excusable, compensable,
        ))
    t = delay.ledger.total
    methods = {
        "windows": MethodTotals(t.excusable_compensable, t.excusable_noncompensable, t.non_excusable, t.concurrent,
                                delay.ledger.total_slip,
                                frozen_mapping({"gains": t.gains, "unassigned": t.unassigned,
                                                "unattributed_revision": t.unattributed_revision})),
        "impact": _category_totals(events, "impact", None),
        "impact_series": _category_totals(events, "impact_series", None),
        "but_for": _category_totals(events, "but_for", None),
    }
    slip = delay.ledger.total_slip
    from_events = sum(own.get(e.id, 0) for e in casefile.events)
    if from_events + sum(rest.values()) != slip:  # the ledger's own balance, checked again per event
        msg = f"internal check: events {from_events} + not from events {sum(rest.values())} != slip {slip}"
        raise AssertionError(msg)
    pairs = [("windows", "impact"), ("windows", "impact_series"), ("windows", "but_for"), ("impact", "impact_series"),
             ("impact", "but_for")]
    recon = tuple(_reconcile(events, a, b, into, rest["concurrent"]) for a, b in pairs)
    tolerance = max(2, round(abs(slip) * 0.1))
    sens = sensitivity_rows(casefile, delay, tolerance, step, cache=cache) if sensitivity else ()
    comp = {
        "baseline": delay.ledger.baseline_completion,
        "latest": delay.ledger.last_completion,
        "contract": casefile.project.contract_completion,
        "slip": slip,
    }
    notes = (
        "Days attributed by each method; entitlement depends on the contract and the applicable law.",
        "Concurrent days are shown apart: each event's concurrent days are shared with the other events "
        "of the same windows, so they do not add up across events.",
    )
    return DelaySummary(delay.unit, frozen_mapping(comp), tuple(events), frozen_mapping(methods),
                        frozen_mapping(rest), recon, sens, tolerance, notes)


# --- output --------------------------------------------------------------------------------


def _totals_json(m: MethodTotals) -> dict[str, Any]:
    out = {
        "excusable_compensable": m.excusable_compensable,
        "excusable_noncompensable": m.excusable_noncompensable,
        "non_excusable": m.non_excusable,
        "concurrent": m.concurrent,
        "total": m.total,
    }
    out.update(dict(m.extra))
    return out


def eot_json(s: DelaySummary) -> dict[str, Any]:
    """The ``forensic eot --json`` object (keys documented in docs/eot.md; a contract)."""
    return {
        "unit": s.unit,
        "completion": dict(s.completion),
        "events": [
            {
                "event": e.event, "title": e.title, "party": e.party, "category": e.category,
                "reference": e.reference, "start": e.start, "finish": e.finish,
                "days": dict(e.days), "represented_as": dict(e.represented_as), "reasons": dict(e.reasons),
                "concurrent": e.concurrent, "excusable": e.excusable, "compensable": e.compensable,
            }
            for e in s.events
        ],
        "methods": {k: _totals_json(v) for k, v in s.methods.items()},
        "not_from_events": dict(s.not_from_events),
        "reconciliation": [
            {"methods": list(r.methods), "difference": r.difference,
             "causes": [{"cause": c.cause, "days": c.days, "explanation": c.explanation} for c in r.causes]}
            for r in s.reconciliation
        ],
        "sensitivity": [
            {"setting": r.setting, "value": r.value, "excusable_compensable": r.excusable_compensable,
             "excusable_noncompensable": r.excusable_noncompensable, "non_excusable": r.non_excusable,
             "concurrent": r.concurrent, "by_party": dict(r.by_party), "slip": r.slip, "moved": r.moved}
            for r in s.sensitivity
        ],
        "tolerance": s.tolerance,
        "notes": list(s.notes),
    }


def eot_tables(s: DelaySummary) -> tuple[Table, ...]:
    """The summary as tables: per event, per method, reconciliation, sensitivity."""
    ev = Table(
        "eot-events",
        ("event", "title", "party", "category", "start", "finish", "windows", "impact", "impact_series", "but_for",
         "concurrent", "excusable", "compensable"),
        tuple((e.event, e.title, e.party, e.category, e.start, e.finish, e.days["windows"], e.days["impact"],
               e.days["impact_series"], e.days["but_for"], e.concurrent, e.excusable, e.compensable) for e in s.events)
        + (("not from events", "", "", "", None, None, sum(s.not_from_events.values()), None, None, None, None, None, None),),
    )
    me = Table(
        "eot-methods",
        ("method", "excusable_compensable", "excusable_noncompensable", "non_excusable", "concurrent", "total"),
        tuple((k, m.excusable_compensable, m.excusable_noncompensable, m.non_excusable, m.concurrent, m.total)
              for k, m in s.methods.items()),
    )
    rc = Table(
        "eot-reconciliation",
        ("methods", "difference", "cause", "days", "explanation"),
        tuple((" vs ".join(r.methods), r.difference, c.cause, c.days, c.explanation) for r in s.reconciliation for c in r.causes),
    )
    se = Table(
        "eot-sensitivity",
        ("setting", "value", "excusable_compensable", "excusable_noncompensable", "non_excusable", "concurrent",
         "slip", "by_party", "moved"),
        tuple((r.setting, r.value, r.excusable_compensable, r.excusable_noncompensable, r.non_excusable, r.concurrent,
               r.slip, "; ".join(f"{p} {d}" for p, d in r.by_party.items()), r.moved) for r in s.sensitivity),
    )
    return ev, me, rc, se
