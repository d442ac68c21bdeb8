"""The engine's rules for progress and the project finish, each worked by hand.

Every case is on a seven-day calendar, so a working day is a calendar day
and the hand working below can be checked with a wall calendar. Dates are
inclusive (a 10-day task from 2026-03-11 finishes 2026-03-20). The rules are
those of the precedence-diagramming backward pass (AACE RP 49R-06; common
CPM practice), stated in the notes of :mod:`forensic.core.engine`.
"""

from datetime import date

import pytest

from forensic.core.calendars import DAY_NAMES
from forensic.core.engine import schedule
from forensic.core.model import Activity, Calendar, Link, Project, Snapshot, frozen_mapping
from tests import reference_engine

SEVEN = Calendar("7d", DAY_NAMES)
CALS = {"7d": SEVEN}
ENGINES = [schedule, reference_engine.schedule]


def run(engine, acts, links, data_date, completion="FIN", logic="retained"):
    snap = Snapshot("S", data_date, frozen_mapping({a.id: a for a in acts}), tuple(links))
    project = Project("t", "7d", completion=completion, progress_logic=logic)
    return engine(snap, CALS, project)


def started_work(link_type, lag):
    """ST -> A FS; A started, 10 of 20 days left; A -> B by ``link_type``; A -> C FS; B, C -> FIN."""
    acts = [
        Activity("ST", "start", 0, kind="opening-milestone", actual_start=date(2026, 3, 1)),
        Activity("A", "Excavate", 20, remaining=10, actual_start=date(2026, 3, 1)),
        Activity("B", "Formwork", 30),
        Activity("C", "Short tail", 2),
        Activity("FIN", "finish", 0, kind="closing-milestone"),
    ]
    links = [
        Link("ST", "A"),
        Link("A", "B", link_type, lag),
        Link("B", "FIN"),
        Link("A", "C"),
        Link("C", "FIN"),
    ]
    return acts, links


@pytest.mark.parametrize("engine", ENGINES)
@pytest.mark.parametrize("logic", ["retained", "override"])
def test_ss_link_from_started_work_does_not_hold_its_remaining_work(engine, logic):
    # Hand working (data date 2026-03-11):
    #   A started 03-01; its 10 remaining days run 03-11 .. 03-20.
    #   B: SS lag 2 from A's actual start gives 03-03, but no work before the
    #      data date, so B runs 03-11 .. 04-09 (30 days).
    #   C: FS from A, 03-21 .. 03-22. FIN follows B: 04-09 (project finish).
    # Backward: FIN LF 04-09; B LF 04-09, LS 03-11; C LF 04-09, LS 04-08.
    #   The SS link A -> B is satisfied by A's actual start, so only C holds A:
    #   A LF = 04-07 (the day before C's LS), TF = 04-07 - 03-20 = 18 days.
    #   (Were the SS link to hold A: LS <= B's LS 03-11 minus lag 2 = 03-09,
    #   so LF = 03-18 and TF = -2, critical: the old, wrong answer.)
    r = run(engine, *started_work("SS", 2), date(2026, 3, 11), logic=logic)
    a = r["A"]
    assert (a.early_start, a.early_finish) == (date(2026, 3, 1), date(2026, 3, 20))
    assert a.late_finish == date(2026, 4, 7)
    assert a.total_float == 18
    assert not a.critical
    assert r["B"].early_start == date(2026, 3, 11)
    assert r.completion == date(2026, 4, 9)
    assert r["B"].total_float == 0
    assert r["C"].total_float == 18
    assert r["C"].late_start == date(2026, 4, 8)
    # A still drives nothing on the longest path: B starts at the data date.
    assert "A" not in r.longest_path


@pytest.mark.parametrize("engine", ENGINES)
def test_sf_link_from_started_work_does_not_hold_its_remaining_work(engine):
    # Hand working (data date 2026-03-11): A -> B SF lag 36 means B may finish
    #   no earlier than A's start 03-01 plus 36 days, i.e. B's finish boundary
    #   is at or after 04-06; B itself runs 03-11 .. 04-09, so the link does
    #   not move B. A and C as in the SS case; project finish 04-09.
    # Backward: B LF 04-09, so the SF link would put A's start no later than
    #   04-10 - 36 = 03-05 and A's LF at 03-05 + 10 days = 03-14, TF -6.
    #   A has started, so the link is satisfied: A LF 04-07 (from C), TF 18.
    r = run(engine, *started_work("SF", 36), date(2026, 3, 11))
    a = r["A"]
    assert a.late_finish == date(2026, 4, 7)
    assert a.total_float == 18
    assert not a.critical
    assert r.completion == date(2026, 4, 9)


@pytest.mark.parametrize("engine", ENGINES)
def test_ss_link_from_work_not_started_still_holds_it(engine):
    # Control: the same SS link from work not yet started does constrain it.
    # Data date 2026-03-01, nothing started; ST (start milestone) 03-01.
    #   A 03-01 .. 03-20 (20 days); B SS lag 2: 03-03 .. 04-01; C 03-21 .. 03-22;
    #   FIN 04-01. Backward: B LS 03-03, so A LS <= 03-01, A LF 03-20, TF 0.
    acts, links = started_work("SS", 2)
    acts = [
        Activity("ST", "start", 0, kind="opening-milestone"),
        Activity("A", "Excavate", 20),
        *acts[2:],
    ]
    r = run(engine, acts, links, date(2026, 3, 1))
    assert r.completion == date(2026, 4, 1)
    assert r["A"].late_finish == date(2026, 3, 20)
    assert r["A"].total_float == 0
    assert r["A"].critical


def dangling(extra=()):
    """A -> B SS lag 2 only (a dangling finish); B -> FIN; D -> FIN."""
    acts = [
        Activity("A", "dangling finish", 10),
        Activity("B", "overlapping work", 5),
        Activity("D", "long work", 12),
        Activity("FIN", "finish", 0, kind="closing-milestone"),
        *extra,
    ]
    links = [Link("A", "B", "SS", 2), Link("B", "FIN"), Link("D", "FIN")]
    return acts, links


@pytest.mark.parametrize("engine", ENGINES)
def test_dangling_finish_late_finish_is_capped_at_the_project_finish(engine):
    # Hand working (data date 2026-03-01, nothing started):
    #   A 03-01 .. 03-10; B SS lag 2: 03-03 .. 03-07; D 03-01 .. 03-12;
    #   FIN after B and D: 03-12, the project finish.
    # Backward: FIN LF 03-12; B LF 03-12, LS 03-08; D LF 03-12, TF 0.
    #   A's only successor is the SS link: LS <= 03-08 - 2 = 03-06, which
    #   alone would give LF 03-15, three days after the project finish.
    #   Capped at the project finish: LF 03-12, LS 03-03, TF 03-12 - 03-10 = 2.
    #   Free float: B's ES 03-03 - 2 = 03-01 = A's ES, so 0.
    r = run(engine, *dangling(), date(2026, 3, 1))
    a = r["A"]
    assert r.completion == date(2026, 3, 12)
    assert (a.early_start, a.early_finish) == (date(2026, 3, 1), date(2026, 3, 10))
    assert (a.late_start, a.late_finish) == (date(2026, 3, 3), date(2026, 3, 12))
    assert (a.total_float, a.free_float) == (2, 0)
    assert (r["B"].late_start, r["B"].total_float) == (date(2026, 3, 8), 5)
    assert r["D"].total_float == 0
    for act_id in r.order:
        assert r[act_id].late_finish <= r.completion


@pytest.mark.parametrize("engine", ENGINES)
def test_completion_never_has_a_late_finish_after_its_own_finish(engine):
    # Hand working: the dangling network plus E, 20 days, linked to nothing,
    #   03-01 .. 03-20, finishing after the named completion FIN (03-12).
    #   The project finish is FIN's finish, 03-12: FIN LF 03-12, TF 0 (not the
    #   8 days it would get from a backward pass started at E's finish 03-20).
    #   E is capped there too: LF 03-12, TF 03-12 - 03-20 = -8.
    r = run(engine, *dangling([Activity("E", "loose work", 20)]), date(2026, 3, 1))
    assert r.completion == date(2026, 3, 12)
    assert r["FIN"].late_finish == date(2026, 3, 12)
    assert r.completion_float == 0
    assert r["E"].early_finish == date(2026, 3, 20)
    assert (r["E"].late_finish, r["E"].total_float) == (date(2026, 3, 12), -8)
    assert r["A"].total_float == 2
    # E's open ends are still reported.
    assert any("E has no successor" in w for w in r.warnings)


@pytest.mark.parametrize("logic", ["retained"])
def test_tied_parallel_paths_are_separate_chains(logic):
    # Hand working (7-day calendar, data date 2026-03-02):
    #   ST -> A1 (3) -> A2 (4) -> FIN and ST -> B1 (4) -> B2 (3) -> FIN, all FS.
    #   A1 03-02..03-04, A2 03-05..03-08; B1 03-02..03-05, B2 03-06..03-08.
    #   Both paths finish 03-08, so both links into FIN drive: two chains,
    #   ST A1 A2 FIN and ST B1 B2 FIN. A2 and B1 are not linked, so no
    #   chain may put "A2 -> B1" (the union in date order would read
    #   ST A1 B1 A2 B2 FIN, which is why the union is not a chain).
    acts = [
        Activity("ST", "start", 0, kind="opening-milestone"),
        Activity("A1", "a1", 3), Activity("A2", "a2", 4),
        Activity("B1", "b1", 4), Activity("B2", "b2", 3),
        Activity("FIN", "finish", 0, kind="closing-milestone"),
    ]
    links = [Link("ST", "A1"), Link("A1", "A2"), Link("A2", "FIN"),
             Link("ST", "B1"), Link("B1", "B2"), Link("B2", "FIN")]
    r = run(schedule, acts, links, date(2026, 3, 2), logic=logic)
    assert r.completion == date(2026, 3, 8)
    assert r.longest_path == ("ST", "A1", "B1", "A2", "B2", "FIN")
    assert sorted(r.longest_paths) == [("ST", "A1", "A2", "FIN"), ("ST", "B1", "B2", "FIN")]
    linked = {(k.pred, k.succ) for k in links}
    for chain in r.longest_paths:
        assert all(pair in linked for pair in zip(chain, chain[1:], strict=False))
