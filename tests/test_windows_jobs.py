"""``forensic windows --jobs N``: the windows attributed in N processes give the one-process result, byte for byte.

Each window's attribution depends only on its two snapshots and the
casefile's settings, so cutting the windows into runs of consecutive
windows and putting the figures back in order must change nothing
(forensic/cli/windows_jobs.py). Sources: none needed, this is a property of
the program (common practice: a parallel run must equal the serial one).
"""

from __future__ import annotations

import shutil

import pytest
from click.testing import CliRunner

from forensic.casefile.demo import demo_source
from forensic.casefile.reading import load_casefile
from forensic.casefile.synthetic import generate_casefile
from forensic.casefile.writing import write_casefile
from forensic.cli import main
from forensic.cli.windows_jobs import (
    AUTO_FROM_ACTIVITIES,
    attribute_in_processes,
    consecutive_runs,
    jobs_for,
)
from forensic.core.errors import CasefileError
from tests.casefile_helpers import break_duration


def _windows(args):
    result = CliRunner().invoke(main, ["windows", *args])
    assert result.exit_code == 0, result.output
    return result.output


def test_demo_in_two_processes_is_byte_identical():
    demo = str(demo_source())
    one = _windows([demo, "--json", "--jobs", "1"])
    assert _windows([demo, "--json", "--jobs", "2"]) == one
    assert _windows([demo, "--json", "--jobs", "3", "--windows", "U02,U06"]) == \
        _windows([demo, "--json", "--jobs", "1", "--windows", "U02,U06"])
    assert _windows([demo, "--jobs", "2"]) == _windows([demo, "--jobs", "1"])  # the text too


def test_synthetic_casefile_in_processes_equals_one_process(tmp_path):
    write_casefile(generate_casefile(600, updates=7, seed=3), tmp_path / "big")
    one = _windows([str(tmp_path / "big"), "--json", "--jobs", "1"])
    for jobs in ("2", "4", "9"):  # more processes than windows: one window each
        assert _windows([str(tmp_path / "big"), "--json", "--jobs", jobs]) == one


def test_the_analysis_equals_analyse_delay():
    from forensic.analysis.attribution.delay import analyse_delay

    cf = load_casefile(demo_source(), lazy=True)
    many = attribute_in_processes(cf, None, 2)
    one = analyse_delay(load_casefile(demo_source()), keep_runs=False)
    assert many.attributions == one.attributions
    assert many.windows.windows == one.windows.windows and many.ledger == one.ledger


def test_a_bad_snapshot_read_by_a_worker_is_refused_as_in_one_process(tmp_path):
    folder = shutil.copytree(demo_source(), tmp_path / "riverside")
    broken = break_duration(folder, "U07")
    out = tmp_path / "w.json"
    outputs = []
    for jobs in ("1", "2"):
        result = CliRunner().invoke(main, ["windows", str(folder), "--json", "--jobs", jobs, "--out", str(out)])
        assert result.exit_code == 1
        assert broken in result.output and "line 4" in result.output and "ten" in result.output
        assert not out.exists()
        outputs.append(result.output)
    assert outputs[0] == outputs[1]
    with pytest.raises(CasefileError):
        attribute_in_processes(load_casefile(folder, lazy=True), None, 2)


def test_snapshots_the_workers_read_are_not_read_again():
    cf = load_casefile(demo_source(), lazy=True)
    attribute_in_processes(cf, None, 2)
    reads = []
    real = cf.snapshots.read

    def counting(sid):
        reads.append(sid)
        return real(sid)

    object.__setattr__(cf.snapshots, "_read", counting)
    cf.snapshots.check_rest()
    assert reads == []  # every snapshot was read (and checked) by a worker


def testconsecutive_runs_consecutive_windows():
    pairs = [(str(i), str(i + 1)) for i in range(10)]
    runs = consecutive_runs(pairs, 3)
    assert [len(r) for r in runs] == [4, 3, 3]
    assert [p for r in runs for p in r] == pairs  # in order, each once
    assert consecutive_runs(pairs[:2], 5) == [[pairs[0]], [pairs[1]]]


def test_auto_is_one_process_for_a_small_casefile_and_a_number_is_taken_as_asked():
    cf = load_casefile(demo_source())
    assert len(cf.snapshots[-1].activities) < AUTO_FROM_ACTIVITIES
    assert jobs_for(cf, 10, "auto") == 1
    assert jobs_for(cf, 10, "3") == 3


@pytest.mark.parametrize("bad", ["0", "-1", "two", "1.5"])
def test_jobs_must_be_auto_or_a_whole_number(bad):
    result = CliRunner().invoke(main, ["windows", str(demo_source()), "--jobs", bad])
    assert result.exit_code == 2 and "--jobs" in result.output and bad in result.output


def test_casefile_errors_survive_pickling():
    """An error raised in a worker is rebuilt from its problems, not from its message (CasefileError.__reduce__)."""
    import copy
    import pickle

    from forensic.core.errors import ImportMappingError, InputProblem, LimitExceeded

    problems = (InputProblem("snapshots/U07/activities.csv", 4, "duration", "ten", "not a whole number"),
                InputProblem("events.csv", 2, "party", "XX", "unknown party"))
    for kind in (CasefileError, LimitExceeded, ImportMappingError):
        err = kind(problems)
        back = pickle.loads(pickle.dumps(err))
        assert type(back) is kind and back.problems == problems and str(back) == str(err)
        assert copy.deepcopy(err).problems == problems
