"""Section renderers for the exhibits: window bar charts, the as-built critical path, near-critical trend.

They read the windows analysis (:mod:`forensic.analysis.windows` through
``ctx.delay``), :func:`forensic.analysis.asbuilt_path.as_built_critical_path` and
:mod:`forensic.analysis.nearcritical`; every date and number of days is read from
those result objects. Chart labels are drawn as plain strings (never parsed
as markup); captions and tables go through the escaping of
:func:`~forensic.report.templates.fill` and
:func:`~forensic.report.pdf.data_table`.
"""

from __future__ import annotations

from datetime import timedelta
from typing import Any
from xml.sax.saxutils import escape

from reportlab.platypus import Flowable, KeepTogether, Paragraph, Spacer

from forensic.analysis.asbuilt_path import as_built_critical_path
from forensic.analysis.nearcritical import key_dates, near_critical_trend

from . import charts
from .narrative import (
    ReportContext,
    common_fields,
    count_words,
    float_words,
    join_words,
    long_date,
    short_date,
    text_or_none,
    unit_words,
    window_last_day,
)
from .pdf import FRAME_WIDTH, Heading, data_table, paragraphs, styles
from .templates import Section, TemplateError
from .window_chart import WindowRow, window_bars

__all__ = ["EXHIBIT_RENDERERS", "window_rows"]

# A chart taller than this many rows continues on the next chart (never cut silently).
CHART_ROWS = 28


def _col(section: Section, key: str, default: str) -> str:
    return section.columns.get(key, default)


def _signed(n: int | None) -> str:
    return "—" if n is None else f"{n:+d}" if n else "0"


def window_rows(run: Any, unit: str) -> tuple[list[WindowRow], int]:
    """The rows of one window's chart, and how many activities the two critical paths hold in all.

    Drawn: the activities of the critical path at the start or at the end of
    the window that are worked or forecast in the window in either update
    (their dates overlap the window's days), those that joined or left the
    path, the first activity of the later path after the window, and the
    completion, last, carrying the window's slip. The earlier path's order
    comes first, then activities that joined. Dates are the early dates of
    each update's schedule (actual where the update records them).
    """
    w = run.window
    last = window_last_day(w)
    comp = run.after.completion_id
    ids = [a for a in dict.fromkeys([*w.critical_path_before, *w.critical_path_after]) if a != comp]
    total = len(ids) + 1
    moved = set(w.path_joined) | set(w.path_left)

    def in_window(aid: str) -> bool:
        for res in (run.before, run.after):
            x = res.activities.get(aid)
            if x is not None and x.early_start <= last and x.early_finish >= w.start:
                return True
        return False

    after_window = [a for a in w.critical_path_after if a != comp and run.after.activities[a].early_start > last]
    nxt = after_window[0] if after_window else None
    keep = [a for a in ids if a in moved or a == nxt or in_window(a)]
    rows = []
    for aid in [*keep, comp]:
        b = run.before.activities.get(aid)
        a = run.after.activities.get(aid)
        act = run.later.activities.get(aid) or run.earlier.activities.get(aid)
        if a is None:
            done = None
        elif a.status == "finished":
            done = a.early_finish + timedelta(days=1)
        elif a.status == "in-progress":
            done = w.end
        else:
            done = None
        mark = " +" if aid in w.path_joined else " −" if aid in w.path_left else ""
        rows.append(WindowRow(
            label=f"{aid}{mark} {act.name}",
            before=None if b is None else (b.early_start, b.early_finish),
            after=None if a is None else (a.early_start, a.early_finish),
            done_until=done, milestone=act.is_milestone,
            note=f"{_signed(w.slip)} {unit_words(unit, w.slip)}" if aid == comp else "",
        ))
    return rows, total


def _events_in(ctx: ReportContext, start, last) -> list[Any]:
    """Events whose period overlaps the window's days ``[start, last]``, by start date then id."""
    return sorted((e for e in ctx.casefile.events if e.start <= last and e.finish >= start), key=lambda e: (e.start, e.id))


def window_charts(ctx: ReportContext, section: Section) -> list[Flowable] | None:
    delay = ctx.delay
    if delay is None:
        return None
    st = styles()
    unit = delay.unit
    runs = list(delay.windows.runs)
    scope = section.options["scope"]
    runs = runs[-1:] if scope == "latest" else runs[-2:] if scope == "last-two" else runs
    out = paragraphs(text_or_none(ctx, section, "intro"))
    labels = (
        _col(section, "before", "forecast at the earlier update"), _col(section, "actual", "actual by the later update"),
        _col(section, "after", "forecast at the later update"), _col(section, "event", "event period"),
        _col(section, "data_dates", "data dates"),
    )
    for run in runs:
        w = run.window
        last = window_last_day(w)
        events = _events_in(ctx, w.start, last)
        rows, total = window_rows(run, unit)
        fields = common_fields(ctx)
        fields.update(
            window=w.label, from_id=w.from_id, to_id=w.to_id, start=long_date(w.start), end=long_date(last),
            days=_signed(w.slip), days_unit=unit_words(unit, w.slip), count=len(rows), total=total,
            movement=(f"{abs(w.slip)} {unit_words(unit, w.slip)} {'later' if w.slip > 0 else 'earlier'}"
                      if w.slip else "not at all"),
            events=join_words([e.id for e in events], "none"),
            completion_before=long_date(w.completion_before), completion_after=long_date(w.completion_after),
        )
        parts = [rows[k:k + CHART_ROWS] for k in range(0, len(rows), CHART_ROWS)]
        spans = [(e.id, e.start, e.finish) for e in events]
        for k, part in enumerate(parts):
            block: list[Flowable] = []
            if k == 0:
                block.append(Heading(escape(f"Window {w.label}: {long_date(w.start)} to {long_date(last)}"), st["h2"],
                                     f"window-chart-{section.number}-{w.label}", 1))
            else:
                block.append(Paragraph(escape(f"Window {w.label}, continued: rows {k * CHART_ROWS + 1} to "
                                              f"{k * CHART_ROWS + len(part)} of {len(rows)}."), st["caption"]))
            block.append(window_bars(part, width=FRAME_WIDTH, data_dates=(w.start, w.end), events=spans, labels=labels))
            if k == len(parts) - 1:
                block += paragraphs(text_or_none(ctx, section, "caption", fields), "caption")
            out.append(KeepTogether(block))
        out.append(Spacer(1, 6))
    return out


def as_built_path(ctx: ReportContext, section: Section) -> list[Flowable] | None:
    if len(ctx.casefile.snapshots) < 2:
        return None
    steps = as_built_critical_path(ctx.casefile, ctx.trend.schedules)
    if not steps:
        return None
    latest = ctx.casefile.snapshots[-1]
    worked = [s for s in steps if not s.forecast]
    windows = list(dict.fromkeys(s.window for s in worked))
    fields = common_fields(ctx)
    fields.update(count=len(steps), worked=len(worked), forecast=len(steps) - len(worked), windows=len(windows),
                  first=steps[0].activity, last=steps[-1].activity, data_date=long_date(latest.data_date),
                  snapshot=latest.id)
    out = paragraphs(text_or_none(ctx, section, "intro", fields))
    bars = []
    for s in steps:
        act = latest.activities[s.activity]
        if s.actual_finish:
            until = s.finish + timedelta(days=1)
        elif s.actual_start:
            until = latest.data_date
        else:
            until = None
        kind = None if not act.is_milestone else "start" if act.kind == "opening-milestone" else "finish"
        bars.append(charts.Bar(f"{s.activity} {s.name}", s.start, s.finish, until, kind))
    span = (min(b.start for b in bars), max(b.finish for b in bars))
    st = styles()
    for k in range(0, len(bars), CHART_ROWS):
        chart = charts.bars_on_time_scale(
            bars[k:k + CHART_ROWS], width=FRAME_WIDTH, data_date=latest.data_date, span=span,
            done_label=_col(section, "done", "actual"), to_do_label=_col(section, "to_do", "forecast"),
            milestone_label=_col(section, "milestone", "milestone"),
            data_date_label=_col(section, "data_date", f"data date of {latest.id}"),
        )
        if k == 0:
            out.append(chart)
        else:
            out.append(KeepTogether([Paragraph(escape(
                f"Continued: activities {k + 1} to {min(k + CHART_ROWS, len(bars))} of the {len(bars)} on the path."
            ), st["caption"]), chart]))
    out += paragraphs(text_or_none(ctx, section, "caption", fields), "caption")
    if section.options["table"]:
        cols = (_col(section, "window", "Window"), _col(section, "activity", "Activity"), _col(section, "name", "Name"),
                _col(section, "start", "Start"), _col(section, "finish", "Finish"), _col(section, "basis", "Dates"))
        body = [
            (s.window, s.activity, s.name, short_date(s.start), short_date(s.finish),
             "forecast" if s.forecast else "actual" if s.actual_finish else "actual start, forecast finish")
            for s in steps
        ]
        out += [Spacer(1, 4), data_table(cols, body, (1.1, 1.3, 2.8, 1, 1, 1.4), fit=(0, 1), small_head=True)]
    return out


def near_critical(ctx: ReportContext, section: Section) -> list[Flowable]:
    cf = ctx.casefile
    raw = section.options["margins"]
    if not raw or not all(isinstance(m, int) and not isinstance(m, bool) and 0 <= m <= 365 for m in raw):
        msg = (f"{ctx.template.path.name}, section {section.number} (near-critical), margins: expected a list of "
               f"whole working days from 0 to 365, got {raw!r}")
        raise TemplateError(msg)
    margins = tuple(raw)
    trend = near_critical_trend(cf, ctx.trend.schedules, margins)
    crit = cf.project.critical_float
    out = paragraphs(text_or_none(ctx, section, "intro", {"critical_float": crit,
                                                          "margins": join_words([str(m) for m in margins])}))
    series = [charts.Series(f"within {m} working days of critical", tuple((r.data_date, r.counts[i]) for r in trend))
              for i, m in enumerate(margins)]
    out.append(charts.line_chart(series, width=FRAME_WIDTH, height=190, x_dates=True,
                                 y_title=_col(section, "y_count", "Activities still to do near critical")))
    out += paragraphs(text_or_none(ctx, section, "caption"), "caption")
    cols = [_col(section, "snapshot", "Snapshot"), _col(section, "data_date", "Data date")]
    for m in margins:
        cols += [f"≤ {crit + m} wd", "paths"]
    body = [(r.snapshot_id, short_date(r.data_date), *[v for pair in zip(r.counts, r.paths, strict=True) for v in pair])
            for r in trend]
    out += [Spacer(1, 4), data_table(cols, body, (1, 1.3, *([0.8, 0.6] * len(margins))),
                                     numeric=tuple(range(2, len(cols))), small_head=True)]
    last = trend[-1]
    words = [f"{count_words(c, 'activity', 'activities')} within {m} working days ({count_words(p, 'path')})"
             for m, c, p in zip(margins, last.counts, last.paths, strict=True)]
    out += paragraphs(text_or_none(ctx, section, "latest", {"snapshot": last.snapshot_id, "counts": join_words(words)}))
    # Key dates against their contractual dates.
    rows = key_dates(cf, ctx.trend.schedules)
    flat = [k for per in rows for k in per]
    if flat:
        out.append(Spacer(1, 6))
        out += paragraphs(text_or_none(ctx, section, "key_dates_intro"))
        key_cols = (_col(section, "snapshot", "Snapshot"), _col(section, "milestone", "Milestone"),
                    _col(section, "name", "Name"), _col(section, "key_date", "Key date"),
                    _col(section, "forecast", "Forecast"), _col(section, "float_to_date", "Float to key date (wd)"))
        key_body = [(k.snapshot_id, k.milestone, k.name, short_date(k.key_date),
                 "finished " + short_date(k.forecast) if k.finished else short_date(k.forecast),
                 "—" if k.float_to_date is None else k.float_to_date) for k in flat]
        out.append(data_table(key_cols, key_body, (0.9, 1.2, 2.4, 1.1, 1.3, 1.2), numeric=(5,), fit=(0, 1),
                              small_head=True))
        late = [k for k in rows[-1] if k.float_to_date is not None and k.float_to_date < 0]
        if late:
            out += paragraphs(text_or_none(ctx, section, "late", {
                "snapshot": rows[-1][0].snapshot_id,
                "late": join_words([f"{k.name} ({k.milestone}) forecast {long_date(k.forecast)} against "
                                    f"{long_date(k.key_date)}, {float_words(k.float_to_date)} to its key date"
                                    for k in late]),
            }))
    return out


EXHIBIT_RENDERERS = {
    "window-charts": window_charts,
    "as-built-path": as_built_path,
    "near-critical": near_critical,
}
