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
