"""The other snapshots checked in a second process while ``forensic schedule`` works (issue 20).

The check aside must say exactly what the check in the command's own
process says: the same output when every snapshot is good, the same error
(file, line, value) when one it does not schedule is bad, the error of the
snapshot asked for alone when that one is bad (as before: it is read first),
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
from tests.casefile_helpers import break_u03_lag, break_u05_duration

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


def test_a_bad_snapshot_asked_for_is_refused_alone_as_before(demo_copy, aside):
    rel = break_u05_duration(demo_copy)
    other = break_u03_lag(demo_copy)
    text = _refusal(demo_copy, ["--snapshot", "U05", "--json"])
    assert rel in text and other not in text, text  # read first, refused first: the check is stopped


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

    monkeypatch.setattr(snapshot_check, "_check_besides", dies)
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

    monkeypatch.setattr(snapshot_check, "_check_besides", boom)
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
