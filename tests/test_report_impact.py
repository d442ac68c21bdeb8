"""The report's time impact and but-for wording says how each event is represented (issue 17)."""

import io
from pathlib import Path

import pytest
from pypdf import PdfReader

from forensic.report import build_report

FULL = Path(__file__).resolve().parents[1] / "report_templates" / "full.toml"


@pytest.fixture(scope="module")
def text(tmp_path_factory) -> str:
    """The demo's report with only the cautions, time impact and but-for sections of the full template."""
    from forensic.casefile.demo import demo_source
    from forensic.casefile.reading import load_casefile

    head, *blocks = FULL.read_text(encoding="utf-8").split("[[section]]")
    keep = [b for b in blocks if any(f'kind = "{k}"' in b for k in ("cautions", "time-impact", "but-for"))]
    path = tmp_path_factory.mktemp("tpl") / "impact.toml"
    path.write_text(head + "".join("[[section]]" + b for b in keep), encoding="utf-8")
    pdf = build_report(load_casefile(demo_source()), path)
    raw = "".join(p.extract_text() for p in PdfReader(io.BytesIO(pdf)).pages)
    return " ".join(raw.split())


def test_event_with_nothing_inserted_is_not_represented_not_absorbed_by_float(text):
    """EV10 and EV11 have no fragnet, no days_lost and no work in their period: the report says so and why."""
    for eid in ("EV10", "EV11"):
        at = text.index(f"Event {eid},")
        sentence = text[at:text.index("Event ", at + 5)]
        assert "is not represented in the time impact analysis" in sentence
        assert "not worked inside the event's period" in sentence
        assert "absorbs" not in sentence


def test_estimated_events_state_the_days_inserted(text):
    """EV05 is inserted as 6, 4, 4 and 2 estimated working days and moves completion 2 days (test_impact's demo)."""
    at = text.index("Event EV05,")
    sentence = text[at:text.index("Evidence", at)]
    assert "estimated from the record (LIB-ENV-CW-N 6, LIB-ENV-CW-E 4, LIB-ENV-CW-S 4, LIB-ENV-CW-W 2)" in sentence
    assert "2 calendar days" in sentence


def test_but_for_reports_the_combined_cases_and_the_float_ownership_sentence(text):
    """The all-events and all-excusable cases are printed, with the overlap sentence (SCL Protocol 2nd ed.)."""
    assert "all recorded events together" in text and "all excusable events together" in text
    # Demo (story.toml): single parties 9 + 2 + 0 + 0 = 11 against 36 for all events, no overlap.
    assert "The single-party cases add up to 11 calendar days, no more than the 36 calendar days" in text
    assert "who owns the float" in text
    assert "EV11: it has no fragnet and no days_lost" in text


def test_cumulative_run_into_an_old_update_is_called_an_impacted_as_planned(text):
    """The demo's cumulative run goes into U01; the nine events of later updates are named (AACE RP 52R-06)."""
    assert "9 of these events (EV06, EV09, EV03, EV04, EV10, EV11, EV05, EV07 and EV08)" in text
    assert "model an impacted as-planned, not a time impact analysis" in text
