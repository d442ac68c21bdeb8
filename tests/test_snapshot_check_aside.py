"""The other snapshots checked in a second process while ``forensic schedule`` works (issue 20).

The check aside must say exactly what the check in the command's own
process says: the same output when every snapshot is good, the same error
(file, line, value) when one it does not schedule is bad, the whole
casefile's error when the snapshot asked for is bad (it is read first, and
then the casefile whole, as the command did before it read lazily),
and the check's error before the command's own when both fail. A worker that
dies is no answer: the command checks in its own process.
"""

from __future__ import annotations

import os
import shutil
import sys
from dataclasses import replace

import pytest
from click.testing import CliRunner
from hypothesis import given, settings
from hypothesis import strategies as st

from forensic.casefile import reading
from forensic.casefile.demo import demo_source
from forensic.casefile.reading import load_casefile
from forensic.cli import main, snapshot_check
from forensic.cli import schedule as schedule_cli
from forensic.cli.snapshot_check import SnapshotCheck
from forensic.core.model import SnapshotSequence
from tests.casefile_helpers import break_duration, break_u03_lag, break_u05_duration

pytestmark = pytest.mark.skipif(not sys.platform.startswith("linux"), reason="the check runs aside on Linux only")


@pytest.fixture
def demo_copy(tmp_path):
    return shutil.copytree(demo_source(), tmp_path / "riverside")


@pytest.fixture
def aside(monkeypatch):
    """The check runs aside for any casefile (the demo is far below the size it pays from)."""
    monkeypatch.setattr(snapshot_check, "ASIDE_FROM_BYTES", 0)
    monkeypatch.setattr(snapshot_check, "_cores", lambda: 2)


@pytest.fixture
def in_process(monkeypatch):
    monkeypatch.setattr(snapshot_check, "ASIDE_FROM_BYTES", 1 << 60)


def _run(args):
    return CliRunner().invoke(main, args)


class _CountingReader:
    """The casefile's reader, counting the snapshots read in this process (a forked one counts its own)."""

    def __init__(self, read):
        self.read, self.reads = read, []
        self.size = read.size

    def __call__(self, sid):
        self.reads.append(sid)
        return self.read(sid)


def _counted(folder):
    cf = load_casefile(folder, lazy=True)
    reader = _CountingReader(cf.snapshots.read)
    return replace(cf, snapshots=SnapshotSequence(cf.snapshots.heads, reader)), reader


def test_the_check_runs_aside_where_asked(demo_copy, aside):
    cf, reader = _counted(demo_copy)
    cf.snapshots[-1]  # the command reads the snapshot it schedules
    check = SnapshotCheck(cf, None)
    assert check.aside
    check.finish()
    assert reader.reads == ["U10"]  # the others were read in the second process
    cf.snapshots.check_rest()
    assert reader.reads == ["U10"]  # and count as checked: none is read again here


def test_a_small_casefile_is_checked_in_the_process(demo_copy):
    # The demo's other snapshots are a few kilobytes, far below ASIDE_FROM_BYTES: no fork for them.
    cf, reader = _counted(demo_copy)
    check = SnapshotCheck(cf, "U04")
    assert not check.aside
    check.finish()
    assert reader.reads == list(cf.snapshot_ids)  # every one read here, in order (U04 too: not read before)


@pytest.mark.parametrize("args", [["--json"], ["--snapshot", "U04", "--json"], ["--snapshot", "U04", "--csv"], []])
def test_the_output_is_the_same_with_the_check_aside(demo_copy, monkeypatch, args):
    monkeypatch.setattr(snapshot_check, "ASIDE_FROM_BYTES", 1 << 60)
    before = _run(["schedule", str(demo_copy), *args])
    monkeypatch.setattr(snapshot_check, "ASIDE_FROM_BYTES", 0)
    monkeypatch.setattr(snapshot_check, "_cores", lambda: 2)
    after = _run(["schedule", str(demo_copy), *args])
    assert before.exit_code == after.exit_code == 0, after.output
    assert after.output == before.output


def _refusal(demo_copy, args):
    result = _run(["schedule", str(demo_copy), *args])
    assert result.exit_code == 1, result.output
    return result.output


@pytest.mark.parametrize("mode", ["aside", "in_process"])
def test_a_bad_snapshot_not_scheduled_is_refused_the_same_way(demo_copy, tmp_path, request, mode):
    request.getfixturevalue(mode)
    bad = {break_u05_duration(demo_copy), break_u03_lag(demo_copy)}
    out = tmp_path / "out.json"
    text = _refusal(demo_copy, ["--snapshot", "U04", "--json", "--out", str(out)])
    assert all(rel in text for rel in bad) and "'ten'" in text and "line 4" in text, text
    assert not out.exists()  # nothing written


def test_both_modes_word_the_refusal_alike(demo_copy, monkeypatch):
    break_u05_duration(demo_copy)
    break_u03_lag(demo_copy)
    monkeypatch.setattr(snapshot_check, "ASIDE_FROM_BYTES", 1 << 60)
    here = _refusal(demo_copy, ["--json"])
    monkeypatch.setattr(snapshot_check, "ASIDE_FROM_BYTES", 0)
    monkeypatch.setattr(snapshot_check, "_cores", lambda: 2)
    assert _refusal(demo_copy, ["--json"]) == here


@pytest.mark.parametrize("mode", ["aside", "in_process"])
def test_a_bad_snapshot_asked_for_is_refused_with_every_other_problem(demo_copy, request, mode):
    # Read first and refused: the check is stopped and the casefile read whole, so the error is the
    # eager loader's, naming U03 too, as when the command read the casefile whole before anything else.
    request.getfixturevalue(mode)
    rel = break_u05_duration(demo_copy)
    other = break_u03_lag(demo_copy)
    text = _refusal(demo_copy, ["--snapshot", "U05", "--json"])
    with pytest.raises(reading.CasefileError) as err:
        load_casefile(demo_copy)
    assert str(err.value) in text and rel in text and other in text, text


def test_the_check_comes_before_an_error_of_the_command(demo_copy, aside, monkeypatch):
    rel = break_u05_duration(demo_copy)

    def failing(*_args, **_kw):
        raise RuntimeError("the engine failed")

    monkeypatch.setattr(schedule_cli, "schedule_snapshot", failing)
    text = _refusal(demo_copy, ["--snapshot", "U04", "--json"])
    assert rel in text and "'ten'" in text, text


def test_a_worker_that_dies_leaves_the_check_to_the_command(demo_copy, aside, monkeypatch):
    def dies(conn, *_args):
        os._exit(3)

    monkeypatch.setattr(snapshot_check, "_check_these", dies)
    rel = break_u05_duration(demo_copy)
    cf = load_casefile(demo_copy, lazy=True)
    check = SnapshotCheck(cf, "U04")
    assert check.aside
    with pytest.raises(reading.CasefileError) as err:
        check.finish()  # no answer: checked here
    assert {p.file for p in err.value.problems} == {rel}


def test_a_worker_with_an_unexpected_error_leaves_the_check_to_the_command(demo_copy, aside, monkeypatch):
    def boom(conn, *_args):
        conn.send(("failed", "MemoryError()"))
        conn.close()

    monkeypatch.setattr(snapshot_check, "_check_these", boom)
    cf, reader = _counted(demo_copy)
    check = SnapshotCheck(cf, None)
    assert check.aside
    check.finish()
    assert reader.reads == list(cf.snapshot_ids)  # every one read here (none was read before)


# The id column read by splitting lines must be the csv module's reading for every table the fast
# path takes (no quote, no lone carriage return); anything else goes to the csv module.
_CELL = st.text(alphabet='id ,\t"\rxy1\u00e9', max_size=12)


@settings(max_examples=300, deadline=None)
@given(st.lists(_CELL, max_size=8), st.sampled_from(["\n", "\r\n"]))
def test_ids_read_by_splitting_lines_are_the_csv_modules(lines, end):
    text = end.join(lines)
    assert reading._ids_of(text) == reading._csv_ids_of(text)
    if '"' not in text and text.count("\r") == text.count("\r\n"):  # the fast path's own condition
        assert reading._unquoted_ids_of(text) == reading._csv_ids_of(text)


@pytest.mark.parametrize("text", ["name,id\nA,x1\n\n,\nB, x2 \nC\n", "\n\n id ,name\nx1,A\r\nx2,B", "a,b\n1,2\n", ""])
def test_ids_by_splitting_on_hand_cases(text):
    # Worked by hand: the header is the first line with a non-blank cell; "C" has no id cell; blanks stripped.
    assert reading._unquoted_ids_of(text) == reading._csv_ids_of(text)


# --- The check cut into runs, one a process -------------------------------------------------------

@settings(max_examples=300, deadline=None)
@given(st.lists(st.integers(min_value=0, max_value=1000), min_size=1, max_size=30), st.data())
def test_runs_are_consecutive_none_empty_and_about_equal(sizes, data):
    k = data.draw(st.integers(min_value=1, max_value=len(sizes)))
    ids = [f"S{i}" for i in range(len(sizes))]
    runs = snapshot_check.runs_by_size(ids, sizes, k)
    assert len(runs) == k and all(runs) and [i for run in runs for i in run] == ids
    # Each run holds at most its share of the whole and one snapshot more (a cut falls at the first
    # snapshot whose running total reaches the next share).
    at = dict(zip(ids, sizes, strict=True))
    assert all(sum(map(at.get, run)) <= sum(sizes) / k + max(sizes) for run in runs)


def test_runs_on_hand_worked_cases():
    # Worked by hand. Sizes 5,1,1,1,1,1 in 2 runs: half of 10 is reached at the first: [a] [b-f], 5 and 5.
    assert snapshot_check.runs_by_size("abcdef", [5, 1, 1, 1, 1, 1], 2) == [["a"], ["b", "c", "d", "e", "f"]]
    # Four equal in 2: half reached at the second. In 3: shares 1.33 and 2.67 reached at b and c.
    assert snapshot_check.runs_by_size("abcd", [1, 1, 1, 1], 2) == [["a", "b"], ["c", "d"]]
    assert snapshot_check.runs_by_size("abcd", [1, 1, 1, 1], 3) == [["a", "b"], ["c"], ["d"]]
    # One large last snapshot: every run but the last keeps one snapshot for each run after it.
    assert snapshot_check.runs_by_size("abc", [1, 1, 100], 3) == [["a"], ["b"], ["c"]]
    assert snapshot_check.runs_by_size("abc", [0, 0, 0], 3) == [["a"], ["b"], ["c"]]
    with pytest.raises(ValueError, match="cannot cut 2 ids into 3 runs"):
        snapshot_check.runs_by_size("ab", [1, 1], 3)


def test_the_check_takes_a_process_a_core(demo_copy, aside, monkeypatch):
    cf = load_casefile(demo_copy, lazy=True)
    check = SnapshotCheck(cf, None)
    assert check.processes == 2  # the aside fixture says two cores
    check.finish()
    monkeypatch.setattr(snapshot_check, "_cores", lambda: 3)
    check = SnapshotCheck(cf, "U04")
    assert check.processes == 3
    check.finish()
    # A run is never smaller than ASIDE_FROM_BYTES: the demo's other snapshots hold one run of that size.
    total = sum(cf.snapshots.read.size(i) for i in cf.snapshot_ids if i != "U04")
    monkeypatch.setattr(snapshot_check, "ASIDE_FROM_BYTES", total // 2 + 1)
    check = SnapshotCheck(cf, "U04")
    assert check.processes == 1
    check.finish()


def _runs_of(folder, besides="U10"):
    cf = load_casefile(folder, lazy=True)
    return SnapshotCheck._runs(cf.snapshots, {besides})


def test_problems_of_two_runs_come_in_snapshot_order(demo_copy, monkeypatch):
    bad = [break_u03_lag(demo_copy), break_duration(demo_copy, "U08")]
    monkeypatch.setattr(snapshot_check, "ASIDE_FROM_BYTES", 1 << 60)
    here = _refusal(demo_copy, ["--json"])
    monkeypatch.setattr(snapshot_check, "ASIDE_FROM_BYTES", 0)
    monkeypatch.setattr(snapshot_check, "_cores", lambda: 2)
    runs = _runs_of(demo_copy)
    assert len(runs) == 2 and "U03" in runs[0] and "U08" in runs[1]  # the two bad ones in different processes
    text = _refusal(demo_copy, ["--json"])
    assert text == here and text.index(bad[0]) < text.index(bad[1]), text


def test_a_ceiling_hit_in_a_later_run_is_raised_alone(demo_copy, monkeypatch):
    # As in one process: the problems of U03 are dropped when U09 (163 activities) is over the ceiling
    # of 162, a ceiling met when its table is read (U04, scheduled, has 155; U10 is over it too).
    break_u03_lag(demo_copy)
    args = ["--max-activities", "162", "schedule", str(demo_copy), "--snapshot", "U04", "--json"]
    monkeypatch.setattr(snapshot_check, "ASIDE_FROM_BYTES", 1 << 60)
    here = _run(args)
    monkeypatch.setattr(snapshot_check, "ASIDE_FROM_BYTES", 0)
    monkeypatch.setattr(snapshot_check, "_cores", lambda: 2)
    runs = _runs_of(demo_copy, "U04")
    assert len(runs) == 2 and "U03" in runs[0] and "U09" in runs[1]
    aside_ = _run(args)
    assert here.exit_code == aside_.exit_code == 1
    assert aside_.output == here.output and "U09" in here.output and "U03" not in here.output, here.output


def test_a_run_that_dies_beside_a_refusing_one_leaves_the_whole_check_here(demo_copy, aside, monkeypatch):
    real = snapshot_check._check_these

    def dies_on_u08(conn, snaps, run):
        if "U08" in run:
            os._exit(3)
        real(conn, snaps, run)

    bad = {break_u03_lag(demo_copy), break_duration(demo_copy, "U08")}
    monkeypatch.setattr(snapshot_check, "_check_these", dies_on_u08)
    cf = load_casefile(demo_copy, lazy=True)
    check = SnapshotCheck(cf, None)
    assert check.processes == 2
    with pytest.raises(reading.CasefileError) as err:
        check.finish()  # one run refused, one gave no answer: the refused and the silent run checked here
    assert {p.file for p in err.value.problems} == bad


def test_merged_answers_on_hand_built_errors():
    from forensic.core.errors import CasefileError, InputProblem, LimitExceeded

    p1 = InputProblem("snapshots/U03/links.csv", 2, "lag", "x1", "not a whole number")
    p2 = InputProblem("snapshots/U08/activities.csv", 4, "duration", "ten", "not a whole number")
    ceiling = LimitExceeded([InputProblem("snapshots/U09/activities.csv", None, None, "2 MiB", "over 1 MiB")])
    merged = snapshot_check._merged([("refused", CasefileError([p1])), ("checked", ["U05"]),
                                     ("refused", CasefileError([p2]))])
    assert type(merged) is CasefileError and merged.problems == (p1, p2)
    assert str(merged) == str(CasefileError([p1, p2]))
    assert snapshot_check._merged([("refused", CasefileError([p1])), ("refused", ceiling)]) is ceiling
    assert snapshot_check._merged([("checked", ["BL"]), ("checked", ["U01"])]) is None
