"""Charts as vector graphics (reportlab.graphics), drawn from result objects.

Our own small plotting kit: axes with round ticks, a date axis, line series
with markers, stacked bars, and bars on a time scale. Every series differs
in three ways at once (colour, marker shape, dash pattern) and the fills of
stacked bars run from dark to light in a fixed order, so a chart stays
readable printed in greyscale. Labels are measured before they are placed
and cut with an ellipsis when they would not fit, so nothing is clipped.

The charts only draw what they are given; no figure is computed here.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from datetime import date

from reportlab.graphics.shapes import Circle, Drawing, Group, Line, Polygon, PolyLine, Rect, String
from reportlab.lib import colors
from reportlab.pdfbase.pdfmetrics import stringWidth

from .pdf import INK, fit_text, font_family

__all__ = [
    "AXIS",
    "DONE",
    "FONT_SIZE",
    "GRID",
    "REFERENCE",
    "TO_DO",
    "chart_text",
    "date_ticks",
    "legend",
    "draw_marker",
    "Bar",
    "Series",
    "bars_on_time_scale",
    "line_chart",
    "stacked_bars",
]

# Series styles: colour (dark to mid-light), marker, dash. Ours.
SERIES_COLOURS = [colors.HexColor(c) for c in ("#16324f", "#c8782a", "#4f8a6e", "#7b4f8f", "#8d99a6", "#b5495b")]
MARKERS = ("circle", "square", "triangle", "diamond", "cross", "circle")
DASHES: tuple[tuple[float, ...] | None, ...] = (None, (5, 2), (1.5, 2), (6, 2, 1.5, 2), (3, 3), (8, 3))
# Stack fills, darkest first, luminance strictly rising (greyscale order).
STACK_FILLS = [colors.HexColor(c) for c in ("#3d1a1a", "#9c3b30", "#d0893d", "#a9c4a3", "#dfe7ee", "#f6f3e8")]
GRID = colors.HexColor("#d5dadf")
AXIS = colors.HexColor("#4a545e")
REFERENCE = colors.HexColor("#7a2e2e")
DONE = colors.HexColor("#16324f")
TO_DO = colors.HexColor("#e0a458")

MONTHS = ("Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec")
FONT_SIZE = 7
# A legend sample: draws its shapes with the key's left end at ``(x, y)``.
LegendSample = Callable[[float, float], Sequence[object]]


@dataclass(frozen=True, slots=True)
class Series:
    """A line: its legend label and ``(x, y)`` points (dates or numbers)."""

    label: str
    points: tuple[tuple[date | float, date | float | None], ...]


@dataclass(frozen=True, slots=True)
class Bar:
    """A bar on a time scale: ``start`` to ``finish`` inclusive, done up to ``done_until`` (exclusive)."""

    label: str
    start: date
    finish: date
    done_until: date | None  # None: nothing done; finish + 1 day or later: all done
    milestone: str | None = None  # "start" (diamond at the start) or "finish" (at the end of the finish day)


def _num(v: date | float) -> float:
    return float(v.toordinal()) if isinstance(v, date) else float(v)


def _nice_step(span: float, target: int) -> float:
    raw = max(span, 1e-9) / max(target, 1)
    mag = 10 ** math.floor(math.log10(raw))
    for m in (1, 2, 5, 10):
        if m * mag >= raw:
            return m * mag
    return 10 * mag


def _number_ticks(lo: float, hi: float, target: int = 6, integer: bool = True) -> tuple[float, float, list[float]]:
    if hi - lo < 1e-9:
        lo, hi = lo - 1, hi + 1
    step = _nice_step(hi - lo, target)
    if integer:
        step = max(1.0, round(step))
    start = math.floor(lo / step) * step
    end = math.ceil(hi / step) * step
    ticks = []
    t = start
    while t <= end + 1e-9:
        ticks.append(round(t, 9))
        t += step
    return start, end, ticks


def _date_label(d: date, with_day: bool) -> str:
    return f"{d.day} {MONTHS[d.month - 1]}" if with_day else f"{MONTHS[d.month - 1]} {d.year}"


def date_ticks(
    lo: float, hi: float, width: float, label_w: float | None = None
) -> tuple[float, float, list[tuple[float, str]]]:
    """Month ticks (every 1, 2, 3, 6 or 12 months) so labels do not collide; days for short spans.

    ``label_w`` is the room one label needs along the axis (by default its
    width plus a gap; on a vertical axis, the line height).
    """
    f = font_family().regular
    d0, d1 = date.fromordinal(int(math.floor(lo))), date.fromordinal(int(math.ceil(hi)))
    if (d1 - d0).days < 75:
        for step in (7, 14, 28):
            ticks = []
            t = d0.toordinal() - d0.weekday()
            while t <= d1.toordinal() + step:
                ticks.append((float(t), _date_label(date.fromordinal(t), True)))
                t += step
            need = label_w or max(stringWidth(s, f, FONT_SIZE) for _, s in ticks) + 8
            if need * len(ticks) <= width:
                break
        return ticks[0][0], ticks[-1][0], ticks
    label_w = label_w or stringWidth("Mmm 0000", f, FONT_SIZE) + 10
    months = (d1.year - d0.year) * 12 + d1.month - d0.month + 2
    for step in (1, 2, 3, 6, 12, 24, 60):
        if (months / step + 1) * label_w <= width:
            break
    y, m = d0.year, d0.month
    m0 = ((m - 1) // step) * step + 1 if step <= 12 else 1
    ticks = []
    cur = date(y, m0, 1)
    while True:
        ticks.append((float(cur.toordinal()), _date_label(cur, False)))
        if cur.toordinal() >= d1.toordinal():
            break
        mm = cur.month - 1 + step
        cur = date(cur.year + mm // 12, mm % 12 + 1, 1)
    return ticks[0][0], ticks[-1][0], ticks


def draw_marker(kind: str, x: float, y: float, colour, size: float = 3.2) -> Group | Circle | Rect | Polygon:
    white = colors.white
    if kind == "circle":
        return Circle(x, y, size * 0.95, fillColor=colour, strokeColor=white, strokeWidth=0.5)
    if kind == "square":
        s = size * 0.85
        return Rect(x - s, y - s, 2 * s, 2 * s, fillColor=colour, strokeColor=white, strokeWidth=0.5)
    if kind == "triangle":
        s = size * 1.15
        return Polygon([x - s, y - s * 0.8, x + s, y - s * 0.8, x, y + s], fillColor=colour, strokeColor=white, strokeWidth=0.5)
    if kind == "diamond":
        s = size * 1.15
        return Polygon([x, y - s, x + s, y, x, y + s, x - s, y], fillColor=colour, strokeColor=white, strokeWidth=0.5)
    g = Group()
    s = size
    g.add(Line(x - s, y - s, x + s, y + s, strokeColor=colour, strokeWidth=1.4))
    g.add(Line(x - s, y + s, x + s, y - s, strokeColor=colour, strokeWidth=1.4))
    return g


def chart_text(x: float, y: float, s: str, anchor: str = "start", size: float = FONT_SIZE, bold: bool = False, colour=INK) -> String:
    f = font_family()
    return String(x, y, s, fontName=f.bold if bold else f.regular, fontSize=size, fillColor=colour, textAnchor=anchor)


def legend(items: Sequence[tuple[str, LegendSample]], x: float, y_top: float, width: float) -> tuple[Group, float]:
    """Legend entries ``(label, draw(x, y) -> shapes)`` in rows; returns the group and its height."""
    f = font_family().regular
    g = Group()
    row_h = 11
    cx, cy = x, y_top - row_h + 3
    rows = 1
    for label, sample in items:
        w = 22 + stringWidth(label, f, FONT_SIZE) + 12
        if cx + w > x + width and cx > x:
            cx = x
            cy -= row_h
            rows += 1
        for shape in sample(cx, cy + 2.5):
            g.add(shape)
        g.add(chart_text(cx + 22, cy, fit_text(label, f, FONT_SIZE, width - 24)))
        cx += w
    return g, rows * row_h


def _line_sample(i: int):
    colour, marker, dash = SERIES_COLOURS[i % 6], MARKERS[i % 6], DASHES[i % 6]

    def draw(x: float, y: float):
        return [
            Line(x, y, x + 18, y, strokeColor=colour, strokeWidth=1.3, strokeDashArray=dash),
            draw_marker(marker, x + 9, y, colour, 2.6),
        ]

    return draw


def _ref_sample(x: float, y: float):
    return [Line(x, y, x + 18, y, strokeColor=REFERENCE, strokeWidth=1, strokeDashArray=(2, 2))]


def line_chart(
    series: Sequence[Series],
    *,
    width: float,
    height: float,
    y_title: str,
    x_dates: bool = True,
    y_dates: bool = False,
    reference: tuple[str, date | float] | None = None,
    zero_line: bool = False,
    x_title: str = "",
) -> Drawing:
    """Lines with markers over a date (or number) axis; an optional horizontal reference line.

    ``reference`` is ``(legend label, y value)``, for example the contractual
    completion on a chart of forecast completions.
    """
    f = font_family().regular
    pts = [(_num(x), _num(y)) for s in series for x, y in s.points if y is not None]
    xs = [p[0] for p in pts] or [0.0, 1.0]
    ys = [p[1] for p in pts] or [0.0, 1.0]
    if reference is not None:
        ys.append(_num(reference[1]))
    if zero_line:
        ys.append(0.0)
    d = Drawing(width, height)
    items = [(s.label, _line_sample(i)) for i, s in enumerate(series)]
    if reference is not None:
        items.append((reference[0], _ref_sample))
    key, legend_h = legend(items, 0, 0, width - 10)
    legend_h += 4 + (11 if x_title else 0)
    bottom = 16 + legend_h
    top = height - 18
    # y ticks first: their widest label sets the left margin.
    if y_dates:
        ylo, yhi, yt = date_ticks(min(ys) - 3, max(ys) + 3, top - bottom, label_w=16)
        yticks = yt
    else:
        ylo, yhi, nums = _number_ticks(min(ys), max(ys), 6)
        yticks = [(t, f"{int(t):,}" if float(t).is_integer() else f"{t:,g}") for t in nums]
    left = max(stringWidth(s, f, FONT_SIZE) for _, s in yticks) + 8
    right = width - 8
    if x_dates:
        xlo, xhi, xticks = date_ticks(min(xs) - 5, max(xs) + 5, right - left)
    else:
        xlo, xhi, nums = _number_ticks(min(xs), max(xs), 6)
        xticks = [(t, f"{t:g}") for t in nums]

    def px(v: float) -> float:
        return left + (v - xlo) / ((xhi - xlo) or 1) * (right - left)

    def py(v: float) -> float:
        return bottom + (v - ylo) / ((yhi - ylo) or 1) * (top - bottom)

    for t, tick_label in yticks:
        d.add(Line(left, py(t), right, py(t), strokeColor=GRID, strokeWidth=0.4))
        d.add(chart_text(left - 4, py(t) - 2.4, tick_label, "end"))
    for t, tick_label in xticks:
        d.add(Line(px(t), bottom, px(t), bottom - 3, strokeColor=AXIS, strokeWidth=0.5))
        d.add(chart_text(px(t), bottom - 11, tick_label, "middle"))
    d.add(Line(left, bottom, right, bottom, strokeColor=AXIS, strokeWidth=0.7))
    d.add(Line(left, bottom, left, top, strokeColor=AXIS, strokeWidth=0.7))
    d.add(chart_text(left, top + 5, y_title, "start", bold=True))
    if x_title:
        d.add(chart_text((left + right) / 2, bottom - 22, x_title, "middle", bold=True))
    if zero_line and ylo < 0 < yhi:
        d.add(Line(left, py(0), right, py(0), strokeColor=AXIS, strokeWidth=0.9))
    if reference is not None:
        ry = py(_num(reference[1]))
        d.add(Line(left, ry, right, ry, strokeColor=REFERENCE, strokeWidth=1, strokeDashArray=(2, 2)))
    for i, s in enumerate(series):
        colour, marker, dash = SERIES_COLOURS[i % 6], MARKERS[i % 6], DASHES[i % 6]
        run: list[float] = []
        runs = []
        for x, y in s.points:
            if y is None:
                if run:
                    runs.append(run)
                run = []
                continue
            run += [px(_num(x)), py(_num(y))]
        if run:
            runs.append(run)
        for r in runs:
            if len(r) >= 4:
                d.add(PolyLine(r, strokeColor=colour, strokeWidth=1.4, strokeDashArray=dash))
            for k in range(0, len(r), 2):
                d.add(draw_marker(marker, r[k], r[k + 1], colour))
    key.translate(left, legend_h - 2 - (11 if x_title else 0))
    d.add(key)
    return d


def stacked_bars(
    categories: Sequence[str],
    stacks: Sequence[Sequence[int]],
    labels: Sequence[str],
    *,
    width: float,
    height: float,
    y_title: str,
    fills: Sequence | None = None,
) -> Drawing:
    """One stacked bar per category; ``stacks[c][k]`` is the height of part ``k`` of bar ``c``.

    Positive parts stack up from zero and negative parts (gains) down from
    it. Parts are filled dark to light in the order of ``labels`` and
    outlined, so even the lightest part shows on white paper.
    """
    f = font_family().regular
    fills = list(fills or STACK_FILLS)
    d = Drawing(width, height)

    def sample(k: int):
        return lambda x, y: [Rect(x + 3, y - 3.5, 12, 7, fillColor=fills[k % len(fills)], strokeColor=INK, strokeWidth=0.4)]

    key, legend_h = legend([(lab, sample(k)) for k, lab in enumerate(labels)], 0, 0, width - 10)
    legend_h += 4
    bottom = 16 + legend_h
    top = height - 18
    ups = [sum(v for v in s if v > 0) for s in stacks] or [0]
    downs = [sum(v for v in s if v < 0) for s in stacks] or [0]
    ylo, yhi, nums = _number_ticks(min(min(downs), 0), max(max(ups), 1), 5)
    left = max(stringWidth(f"{int(t)}", f, FONT_SIZE) for t in nums) + 8
    right = width - 8

    def py(v: float) -> float:
        return bottom + (v - ylo) / ((yhi - ylo) or 1) * (top - bottom)

    for t in nums:
        d.add(Line(left, py(t), right, py(t), strokeColor=GRID, strokeWidth=0.4))
        d.add(chart_text(left - 4, py(t) - 2.4, f"{int(t)}", "end"))
    n = max(len(categories), 1)
    slot = (right - left) / n
    bw = min(slot * 0.65, 34)
    widest = max((stringWidth(c, f, FONT_SIZE) for c in categories), default=0) + 4
    every = max(1, math.ceil(widest / slot))
    for c, parts in enumerate(stacks):
        x = left + slot * c + (slot - bw) / 2
        up = down = 0.0
        for k, v in enumerate(parts):
            if v == 0:
                continue
            base = up if v > 0 else down
            y0, y1 = sorted((py(base), py(base + v)))
            d.add(Rect(x, y0, bw, y1 - y0, fillColor=fills[k % len(fills)], strokeColor=colors.white, strokeWidth=0.4))
            if v > 0:
                up += v
            else:
                down += v
        if up or down:
            d.add(Rect(x, py(down), bw, py(up) - py(down), fillColor=None, strokeColor=INK, strokeWidth=0.5))
        if c % every == 0:
            d.add(chart_text(x + bw / 2, bottom - 10, fit_text(categories[c], f, FONT_SIZE, slot * every - 2), "middle"))
    d.add(Line(left, bottom, right, bottom, strokeColor=AXIS, strokeWidth=0.7))
    if ylo < 0:
        d.add(Line(left, py(0), right, py(0), strokeColor=AXIS, strokeWidth=0.9))
    d.add(Line(left, bottom, left, top, strokeColor=AXIS, strokeWidth=0.7))
    d.add(chart_text(left, top + 5, y_title, "start", bold=True))
    key.translate(left, legend_h - 2)
    d.add(key)
    return d


def bars_on_time_scale(
    bars: Sequence[Bar],
    *,
    width: float,
    data_date: date,
    done_label: str = "done",
    to_do_label: str = "to do",
    milestone_label: str = "milestone",
    data_date_label: str = "data date",
    span: tuple[date, date] | None = None,
) -> Drawing:
    """One row per bar on a date axis, with the data date as a vertical line.

    The part done (to ``done_until``) is dark, the part still to do light
    with a dark outline; a milestone is a diamond. ``span`` (first and last
    day) widens the axis to cover more than the bars drawn, so that charts
    continued over several pages share one axis that reaches the completion.
    """
    f = font_family().regular
    row = 11.5
    label_w = min(width * 0.42, max((stringWidth(b.label, f, FONT_SIZE) for b in bars), default=40) + 6)
    left = label_w + 4
    right = width - 8
    items = [
        (done_label, lambda x, y: [Rect(x + 2, y - 3.5, 14, 7, fillColor=DONE, strokeColor=DONE, strokeWidth=0.4)]),
        (to_do_label, lambda x, y: [Rect(x + 2, y - 3.5, 14, 7, fillColor=TO_DO, strokeColor=INK, strokeWidth=0.5)]),
        (milestone_label, lambda x, y: [draw_marker("diamond", x + 9, y, INK, 3)]),
        (data_date_label, lambda x, y: [Line(x + 9, y - 5, x + 9, y + 5, strokeColor=REFERENCE, strokeWidth=1.1, strokeDashArray=(2, 1.5))]),
    ]
    key, legend_h = legend(items, 0, 0, width - left)
    legend_h += 4
    axis_h = 16
    height = 14 + row * max(len(bars), 1) + axis_h + legend_h
    d = Drawing(width, height)
    top = height - 6
    bottom = axis_h + legend_h
    days = [b.start.toordinal() for b in bars] + [b.finish.toordinal() + 1 for b in bars] + [data_date.toordinal()]
    if span is not None:
        days += [span[0].toordinal(), span[1].toordinal() + 1]
    xlo, xhi, xticks = date_ticks(min(days) - 3, max(days) + 3, right - left)

    def px(v: float) -> float:
        return left + (v - xlo) / ((xhi - xlo) or 1) * (right - left)

    for t, s in xticks:
        d.add(Line(px(t), bottom, px(t), top, strokeColor=GRID, strokeWidth=0.4))
        d.add(chart_text(px(t), bottom - 10, s, "middle"))
    d.add(Line(left, bottom, right, bottom, strokeColor=AXIS, strokeWidth=0.7))
    for r, b in enumerate(bars):
        yc = top - row * (r + 0.5) - 4
        d.add(chart_text(2, yc - 2.4, fit_text(b.label, f, FONT_SIZE, label_w - 4)))
        s0, s1 = b.start.toordinal(), b.finish.toordinal() + 1
        if b.milestone:
            at = b.start.toordinal() if b.milestone == "start" else b.finish.toordinal() + 1
            d.add(draw_marker("diamond", px(at), yc, DONE if b.done_until else INK, 3.4))
            continue
        cut = s0 if b.done_until is None else max(s0, min(s1, b.done_until.toordinal()))
        h = row * 0.62
        if cut > s0:
            d.add(Rect(px(s0), yc - h / 2, px(cut) - px(s0), h, fillColor=DONE, strokeColor=DONE, strokeWidth=0.4))
        if s1 > cut:
            d.add(Rect(px(cut), yc - h / 2, px(s1) - px(cut), h, fillColor=TO_DO, strokeColor=INK, strokeWidth=0.5))
    xd = px(data_date.toordinal())
    d.add(Line(xd, bottom, xd, top, strokeColor=REFERENCE, strokeWidth=1.1, strokeDashArray=(2, 1.5)))
    key.translate(left, legend_h - 2)
    d.add(key)
    return d
