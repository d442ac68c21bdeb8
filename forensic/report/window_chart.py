"""The window chart: each activity twice (earlier forecast above, later dates below) on one calendar axis.

Drawn from :func:`forensic.report.exhibit_sections.window_rows`, with the
plotting kit of :mod:`forensic.report.charts` (axes, ticks, legend, markers);
no figure is computed here.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from datetime import date

from reportlab.graphics.shapes import Drawing, Line, Rect
from reportlab.lib import colors
from reportlab.pdfbase.pdfmetrics import stringWidth

from .charts import (
    AXIS,
    DONE,
    FONT_SIZE,
    GRID,
    REFERENCE,
    TO_DO,
    chart_text,
    date_ticks,
    draw_marker,
    legend,
)
from .pdf import INK, fit_text, font_family

__all__ = ["WindowRow", "window_bars"]


@dataclass(frozen=True, slots=True)
class WindowRow:
    """One activity of a window chart: its dates at the window's start and at its end.

    ``before`` is the earlier update's forecast ``(start, finish)``;
    ``after`` the later update's ``(start, finish)`` with ``done_until``
    (exclusive) marking what is actual. Either is ``None`` when the activity
    is not in that update. ``note`` is written after the row (the window's
    slip on the completion).
    """

    label: str
    before: tuple[date, date] | None
    after: tuple[date, date] | None
    done_until: date | None
    milestone: bool = False
    note: str = ""


BEFORE_FILL = colors.HexColor("#c3cbd3")  # light grey-blue: the earlier update's forecast
SPAN_FILL = colors.HexColor("#efe4c8")  # pale sand: an event's period


def window_bars(
    rows: Sequence[WindowRow],
    *,
    width: float,
    data_dates: tuple[date, date],
    events: Sequence[tuple[str, date, date]] = (),
    labels: Sequence[str] = ("forecast at the earlier update", "actual by the later update",
                             "forecast at the later update", "event period", "data dates"),
) -> Drawing:
    """Each activity as two bars, the earlier forecast above the later dates, on one calendar axis.

    The two data dates are dashed vertical lines; each event acting in the
    window is a shaded span behind the bars, labelled with its id at the
    top. Fills differ in lightness as well as hue (light earlier forecast,
    dark actual, mid later forecast, pale event), so the chart reads in
    greyscale; a milestone is a diamond.
    """
    f = font_family().regular
    row = 16.0
    label_w = min(width * 0.36, max((stringWidth(r.label, f, FONT_SIZE) for r in rows), default=40) + 6)
    note_w = max((stringWidth(r.note, f, FONT_SIZE) for r in rows), default=0)
    left = label_w + 4
    right = width - 8 - (note_w + 6 if note_w else 0)
    items = [
        (labels[0], lambda x, y: [Rect(x + 2, y - 2.5, 14, 5, fillColor=BEFORE_FILL, strokeColor=AXIS, strokeWidth=0.4)]),
        (labels[1], lambda x, y: [Rect(x + 2, y - 3, 14, 6, fillColor=DONE, strokeColor=DONE, strokeWidth=0.4)]),
        (labels[2], lambda x, y: [Rect(x + 2, y - 3, 14, 6, fillColor=TO_DO, strokeColor=INK, strokeWidth=0.5)]),
        (labels[3], lambda x, y: [Rect(x + 2, y - 4, 14, 8, fillColor=SPAN_FILL, strokeColor=SPAN_FILL, strokeWidth=0)]),
        (labels[4], lambda x, y: [Line(x + 9, y - 5, x + 9, y + 5, strokeColor=REFERENCE, strokeWidth=1.1, strokeDashArray=(2, 1.5))]),
    ]
    key, legend_h = legend(items, 0, 0, width - left)
    legend_h += 4
    axis_h = 16
    days = [data_dates[0].toordinal(), data_dates[1].toordinal()]
    for r in rows:
        for span in (r.before, r.after):
            if span is not None:
                days += [span[0].toordinal(), span[1].toordinal() + 1]
    for _, a, b in events:
        days += [a.toordinal(), b.toordinal() + 1]
    xlo, xhi, xticks = date_ticks(min(days) - 3, max(days) + 3, right - left)

    def px(v: float) -> float:
        return left + (v - xlo) / ((xhi - xlo) or 1) * (right - left)

    # Event labels above the plot, on a new line wherever one would overlap the one before it.
    label_levels: list[int] = []
    ends: list[float] = []  # right end of the last label on each line
    for label, a, _ in events:
        x0 = px(a.toordinal()) + 1
        level = next((i for i, e in enumerate(ends) if x0 > e + 3), len(ends))
        if level == len(ends):
            ends.append(0.0)
        ends[level] = x0 + stringWidth(label, f, FONT_SIZE - 1)
        label_levels.append(level)
    top_pad = 6 + 8 * len(ends)
    height = top_pad + 6 + row * max(len(rows), 1) + axis_h + legend_h
    d = Drawing(width, height)
    top = height - top_pad
    bottom = axis_h + legend_h

    for _label, a, b in events:
        x0, x1 = px(a.toordinal()), px(b.toordinal() + 1)
        d.add(Rect(x0, bottom, max(x1 - x0, 0.8), top - bottom, fillColor=SPAN_FILL, strokeColor=SPAN_FILL, strokeWidth=0))
    for (label, a, _), level in zip(events, label_levels, strict=True):
        d.add(chart_text(px(a.toordinal()) + 1, top + 3 + 8 * level, label, "start", FONT_SIZE - 1))
    for t, s in xticks:
        d.add(Line(px(t), bottom, px(t), top, strokeColor=GRID, strokeWidth=0.4))
        d.add(chart_text(px(t), bottom - 10, s, "middle"))
    d.add(Line(left, bottom, right, bottom, strokeColor=AXIS, strokeWidth=0.7))
    for i, r in enumerate(rows):
        yc = top - row * (i + 0.5)
        d.add(chart_text(2, yc - 2.4, fit_text(r.label, f, FONT_SIZE, label_w - 4)))
        if r.before is not None:
            s0, s1 = r.before[0].toordinal(), r.before[1].toordinal() + 1
            if r.milestone:
                d.add(draw_marker("diamond", px(s1 if r.note else s0), yc + 3.2, BEFORE_FILL, 2.8))
            else:
                d.add(Rect(px(s0), yc + 1.2, max(px(s1) - px(s0), 0.8), 4.6, fillColor=BEFORE_FILL, strokeColor=AXIS, strokeWidth=0.4))
        if r.after is not None:
            s0, s1 = r.after[0].toordinal(), r.after[1].toordinal() + 1
            if r.milestone:
                d.add(draw_marker("diamond", px(s1 if r.note else s0), yc - 3.2, DONE if r.done_until else INK, 3.2))
            else:
                cut = s0 if r.done_until is None else max(s0, min(s1, r.done_until.toordinal()))
                if cut > s0:
                    d.add(Rect(px(s0), yc - 6.2, px(cut) - px(s0), 5.6, fillColor=DONE, strokeColor=DONE, strokeWidth=0.4))
                if s1 > cut:
                    d.add(Rect(px(cut), yc - 6.2, px(s1) - px(cut), 5.6, fillColor=TO_DO, strokeColor=INK, strokeWidth=0.5))
        if r.note:
            end = max(s[1].toordinal() + 1 for s in (r.before, r.after) if s is not None)
            d.add(chart_text(min(px(end) + 5, right + 4), yc - 2.4, r.note, "start", FONT_SIZE, bold=True))
    for dd in data_dates:
        x = px(dd.toordinal())
        d.add(Line(x, bottom, x, top, strokeColor=REFERENCE, strokeWidth=1.1, strokeDashArray=(2, 1.5)))
    key.translate(left, legend_h - 2)
    d.add(key)
    return d
