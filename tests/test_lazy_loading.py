"""Casefiles read lazily (load_casefile(..., lazy=True), issue 20): the same casefile, a few snapshots at a time.

A lazily loaded casefile reads each snapshot's tables when it is first
asked for: it equals the casefile read eagerly (its warnings aside), a
problem in a snapshot read later is still an error naming file, line and
value, and ``forensic windows`` writes nothing when one is found.
"""

from __future__ import annotations

import copy
import gc
import pickle
import shutil
import weakref
from dataclasses import replace

import pytest
from click.testing import CliRunner

from forensic.analysis.attribution.delay import analyse_delay, delay_json
from forensic.casefile.demo import demo_source
from forensic.casefile.reading import load_casefile
from forensic.casefile.synthetic import generate_casefile
from forensic.casefile.writing import write_casefile
from forensic.cli import main
from forensic.core.errors import CasefileError
from forensic.core.model import SnapshotSequence
from forensic.exchange.writers import dumps_json
from tests.casefile_helpers import break_u03_lag, break_u05_duration


@pytest.fixture(scope="module")
def demo():
    return load_casefile(demo_source())


@pytest.fixture
def demo_copy(tmp_path):
    return shutil.copytree(demo_source(), tmp_path / "riverside")


@pytest.fixture(scope="module")
def synthetic(tmp_path_factory):
    return write_casefile(generate_casefile(120, updates=10, seed=5), tmp_path_factory.mktemp("lazy") / "synth")


def _same_but_warnings(lazy, eager):
    assert isinstance(lazy.snapshots, SnapshotSequence)
    assert lazy.snapshot_ids == eager.snapshot_ids
    assert lazy.snapshots == eager.snapshots and eager.snapshots == lazy.snapshots
    assert replace(lazy, snapshots=eager.snapshots, warnings=eager.warnings) == eager
    assert lazy.inputs == eager.inputs  # every file hashed, for the record of inputs
    assert set(lazy.warnings) <= set(eager.warnings)


def test_a_lazy_casefile_equals_the_eager_one(demo, synthetic):
    _same_but_warnings(load_casefile(demo_source(), lazy=True), demo)
    eager = load_casefile(synthetic)
    lazy = load_casefile(synthetic, lazy=True)
    _same_but_warnings(lazy, eager)
    assert lazy.baseline == eager.baseline and lazy.snapshot("U04") == eager.snapshot("U04")
    assert lazy.snapshots[-3:] == eager.snapshots[-3:]
    assert dumps_json(delay_json(analyse_delay(lazy, keep_runs=False))) == dumps_json(delay_json(analyse_delay(eager)))


def test_a_lazy_casefile_serialises_and_deep_copies(synthetic):
    eager = load_casefile(synthetic)
    lazy = load_casefile(synthetic, lazy=True)
    for other in (pickle.loads(pickle.dumps(lazy)), copy.deepcopy(lazy)):
        assert isinstance(other.snapshots, SnapshotSequence)
        _same_but_warnings(other, eager)


def _counting(cf):
    """``cf`` with its snapshots read through a reader that counts the reads and the snapshots alive at each."""
    reads, alive, live = [], [], []

    def read(sid):
        gc.collect()
        alive.append(sum(1 for r in live if r() is not None))
        reads.append(sid)
        snap = cf.snapshots.read(sid)
        live.append(weakref.ref(snap))
        return snap

    return replace(cf, snapshots=SnapshotSequence(cf.snapshots.heads, read)), reads, alive


def test_the_windows_hold_a_few_snapshots_and_read_each_once(synthetic):
    lazy = load_casefile(synthetic, lazy=True)
    cf, reads, alive = _counting(lazy)
    analyse_delay(cf, keep_runs=False)
    assert reads == list(cf.snapshot_ids)  # in order, each once
    assert max(alive) <= 3
    # the analysis that keeps its runs keeps every snapshot: the bound above is a real one
    cf, reads, alive = _counting(lazy)
    analyse_delay(cf)
    assert max(alive) >= len(cf.snapshots) - 1


def test_a_bad_table_in_a_later_snapshot_is_an_error_naming_file_line_and_value(demo_copy, tmp_path):
    rel = break_u05_duration(demo_copy)
    with pytest.raises(CasefileError):
        load_casefile(demo_copy)  # read eagerly, the casefile is refused whole
    cf = load_casefile(demo_copy, lazy=True)
    assert cf.snapshot("U04").id == "U04"  # the snapshots before it are read
    with pytest.raises(CasefileError) as err:
        cf.snapshot("U05")
    (problem,) = err.value.problems
    assert (problem.file, problem.line, problem.value) == (rel, 4, "ten")
    out = tmp_path / "windows.json"
    result = CliRunner().invoke(main, ["windows", str(demo_copy), "--json", "--out", str(out)])
    assert result.exit_code == 1
    assert rel in result.output and "line 4" in result.output and "ten" in result.output, result.output
    assert not out.exists()  # nothing written
    assert not list(tmp_path.glob("*.tmp*")) and sorted(p.name for p in tmp_path.iterdir()) == ["riverside"]


@pytest.mark.parametrize("command", [["schedule", "--snapshot", "U04", "--json"],
                                     ["windows", "--windows", "U02,U06", "--json"]])
def test_a_bad_snapshot_the_command_does_not_use_is_still_refused(demo_copy, tmp_path, command):
    """Every loading command refuses a casefile with a bad snapshot, also one it does not analyse."""
    rel = break_u05_duration(demo_copy)
    out = tmp_path / "out.json"
    result = CliRunner().invoke(main, [command[0], str(demo_copy), *command[1:], "--out", str(out)])
    assert result.exit_code == 1 and rel in result.output and "'ten'" in result.output, result.output
    assert not out.exists()


def test_the_snapshots_not_read_are_checked_together(demo_copy, demo):
    bad = {break_u05_duration(demo_copy), break_u03_lag(demo_copy)}
    cf = load_casefile(demo_copy, lazy=True)
    assert cf.snapshot("U10") == demo.snapshot("U10")
    with pytest.raises(CasefileError) as err:
        cf.snapshots.check_rest()
    assert {p.file for p in err.value.problems} == bad  # both, in one error
    with pytest.raises(CasefileError):
        cf.snapshots.check_rest()  # a bad snapshot is refused as often as it is asked for
    good, reads, _ = _counting(load_casefile(demo_source(), lazy=True))
    good.snapshots.check_rest()
    good.snapshots.check_rest()
    assert reads == list(good.snapshot_ids)  # each read once, in order
    gc.collect()
    good.snapshot("U03")
    assert reads[-1] == "U03" and len(reads) == len(good.snapshots) + 1  # checked, not kept


def test_a_file_changed_after_loading_is_refused(demo_copy):
    cf = load_casefile(demo_copy, lazy=True)
    links = demo_copy / "snapshots" / "U03" / "links.csv"
    links.write_text(links.read_text(encoding="utf-8") + "\n", encoding="utf-8")
    with pytest.raises(CasefileError, match="changed after the casefile was loaded"):
        cf.snapshot("U03")
