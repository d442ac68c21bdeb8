"""Section renderers for source validation (quality scorecard) and the changes between updates.

They read :func:`forensic.quality.assess_casefile` and
:func:`forensic.compare.compare_snapshots` results; counts of checks passed
and failed, and of changes, are tallies of those results.
"""

from __future__ import annotations

from typing import Any
from xml.sax.saxutils import escape

from reportlab.platypus import Flowable, KeepTogether, Spacer

from .narrative import (
    ReportContext,
    activity_name,
    common_fields,
    join_words,
    long_date,
    short_date,
    text_or_none,
)
from .pdf import Heading, data_table, paragraphs, styles
from .templates import Section, fill

__all__ = ["RECORD_RENDERERS"]


def _where(ctx: ReportContext, section: Section, key: str) -> str:
    return f"{ctx.template.path.name}, section {section.number} ({section.kind}), text.{key}"


def _col(section: Section, key: str, default: str) -> str:
    return section.columns.get(key, default)


def _value(c: Any) -> str:
    if c.value is None:
        return "—"
    v = f"{c.value:.2f}" if c.unit == "index" else f"{c.value:.1f}" if c.unit == "percent" else f"{c.value:g}"
    return f"{v} %" if c.unit == "percent" else f"{v} wd" if c.unit == "working days" else v


def _limit(c: Any) -> str:
    if not c.comparison:
        return "—"
    lim = f"{c.limit:g}" + (" %" if c.unit == "percent" else "")
    return f"{c.comparison} {lim}"


def quality(ctx: ReportContext, section: Section) -> list[Flowable]:
    reports = ctx.quality
    scope = section.options["scope"]
    shown = reports[-1:] if scope == "latest" else reports[-2:] if scope == "last-two" else reports
    out = paragraphs(text_or_none(ctx, section, "intro"))
    cols = (_col(section, "snapshot", "Snapshot"), _col(section, "data_date", "Data date"),
            _col(section, "passed", "Passed"), _col(section, "failed", "Failed"),
            _col(section, "not_assessed", "Not assessed"), _col(section, "failed_checks", "Checks failed"))
    body = []
    for q in reports:
        passed = sum(1 for c in q.checks if c.passed is True)
        failed = q.failed
        body.append((q.snapshot_id, short_date(q.data_date), passed, len(failed),
                     sum(1 for c in q.checks if c.passed is None), ", ".join(c.title for c in failed) or "none"))
    if section.options["scorecard"]:
        out += [data_table(cols, body, (1, 1.2, 0.8, 0.8, 1, 5), numeric=(2, 3, 4), small_head=True), Spacer(1, 6)]
    for q in shown:
        failed = q.failed
        fields = common_fields(ctx)
        fields.update(
            snapshot=q.snapshot_id, data_date=long_date(q.data_date),
            passed=sum(1 for c in q.checks if c.passed is True), failed=len(failed),
            assessed=sum(1 for c in q.checks if c.passed is not None),
            failed_checks=join_words([c.title for c in failed]),
        )
        key = "failed_some" if failed else "passed_all"
        out += paragraphs(fill(section.texts[key], fields, _where(ctx, section, key)))
    if section.options["details"]:
        st = styles()
        for q in shown:
            cols = (_col(section, "number", "No."), _col(section, "check", "Check"), _col(section, "value", "Value"),
                    _col(section, "limit", "Limit"), _col(section, "status", "Result"), _col(section, "source", "Source"))
            rows = [("—" if c.number is None else c.number, c.title, _value(c), _limit(c), c.status, c.source) for c in q.checks]
            head = Heading(escape(f"Quality details: {q.snapshot_id}, data date {long_date(q.data_date)}"), st["h2"],
                           f"quality-{section.number}-{q.snapshot_id}", 1)
            out += [KeepTogether([head, data_table(rows=rows[:8], columns=cols, widths=(0.5, 3, 1, 1, 1, 2), keep=False)])]
            if len(rows) > 8:
                out.append(data_table(cols, rows[8:], (0.5, 3, 1, 1, 1, 2)))
            out.append(Spacer(1, 6))
    return out


def changes(ctx: ReportContext, section: Section) -> list[Flowable]:
    st = styles()
    cf = ctx.casefile
    comps = ctx.comparisons
    scope = section.options["scope"]
    shown = comps[-1:] if scope == "latest" else comps[-2:] if scope == "last-two" else comps
    only_path = section.options["longest_path_only"]
    limit = section.options["rows"]
    out = paragraphs(text_or_none(ctx, section, "intro"))
    for c in shown:
        picked = [ch for ch in c.changes if ch.longest_path or not only_path]
        on_path = [ch for ch in c.changes if ch.longest_path]
        kinds: dict[str, int] = {}
        for ch in c.changes:
            kinds[ch.kind] = kinds.get(ch.kind, 0) + 1
        fields = common_fields(ctx)
        fields.update(
            old=c.old_id, new=c.new_id, old_data_date=long_date(c.old_data_date), new_data_date=long_date(c.new_data_date),
            count=len(c.changes), path_count=len(on_path),
            kinds=join_words([f"{n} {k.replace('-', ' ')}" for k, n in sorted(kinds.items(), key=lambda kv: (-kv[1], kv[0]))]),
        )
        key = "sentence" if c.changes else "no_changes"
        block: list[Flowable] = [Heading(escape(f"{c.old_id} to {c.new_id}"), st["h2"], f"changes-{section.number}-{c.new_id}", 1)]
        block += paragraphs(fill(section.texts[key], fields, _where(ctx, section, key)))
        out.append(KeepTogether(block))
        if picked:
            cols = (_col(section, "kind", "Change"), _col(section, "activity", "Activity"), _col(section, "name", "Name"),
                    _col(section, "field", "Field"), _col(section, "before", "Before"), _col(section, "after", "After"),
                    _col(section, "on_path", "On path"))

            def show(v: Any) -> str:
                return "—" if v is None else short_date(v) if hasattr(v, "isoformat") else str(v)

            rows = [(ch.kind, ch.activity, activity_name(cf, ch.activity, c.new_id), ch.field, show(ch.before), show(ch.after),
                     "yes" if ch.longest_path else "") for ch in picked[:limit]]
            if len(picked) > limit:
                rows.append(("…", "", f"{len(picked) - limit} more changes (see forensic compare)", "", "", "", ""))
            out += [data_table(cols, rows, (1.9, 1.3, 2.4, 1.1, 1, 1, 0.6), small_head=True, fit=(0, 1)), Spacer(1, 6)]
    return out


RECORD_RENDERERS = {"quality": quality, "changes": changes}
