"""Section renderers for the as-built analyses: but-for (collapsed as-built) and as-planned versus as-built.

They read :func:`forensic.analysis.butfor.but_for` (a :class:`~forensic.analysis.butfor.ButForReport`)
and :func:`forensic.analysis.asbuilt.as_planned_vs_as_built` (its rows). The only
arithmetic is counting rows (activities by status, late or early) and
choosing which rows to show; every date and every number of days is read
from the result objects.
"""

from __future__ import annotations

from typing import Any

from reportlab.platypus import Flowable, KeepTogether, Spacer

from .narrative import (
    ReportContext,
    activity_name,
    common_fields,
    days_words,
    join_words,
    long_date,
    party_words,
    short_date,
    text_or_none,
    unit_words,
)
from .pdf import data_table, paragraphs
from .templates import Section, fill

__all__ = ["ASBUILT_RENDERERS", "asbuilt_subset", "case_party"]


def _where(ctx: ReportContext, section: Section, key: str) -> str:
    return f"{ctx.template.path.name}, section {section.number} ({section.kind}), text.{key}"


def _col(section: Section, key: str, default: str) -> str:
    return section.columns.get(key, default)


def _signed(n: int | None) -> str:
    return "—" if n is None else f"{n:+d}" if n else "0"


def _unit_key(unit: str) -> str:
    # The but-for result names its unit in words ("calendar days"); unit_words wants the setting.
    return "working-days" if unit.startswith("working") else "calendar-days"


def _move_words(unit: str, n: int | None) -> str:
    if n is None:
        return "not comparable"
    if n == 0:
        return "on the planned day"
    return f"{days_words(unit, abs(n))} {'later' if n > 0 else 'earlier'}"


def case_party(ctx: ReportContext, case: Any) -> str | None:
    """The party id of a one-party case (``"party OWN"``), else ``None``."""
    for pid in ctx.casefile.parties:
        if case.label == f"party {pid}":
            return pid
    return None


def _case_words(ctx: ReportContext, case: Any) -> str:
    pid = case_party(ctx, case)
    if pid is not None:
        return party_words(ctx.casefile, pid)
    if case.label == "all owner delays":
        owners = [p.name for p in ctx.casefile.parties.values() if p.role == "owner"]
        return f"all owner parties together ({join_words(owners)})"
    if case.label == "all events":
        return "all recorded events together"
    if case.label == "all excusable events":
        return "all excusable events together"
    return case.label


def events_words(ids: Any) -> str:
    """``event EV07``, ``events EV01 and EV03``: ids with the noun in the right number."""
    ids = list(ids)
    return ("event " if len(ids) == 1 else "events ") + join_words(ids, "none")


def _event_words(ctx: ReportContext, ids: Any) -> str:
    events = {e.id: e for e in ctx.casefile.events}
    return join_words([f"{i}, {events[i].title}" if i in events else i for i in ids], "none")


def but_for(ctx: ReportContext, section: Section) -> list[Flowable]:
    rep = ctx.butfor
    cf = ctx.casefile
    b = rep.as_built
    src = cf.snapshot(b.source)
    out = paragraphs(text_or_none(ctx, section, "intro"))
    built = {
        "source": b.source, "data_date": long_date(src.data_date), "completion": long_date(b.completion),
        "pins": len(b.pins),
        "pin_list": join_words([f"{activity_name(cf, a, b.source)} ({a})" for a in b.pins]),
        "relinked": len(b.relinked),
        "relinked_list": join_words([
            f"{p} to {s} ({t} {'dropped' if n == 'dropped' else f'now {n} with a lag of {lag}'})"
            for p, s, t, n, lag in b.relinked
        ]),
        "warnings": len(b.warnings),
    }
    out += paragraphs(text_or_none(ctx, section, "as_built", built))
    if b.pins:
        out += paragraphs(text_or_none(ctx, section, "pins", built))
    if b.relinked:
        out += paragraphs(text_or_none(ctx, section, "relinked", built))
    if b.warnings:
        out += paragraphs(text_or_none(ctx, section, "warnings", built))
    if not rep.cases:
        return out + paragraphs(text_or_none(ctx, section, "none"))
    reps = {e.event: e for e in b.events}
    for c in rep.cases:
        fields = dict(
            case=_case_words(ctx, c), events=join_words(list(c.removed)), events_words=events_words(c.removed),
            event_titles=_event_words(ctx, c.removed),
            count=len(c.removed),
            as_built_completion=long_date(c.as_built_completion), but_for_completion=long_date(c.but_for_completion),
            days=abs(c.difference), days_unit=unit_words(_unit_key(c.unit), c.difference),
            not_represented=join_words(list(c.not_represented)), source=b.source,
            why="; ".join(f"{e}: {reps[e].why}" for e in c.not_represented if e in reps),
        )
        key = "earlier" if c.difference > 0 else "later" if c.difference < 0 else "unchanged"
        text = section.texts.get(key)
        if text is not None:
            out += paragraphs(fill(text, {**common_fields(ctx), **fields}, _where(ctx, section, key)))
        if c.not_represented:
            out += paragraphs(text_or_none(ctx, section, "not_represented", fields))
        if c.warnings:
            out += paragraphs(text_or_none(ctx, section, "below_baseline", fields))
    if rep.overlap is not None:
        every = next(c for c in rep.cases if c.label == "all events")
        singles = sum(c.difference for c in rep.cases if case_party(ctx, c) is not None)
        ukey = _unit_key(every.unit)
        fields = dict(sum=singles, sum_unit=unit_words(ukey, singles), all_events=every.difference,
                      all_events_unit=unit_words(ukey, every.difference), overlap=rep.overlap,
                      overlap_unit=unit_words(ukey, rep.overlap))
        out += paragraphs(text_or_none(ctx, section, "overlap" if rep.overlap > 0 else "no_overlap", fields))
    if section.options["table"]:
        unit = rep.cases[0].unit
        cols: tuple[str, ...] = (
            _col(section, "case", "Delays removed"), _col(section, "events", "Events"),
            _col(section, "not_represented", "Not represented"), _col(section, "as_built", "As-built completion"),
            _col(section, "but_for", "But-for completion"), _col(section, "difference", f"Difference ({unit})"))
        body: list[tuple[object, ...]] = [(_case_words(ctx, c), ", ".join(c.removed), ", ".join(c.not_represented) or "—",
                 short_date(c.as_built_completion), short_date(c.but_for_completion), _signed(c.difference))
                for c in rep.cases]
        out += [Spacer(1, 4), data_table(cols, body, (2.6, 1.8, 1.2, 1.3, 1.3, 1.1), numeric=(5,), small_head=True)]
    if section.options["notes"]:
        lead = paragraphs(text_or_none(ctx, section, "notes_intro"))
        how = {"fragnet": _col(section, "fragnet", "its fragnet's activities, deleted"),
               "days-lost": _col(section, "days_lost", "days stated lost, taken off the work"),
               "estimated": _col(section, "estimated", "days estimated from the record, taken off the work"),
               "not-represented": _col(section, "none", "not represented")}
        cols = (_col(section, "event", "Event"), _col(section, "party", "Party"),
                _col(section, "represented", "Represented as"), _col(section, "activities", "Activities (working days)"))
        body = []
        for e in b.events:
            days = dict(e.days)
            acts = ", ".join(f"{a} ({days[a]})" if a in days else a for a in e.activities) or "—"
            body.append((e.event, party_words(cf, e.party), how.get(e.how, e.how), acts))
        out += [Spacer(1, 4), KeepTogether([*lead, data_table(cols, body, (0.7, 2.2, 2, 3.6), small_head=True, keep=False)])]
        if b.relinked:
            cols = (_col(section, "pred", "Predecessor"), _col(section, "succ", "Successor"),
                    _col(section, "was", "Was"), _col(section, "now", "Now"), _col(section, "lag", "Lag (wd)"))
            body = [(p, s, t, n, "—" if n == "dropped" else lag) for p, s, t, n, lag in b.relinked]
            out += [Spacer(1, 6), data_table(cols, body, (1.6, 1.6, 0.7, 0.9, 0.8), numeric=(4,), small_head=True)]
    return out


# --- as-planned versus as-built -----------------------------------------------------------


def asbuilt_subset(rows: Any, longest_path: Any, limit: int) -> list[Any]:
    """The rows the report shows: the final longest path, then the largest finish slips, up to ``limit``.

    Activities on the latest update's longest path come first (in path
    order); the remaining places go to the other activities with the
    largest finish slip (late first, ties in file order). Rows without
    a finish slip (added or deleted activities) are left to the export.
    """
    by_id = {r.id: r for r in rows}
    picked = [by_id[a] for a in longest_path if a in by_id and by_id[a].finish_slip is not None][:limit]
    seen = {r.id for r in picked}
    rest = sorted((r for r in rows if r.id not in seen and r.finish_slip is not None),
                  key=lambda r: -r.finish_slip)
    return picked + [r for r in rest if r.finish_slip > 0][: max(0, limit - len(picked))]


def as_built(ctx: ReportContext, section: Section) -> list[Flowable]:
    rows = ctx.asbuilt
    cf = ctx.casefile
    unit = cf.project.delay_unit
    latest = ctx.trend.latest
    compared = [r for r in rows if r.finish_slip is not None]
    status = {k: sum(1 for r in rows if r.status == k) for k in ("finished", "in-progress", "not-started", "added", "deleted")}
    late = [r for r in compared if r.finish_slip > 0]
    worst = max(compared, key=lambda r: r.finish_slip, default=None)
    comp = next((r for r in rows if r.id == latest.completion_id), None)
    limit = max(1, int(section.options["rows"]))
    shown = asbuilt_subset(rows, latest.longest_path, limit)
    fields = common_fields(ctx)
    fields.update(
        baseline=cf.baseline.id, snapshot=latest.snapshot_id, data_date=long_date(latest.data_date),
        compared=len(compared), finished=status["finished"], in_progress=status["in-progress"],
        not_started=status["not-started"], added=status["added"], deleted=status["deleted"],
        late=len(late), early=sum(1 for r in compared if r.finish_slip < 0),
        on_time=sum(1 for r in compared if r.finish_slip == 0),
        worst=worst.id if worst else "", worst_name=worst.name if worst else "",
        worst_days=days_words(unit, worst.finish_slip) if worst else "",
        completion_id=latest.completion_id,
        completion_name=activity_name(cf, latest.completion_id, latest.snapshot_id),
        planned_completion=long_date(comp.as_planned_finish) if comp else "—",
        completion=long_date(comp.as_built_finish) if comp else "—",
        completion_variance=_move_words(unit, comp.finish_slip if comp else None),
        shown=len(shown), path_count=sum(1 for r in shown if r.id in set(latest.longest_path)),
    )
    out = paragraphs(text_or_none(ctx, section, "intro"))
    out += paragraphs(fill(section.texts["text"], fields, _where(ctx, section, "text")))
    out += paragraphs(text_or_none(ctx, section, "subset", fields))
    path = set(latest.longest_path)
    u = "wd" if unit == "working-days" else "cd"
    cols = (_col(section, "activity", "Activity"), _col(section, "name", "Name"),
            _col(section, "as_planned_start", "As-planned start"), _col(section, "as_planned_finish", "As-planned finish"),
            _col(section, "as_built_start", "As-built start"), _col(section, "as_built_finish", "As-built finish"),
            _col(section, "start_slip", f"Start slip ({u})"), _col(section, "finish_slip", f"Finish slip ({u})"))
    body = []
    for r in shown:
        finish = short_date(r.as_built_finish) + (" (f)" if r.forecast else "")
        started = short_date(r.as_built_start) + (" (f)" if r.as_built_start and r.status == "not-started" else "")
        body.append((r.id + (" *" if r.id in path else ""), r.name, short_date(r.as_planned_start),
                     short_date(r.as_planned_finish), started, finish, _signed(r.start_slip), _signed(r.finish_slip)))
    if body:
        out += [data_table(cols, body, (1, 3, 1, 1, 1, 1, 0.9, 0.9), numeric=(6, 7), small_head=True, fit=(0, 2, 3, 4, 5))]
    out += paragraphs(text_or_none(ctx, section, "legend", fields), "caption")
    return out


ASBUILT_RENDERERS = {"but-for": but_for, "as-built": as_built}
