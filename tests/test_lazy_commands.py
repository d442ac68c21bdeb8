"""``schedule``, ``compare`` and ``recover`` read only the snapshots they use and check the others meanwhile (issue 20).

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
    monkeypatch.setattr(f"forensic.cli.{command}.load", lambda path, **_kw: real(path))  # the whole read, as before
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


@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="the check runs aside on Linux only")
def test_compare_reads_only_its_two_snapshots_in_its_process(demo_copy, monkeypatch):
    # With the check in two other processes, the command's own process reads U04 and U05 only.
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
    assert reads == ["U04", "U05"]
