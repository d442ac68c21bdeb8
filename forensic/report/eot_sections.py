"""Section renderers for the delay summary per event (:mod:`forensic.analysis.eot`): the table and the reconciliation.

They read one :class:`~forensic.analysis.eot.DelaySummary` (``ctx.eot``); every
figure is the summary's own. Days attributed by each method are shown, never
entitlement (the cautions section says so).
"""

from __future__ import annotations

from reportlab.platypus import Flowable, Spacer

from .narrative import ReportContext, join_words, party_words, text_or_none, unit_words
from .pdf import data_table, paragraphs
from .templates import Section

__all__ = ["EOT_RENDERERS"]

METHOD_WORDS = {"windows": "windows", "impact": "time impact alone", "impact_series": "time impact in series",
                "but_for": "but-for"}


def _col(section: Section, key: str, default: str) -> str:
    return section.columns.get(key, default)


def _cell(n: int | None) -> str:
    return "n/a" if n is None else str(n)


def delay_summary(ctx: ReportContext, section: Section) -> list[Flowable] | None:
    s = ctx.eot
    if s is None:
        return None
    unit = unit_words(s.unit)
    out = paragraphs(ctx_text(ctx, section, "intro", {"slip": s.completion["slip"], "slip_unit": unit}))
    short = bool(section.options["short"])
    events = [e for e in s.events if not short or any(e.days[m] for m in ("windows", "impact", "but_for")) or e.concurrent]
    cols: tuple[str, ...]
    body: list[tuple[object, ...]]
    if short:
        cols = (_col(section, "event", "Event"), _col(section, "party", "Party"), _col(section, "windows", "Windows"),
                _col(section, "concurrent", "Concurrent"), _col(section, "impact", "Impact"),
                _col(section, "but_for", "But-for"))
        body = [(e.event, party_words(ctx.casefile, e.party), _cell(e.days["windows"]), e.concurrent,
                 _cell(e.days["impact"]), _cell(e.days["but_for"])) for e in events]
        widths: tuple[float, ...] = (0.8, 2.4, 0.9, 1, 0.9, 0.9)
    else:
        cols = (_col(section, "event", "Event"), _col(section, "title", "Title"), _col(section, "party", "Party"),
                _col(section, "windows", "Windows"), _col(section, "concurrent", "Concurrent (shared)"),
                _col(section, "impact", "Impact alone"), _col(section, "impact_series", "Impact in series"),
                _col(section, "but_for", "But-for"))
        body = [(e.event, e.title, party_words(ctx.casefile, e.party), _cell(e.days["windows"]), e.concurrent,
                 _cell(e.days["impact"]), _cell(e.days["impact_series"]), _cell(e.days["but_for"])) for e in events]
        widths = (0.7, 2.6, 1.6, 0.8, 0.9, 0.8, 0.8, 0.8)
    nfe = sum(s.not_from_events.values())
    row = [""] * len(cols)
    row[0] = _col(section, "not_from_events", "Not from events")
    row[2 if short else 3] = str(nfe)
    body.append(tuple(row))
    numeric = tuple(range(2 if short else 3, len(cols)))
    out.append(data_table(cols, body, widths, numeric=numeric, fit=(0,), small_head=True))
    reasons = [f"{e.event} ({METHOD_WORDS[m]}: {e.reasons[m]})" for e in events for m in ("impact", "but_for")
               if e.days[m] is None]
    if reasons:
        out += paragraphs(ctx_text(ctx, section, "not_applicable", {"list": join_words(reasons)}))
    out += paragraphs(ctx_text(ctx, section, "caption", {"not_from_events": nfe, "unit": unit}), "caption")
    return out


def ctx_text(ctx: ReportContext, section: Section, key: str, extra: dict) -> str | None:
    return text_or_none(ctx, section, key, extra)


def reconciliation(ctx: ReportContext, section: Section) -> list[Flowable] | None:
    s = ctx.eot
    if s is None:
        return None
    unit = unit_words(s.unit)
    out = paragraphs(ctx_text(ctx, section, "intro", {}))
    for r in s.reconciliation:
        a, b = (METHOD_WORDS[m] for m in r.methods)
        counted = [c for c in r.causes if c.days]
        words = join_words([f"{c.cause} {c.days:+d}" for c in counted], "nothing")
        out += paragraphs(ctx_text(ctx, section, "pair", {
            "first": a, "second": b, "difference": r.difference, "unit": unit, "causes": words,
        }))
    cols: tuple[str, ...] = (_col(section, "methods", "Methods"), _col(section, "cause", "Cause"),
                             _col(section, "days", "Days"), _col(section, "explanation", "Explanation"))
    body: list[tuple[object, ...]] = [(" / ".join(METHOD_WORDS[m] for m in r.methods), c.cause, "—" if c.days is None else f"{c.days:+d}" if c.days else "0",
             c.explanation) for r in s.reconciliation for c in r.causes]
    out += [data_table(cols, body, (1.4, 1.6, 0.6, 4), numeric=(2,), small_head=True), Spacer(1, 8)]
    if s.sensitivity:
        out += paragraphs(ctx_text(ctx, section, "sensitivity", {"tolerance": s.tolerance, "unit": unit}))
        cols = (_col(section, "setting", "Setting"), _col(section, "value", "Value"), _col(section, "ec", "Exc. comp."),
                _col(section, "en", "Exc. non-comp."), _col(section, "ne", "Non-exc."), _col(section, "conc", "Concurrent"),
                _col(section, "by_party", "By party"), _col(section, "moved", "Moved"))
        body = [(r.setting, r.value, r.excusable_compensable, r.excusable_noncompensable, r.non_excusable, r.concurrent,
                 "; ".join(f"{p} {d}" for p, d in r.by_party.items()), "yes" if r.moved else "no") for r in s.sensitivity]
        out.append(data_table(cols, body, (1.2, 2, 0.7, 0.8, 0.7, 0.8, 1.6, 0.6), numeric=(2, 3, 4, 5), small_head=True))
        moved = [f"{r.setting} ({r.value})" for r in s.sensitivity if r.moved]
        key = "moved" if moved else "robust"
        out += paragraphs(ctx_text(ctx, section, key, {"moved": join_words(moved), "tolerance": s.tolerance, "unit": unit}))
    return out


EOT_RENDERERS = {"delay-summary": delay_summary, "reconciliation": reconciliation}
