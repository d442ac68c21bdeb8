"""The longest path of one scheduled snapshot as bars on a time scale, and the before/after path table.

Shared by the ``longest-path`` section (each snapshot) and the ``windows``
section (the path at the end of each window, beside the path at its
start). The bars are read from the engine's :class:`~forensic.core.engine.ScheduleResult`
(early dates, status) and the snapshot's activities; nothing is computed.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import replace
from datetime import date, timedelta
from itertools import zip_longest
from xml.sax.saxutils import escape

from reportlab.platypus import Flowable, KeepTogether, Paragraph

from forensic.core.engine import ScheduleResult
from forensic.core.model import Snapshot

from . import charts
from .pdf import FRAME_WIDTH, data_table, styles
from .templates import Section

__all__ = ["path_chart", "path_shown", "paths_table"]


def _col(section: Section, key: str, default: str) -> str:
    return section.columns.get(key, default)


def path_shown(path: Sequence[str], result: ScheduleResult, limit: int) -> list[str]:
    """At most ``limit`` activities of ``path``, always ending on its last (the completion).

    The work still to do comes first, then the latest finished work; when
    even the work to do is longer than ``limit``, its first ``limit - 1``
    activities and the path's last are kept, so that a summarised chart
    still reaches the completion. The caller states how many were left out.
    """
    shown = list(path)
    if len(shown) <= limit:
        return shown
    remaining = [a for a in shown if result.activities[a].status != "finished"]
    done = [a for a in shown if result.activities[a].status == "finished"]
    if len(remaining) >= limit:
        head = remaining[: max(0, limit - 1)]
        return head + [shown[-1]] if shown[-1] not in head else head
    keep_done = done[len(done) - (limit - len(remaining)):]
    return keep_done + remaining


def _bar(aid: str, result: ScheduleResult, snap: Snapshot, data_date: date) -> charts.Bar:
    x = result.activities[aid]
    act = snap.activities[aid]
    if x.status == "finished":
        until = x.early_finish + timedelta(days=1)
    elif x.status == "in-progress":
        until = data_date
    else:
        until = None
    kind = None if not act.is_milestone else "start" if act.kind == "opening-milestone" else "finish"
    return charts.Bar(f"{aid} {act.name}", x.early_start, x.early_finish, until, kind)


def path_chart(
    section: Section, path: Sequence[str], result: ScheduleResult, snap: Snapshot, data_date: date, limit: int,
    *, continued: bool = False, chains: Sequence[Sequence[str]] = (),
) -> list[Flowable]:
    """The bars of ``path`` on a time scale, with the data date; never silently cut.

    With ``continued`` every activity is drawn, ``limit`` rows to a chart,
    the charts sharing one date axis from the path's first start to its
    last finish (the completion), each after the first labelled with the
    rows it continues. Otherwise a path longer than ``limit`` is summarised
    (:func:`path_shown`) and a line under the chart states how many
    activities were left out; its axis still spans the whole path.
    """
    if not path:
        return []
    chain_of: dict[str, int] = {}
    if len(chains) > 1:
        # Tied paths are drawn chain by chain, each bar labelled with its chain's number, so
        # activities that are not linked never read as one sequence (AACE RP 49R-06).
        for n, chain in enumerate(chains, 1):
            for a in chain:
                chain_of.setdefault(a, n)
        ordered = [a for chain in chains for a in chain if chain_of[a] == chains.index(chain) + 1]
        path = list(dict.fromkeys([*ordered, *path]))
    bars_all = [_bar(a, result, snap, data_date) for a in path]
    if chain_of:
        bars_all = [replace(b, label=f"[{chain_of[a]}] {b.label}") if a in chain_of else b
                    for a, b in zip(path, bars_all, strict=True)]
    span = (min(b.start for b in bars_all), max(b.finish for b in bars_all))
    opts = dict(
        width=FRAME_WIDTH, data_date=data_date, span=span,
        done_label=_col(section, "done", "done"), to_do_label=_col(section, "to_do", "to do"),
        milestone_label=_col(section, "milestone", "milestone"), data_date_label=_col(section, "data_date", "data date"),
    )
    st = styles()
    if continued:
        out: list[Flowable] = []
        for k in range(0, len(path), limit):
            chart = charts.bars_on_time_scale(bars_all[k:k + limit], **opts)
            if not k:
                out.append(chart)
                continue
            # The line that says what is continued stays on the page of its chart.
            out.append(KeepTogether([Paragraph(escape(
                f"Continued: activities {k + 1} to {min(k + limit, len(path))} of the {len(path)} on the path."
            ), st["caption"]), chart]))
        return out
    shown = set(path_shown(path, result, limit))
    out = [charts.bars_on_time_scale([b for a, b in zip(path, bars_all, strict=True) if a in shown], **opts)]
    left_out = len(path) - len(shown)
    if left_out:
        out.append(Paragraph(escape(
            f"{len(shown)} of the {len(path)} activities on the path are drawn; {left_out} "
            f"{'is' if left_out == 1 else 'are'} left out of the chart (finished work first, then the work "
            f"to do before the last), and the axis runs to the completion {path[-1]}."
        ), st["caption"]))
    return out


def paths_table(
    section: Section, before: Sequence[str], after: Sequence[str], names_before: dict[str, str],
    names_after: dict[str, str], heads: tuple[str, str], limit: int,
) -> Flowable:
    """Two paths side by side (id and name each), in path order, at most ``limit`` rows.

    An activity on one side only is marked (``−`` left the path, ``+``
    joined it); when a path is longer than ``limit``, a last row counts
    the rest and names the activity the path ends on.
    """
    a_set, b_set = set(after), set(before)

    def cut(path: Sequence[str], names: dict[str, str]) -> list[tuple[str, str]]:
        cells = [(a, names.get(a, a)) for a in path]
        if len(cells) > limit:
            more = len(cells) - (limit - 1)
            cells = cells[: limit - 1] + [("…", f"{more} more, to {path[-1]} {names.get(path[-1], path[-1])}")]
        return cells

    left = [(a + ("" if a in a_set or a == "…" else " −"), n) for a, n in cut(before, names_before)]
    right = [(a + ("" if a in b_set or a == "…" else " +"), n) for a, n in cut(after, names_after)]
    rows = [(*(b or ("", "")), *(a or ("", ""))) for b, a in zip_longest(left, right)]
    cols = (heads[0], _col(section, "path_name", "Name"), heads[1], _col(section, "path_name", "Name"))
    return data_table(cols, rows, (1, 2, 1, 2), small_head=True, fit=(0, 2))
