"""The synthetic casefile generator: acyclic, valid, reproducible, and scheduled as networkx would."""

import hashlib
from collections import Counter
from dataclasses import replace
from datetime import timedelta
from pathlib import Path

import networkx as nx
import pytest
from click.testing import CliRunner

from forensic.casefile.reading import load_casefile
from forensic.casefile.synthetic import generate_casefile
from forensic.casefile.validation import validate_casefile
from forensic.casefile.writing import write_casefile
from forensic.cli import main
from forensic.core.engine import schedule


@pytest.fixture(scope="module")
def casefile():
    return generate_casefile(1500, updates=6, seed=11)


def digest(folder: Path) -> dict[str, str]:
    return {
        str(p.relative_to(folder)): hashlib.sha256(p.read_bytes()).hexdigest()
        for p in sorted(folder.rglob("*"))
        if p.is_file()
    }


def plain(a):
    """An activity with the loader's resolutions (blank remaining) and its file line left out."""
    return replace(a, line=None, remaining=a.remaining_duration)


def test_every_snapshot_is_acyclic(casefile):
    """No snapshot, baseline or revised update, has a logic loop (networkx's DAG test as the reference)."""
    for snap in casefile.snapshots:
        graph = nx.DiGraph((k.pred, k.succ) for k in snap.links)
        graph.add_nodes_from(snap.activities)
        assert nx.is_directed_acyclic_graph(graph), snap.id
        assert set(graph.nodes) == set(snap.activities), snap.id  # every link names a known activity


def test_written_casefile_loads_and_validates(casefile, tmp_path):
    """Written and loaded back, it is the same casefile, and every snapshot schedules."""
    write_casefile(casefile, tmp_path / "cf")
    loaded = load_casefile(tmp_path / "cf")
    assert [s.id for s in loaded.snapshots] == [s.id for s in casefile.snapshots]
    for mine, theirs in zip(casefile.snapshots, loaded.snapshots, strict=True):
        assert [plain(a) for a in theirs.activities.values()] == [plain(a) for a in mine.activities.values()]
        assert [replace(k, line=None) for k in theirs.links] == list(mine.links)
        # Records shared between snapshots by the loader still carry their own file line.
        assert [a.line for a in theirs.activities.values()] == list(range(2, len(theirs.activities) + 2))
        assert [k.line for k in theirs.links] == list(range(2, len(theirs.links) + 2))
    assert len(loaded.events) == len(casefile.events) > 0
    result = validate_casefile(loaded)
    assert len(result.schedules) == len(casefile.snapshots)


def test_same_seed_same_bytes(tmp_path):
    """The same arguments write byte-identical files; another seed writes different ones."""
    for name, seed in (("a", 5), ("b", 5), ("c", 6)):
        write_casefile(generate_casefile(1000, updates=3, seed=seed), tmp_path / name)
    a, b, c = (digest(tmp_path / n) for n in "abc")
    assert a == b
    assert a != c


def test_network_has_every_feature_the_issue_asks_for(casefile):
    """Areas, phases, all four link types, leads and lags, 3 calendars, constraints, milestones (issue 9's list)."""
    base, last = casefile.baseline, casefile.snapshots[-1]
    acts = list(base.activities.values())
    assert len({a.area for a in acts if a.area}) >= 5
    assert {a.id.split("-P")[1] for a in acts if "-P" in a.id} == {"1", "2", "3", "4"}  # phase milestones
    assert set(Counter(k.type for k in base.links)) == {"FS", "SS", "FF", "SF"}
    lags = [k.lag for k in base.links]
    assert min(lags) < 0 < max(lags)
    assert {a.calendar for a in acts if a.kind == "task"} == {"5d", "6d", "7d"}
    kinds = Counter(a.constraint for a in acts)
    assert kinds["start-from"] > 0 and kinds["finish-by"] > 0
    assert all(a.kind == "closing-milestone" for a in acts if a.constraint == "finish-by")
    assert Counter(a.kind for a in acts)["closing-milestone"] > 20
    statuses = Counter(a.status for a in last.activities.values())
    assert statuses["finished"] > 0 and statuses["in-progress"] > 0 and statuses["not-started"] > 0


def test_updates_slip_and_revise(casefile):
    """Updates add and delete activities, change links, and the forecast completion slips."""
    snaps = casefile.snapshots
    added = deleted = link_changes = 0
    for a, b in zip(snaps, snaps[1:], strict=False):
        added += len(set(b.activities) - set(a.activities))
        deleted += len(set(a.activities) - set(b.activities))
        link_changes += len(set(b.links) ^ set(a.links))
    assert added > 0 and deleted > 0 and link_changes > 0
    first = schedule(snaps[0], casefile.calendars, casefile.project)
    last = schedule(snaps[-1], casefile.calendars, casefile.project)
    assert last.completion > first.completion


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_engine_agrees_with_networkx_longest_path(seed):
    """FS-only, 7-day networks: completion = data date + networkx's dag_longest_path weight - 1 day.

    Reference: networkx ``dag_longest_path`` with edge weight = predecessor's
    duration + lag, and a zero-weight edge from a source to every activity
    for the data date (no work before it).
    """
    cf = generate_casefile(2000, seed=seed, fs_only=True, seven_day=True, constraints=False)
    snap = cf.baseline
    graph = nx.DiGraph()
    for a in snap.activities.values():
        graph.add_edge("<data date>", a.id, weight=0)
    for k in snap.links:
        graph.add_edge(k.pred, k.succ, weight=snap.activities[k.pred].duration + k.lag)
    path = nx.dag_longest_path(graph, weight="weight")
    length = sum(graph[u][v]["weight"] for u, v in zip(path, path[1:], strict=False))
    result = schedule(snap, cf.calendars, cf.project)
    assert result.completion == snap.data_date + timedelta(days=length - 1)
    assert length == nx.dag_longest_path_length(graph, weight="weight")
    # The engine's longest path has the same length: its finish is the completion.
    assert path[-1] == "FINISH" or result[path[-1]].early_finish == result.completion


def test_synth_command_writes_a_new_folder_only(tmp_path):
    """forensic synth writes a loadable casefile and refuses a non-empty folder, leaving no temp files."""
    runner = CliRunner()
    out = tmp_path / "big"
    res = runner.invoke(main, ["synth", str(out), "--activities", "500", "--updates", "2", "--seed", "4"])
    assert res.exit_code == 0, res.output
    assert len(load_casefile(out).snapshots) == 3
    before = digest(out)
    res = runner.invoke(main, ["synth", str(out), "--activities", "500"])
    assert res.exit_code == 1
    assert "exists and is not empty" in res.output
    assert digest(out) == before
    assert [p.name for p in tmp_path.iterdir()] == ["big"]
