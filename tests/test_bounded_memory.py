"""Memory bounded by a few snapshots, not by the number of updates (issue 20).

``analyse_delay(..., keep_runs=False)`` (what ``forensic windows`` runs)
attributes each window as soon as it is run and drops its snapshots and
schedules; its figures and JSON are those of the analysis that keeps them.
"""

from __future__ import annotations

import gc
import re

import pytest

import forensic.analysis.windows as windows_module
from forensic.analysis.attribution.delay import analyse_delay, delay_json
from forensic.analysis.attribution.floatuse import float_used_table
from forensic.analysis.attribution.ledger import ledger_table
from forensic.analysis.windows import analyse_windows
from forensic.casefile.demo import demo_source
from forensic.casefile.reading import load_casefile
from forensic.casefile.synthetic import generate_casefile
from forensic.core.engine import ScheduleResult
from forensic.exchange.writers import dumps_json, to_csv


@pytest.fixture(scope="module")
def demo():
    return load_casefile(demo_source())


@pytest.fixture(scope="module")
def many_updates():
    return generate_casefile(150, updates=12, seed=3)


@pytest.mark.parametrize("bounds", [None, ["auto"], ["U03", "U07"]])
def test_the_figures_only_analysis_equals_the_one_that_keeps_the_runs(demo, bounds):
    full = analyse_delay(demo, bounds)
    slim = analyse_delay(demo, bounds, keep_runs=False)
    assert slim.windows.runs == ()
    assert len(full.windows.runs) == len(slim.windows.windows) > 1
    assert slim.windows.windows == full.windows.windows
    assert slim.attributions == full.attributions
    assert dumps_json(delay_json(slim)) == dumps_json(delay_json(full))
    for make in (ledger_table, float_used_table):
        assert to_csv(make(slim)) == to_csv(make(full))


def test_windows_analysis_without_runs_keeps_the_figures(many_updates):
    full = analyse_windows(many_updates)
    slim = analyse_windows(many_updates, keep_runs=False)
    assert slim.runs == () and slim.figures == full.windows
    assert (slim.baseline_completion, slim.last_completion, slim.total_slip) == (
        full.baseline_completion, full.last_completion, full.total_slip)


def _stale_schedules(ids: list[str], current: int) -> int:
    """Schedules alive of the snapshots (or their half-steps and slices) before window ``current - 1``."""
    gc.collect()
    stale = 0
    for o in gc.get_objects():
        if isinstance(o, ScheduleResult):
            base = re.split(r"[+@]", o.snapshot_id)[0]
            stale += base in ids and ids.index(base) < current - 1
    return stale


def _most_stale(monkeypatch, casefile, keep_runs: bool) -> int:
    """The most schedules of earlier windows alive whenever the windows analysis schedules an update."""
    real = windows_module.schedule
    ids = list(casefile.snapshot_ids)
    seen = []

    def counting(snap, *args, **kwargs):
        if snap.id in ids:
            seen.append(_stale_schedules(ids, ids.index(snap.id)))
        return real(snap, *args, **kwargs)

    monkeypatch.setattr(windows_module, "schedule", counting)
    an = analyse_delay(casefile, keep_runs=keep_runs)
    monkeypatch.setattr(windows_module, "schedule", real)
    assert len(an.attributions) == len(ids) - 1 and len(seen) == len(ids)
    return max(seen)


def test_windows_without_runs_hold_no_schedule_of_an_earlier_window(monkeypatch, many_updates):
    # only the window being run (its boundary with the last one, its half-step and slices) is held
    assert _most_stale(monkeypatch, many_updates, keep_runs=False) == 0
    # the analysis that keeps its runs holds every earlier update's schedules: the count is a real one
    assert _most_stale(monkeypatch, many_updates, keep_runs=True) >= 2 * (len(many_updates.snapshots) - 3)


def test_each_slice_boundary_is_scheduled_once(monkeypatch, demo):
    """A window's slices share their boundaries, and a cut the path-switch search probed is not rescheduled."""
    import forensic.analysis.runcache as runcache_module

    counts: dict[str, int] = {}
    for module in (windows_module, runcache_module):
        real = module.schedule

        def counting(snap, *args, _real=real, **kwargs):
            counts[snap.id] = counts.get(snap.id, 0) + 1
            return _real(snap, *args, **kwargs)

        monkeypatch.setattr(module, "schedule", counting)
    full = analyse_delay(demo, keep_runs=False)
    boundaries = {k: n for k, n in counts.items() if "+" not in k}  # updates and slice snapshots, not half-steps
    assert any("@" in k for k in boundaries)  # the demo has sliced windows
    assert {k: n for k, n in boundaries.items() if n > 1} == {}
    assert len(full.attributions) == len(demo.snapshots) - 1
