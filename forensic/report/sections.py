"""Section renderers: one function per section kind, from results to flowables.

Each renderer reads the :class:`~forensic.report.narrative.ReportContext`
and its template section, and returns reportlab flowables: generated
sentences, charts and tables. Numbers are read from the result objects
(:mod:`forensic.analysis.trend` and the analyses); nothing is recomputed here.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from xml.sax.saxutils import escape

from reportlab.platypus import CondPageBreak, Flowable, KeepTogether, PageBreak, Paragraph, Spacer

from forensic.analysis.attribution.concurrency import rule_words
from forensic.analysis.trend import SnapshotTrend

from . import charts
from .asbuilt_sections import ASBUILT_RENDERERS
from .delay_sections import DELAY_RENDERERS, parties_words, party_totals
from .eot_sections import EOT_RENDERERS
from .exhibit_sections import EXHIBIT_RENDERERS
from .narrative import (
    ReportContext,
    activity_name,
    common_fields,
    count_words,
    float_words,
    long_date,
    milestone_sentence,
    move_sentence,
    short_date,
    text_or_none,
    unit_words,
)
from .notes import contract_float_sentence, critical_notes, key_date_words
from .paths import path_chart
from .pdf import FRAME_WIDTH, Heading, boxed, data_table, paragraphs, styles
from .record_sections import RECORD_RENDERERS
from .specs import SPECS
from .templates import Section, fill

__all__ = ["RENDERERS", "render_section", "settings_rows"]

Renderer = Callable[[ReportContext, Section], list[Flowable] | None]


_paras = paragraphs


def _col(section: Section, key: str, default: str) -> str:
    return section.columns.get(key, default)


def _rows_in_scope(ctx: ReportContext, section: Section) -> tuple[SnapshotTrend, ...]:
    rows = ctx.trend.snapshots
    scope = section.options.get("scope", "all")
    if scope == "latest":
        return rows[-1:]
    if scope == "last-two":
        return rows[-2:]
    return rows


def _signed(n: int | None) -> str:
    return "—" if n is None else f"{n:+d}" if n else "0"


def _where(ctx: ReportContext, section: Section, key: str) -> str:
    return f"{ctx.template.path.name}, section {section.number} ({section.kind}), text.{key}"


# --- cover, cautions, summary -------------------------------------------------------------


def cover(ctx: ReportContext, section: Section) -> list[Flowable]:
    st = styles()
    cf = ctx.casefile
    fields = common_fields(ctx)
    fields.update(
        snapshots=len(cf.snapshots),
        updates=len(cf.updates),
        version=ctx.version,
        template=ctx.template.name,
    )
    out: list[Flowable] = [
        Spacer(1, 60),
        Heading(escape(ctx.template.title), st["title"], "cover"),
        Paragraph(escape(cf.project.name), st["subtitle"]),
    ]
    out += _paras(fill(section.texts["lead"], fields, _where(ctx, section, "lead")))
    facts = [
        (_col(section, "baseline", "Baseline"), f"{cf.baseline.id}, data date {long_date(cf.baseline.data_date)}"),
        (_col(section, "latest", "Latest update"), f"{cf.snapshots[-1].id}, data date {long_date(cf.snapshots[-1].data_date)}"),
        (_col(section, "snapshots", "Snapshots"), ", ".join(s.id for s in cf.snapshots)),
        (_col(section, "contract_completion", "Contract completion"), long_date(cf.project.contract_completion)),
        (_col(section, "version", "Software"), f"forensic {ctx.version}"),
    ]
    out += [Spacer(1, 8), data_table((_col(section, "item", "Item"), _col(section, "value", "Value")), facts, (1, 3))]
    if cf.parties:
        rows = [(p.name, p.role, p.id) for p in cf.parties.values()]
        out += [
            Spacer(1, 10),
            data_table(
                (_col(section, "party", "Party"), _col(section, "role", "Role"), _col(section, "party_id", "Reference")),
                rows,
                (3, 1, 1),
            ),
        ]
    note = text_or_none(ctx, section, "note", {"version": ctx.version, "template": ctx.template.name})
    out += [Spacer(1, 10), *_paras(note, "small")]
    out.append(PageBreak() if section.options["page_break"] else Spacer(1, 12))
    return out


def cautions(ctx: ReportContext, section: Section) -> list[Flowable]:
    paras = _paras(fill(section.texts["text"], common_fields(ctx), _where(ctx, section, "text")))
    return [boxed(paras)]


def _trend_chart(ctx: ReportContext, section: Section, rows: Sequence[SnapshotTrend]) -> Flowable:
    t = ctx.trend
    series = [charts.Series(_col(section, "forecast", "Forecast completion"), tuple((r.data_date, r.completion) for r in rows))]
    ref = None
    if t.contract_completion is not None:
        ref = (_col(section, "contract", "Contract completion"), t.contract_completion)
    return charts.line_chart(
        series, width=FRAME_WIDTH, height=200, y_title=_col(section, "y_completion", "Forecast completion"),
        x_dates=True, y_dates=True, reference=ref,
    )


def summary(ctx: ReportContext, section: Section) -> list[Flowable]:
    t = ctx.trend
    last = t.latest
    unit = t.delay_unit
    fields = common_fields(ctx)
    fields.update(
        baseline_completion=long_date(t.baseline_completion),
        completion=long_date(last.completion),
        slip=abs(last.slip),
        slip_unit=unit_words(unit, last.slip),
        latest_data_date=long_date(last.data_date),
    )
    key = "later" if last.slip > 0 else "earlier" if last.slip < 0 else "unchanged"
    out = _paras(fill(section.texts[key], fields, _where(ctx, section, key)))
    if last.variance is not None:
        vkey = "contract_after" if last.variance > 0 else "contract_before" if last.variance < 0 else "contract_on"
        out += _paras(text_or_none(ctx, section, vkey, {
            "contract_completion": long_date(t.contract_completion),
            "variance": abs(last.variance),
            "variance_unit": unit_words(unit, last.variance),
        }))
    out += _paras(text_or_none(ctx, section, "float", {
        "float": float_words(last.completion_float),
        "completion_id": last.completion_id,
        "completion_name": activity_name(ctx.casefile, last.completion_id, last.snapshot_id),
        "critical": last.critical,
    }))
    out += critical_notes(ctx, section, last)
    keys = key_date_words(ctx)
    if keys:
        out += _paras(text_or_none(ctx, section, "key_dates", {"key_dates": "; ".join(keys), "count": len(keys)}))
    if ctx.delay is not None:
        led = ctx.delay.ledger
        totals, concurrent = party_totals(ctx.delay)
        out += _paras(text_or_none(ctx, section, "parties", {
            "parties": parties_words(ctx, totals),
            "compensable": led.total.excusable_compensable,
            "noncompensable": led.total.excusable_noncompensable,
            "nonexcusable": led.total.non_excusable,
            "concurrent": led.total.concurrent,
            "unattributed": led.total.unattributed_revision,
            "gains": abs(led.total.gains),
            "unassigned": led.total.unassigned,
            "total_slip": abs(led.total_slip),
            "total_unit": unit_words(ctx.delay.unit, led.total_slip),
        }))
    if section.options["chart"]:
        out.append(_trend_chart(ctx, section, t.snapshots))
        out += _paras(text_or_none(ctx, section, "caption"), "caption")
    return out


# --- method, settings, inputs -------------------------------------------------------------


def settings_rows(ctx: ReportContext) -> list[tuple[str, str]]:
    """Every setting that a figure of the report depends on, as (setting, value) rows."""
    cf = ctx.casefile
    p = cf.project
    t = ctx.trend
    logic = {
        "retained": "retained logic: the remaining work of an activity started out of sequence still waits for its unfinished predecessors",
        "override": "progress override: the remaining work of an activity started out of sequence ignores its unfinished predecessors",
    }.get(p.progress_logic, p.progress_logic)
    unit = "calendar days" if p.delay_unit != "working-days" else f"working days of the default calendar {p.default_calendar}"
    boundaries = cf.windows or tuple(s.id for s in cf.snapshots)
    dates = {s.id: s.data_date for s in cf.snapshots}
    windows = "; ".join(f"{b} ({short_date(dates[b])})" if b in dates else b for b in boundaries)
    comp = p.completion or "the activity that finishes last in each snapshot"
    if p.completion:
        comp = f"{p.completion} ({activity_name(cf, p.completion)})"
    cals = "; ".join(
        f"{c.id}: {' '.join(c.workdays)}, {len(c.holidays)} holiday(s), {len(c.extra_workdays)} extra working day(s)"
        for c in cf.calendars.values()
    )
    keys = ", ".join(f"{m} ({t.milestone_names.get(m, m)})" for m in t.milestones) or "none"
    return [
        ("Progress logic", logic),
        ("Critical float", f"an activity is critical when its total float is at most {p.critical_float} working days"),
        ("Concurrency rule", rule_words(p.concurrency)),
        ("Delay unit", unit),
        ("Window boundaries (data dates)", windows),
        ("Completion", comp),
        ("Contract completion", long_date(p.contract_completion)),
        ("Default calendar", p.default_calendar),
        ("Calendars", cals),
        ("Key milestones followed", keys),
        ("Float bands (working days)", ", ".join(b.label for b in t.bands)),
        ("Report template", f"{ctx.template.name} ({ctx.template.path.name})"),
        *([("Acceleration asked", f"{ctx.recover_days} {unit_words(p.delay_unit, ctx.recover_days)} on the latest update, least cost")]
          if ctx.recover_days else []),
    ]


def method(ctx: ReportContext, section: Section) -> list[Flowable]:
    p = ctx.casefile.project
    fields = {
        "progress_logic": p.progress_logic,
        "critical_float": p.critical_float,
        "delay_unit": unit_words(p.delay_unit),
        "snapshots": len(ctx.casefile.snapshots),
    }
    base = common_fields(ctx)
    base.update(fields)
    out = _paras(fill(section.texts["text"], base, _where(ctx, section, "text")))
    protocols = []
    for s in ctx.template.sections:
        proto = SPECS[s.kind].protocol
        if proto and s.kind not in ctx.left_out:
            protocols.append((s.heading, proto))
    if protocols:
        lead = _paras(text_or_none(ctx, section, "protocols"))
        table = data_table((_col(section, "section", "Section"), _col(section, "protocol", "Method (published name)")), protocols, (1, 3), keep=False)
        out.append(KeepTogether([*lead, table]))
        out.append(Spacer(1, 8))
    lead = _paras(text_or_none(ctx, section, "settings"))
    table = data_table((_col(section, "setting", "Setting"), _col(section, "value", "Value")), settings_rows(ctx), (1, 3), keep=False)
    out.append(KeepTogether([*lead, table]))
    return out


def inputs(ctx: ReportContext, section: Section) -> list[Flowable]:
    st = styles()
    cf = ctx.casefile
    files = sorted(cf.inputs.items())
    fields = common_fields(ctx)
    fields.update(version=ctx.version, command=ctx.command, template=ctx.template.name, font=ctx.font, files=len(files))
    out = _paras(fill(section.texts["text"], fields, _where(ctx, section, "text")))
    run = [
        (_col(section, "software", "Software"), f"forensic {ctx.version}"),
        (_col(section, "command", "Command"), ctx.command),
        (_col(section, "template", "Template"), f"{ctx.template.name} ({ctx.template.path.name})"),
        (_col(section, "font", "Embedded font"), ctx.font),
    ]
    out.append(data_table((_col(section, "item", "Item"), _col(section, "value", "Value")), run, (1, 3)))
    out.append(Spacer(1, 8))
    if files:
        out.append(data_table((_col(section, "file", "Input file"), _col(section, "sha256", "SHA-256")), files, (1.6, 3), tiny=(1,)))
    else:
        out.append(Paragraph(escape("The casefile was built in memory; it has no input files to record."), st["body"]))
    out.append(Spacer(1, 8))
    out.append(data_table((_col(section, "setting", "Setting"), _col(section, "value", "Value")), settings_rows(ctx), (1, 3)))
    return out


# --- completion trend, float erosion, longest path ----------------------------------------


def completion_trend(ctx: ReportContext, section: Section) -> list[Flowable]:
    t = ctx.trend
    rows = _rows_in_scope(ctx, section)
    out = _paras(text_or_none(ctx, section, "intro"))
    out.append(_trend_chart(ctx, section, t.snapshots))
    out += _paras(text_or_none(ctx, section, "caption"), "caption")
    if t.contract_completion is not None:
        out += _paras(text_or_none(ctx, section, "contract_line", {"contract_completion": long_date(t.contract_completion)}))
    index = {r.snapshot_id: i for i, r in enumerate(t.snapshots)}
    for r in rows:
        i = index[r.snapshot_id]
        prev = t.snapshots[i - 1] if i > 0 else None
        out += _paras(move_sentence(ctx, section, r, prev))
    if section.options["table"]:
        unit = unit_words(t.delay_unit)
        cols = (
            _col(section, "snapshot", "Snapshot"),
            _col(section, "data_date", "Data date"),
            _col(section, "completion", "Forecast completion"),
            _col(section, "float", "Completion float (wd)"),
            _col(section, "movement", f"Movement ({unit})"),
            _col(section, "slip", f"Slip from baseline ({unit})"),
            _col(section, "variance", f"Against contract ({unit})"),
        )
        body = [
            (r.snapshot_id, short_date(r.data_date), short_date(r.completion), "—" if r.completion_float is None else r.completion_float,
             _signed(r.movement), _signed(r.slip), _signed(r.variance))
            for r in t.snapshots
        ]
        out += [Spacer(1, 4), data_table(cols, body, (1, 1.4, 1.6, 1.2, 1.2, 1.3, 1.3), numeric=(3, 4, 5, 6))]
    return out


def float_erosion(ctx: ReportContext, section: Section) -> list[Flowable]:
    t = ctx.trend
    rows = t.snapshots
    out = _paras(text_or_none(ctx, section, "intro"))
    series = [charts.Series(
        _col(section, "completion", f"Completion ({t.snapshots[-1].completion_id})"),
        tuple((r.data_date, r.completion_float) for r in rows),
    )]
    for m in t.milestones:
        series.append(charts.Series(f"{m} {t.milestone_names.get(m, m)}", tuple((r.data_date, r.milestone_floats.get(m)) for r in rows)))
    out.append(charts.line_chart(series, width=FRAME_WIDTH, height=210, y_title=_col(section, "y_float", "Total float (working days)"), zero_line=True))
    out += _paras(text_or_none(ctx, section, "caption"), "caption")
    scoped = _rows_in_scope(ctx, section)
    completion_key = "__completion__"
    for m in (completion_key, *t.milestones):
        if m == completion_key:
            # The completion's float, read like a milestone's.
            sentence = _completion_float_sentence(ctx, section, scoped)
        else:
            sentence = milestone_sentence(ctx, section, m, scoped)
        out += _paras(sentence)
        out += _paras(contract_float_sentence(ctx, section, t.snapshots[-1].completion_id if m == completion_key else m,
                                               scoped))
    if section.options["table"]:
        cols = [_col(section, "snapshot", "Snapshot"), _col(section, "data_date", "Data date"), _col(section, "completion_float", "Completion")]
        cols += list(t.milestones)
        body = [
            (r.snapshot_id, short_date(r.data_date), "—" if r.completion_float is None else r.completion_float,
             *("—" if r.milestone_floats.get(m) is None else r.milestone_floats[m] for m in t.milestones))
            for r in rows
        ]
        out += [Spacer(1, 4), data_table(cols, body, (1, 1.4, 1.1, *([1.1] * len(t.milestones))), numeric=tuple(range(2, len(cols))))]
    if section.options["band_chart"]:
        labels = [b.label for b in t.bands]
        out.append(CondPageBreak(230))
        out.append(Spacer(1, 8))
        out.append(charts.stacked_bars(
            [r.snapshot_id for r in rows], [r.band_counts for r in rows], labels,
            width=FRAME_WIDTH, height=190, y_title=_col(section, "y_bands", "Activities not finished, by total float (working days)"),
        ))
        out += _paras(text_or_none(ctx, section, "bands_caption"), "caption")
    last = scoped[-1]
    negative = sum(c for b, c in zip(t.bands, last.band_counts, strict=True) if b.hi is not None and b.hi <= 0)
    bfields = common_fields(ctx)
    bfields.update(
        snapshot=last.snapshot_id, data_date=long_date(last.data_date), open=sum(last.band_counts),
        negative=negative, critical=last.critical, finished=last.finished,
        critical_float=ctx.casefile.project.critical_float,
    )
    out += _paras(fill(section.texts["bands"], bfields, _where(ctx, section, "bands")))
    return out


def _completion_float_sentence(ctx: ReportContext, section: Section, rows: Sequence[SnapshotTrend]) -> str | None:
    have = [r for r in rows if r.completion_float is not None]
    if not have:
        return None
    a, b = have[0], have[-1]
    assert a.completion_float is not None and b.completion_float is not None  # ``have`` keeps only rows with one
    change = b.completion_float - a.completion_float
    fields = common_fields(ctx)
    fields.update(
        milestone=b.completion_id,
        name=activity_name(ctx.casefile, b.completion_id, b.snapshot_id),
        first_snapshot=a.snapshot_id, first_float=float_words(a.completion_float),
        last_snapshot=b.snapshot_id, last_float=float_words(b.completion_float),
        change=float_words(abs(change)),
        first_date=long_date(a.completion), last_date=long_date(b.completion),
    )
    key = "eroded" if change < 0 else "gained" if change > 0 else "steady"
    return fill(section.texts[key], fields, _where(ctx, section, key))


def longest_path(ctx: ReportContext, section: Section) -> list[Flowable]:
    st = styles()
    cf = ctx.casefile
    t = ctx.trend
    out = _paras(text_or_none(ctx, section, "intro"))
    index = {r.snapshot_id: i for i, r in enumerate(t.snapshots)}
    limit = max(1, int(section.options["rows"]))
    for r in _rows_in_scope(ctx, section):
        res = t.schedules[index[r.snapshot_id]]
        snap = cf.snapshot(r.snapshot_id)
        remaining = [a for a in r.longest_path if res.activities[a].status != "finished"]
        nxt = remaining[0] if remaining else r.completion_id
        fields = common_fields(ctx)
        fields.update(
            snapshot=r.snapshot_id, data_date=long_date(r.data_date), count=len(r.longest_path),
            remaining=len(remaining), next=nxt, next_name=activity_name(cf, nxt, r.snapshot_id),
            completion=long_date(r.completion), completion_id=r.completion_id,
            completion_name=activity_name(cf, r.completion_id, r.snapshot_id), float=float_words(r.completion_float),
        )
        block: list[Flowable] = [
            Heading(escape(f"{r.snapshot_id}: data date {long_date(r.data_date)}"), st["h2"], f"path-{section.number}-{r.snapshot_id}", 1),
        ]
        block += _paras(fill(section.texts["sentence"], fields, _where(ctx, section, "sentence")))
        block += critical_notes(ctx, section, r)
        chains = getattr(res, "longest_paths", ())
        if len(chains) > 1:
            block += _paras(text_or_none(ctx, section, "chains", {
                "snapshot": r.snapshot_id, "chains": len(chains),
                "chain_list": "; ".join(f"chain {n}, {count_words(len(c), 'activity', 'activities')} from "
                                        f"{c[0]} to {c[-1]}" for n, c in enumerate(chains, 1)),
            }))
        charts_ = path_chart(section, r.longest_path, res, snap, r.data_date, limit, continued=True, chains=chains)
        block.append(charts_[0])
        caption = text_or_none(ctx, section, "caption", {"snapshot": r.snapshot_id, "data_date": long_date(r.data_date)})
        block += _paras(caption, "caption")
        out.append(KeepTogether(block))
        out += charts_[1:]
        if section.options["table"]:
            cols = (_col(section, "id", "Activity"), _col(section, "name", "Name"), _col(section, "start", "Start"),
                    _col(section, "finish", "Finish"), _col(section, "float_col", "Total float (wd)"), _col(section, "status", "Status"))
            body = [
                (a, snap.activities[a].name, short_date(res.activities[a].early_start), short_date(res.activities[a].early_finish),
                 "—" if res.activities[a].total_float is None else res.activities[a].total_float, res.activities[a].status)
                for a in r.longest_path
            ]
            out.append(data_table(cols, body, (1, 3, 1.2, 1.2, 1, 1), numeric=(4,)))
            out.append(Spacer(1, 6))
    return out


RENDERERS: dict[str, Renderer] = {
    "cover": cover,
    "cautions": cautions,
    "summary": summary,
    "method": method,
    "completion-trend": completion_trend,
    "float-erosion": float_erosion,
    "longest-path": longest_path,
    "inputs": inputs,
    **DELAY_RENDERERS,
    **RECORD_RENDERERS,
    **ASBUILT_RENDERERS,
    **EXHIBIT_RENDERERS,
    **EOT_RENDERERS,
}


def render_section(ctx: ReportContext, section: Section, number: int | None) -> list[Flowable] | None:
    """The heading and body of one section (the cover carries its own title); ``None`` to leave it out."""
    body = RENDERERS[section.kind](ctx, section)
    if body is None:
        return None
    if section.kind == "cover":
        return body
    st = styles()
    label = f"{number}. {section.heading}" if number is not None else section.heading
    heading = Heading(escape(label), st["h1"], f"section-{section.number}")
    if not body:
        return [CondPageBreak(120), heading]
    # The heading stays on the page of the first thing under it (unless that is itself kept whole).
    first = body[0]
    if isinstance(first, KeepTogether):
        return [CondPageBreak(160), heading, *body]
    return [CondPageBreak(120), KeepTogether([heading, first]), *body[1:]]
