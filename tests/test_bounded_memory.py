"""Memory bounded by a few snapshots, not by the number of updates (issue 20).

``analyse_delay(..., keep_runs=False)`` (what ``forensic windows`` runs)
attributes each window as soon as it is run and drops its snapshots and
schedules; its figures and JSON are those of the analysis that keeps them.
"""

from __future__ import annotations

import gc

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


def _live_schedules() -> int:
    gc.collect()
    return sum(1 for o in gc.get_objects() if isinstance(o, ScheduleResult))


def _most_schedules_alive(monkeypatch, casefile, keep_runs: bool) -> int:
    """The most schedules alive whenever the windows analysis schedules a snapshot."""
    real = windows_module.schedule
    seen = []

    def counting(*args, **kwargs):
        seen.append(_live_schedules())
        return real(*args, **kwargs)

    monkeypatch.setattr(windows_module, "schedule", counting)
    an = analyse_delay(casefile, keep_runs=keep_runs)
    monkeypatch.setattr(windows_module, "schedule", real)
    assert len(an.attributions) == len(casefile.snapshots) - 1
    return max(seen)


def test_windows_without_runs_hold_a_few_schedules_however_many_updates(monkeypatch, many_updates):
    base = _live_schedules()
    slim = _most_schedules_alive(monkeypatch, many_updates, keep_runs=False)
    full = _most_schedules_alive(monkeypatch, many_updates, keep_runs=True)
    # the boundary shared with the next window and the window's own, never every update's
    assert slim - base <= 3
    # the analysis that keeps its runs holds every update's schedule: the count is a real bound
    assert full - base >= len(many_updates.snapshots)
