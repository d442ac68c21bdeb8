"""The longest path of one scheduled snapshot as bars on a time scale, and the before/after path table.

Shared by the ``longest-path`` section (each snapshot) and the ``windows``
section (the path at the end of each window, beside the path at its
start). The bars are read from the engine's :class:`~forensic.engine.ScheduleResult`
(early dates, status) and the snapshot's activities; nothing is computed.
"""

from __future__ import annotations

from collections.abc import Sequence
from datetime import date, timedelta
from itertools import zip_longest

from reportlab.platypus import Flowable

from ..engine import ScheduleResult
from ..model import Snapshot
from . import charts
from .pdf import FRAME_WIDTH, data_table
from .templates import Section

__all__ = ["path_chart", "path_shown", "paths_table"]


def _col(section: Section, key: str, default: str) -> str:
    return section.columns.get(key, default)


def path_shown(path: Sequence[str], result: ScheduleResult, limit: int) -> list[str]:
    """At most ``limit`` activities of ``path``: the work still to do first, then the latest finished work."""
    shown = list(path)
    if len(shown) <= limit:
        return shown
    remaining = [a for a in shown if result.activities[a].status != "finished"]
    done = [a for a in shown if result.activities[a].status == "finished"]
    keep_done = done[len(done) - max(0, limit - len(remaining)):] if limit > len(remaining) else []
    return keep_done + remaining[:limit]


def path_chart(
    section: Section, path: Sequence[str], result: ScheduleResult, snap: Snapshot, data_date: date, limit: int,
) -> Flowable:
    """The bars of ``path`` (at most ``limit``) on a time scale, with the data date."""
    bars = []
    for aid in path_shown(path, result, limit):
        x = result.activities[aid]
        act = snap.activities[aid]
        if x.status == "finished":
            until = x.early_finish + timedelta(days=1)
        elif x.status == "in-progress":
            until = data_date
        else:
            until = None
        kind = None if not act.is_milestone else "start" if act.kind == "opening-milestone" else "finish"
        bars.append(charts.Bar(f"{aid} {act.name}", x.early_start, x.early_finish, until, kind))
    return charts.bars_on_time_scale(
        bars, width=FRAME_WIDTH, data_date=data_date,
        done_label=_col(section, "done", "done"), to_do_label=_col(section, "to_do", "to do"),
        milestone_label=_col(section, "milestone", "milestone"), data_date_label=_col(section, "data_date", "data date"),
    )


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
