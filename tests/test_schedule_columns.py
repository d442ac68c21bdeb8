"""The schedule table and ``--json`` built from the engine's arrays equal those built record by record."""

from __future__ import annotations

from pathlib import Path

import pytest

from forensic.casefile.reading import load_casefile
from forensic.casefile.synthetic import generate_casefile
from forensic.core.engine import ScheduleResult, activity_columns, schedule
from forensic.core.tables import SCHEDULE_COLUMNS, schedule_json, schedule_table

DEMO = Path(__file__).resolve().parent.parent / "casefiles" / "riverside"


def _typed(values) -> list:
    """Values with their types, so True and 1 (or a numpy integer and an int) differ."""
    return [(type(v), tuple(_typed(v)) if isinstance(v, (list, tuple)) else v) for v in values]


def _record_rows(result: ScheduleResult, snapshot) -> list[tuple]:
    """The schedule table's rows read from the records one by one (the reference)."""
    on_path = set(result.longest_path)
    rows = []
    for aid in result.order:
        x = result.activities[aid]
        rows.append((aid, snapshot.activities[aid].name, x.status, x.early_start, x.early_finish, x.late_start,
                     x.late_finish, x.total_float, x.free_float, x.critical, aid in on_path,
                     x.driving_predecessors))
    return rows


def _record_activities(result: ScheduleResult) -> list[dict]:
    keys = ("id", "status", "early_start", "early_finish", "late_start", "late_finish", "total_float",
            "free_float", "critical")
    return [{**{k: getattr(x, k) for k in keys}, "driving_predecessors": list(x.driving_predecessors)}
            for x in (result.activities[a] for a in result.order)]


def _snapshots():
    demo = load_casefile(DEMO)
    yield from ((demo, s) for s in demo.snapshots)
    for seed in (1, 2):  # progress, constraints and several calendars
        cf = generate_casefile(400, updates=2, seed=seed)
        yield from ((cf, s) for s in cf.snapshots)
    cf = generate_casefile(150, updates=1, seed=3, seven_day=True, constraints=False)
    yield from ((cf, s) for s in cf.snapshots)


CASES = list(_snapshots())


@pytest.mark.parametrize(("cf", "snap"), CASES, ids=[f"{cf.project.name}-{s.id}" for cf, s in CASES])
def test_array_built_table_and_json_equal_the_record_built_ones(cf, snap):
    result = schedule(snap, cf.calendars, cf.project)
    table = schedule_table(result, snap)
    assert table.columns == SCHEDULE_COLUMNS
    reference = _record_rows(result, snap)
    assert [_typed(r) for r in table.rows] == [_typed(r) for r in reference]
    doc = schedule_json(result)
    expected = _record_activities(result)
    assert [_typed(a.values()) for a in doc["activities"]] == [_typed(a.values()) for a in expected]
    assert [list(a) for a in doc["activities"]] == [list(a) for a in expected]  # key order
    statuses = {r[2] for r in table.rows}
    assert statuses <= {"finished", "in-progress", "not-started"}


def test_columns_of_a_result_with_plain_records_are_read_from_them():
    """A result whose activities are a plain mapping of records (not the engine's arrays) gives the same columns."""
    cf = load_casefile(DEMO)
    snap = cf.snapshots[-1]
    result = schedule(snap, cf.calendars, cf.project)
    plain = ScheduleResult(**{f: getattr(result, f) for f in ScheduleResult.__slots__ if f != "activities"},
                           activities={a: result.activities[a] for a in result.activities})
    assert activity_columns(plain) == activity_columns(result)
    assert any(s == "finished" for s in activity_columns(plain)["status"])


def test_columns_agree_after_some_records_were_made():
    """Records made first (and cached) do not change the columns read from the arrays afterwards."""
    cf = generate_casefile(200, updates=1, seed=5)
    snap = cf.snapshots[-1]
    result = schedule(snap, cf.calendars, cf.project)
    first = [result.activities[a] for a in result.order[::7]]
    cols = activity_columns(result)
    at = {a: i for i, a in enumerate(result.order)}
    for rec in first:
        i = at[rec.id]
        assert tuple(cols[name][i] for name in cols) == tuple(getattr(rec, name) for name in cols)


@pytest.mark.parametrize(("cf", "snap"), CASES[::3], ids=[f"{cf.project.name}-{s.id}" for cf, s in CASES[::3]])
def test_completion_and_columns_in_any_order_agree_with_the_records(cf, snap):
    result = schedule(snap, cf.calendars, cf.project)
    comp = result.activities[result.completion_id]
    assert (result.completion, result.completion_float) == (comp.early_finish, comp.total_float)
    assert type(result.completion_float) in (int, type(None))
    backwards = tuple(reversed(result.order))  # not the result's own order: positions looked up by id
    cols = result.activities.columns_at(backwards)
    for k, aid in enumerate(backwards[:50]):
        rec = result.activities[aid]
        assert tuple(cols[name][k] for name in cols) == tuple(getattr(rec, name) for name in cols)


def _fields_typed(record) -> list:
    from dataclasses import astuple

    return _typed(astuple(record))


def test_the_first_records_made_without_lists_equal_those_made_from_lists(monkeypatch):
    # A result's first records are read from its arrays one value at a time (engine._LISTS_FROM); from
    # then on the arrays are lists. Either way each record is the same, value for value and type for type.
    from forensic.core import engine

    cf = generate_casefile(300, updates=2, seed=5)
    snap = cf.snapshots[-1]
    sparse = schedule(snap, cf.calendars, cf.project)
    order, k = list(sparse.order), engine._LISTS_FROM
    assert len(order) > k  # both ways are met
    first = [sparse.activities[a] for a in order[:k]]
    assert sparse.activities._lists is None  # no list made for the first records
    rest = [sparse.activities[a] for a in order[k:]]
    assert sparse.activities._lists is not None
    monkeypatch.setattr(engine, "_LISTS_FROM", 0)
    dense = schedule(snap, cf.calendars, cf.project)
    want = [dense.activities[a] for a in order]
    assert [_fields_typed(x) for x in first + rest] == [_fields_typed(x) for x in want]
    assert {x.status for x in want} == {"finished", "in-progress", "not-started"}
