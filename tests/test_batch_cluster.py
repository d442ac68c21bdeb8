"""forensic batch --cluster: the casefiles run on a Dask distributed cluster, the summary is the local one.

The cluster is a ``dask.distributed.LocalCluster`` started in the test
process; the command runs as a user runs it (a separate process) and
connects to its scheduler over TCP, so the task and its result cross a
process boundary as they would on a real cluster (Dask distributed
documentation, "Futures" and "LocalCluster").
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import pytest
from distributed import LocalCluster

from forensic.casefile.synthetic import generate_casefile
from forensic.casefile.writing import write_casefile
from forensic.cli.portfolio import run_batch
from forensic.cli.portfolio_cluster import ClusterUnavailable, run_on_cluster

REPO = Path(__file__).resolve().parents[1]


def _portfolio(root: Path, broken: bool = True) -> Path:
    jobs = root / "jobs"
    for name, seed in (("alpha", 1), ("beta", 2)):
        write_casefile(generate_casefile(200, updates=2, seed=seed), jobs / name)
    if not broken:
        return jobs
    bad = jobs / "nested" / "gamma"
    write_casefile(generate_casefile(200, updates=1, seed=3), bad)
    (bad / "snapshots" / "U01" / "links.csv").write_text("pred,succ\nSTART,NOPE\n", encoding="utf-8")
    return jobs


def _forensic(*args: str, cwd: Path) -> subprocess.CompletedProcess:
    env = {**os.environ, "PYTHONPATH": str(REPO)}
    return subprocess.run([sys.executable, "-m", "forensic", *args], cwd=cwd, env=env,
                          capture_output=True, text=True, timeout=300, check=False)


def _without_seconds(summary: dict) -> dict:
    return {**summary, "casefiles": [{k: v for k, v in row.items() if k != "seconds"} for row in summary["casefiles"]]}


@pytest.fixture(scope="module")
def cluster():
    with LocalCluster(n_workers=1, threads_per_worker=2, processes=False, protocol="tcp", host="127.0.0.1",
                      dashboard_address=None) as c:
        yield c


def test_the_cluster_summary_equals_the_local_run_row_for_row(tmp_path, cluster):
    """Same rows (valid, snapshots, slip, unit, error, every problem) in the same order; only seconds differ."""
    root = _portfolio(tmp_path)
    local = _forensic("batch", "jobs", "--jobs", "1", "--json", cwd=tmp_path)
    remote = _forensic("batch", "jobs", "--cluster", cluster.scheduler_address, "--json", cwd=tmp_path)
    assert local.returncode == remote.returncode == 1, remote.stderr  # gamma fails in both
    a, b = json.loads(local.stdout), json.loads(remote.stdout)
    assert _without_seconds(a) == _without_seconds(b)
    names = [r["casefile"] for r in b["casefiles"]]
    assert names == ["jobs/alpha", "jobs/beta", "jobs/nested/gamma"]  # relative, as the user gave them
    assert [r["valid"] for r in b["casefiles"]] == [True, True, False]
    assert b["casefiles"][0]["slip"] is not None
    assert "NOPE" in b["casefiles"][2]["error"]
    assert root.is_dir()


def test_reports_are_written_by_the_workers_into_the_staged_folder(tmp_path, cluster):
    """With report_dir the workers write into the hidden staged folder, renamed into place whole."""
    root = _portfolio(tmp_path, broken=False)
    out = tmp_path / "reports"

    def runner(paths, rdir, names, progress):
        return run_on_cluster(paths, rdir, names, progress, address=cluster.scheduler_address)

    rows = run_batch(root, report_dir=out, runner=runner)
    assert [r.valid for r in rows] == [True, True]
    assert sorted(p.name for p in out.iterdir()) == ["alpha-report.pdf", "beta-report.pdf"]
    assert all((out / n).read_bytes().startswith(b"%PDF") for n in ("alpha-report.pdf", "beta-report.pdf"))
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".")]  # nothing half-written left


def test_an_unreachable_scheduler_is_a_clear_error(tmp_path, monkeypatch):
    monkeypatch.setattr("forensic.cli.portfolio_cluster.CONNECT_SECONDS", 1)
    root = _portfolio(tmp_path, broken=False)
    paths = sorted(p for p in root.iterdir() if p.is_dir())
    # Port 9 (discard) on the loopback: nothing listens there (common practice for a closed port).
    with pytest.raises(ClusterUnavailable, match=r"cannot reach the Dask scheduler at tcp://127\.0\.0\.1:9"):
        run_on_cluster(paths, None, {}, address="tcp://127.0.0.1:9")


def test_without_dask_the_option_says_which_extra_to_install(tmp_path, monkeypatch):
    root = _portfolio(tmp_path, broken=False)
    monkeypatch.setitem(sys.modules, "distributed", None)  # as if not installed: import raises ImportError
    with pytest.raises(ClusterUnavailable, match=r"pip install 'forensic\[cluster\]'"):
        run_on_cluster([root / "alpha"], None, {}, address="tcp://127.0.0.1:9")


def test_jobs_and_cluster_together_are_refused(tmp_path):
    _portfolio(tmp_path)
    res = _forensic("batch", "jobs", "--jobs", "2", "--cluster", "tcp://127.0.0.1:9", cwd=tmp_path)
    assert res.returncode == 2
    assert "--jobs is for the local processes" in res.stderr
