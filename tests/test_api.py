"""The Python front door gives the same results as the modules it calls."""

from __future__ import annotations

from pathlib import Path

import forensic
from forensic.analysis.butfor import but_for
from forensic.analysis.recovery import recover
from forensic.casefile.reading import load_casefile
from forensic.core.engine import schedule_snapshot

DEMO = Path(__file__).resolve().parent.parent / "casefiles" / "riverside"


def test_load_and_schedule_match_the_engine():
    cf = forensic.load(DEMO)
    assert cf.project.name == load_casefile(DEMO).project.name
    latest = forensic.schedule(DEMO)
    assert latest.snapshot_id == cf.snapshots[-1].id
    assert latest.completion == schedule_snapshot(cf, cf.snapshots[-1].id).completion
    assert forensic.schedule(cf, "U03").completion == schedule_snapshot(cf, "U03").completion


def test_but_for_and_recover_return_the_cli_results():
    cf = forensic.load(DEMO)
    assert forensic.but_for(cf, party="OWN").cases == but_for(cf, party="OWN").cases
    got = forensic.recover(cf, "U03", days=5, objective="count")
    want = recover(cf, "U03", days=5, objective="count")
    assert (got.snapshot_id, got.objective, got.current_completion) == ("U03", "count", want.current_completion)
    assert got.plan == want.plan


def test_windows_impact_and_eot_return_the_cli_results():
    """The front door's windows, impact and eot equal the analysis functions the commands call."""
    from forensic.analysis.attribution.delay import analyse_delay, delay_json
    from forensic.analysis.eot import delay_summary, eot_json
    from forensic.analysis.impact import time_impact, time_impacts
    from forensic.analysis.impact_tables import impact_json, series_json

    cf = forensic.load(DEMO)
    assert delay_json(forensic.windows(cf)) == delay_json(analyse_delay(cf))
    grouped = forensic.windows(cf, ("U02", "U06"))
    assert [r.window.label for r in grouped.windows.runs] == ["BL-U02", "U02-U06", "U06-U10"]
    ev = cf.events[0].id
    assert impact_json(forensic.impact(cf, ev)) == impact_json(time_impact(cf, ev))
    assert series_json(forensic.impact(cf)) == series_json(time_impacts(cf))
    assert eot_json(forensic.eot(cf, sensitivity=False)) == eot_json(delay_summary(cf, sensitivity=False))


def test_impact_series_refuses_an_into_update():
    import pytest

    with pytest.raises(ValueError, match="leave out into"):
        forensic.impact(DEMO, series=True, into="U03")
