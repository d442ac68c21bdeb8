"""Section renderers for source validation (quality scorecard) and the changes between updates.

They read :func:`forensic.analysis.quality.assess_casefile` and
:func:`forensic.analysis.compare.compare_snapshots` results; counts of checks passed
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

__all__ = ["RECORD_RENDERERS", "short_title"]


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


def short_title(title: str) -> str:
    """A check's title for a list: the words before its colon, without a wordy parenthesis.

    ``"Lags: links with a positive lag"`` reads ``"Lags"``; ``"Links to or from
    summary-like milestones (2+ predecessors and 2+ successors)"`` reads
    ``"Links to or from summary-like milestones"``; an abbreviation in
    brackets (``"(CPLI)"``) is kept.
    """
    head = title.split(":", 1)[0].strip()
    if head.endswith(")") and "(" in head:
        inner = head[head.rindex("(") + 1:-1]
        if " " in inner:
            head = head[: head.rindex("(")].rstrip()
    return head


def _tally(q: Any) -> dict[str, Any]:
    return {
        "passed": sum(1 for c in q.checks if c.passed is True),
        "failed": len(q.failed),
        "assessed": sum(1 for c in q.checks if c.passed is not None),
    }


def _change_words(prev: Any, q: Any) -> str | None:
    """What changed in the checks' results from ``prev`` to ``q`` (``None``: nothing)."""
    before = {c.key: c.passed for c in prev.checks}
    newly = [short_title(c.title) for c in q.checks if c.passed is False and before.get(c.key) is not False]
    fixed = [short_title(c.title) for c in q.checks if c.passed is True and before.get(c.key) is False]
    lost = [short_title(c.title) for c in q.checks if c.passed is None and before.get(c.key) is not None]
    parts = []
    if newly:
        parts.append(f"newly fails {join_words(newly)}")
    if fixed:
        parts.append(f"passes {join_words(fixed)} again")
    if lost:
        parts.append(f"can no longer assess {join_words(lost)}")
    return "; ".join(parts) if parts else None


def quality(ctx: ReportContext, section: Section) -> list[Flowable]:
    reports = ctx.quality
    scope = section.options["scope"]
    shown = reports[-1:] if scope == "latest" else reports[-2:] if scope == "last-two" else reports
    out = paragraphs(text_or_none(ctx, section, "intro"))
    cols = (_col(section, "snapshot", "Snapshot"), _col(section, "data_date", "Data date"),
            _col(section, "passed", "Passed"), _col(section, "failed", "Failed"),
            _col(section, "not_assessed", "Not assessed"), _col(section, "failed_checks", "Checks failed"))
    body = []
    for q in shown:  # the scorecard follows the scope, like the sentences
        t = _tally(q)
        body.append((q.snapshot_id, short_date(q.data_date), t["passed"], t["failed"],
                     sum(1 for c in q.checks if c.passed is None), ", ".join(short_title(c.title) for c in q.failed) or "none"))
    if section.options["scorecard"]:
        out += [data_table(cols, body, (1, 1.2, 0.8, 0.8, 1, 5), numeric=(2, 3, 4), small_head=True, fit=(0, 1)),
                Spacer(1, 6)]
    index = {q.snapshot_id: i for i, q in enumerate(reports)}
    summarise = "same" in section.texts and "changed" in section.texts
    for n, q in enumerate(shown):
        fields = common_fields(ctx)
        fields.update(snapshot=q.snapshot_id, data_date=long_date(q.data_date), **_tally(q),
                      failed_checks=join_words([c.title for c in q.failed]))
        i = index[q.snapshot_id]
        if summarise and i > 0 and (n > 0 or scope == "latest"):
            # Say only what changed from the snapshot before (the scorecard lists every failure).
            prev = reports[i - 1]
            words = _change_words(prev, q)
            fields.update(previous=prev.snapshot_id, changes=words or "")
            key = "changed" if words else "same"
        else:
            key = "failed_some" if q.failed else "passed_all"
        out += paragraphs(fill(section.texts[key], fields, _where(ctx, section, key)))
    if section.options["details"]:
        out += _details(ctx, section, shown)
    return out


_MATRIX_COLUMNS = 8  # snapshots per details table, so the cells stay readable


def _details(ctx: ReportContext, section: Section, shown: Any) -> list[Flowable]:
    """Every check's measure in every snapshot shown: one row per check, one column per snapshot."""
    st = styles()
    out: list[Flowable] = []
    first = shown[0]
    sources: dict[str, list[str]] = {}
    for c in first.checks:
        sources.setdefault(c.source, []).append(str(c.number) if c.number is not None else short_title(c.title))
    tables = -(-len(shown) // _MATRIX_COLUMNS)
    size = -(-len(shown) // tables)  # as even as the split can be: 11 snapshots as 6 and 5
    for k in range(0, len(shown), size):
        part = shown[k:k + size]
        cols = [_col(section, "number", "No."), _col(section, "check", "Check"), _col(section, "limit", "Limit"),
                *(q.snapshot_id for q in part)]
        rows, marked = [], []
        for r, c in enumerate(first.checks):
            cells = ["—" if c.number is None else c.number, short_title(c.title), _limit(c).replace(" ", "\u00a0")]
            for j, q in enumerate(part):
                x = next((y for y in q.checks if y.key == c.key), None)
                cells.append("—" if x is None else _value(x) if x.passed is not None else "n/a")
                if x is not None and x.passed is False:
                    marked.append((r, 3 + j))
            rows.append(tuple(cells))
        span = f"{part[0].snapshot_id} to {part[-1].snapshot_id}" if len(part) > 1 else part[0].snapshot_id
        head = Heading(escape(f"{_col(section, 'details_heading', 'Quality measures')}: {span}"), st["h2"],
                       f"quality-{section.number}-{part[0].snapshot_id}", 1)
        table = data_table(cols, rows, (0.4, 2.4, 0.9, *([0.72] * len(part))), numeric=tuple(range(3, len(cols))),
                           small_head=True, marked=marked, keep=False)
        out += [KeepTogether([head, table]), Spacer(1, 4)]
    legend = _col(section, "details_legend", "Shaded bold: the check failed; n/a: not assessed in that snapshot.")
    src = "; ".join(f"{', '.join(ids) if len(ids) < 4 else f'{ids[0]} to {ids[-1]}'}: {source}" for source, ids in sources.items())
    out += paragraphs(escape(f"{legend} Sources: {src}."), "caption")
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
