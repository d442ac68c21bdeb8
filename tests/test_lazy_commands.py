"""``schedule``, ``compare``, ``recover`` and ``windows`` read only the snapshots they use and check the others meanwhile (issue 20).

They used to read the whole casefile before anything else. Now they read
their own snapshots first and the others are checked aside (in forked
processes on a large casefile, tests/test_snapshot_check_aside.py) while
they work. What they say must not change: the same output on a good
casefile, and on a bad one the error the whole read gives (every bad
snapshot's problems, in order, the asked ones included), before anything
else, even an unknown id. The expected errors here are taken from the
eager loader itself, ``load_casefile(folder)``.
"""

from __future__ import annotations

import shutil
import sys

import pytest
from click.testing import CliRunner

from forensic.casefile.demo import demo_source
from forensic.casefile.reading import load_casefile
from forensic.cli import main, snapshot_check
from forensic.core.errors import CasefileError
from tests.casefile_helpers import break_duration, break_u03_lag

COMMANDS = {
    "schedule": ["schedule", "{c}", "--snapshot", "U05", "--json"],
    "windows": ["windows", "{c}", "--windows", "BL,U05,U10", "--json", "--jobs", "1"],
    "windows-jobs": ["windows", "{c}", "--json", "--jobs", "2"],
    "compare": ["compare", "{c}", "U04", "U05", "--json"],
    "recover": ["recover", "{c}", "--snapshot", "U05", "--days", "2", "--json"],
}


@pytest.fixture
def demo_copy(tmp_path):
    return shutil.copytree(demo_source(), tmp_path / "riverside")


@pytest.fixture(params=["in_process", "aside"])
def mode(request, monkeypatch):
    """Each test twice: the check in the command's process, and aside in two processes (Linux)."""
    if request.param == "aside":
        if not sys.platform.startswith("linux"):
            return request.param  # the check then runs in the process, as in_process
        monkeypatch.setattr(snapshot_check, "ASIDE_FROM_BYTES", 0)
        monkeypatch.setattr(snapshot_check, "_cores", lambda: 2)
    else:
        monkeypatch.setattr(snapshot_check, "ASIDE_FROM_BYTES", 1 << 60)
    return request.param


def _run(command, folder):
    args = [a.format(c=folder) for a in COMMANDS[command]]
    return CliRunner().invoke(main, args)


def _whole_error(folder) -> str:
    with pytest.raises(CasefileError) as err:
        load_casefile(folder)
    return str(err.value)


@pytest.mark.parametrize("command", COMMANDS)
def test_the_output_is_the_eager_reads(demo_copy, mode, command, monkeypatch):
    from forensic.cli import _common

    lazy = _run(command, demo_copy)
    real = _common.load
    module = command.split("-")[0]
    monkeypatch.setattr(f"forensic.cli.{module}.load_lazily", real)  # the whole read, as before
    eager = _run(command, demo_copy)
    assert lazy.exit_code == eager.exit_code == 0, lazy.output
    assert lazy.output == eager.output


@pytest.mark.parametrize("command", COMMANDS)
def test_a_bad_snapshot_not_used_is_refused_as_the_whole_read_refuses(demo_copy, mode, command, tmp_path):
    break_u03_lag(demo_copy)
    break_duration(demo_copy, "U08")
    result = _run(command, demo_copy)
    assert result.exit_code == 1
    assert _whole_error(demo_copy) in result.output and "U03" in result.output and "U08" in result.output


@pytest.mark.parametrize("command", COMMANDS)
def test_a_bad_snapshot_used_is_refused_with_every_other_problem(demo_copy, mode, command):
    # U05 is read by each command; the whole read also names U03 and U08, so the command does too.
    for sid in ("U05", "U08"):
        break_duration(demo_copy, sid)
    break_u03_lag(demo_copy)
    result = _run(command, demo_copy)
    assert result.exit_code == 1
    text = _whole_error(demo_copy)
    assert text in result.output and all(s in text for s in ("U03", "U05", "U08")), result.output


def _unknown_id(folder):
    c = str(folder)
    return (["schedule", c, "--snapshot", "U99"], ["compare", c, "U04", "U99"],
            ["recover", c, "--snapshot", "U99", "--days", "2"])


def test_an_unknown_id_in_a_bad_casefile_gets_the_casefile_error_first(demo_copy, mode):
    break_duration(demo_copy, "U08")
    for args in _unknown_id(demo_copy):
        result = CliRunner().invoke(main, args)
        assert result.exit_code == 1
        assert _whole_error(demo_copy) in result.output and "U99" not in result.output, result.output


def test_an_unknown_id_in_a_good_casefile_is_named(demo_copy, mode):
    for args in _unknown_id(demo_copy):
        result = CliRunner().invoke(main, args)
        assert result.exit_code == 1 and "no snapshot 'U99'" in result.output, result.output


def test_compare_reads_its_two_snapshots_first_and_only_those_where_the_check_runs_aside(demo_copy, monkeypatch):
    # The command's own process reads U04 and U05 first. On Linux (fork) the check runs in two other
    # processes, so this one reads nothing more; elsewhere the check reads the others here, in order.
    monkeypatch.setattr(snapshot_check, "ASIDE_FROM_BYTES", 0)
    monkeypatch.setattr(snapshot_check, "_cores", lambda: 2)
    from forensic.casefile import reading

    reads = []
    real = reading._SnapshotReader.__call__

    def counting(self, sid):
        reads.append(sid)
        return real(self, sid)

    monkeypatch.setattr(reading._SnapshotReader, "__call__", counting)
    result = _run("compare", demo_copy)
    assert result.exit_code == 0, result.output
    others = [i for i in load_casefile(demo_copy, lazy=True).snapshot_ids if i not in ("U04", "U05")]
    assert reads == ["U04", "U05"] + ([] if sys.platform.startswith("linux") else others)


# The error of `forensic check`, which reads the casefile whole before anything else, is the oracle below.

def _as_check_says(folder, *group):
    return CliRunner().invoke(main, [*group, "check", str(folder)])


def _spoil_event_date(folder):
    path = folder / "events.csv"
    lines = path.read_text(encoding="utf-8").splitlines(keepends=True)
    header = lines[0].rstrip("\r\n").split(",")
    cells = lines[1].split(",")
    cells[header.index("start")] = "2026-13-40"
    lines[1] = ",".join(cells)
    path.write_text("".join(lines), encoding="utf-8")


@pytest.mark.parametrize("command", COMMANDS)
def test_a_casefile_refused_at_load_lists_the_bad_snapshots_too(demo_copy, mode, command):
    # The lazy load stops at the events' bad date; the whole read also names U08's duration.
    break_duration(demo_copy, "U08")
    _spoil_event_date(demo_copy)
    result, whole = _run(command, demo_copy), _as_check_says(demo_copy)
    assert result.exit_code == whole.exit_code == 1
    assert result.output == whole.output and "U08" in whole.output and "events.csv" in whole.output


@pytest.mark.parametrize("command", COMMANDS)
def test_every_snapshot_over_a_ceiling_is_named(demo_copy, mode, command):
    # 158 activities at most: U05 to U10 have 160-163, so six snapshots are over it (U04, read, has 155).
    args = [a.format(c=demo_copy) for a in COMMANDS[command]]
    args = [a.replace("U05", "U04") for a in args]
    result = CliRunner().invoke(main, ["--max-activities", "158", *args])
    whole = _as_check_says(demo_copy, "--max-activities", "158")
    assert result.exit_code == whole.exit_code == 1
    assert result.output == whole.output and all(f"U{n:02d}" in whole.output for n in range(5, 11)), whole.output


@pytest.mark.parametrize("command", COMMANDS)
def test_a_fragnet_loop_is_named_once(demo_copy, mode, command):
    # A link from the end of the works back into EV03's fragnet closes a loop in every snapshot the
    # fragnet goes into; the whole read names it once.
    with (demo_copy / "fragnets" / "EV03" / "links.csv").open("a", encoding="utf-8") as f:
        f.write("SYS-COM-ME,CO1-INS,FS,0\n")
    result, whole = _run(command, demo_copy), _as_check_says(demo_copy)
    assert whole.exit_code == 1 and "loop" in whole.output, whole.output
    assert result.exit_code == 1 and result.output == whole.output
