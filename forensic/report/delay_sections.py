"""Section renderers for the delay analyses: windows, slip by party, ledger, time impact, acceleration.

They read the result objects of :mod:`forensic.analysis.attribution.delay` (with its
:mod:`forensic.analysis.windows` analysis), :mod:`forensic.analysis.impact` and
:mod:`forensic.analysis.recovery`. The only arithmetic is summing per-window figures
that the attribution guarantees add up exactly (``sum(by_party) +
concurrent == slip`` in every window), to give a total per party.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any
from xml.sax.saxutils import escape

from reportlab.platypus import CondPageBreak, Flowable, KeepTogether, Spacer

from forensic.analysis.attribution.floatuse import float_ledger as float_ledger_of

from . import charts
from .narrative import (
    CATEGORY_WORDS,
    ReportContext,
    activity_name,
    common_fields,
    count_words,
    days_words,
    join_words,
    long_date,
    party_words,
    short_date,
    text_or_none,
    unit_words,
    window_last_day,
)
from .paths import path_chart, paths_table
from .pdf import FRAME_WIDTH, Heading, data_table, paragraphs, styles
from .templates import Section, fill

__all__ = ["DELAY_RENDERERS", "parties_words", "party_totals", "window_fields"]


def _where(ctx: ReportContext, section: Section, key: str) -> str:
    return f"{ctx.template.path.name}, section {section.number} ({section.kind}), text.{key}"


_paras = paragraphs


def _col(section: Section, key: str, default: str) -> str:
    return section.columns.get(key, default)


def _signed(n: int) -> str:
    return f"{n:+d}" if n else "0"


def _move_text(unit: str, n: int) -> str:
    if n > 0:
        return f"{days_words(unit, n)} later"
    if n < 0:
        return f"{days_words(unit, -n)} earlier"
    return "no change"


def _ids_words(ctx: ReportContext, ids: Sequence[str], snapshot_id: str, limit: int = 4) -> str:
    shown = [f"{activity_name(ctx.casefile, a, snapshot_id)} ({a})" for a in ids[:limit]]
    if len(ids) > limit:
        shown.append(f"{len(ids) - limit} more")
    return join_words(shown)


def party_totals(delay: Any) -> tuple[dict[str, int], int]:
    """Days per party over every window, and concurrent days (sums of the per-window figures)."""
    totals: dict[str, int] = {}
    concurrent = 0
    for att in delay.attributions:
        for party, days in att.by_party.items():
            totals[party] = totals.get(party, 0) + days
        concurrent += att.concurrent.days
    return totals, concurrent


def _party_order(ctx: ReportContext, keys: Sequence[str]) -> list[str]:
    known = [p for p in ctx.casefile.parties if p in keys]
    return known + sorted(k for k in keys if k not in known)


def parties_words(ctx: ReportContext, totals: dict[str, int]) -> str:
    unit = ctx.delay.unit
    ordered = sorted(_party_order(ctx, list(totals)), key=lambda p: -totals[p])
    return join_words([f"{party_words(ctx.casefile, p)} {days_words(unit, totals[p])}" for p in ordered if totals[p]])


def _contributor_words(ctx: ReportContext, att: Any, to_id: str, limit: int = 3) -> str:
    cf = ctx.casefile
    unit = ctx.delay.unit
    events = {e.id: e for e in cf.events}
    top = sorted((c for c in att.contributors if c.days > 0), key=lambda c: -c.days)[:limit]
    words = []
    for c in top:
        who = party_words(cf, c.party)
        why = f"event {c.event} ({events[c.event].title})" if c.event in events else "no recorded event"
        words.append(
            f"{activity_name(cf, c.activity, to_id)} ({c.activity}), {days_words(unit, c.days)}: "
            f"{why}, {who}, {CATEGORY_WORDS.get(c.category, c.category)}"
        )
    return join_words(words, "no activity")


def window_fields(ctx: ReportContext, run: Any, att: Any) -> dict[str, Any]:
    w = run.window
    unit = ctx.delay.unit
    fields = common_fields(ctx)
    events = {e.id: e for e in ctx.casefile.events}
    fields.update(
        window=w.label, from_id=w.from_id, to_id=w.to_id, start=long_date(w.start), end=long_date(window_last_day(w)),
        next_data_date=long_date(w.end),
        completion_before=long_date(w.completion_before), completion_after=long_date(w.completion_after),
        half_step_completion=long_date(w.half_step_completion),
        days=abs(w.slip), days_unit=unit_words(unit, w.slip),
        progress=w.progress_slip, progress_text=_move_text(unit, w.progress_slip),
        revision=w.revision_slip, revision_text=_move_text(unit, w.revision_slip),
        joined=_ids_words(ctx, w.path_joined, w.to_id), left=_ids_words(ctx, w.path_left, w.from_id),
        contributors=_contributor_words(ctx, att, w.to_id),
        revision_events=join_words([
            f"{r.event} ({events[r.event].title if r.event in events else r.event}), {days_words(unit, r.days)}"
            for r in att.revision if r.days
        ], "no recorded event"),
        parties=join_words([
            f"{party_words(ctx.casefile, p)} {days_words(unit, d)}"
            for p, d in sorted(att.by_party.items(), key=lambda kv: -kv[1]) if d
        ]),
        concurrent=att.concurrent.days,
        concurrent_parties=join_words([party_words(ctx.casefile, p) for p in att.concurrent.parties]),
    )
    return fields


def windows(ctx: ReportContext, section: Section) -> list[Flowable]:
    delay = ctx.delay
    unit = unit_words(delay.unit)
    runs = list(zip(delay.windows.runs, delay.attributions, strict=True))
    scope = section.options["scope"]
    shown = runs[-1:] if scope == "latest" else runs[-2:] if scope == "last-two" else runs
    out = _paras(text_or_none(ctx, section, "intro"))
    if section.options["table"]:
        cols: tuple[str, ...] = (
            _col(section, "window", "Window"), _col(section, "start", "From"), _col(section, "end", "To"),
            _col(section, "before", "Completion before"), _col(section, "after", "Completion after"),
            _col(section, "slip", f"Slip ({unit})"), _col(section, "progress", "Progress"),
            _col(section, "revision", "Revision"), _col(section, "concurrent", "Concurrent"),
        )
        body: list[tuple[object, ...]] = [
            (r.window.label, short_date(r.window.start), short_date(window_last_day(r.window)), short_date(r.window.completion_before),
             short_date(r.window.completion_after), _signed(r.window.slip), _signed(r.window.progress_slip),
             _signed(r.window.revision_slip), a.concurrent.days)
            for r, a in runs
        ]
        table = data_table(cols, body, (1.3, 1.2, 1.2, 1.3, 1.3, 1, 1, 1, 1), numeric=(5, 6, 7, 8), small_head=True)
        out += [table, Spacer(1, 8)]
    st = styles()
    for run, att in shown:
        w = run.window
        f = window_fields(ctx, run, att)
        block: list[Flowable] = [Heading(
            escape(f"Window {w.label}: {long_date(w.start)} to {long_date(window_last_day(w))}"), st["h2"],
            f"window-{section.number}-{w.label}", 1,
        )]
        key = "later" if w.slip > 0 else "earlier" if w.slip < 0 else "unchanged"
        block += _paras(fill(section.texts[key], f, _where(ctx, section, key)))
        more: list[Flowable] = []
        if w.progress_slip:
            more += _paras(text_or_none(ctx, section, "progress", f))
        if w.revision_slip:
            more += _paras(text_or_none(ctx, section, "revision", f))
        if w.path_joined or w.path_left:
            more += _paras(text_or_none(ctx, section, "path_moved", f))
        else:
            more += _paras(text_or_none(ctx, section, "path_same", f))
        if any(att.by_party.values()):
            more += _paras(text_or_none(ctx, section, "parties", f))
        if att.concurrent.days:
            more += _paras(text_or_none(ctx, section, "concurrent", f))
        out.append(KeepTogether(block + more[:1]))
        out += more[1:]
        if section.options["paths"]:
            names_b = {a: x.name for a, x in run.earlier.activities.items()}
            names_a = {a: x.name for a, x in run.later.activities.items()}
            heads = (_col(section, "path_before", f"Critical path at {w.from_id}"),
                     _col(section, "path_after", f"Critical path at {w.to_id}"))
            out += [paths_table(section, w.critical_path_before, w.critical_path_after, names_b, names_a, heads,
                                max(2, int(section.options["path_rows"]))), Spacer(1, 6)]
        if section.options["path_chart"]:
            out += path_chart(section, w.critical_path_after, run.after, run.later, w.end,
                              max(2, int(section.options["path_rows"])))
            out += _paras(text_or_none(ctx, section, "path_caption", f), "caption")
        if section.options["contributors"] and att.contributors:
            events = {e.id: e for e in ctx.casefile.events}
            cols = (
                _col(section, "activity", "Activity"), _col(section, "name", "Name"), _col(section, "days", "Days"),
                _col(section, "event", "Event"), _col(section, "party", "Party"), _col(section, "category", "Category"),
            )
            body = [
                (c.activity, activity_name(ctx.casefile, c.activity, w.to_id), _signed(c.days),
                 f"{c.event} {events[c.event].title}" if c.event in events else "—",
                 party_words(ctx.casefile, c.party), CATEGORY_WORDS.get(c.category, c.category))
                for c in att.contributors
            ]
            out += [data_table(cols, body, (1.3, 2.2, 0.8, 2.4, 1.8, 1.4), numeric=(2,), fit=(0,)), Spacer(1, 6)]
    return out


def slip_by_party(ctx: ReportContext, section: Section) -> list[Flowable]:
    delay = ctx.delay
    unit = delay.unit
    keys: list[str] = []
    for att in delay.attributions:
        for p in att.by_party:
            if p not in keys:
                keys.append(p)
    keys = _party_order(ctx, keys)
    labels = [party_words(ctx.casefile, p) for p in keys] + ["concurrent"]
    stacks = [[att.by_party.get(p, 0) for p in keys] + [att.concurrent.days] for att in delay.attributions]
    cats = [r.window.label for r in delay.windows.runs]
    out: list[Flowable] = [CondPageBreak(240)]
    totals, concurrent = party_totals(delay)
    fields = common_fields(ctx)
    fields.update(
        total=abs(delay.windows.total_slip), total_unit=unit_words(unit, delay.windows.total_slip),
        parties=parties_words(ctx, totals), concurrent=concurrent, windows=len(cats),
    )
    out += _paras(fill(section.texts["text"], fields, _where(ctx, section, "text")))
    out.append(charts.stacked_bars(
        cats, stacks, labels, width=FRAME_WIDTH, height=220,
        y_title=_col(section, "y_title", f"Slip by party in each window ({unit_words(unit)}; below zero a gain)"),
    ))
    out += _paras(text_or_none(ctx, section, "caption"), "caption")
    return out


def ledger(ctx: ReportContext, section: Section) -> list[Flowable]:
    led = ctx.delay.ledger
    unit = ctx.delay.unit
    t = led.total
    fields = common_fields(ctx)
    fields.update(
        total_slip=abs(led.total_slip), total_unit=unit_words(unit, led.total_slip),
        baseline_completion=long_date(led.baseline_completion), last_completion=long_date(led.last_completion),
        compensable=t.excusable_compensable, noncompensable=t.excusable_noncompensable, nonexcusable=t.non_excusable,
        concurrent=t.concurrent, gains=abs(t.gains), unassigned=t.unassigned, unattributed=t.unattributed_revision,
        unexplained=t.unexplained,
    )
    out = _paras(text_or_none(ctx, section, "intro"))
    key = "balanced" if led.balanced else "unbalanced"
    out += _paras(fill(section.texts[key], fields, _where(ctx, section, key)))
    if t.unexplained:
        out += _paras(text_or_none(ctx, section, "unexplained", fields))
    cols = (
        _col(section, "window", "Window"), _col(section, "compensable", "Excusable, compensable"),
        _col(section, "noncompensable", "Excusable, not compensable"), _col(section, "nonexcusable", "Not excusable"),
        _col(section, "concurrent", "Concurrent"), _col(section, "gains", "Gains"), _col(section, "unassigned", "No party"),
        _col(section, "unattributed", "Revision, no event"), _col(section, "total", "Total"),
        _col(section, "unexplained", "of which no event (memo)"),
    )

    def row(e: Any) -> tuple:
        return (e.window, e.excusable_compensable, e.excusable_noncompensable, e.non_excusable, e.concurrent,
                e.gains, e.unassigned, e.unattributed_revision, e.total, e.unexplained)

    widths = (1.2, 1.1, 1.1, 1, 1, 0.8, 0.8, 1, 0.8, 1.1)
    num = tuple(range(1, 10))
    out.append(data_table(cols, [row(e) for e in (*led.windows, t)], widths, numeric=num, small_head=True))
    if section.options["cumulative"]:
        out += [Spacer(1, 6), data_table(cols, [row(e) for e in led.cumulative], widths, numeric=num, small_head=True)]
    return out


def float_ledger(ctx: ReportContext, section: Section) -> list[Flowable]:
    """Float used on paths near the critical path, by party (:mod:`forensic.analysis.attribution.floatuse`)."""
    led = float_ledger_of(ctx.delay)
    unit = ctx.delay.unit
    fields = common_fields(ctx)
    fields.update(
        total=led.total, total_unit=unit_words(unit, led.total), margin=led.margin,
        parties=parties_words(ctx, dict(led.cumulative)),
        windows=count_words(sum(1 for r in led.windows if r.total), "window"),
    )
    out = _paras(text_or_none(ctx, section, "intro", fields))
    key = "used" if led.total else "none"
    out += _paras(fill(section.texts[key], fields, _where(ctx, section, key)))
    if not led.total:
        return out
    cols = (
        _col(section, "window", "Window"), _col(section, "path", "Path (read at)"),
        _col(section, "float_before", "Float before"), _col(section, "used", "Used"),
        _col(section, "activity", "Delayed activity"), _col(section, "event", "Event"),
        _col(section, "party", "Party"), _col(section, "days", "Days"),
    )
    rows = [
        (run.window.label, u.activity, u.float_before, u.used, d.activity, d.event or "", d.party, d.days)
        for run, att in zip(ctx.delay.windows.runs, ctx.delay.attributions, strict=True)
        for u in att.float_used
        for d in u.delays
    ]
    out.append(data_table(cols, rows, (1.1, 1.6, 0.8, 0.6, 1.6, 0.7, 0.7, 0.6), numeric=(2, 3, 7), small_head=True))
    return out


def represented_words(reps: Any) -> str:
    """How events are represented, in words: their fragnet, or the working days stated or estimated."""
    out = []
    for x in reps:
        if x.how == "fragnet":
            out.append("its fragnet")
        elif x.how == "not-represented":
            out.append("nothing (not represented)")
        else:
            what = "stated lost in the events register" if x.how == "days-lost" else "estimated from the record"
            days = ", ".join(f"{a} {n}" for a, n in x.days)
            out.append(f"the working days {what} ({days})")
    return join_words(out)


def time_impact(ctx: ReportContext, section: Section) -> list[Flowable]:
    series = ctx.impacts
    cf = ctx.casefile
    events = {e.id: e for e in cf.events}
    out = _paras(text_or_none(ctx, section, "intro"))
    if series is None or not series.individual:
        return out + _paras(text_or_none(ctx, section, "none"))
    unit = series.unit
    for r in series.individual:
        ev = events.get(r.event)
        fields = common_fields(ctx)
        fields.update(
            event=r.event, title=ev.title if ev else r.event, party=party_words(cf, ev.party) if ev else "",
            category=CATEGORY_WORDS.get(ev.category, ev.category) if ev else "", into=r.into,
            completion_before=long_date(r.completion_before), completion_after=long_date(r.completion_after),
            days=abs(r.impact), days_unit=unit_words(unit, r.impact), inserted=len(r.inserted),
            path=_ids_words(ctx, [a for a in r.critical_path if a in cf.snapshot(r.into).activities][:4], r.into),
            reference=(ev.reference or "no reference") if ev else "",
            represented=represented_words(r.represented), why="; ".join(x.why for x in r.represented),
        )
        # Nothing inserted, or nothing the record shows it cost: say so and why, never that float absorbed it.
        key = "delayed" if r.impact > 0 else "no_delay"
        if r.represented and all(x.how == "not-represented" for x in r.represented):
            key = "not_represented" if "not_represented" in section.texts else key
        elif r.represented and all(x.how != "fragnet" and x.total == 0 for x in r.represented):
            key = "no_cost" if "no_cost" in section.texts else key
        out += _paras(fill(section.texts[key], fields, _where(ctx, section, key)))
    if section.options["table"]:
        cols: tuple[str, ...] = (
            _col(section, "event", "Event"), _col(section, "title", "Title"), _col(section, "into", "Into"),
            _col(section, "before", "Completion before"), _col(section, "after", "Completion after"),
            _col(section, "impact", f"Impact ({unit_words(unit)})"))
        body: list[tuple[object, ...]] = [(r.event, events[r.event].title if r.event in events else "", r.into, short_date(r.completion_before),
                 short_date(r.completion_after), _signed(r.impact)) for r in series.individual]
        out += [data_table(cols, body, (0.8, 3, 0.7, 1.2, 1.2, 1), numeric=(5,)), Spacer(1, 6)]
    c = series.cumulative
    fields = common_fields(ctx)
    fields.update(
        into=c.into, impact=abs(c.impact), impact_unit=unit_words(unit, c.impact),
        sum=abs(series.sum_of_individual), sum_unit=unit_words(unit, series.sum_of_individual),
        non_additivity=series.non_additivity, events=join_words([s.event for s in series.steps]),
        bases=join_words(sorted({r.into for r in series.individual})),
    )
    out += _paras(text_or_none(ctx, section, "cumulative", fields))
    if series.warnings:
        # Events after later updates went into an older one: say it is an impacted as-planned (AACE RP 52R-06).
        into = cf.snapshot(c.into)
        later = [s.event for s in series.steps
                 if any(x.data_date > into.data_date and x.data_date <= s.start for x in cf.snapshots)]
        fields.update(data_date=long_date(into.data_date), later=join_words(later), count=len(later))
        out += _paras(text_or_none(ctx, section, "cumulative_warning", fields))
    if section.options["table"] and series.steps:
        cols = (_col(section, "event", "Event"), _col(section, "start", "Event start"),
                _col(section, "before", "Completion before"), _col(section, "after", "Completion after"),
                _col(section, "step", f"Increment ({unit_words(unit)})"))
        body = [(s.event, short_date(s.start), short_date(s.completion_before), short_date(s.completion_after), _signed(s.impact))
                for s in series.steps]
        out.append(data_table(cols, body, (1, 1.2, 1.3, 1.3, 1.2), numeric=(4,)))
    return out


def acceleration(ctx: ReportContext, section: Section) -> list[Flowable] | None:
    res = ctx.recovery
    if res is None:
        return None  # not asked for: the section is left out
    plan = res.plan
    unit = ctx.casefile.project.delay_unit
    recovered = plan.working_days_recovered if unit == "working-days" else plan.calendar_days_recovered
    fields = common_fields(ctx)
    fields.update(
        snapshot=res.snapshot_id, data_date=long_date(res.data_date), asked=ctx.recover_days,
        asked_unit=unit_words(unit, ctx.recover_days), target=long_date(plan.target),
        current_completion=long_date(res.current_completion), completion=long_date(plan.completion),
        recovered=recovered, recovered_unit=unit_words(unit, recovered), cost=f"{plan.cost:,.0f}",
        count=len(plan.shortenings),
        count_activities=count_words(len(plan.shortenings), "activity", "activities"),
        activities=join_words([f"{s.name} ({s.id}) by {s.days} working day{'s' if s.days != 1 else ''}" for s in plan.shortenings]),
        earliest_completion=long_date(res.earliest_completion), max_working_days=res.max_working_days,
    )
    out = _paras(text_or_none(ctx, section, "intro"))
    out += _paras(fill(section.texts["text"], fields, _where(ctx, section, "text")))
    if not plan.proven or any(not p.plan.proven for p in res.curve or ()):
        # The solver's time limit cut the search: the plan meets its target in the engine
        # but is not proven the cheapest (docs/recovery.md, "Time limit").
        out += _paras(text_or_none(ctx, section, "not_proven", fields))
    cols = (_col(section, "activity", "Activity"), _col(section, "name", "Name"), _col(section, "days", "Shortened (wd)"),
            _col(section, "limit", "Limit (wd)"), _col(section, "cost_per_day", "Cost per day"), _col(section, "cost", "Cost"))
    body = [(s.id, s.name, s.days, s.limit, f"{s.cost_per_day:,.0f}", f"{s.cost:,.0f}") for s in plan.shortenings]
    out += [data_table(cols, body, (1.2, 3, 1, 1, 1, 1), numeric=(2, 3, 4, 5)), Spacer(1, 6)]
    if section.options["curve"] and res.curve:
        pts = tuple((float(p.working_days), float(p.plan.cost)) for p in res.curve)
        out.append(charts.line_chart(
            [charts.Series(_col(section, "curve", "Least cost to recover"), pts)],
            width=FRAME_WIDTH, height=190, y_title=_col(section, "y_cost", "Cost"), x_dates=False,
            x_title=_col(section, "x_days", "Working days recovered"),
        ))
        out += _paras(text_or_none(ctx, section, "caption"), "caption")
    return out


DELAY_RENDERERS = {
    "windows": windows,
    "slip-by-party": slip_by_party,
    "ledger": ledger,
    "float-ledger": float_ledger,
    "time-impact": time_impact,
    "acceleration": acceleration,
}
