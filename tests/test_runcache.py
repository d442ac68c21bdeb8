"""One call's cache (forensic.analysis.runcache): what it hands out equals what is computed afresh."""

from __future__ import annotations

from dataclasses import replace

import pytest

from forensic.analysis.attribution.delay import analyse_delay, delay_json
from forensic.analysis.butfor import but_for, but_for_json
from forensic.analysis.impact import time_impact_series, time_impacts
from forensic.analysis.runcache import RunCache
from forensic.analysis.windows import analyse_windows, auto_boundaries
from forensic.casefile.demo import demo_source
from forensic.casefile.reading import load_casefile
from forensic.exchange.writers import dumps_json


@pytest.fixture(scope="module")
def demo():
    return load_casefile(demo_source())


def _text(analysis) -> str:
    return dumps_json(delay_json(analysis))


def _rule(cf, rule):
    return replace(cf, project=replace(cf.project, concurrency=rule))


@pytest.mark.parametrize("first", ["apportion", "time-only"])
def test_every_concurrency_rule_from_the_cache_equals_the_analysis_afresh(demo, first):
    cache = RunCache()
    analyse_delay(_rule(demo, first), cache=cache)  # fills the cache under the first rule
    for rule in ("time-only", "apportion", "dominant"):
        cf = _rule(demo, rule)
        cached = analyse_delay(cf, cache=cache)
        assert cached.rule == rule
        assert _text(cached) == _text(analyse_delay(cf))


def test_the_demo_has_concurrent_days_for_the_rules_to_treat(demo):
    found = [a.concurrent.found for a in analyse_delay(demo).attributions]
    assert sum(found) > 0


def test_a_grouping_shares_the_window_runs_and_schedules_of_the_call(demo):
    cache = RunCache()
    monthly = analyse_windows(demo, cache=cache)
    again = analyse_windows(demo, [s.id for s in demo.snapshots], cache=cache)
    assert all(a is b for a, b in zip(monthly.runs, again.runs, strict=True))
    assert auto_boundaries(demo, cache=cache) == auto_boundaries(demo)
    grouped = analyse_delay(demo, ["U03", "U06"], cache=cache)
    assert _text(grouped) == _text(analyse_delay(demo, ["U03", "U06"]))
    assert grouped.windows.runs[0].before is monthly.runs[0].before  # the baseline scheduled once


def test_other_settings_are_not_served_from_the_cache(demo):
    cache = RunCache()
    base = analyse_windows(demo, cache=cache)
    other = replace(demo, project=replace(demo.project, critical_float=5))
    run = analyse_windows(other, cache=cache).runs[0]
    assert run is not base.runs[0]
    assert run.before is not base.runs[0].before


def test_a_casefile_with_other_snapshots_is_computed_afresh(demo):
    cache = RunCache()
    cache.schedule(demo, demo.snapshots[0])
    shorter = replace(demo, snapshots=demo.snapshots[:3])
    assert not cache.serves(shorter)
    assert cache.serves(_rule(demo, "dominant"))
    assert cache.schedule(shorter, shorter.snapshots[0]) is not cache.schedule(demo, demo.snapshots[0])


def test_but_for_each_event_from_one_as_built_equals_each_afresh(demo):
    cache = RunCache()
    reports = [but_for(demo, event=e.id, cache=cache) for e in demo.events]
    assert all(r.as_built is reports[0].as_built for r in reports)  # built once
    for e, r in zip(demo.events, reports, strict=True):
        assert dumps_json(but_for_json(r)) == dumps_json(but_for_json(but_for(demo, event=e.id)))


def test_time_impacts_and_the_series_with_the_cache_equal_them_afresh(demo):
    cache = RunCache()
    analyse_windows(demo, cache=cache)  # the updates' schedules, as the delay summary leaves them
    ids = [e.id for e in demo.events]
    assert time_impacts(demo, ids, cache=cache) == time_impacts(demo, ids)
    assert time_impact_series(demo, cache=cache) == time_impact_series(demo)


def test_auto_windows_asked_for_by_name_with_the_cache_equal_them_afresh(demo):
    cache = RunCache()
    assert _text(analyse_delay(demo, ["auto"], cache=cache)) == _text(analyse_delay(demo, ["auto"]))


def test_a_scoped_cache_serves_its_parents_entries_and_keeps_its_own(demo):
    cache = RunCache()
    base = analyse_delay(demo, cache=cache)
    kept = cache.kept
    scoped = cache.scoped()
    again = analyse_delay(demo, cache=scoped)
    assert scoped.kept == 0 and _text(again) == _text(base)  # everything served by the parent
    quarterly = ("BL", "U03", "U06", "U09", "U10")
    grouped = analyse_delay(demo, quarterly, cache=scoped)
    assert scoped.kept > 0 and cache.kept == kept  # the grouping's new runs stay in the scoped cache
    assert _text(grouped) == _text(analyse_delay(demo, quarterly))
    override = replace(demo, project=replace(demo.project, progress_logic="override"))
    assert _text(analyse_delay(override, cache=cache.scoped())) == _text(analyse_delay(override))
    assert cache.kept == kept


def test_the_sensitivity_rows_leave_the_callers_cache_as_the_analysis_left_it(demo):
    # The rows under other settings or groupings keep their runs only while they are needed; the
    # concurrency-rule rows reuse the analysis as run. Their figures equal the rows without a cache.
    from forensic.analysis.sensitivity import sensitivity_rows

    cache = RunCache()
    base = analyse_delay(demo, cache=cache)
    kept = cache.kept
    rows = sensitivity_rows(demo, base, 2, lambda _s: None, cache=cache)
    assert cache.kept == kept
    assert {r.setting for r in rows} >= {"window grouping", "progress logic", "critical float", "concurrency rule"}
    assert rows == sensitivity_rows(demo, analyse_delay(demo), 2, lambda _s: None)


def test_a_time_impact_is_computed_once_a_call_and_equals_it_afresh(demo):
    ids = [e.id for e in demo.events]
    cache = RunCache()
    first = time_impacts(demo, ids, cache=cache)
    again = time_impacts(demo, ids, cache=cache)
    assert all(a is b for a, b in zip(first.individual, again.individual, strict=True))  # served, not recomputed
    assert first == time_impacts(demo, ids)
    override = replace(demo, project=replace(demo.project, progress_logic="override"))
    assert time_impacts(override, ids, cache=cache) == time_impacts(override, ids)  # other settings: afresh


def test_a_summary_sharing_the_callers_cache_equals_one_on_its_own(demo):
    # As the report does: its windows analysis, time impacts and but-for in one cache, then the summary.
    from forensic.analysis.eot import delay_summary, eot_json

    cache = RunCache()
    delay = analyse_delay(demo, cache=cache)
    time_impacts(demo, cache=cache)
    but_for(demo, cache=cache)
    shared = delay_summary(demo, delay=delay, cache=cache)
    assert dumps_json(eot_json(shared)) == dumps_json(eot_json(delay_summary(demo)))
