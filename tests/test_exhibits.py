"""The exhibits: as-built critical path, near-critical trend, key dates, window charts (analyses and report pages)."""

from __future__ import annotations

import io
from datetime import date, timedelta

import networkx as nx
import numpy as np
import pytest
from pypdf import PdfReader

from forensic.analysis.asbuilt_path import as_built_critical_path
from forensic.analysis.nearcritical import float_to_date, key_dates, near_critical_trend
from forensic.analysis.trend import completion_trend
from forensic.casefile.demo import demo_source
from forensic.casefile.reading import load_casefile
from forensic.core.engine import schedule
from forensic.core.model import Event, Party
from forensic.report import build_report
from forensic.report.narrative import long_date
from tests.test_report import ESCAPE_NAME, small_casefile


def _text(data: bytes) -> str:
    return " ".join(" ".join(p.extract_text().split()) for p in PdfReader(io.BytesIO(data)).pages)


@pytest.fixture(scope="module")
def demo():
    return load_casefile(demo_source())


@pytest.fixture(scope="module")
def demo_trend(demo):
    return completion_trend(demo)


@pytest.fixture(scope="module")
def demo_full(demo) -> bytes:
    return build_report(demo, "full")


# --- as-built critical path ------------------------------------------------------------------


def test_as_built_path_on_a_hand_worked_casefile():
    """Three snapshots of the small fit-out job (tests/test_report.py), worked by hand.

    BL's longest path is M000 -> A100 (10) -> A200 (20) -> A300 (30) -> A400
    (40) -> M900: the A310 branch (SS 10 + 25 days) and A450 (15) are shorter.
    Window BL-U01 (5 Jan to 1 Feb 2026): by U01, M000 started 5 Jan, A100
    ran 5-23 Jan and A200 started 26 Jan, all on BL's path and worked before
    U01's data date 2 Feb: they are the window's piece. Window U01-U02: A200
    is already counted; A300 has not started; A450 started 9 Feb but is not
    on U01's longest path. After U02 the rest of its longest path, A300, A400
    and M900, is the forecast part.
    """
    cf = small_casefile()
    scheds = [schedule(s, cf.calendars, cf.project) for s in cf.snapshots]
    steps = as_built_critical_path(cf, scheds)
    assert [(s.window, s.activity, s.forecast) for s in steps] == [
        ("BL-U01", "M000", False), ("BL-U01", "A100", False), ("BL-U01", "A200", False),
        ("U02", "A300", True), ("U02", "A400", True), ("U02", "M900", True),
    ]
    a100 = steps[1]
    assert (a100.start, a100.finish, a100.actual_start, a100.actual_finish) == (date(2026, 1, 5), date(2026, 1, 23), True, True)
    a200 = steps[2]  # finished 27 Feb by U02: the latest record's actual dates are shown
    assert (a200.start, a200.finish, a200.actual_finish) == (date(2026, 1, 26), date(2026, 2, 27), True)


def test_as_built_path_on_the_demo_follows_its_rule(demo, demo_trend):
    """Each worked step was on its window's earlier longest path and was worked inside that window."""
    steps = as_built_critical_path(demo, demo_trend.schedules)
    by_id = {s.id: (s, r) for s, r in zip(demo.snapshots, demo_trend.schedules, strict=True)}
    latest = demo.snapshots[-1]
    assert len({s.activity for s in steps}) == len(steps)  # each activity once
    for s in steps:
        if s.forecast:
            assert s.window == latest.id and demo_trend.schedules[-1].activities[s.activity].status != "finished"
            continue
        a, b = s.window.split("-")
        (earlier, res), (later, _) = by_id[a], by_id[b]
        assert s.activity in res.longest_path
        act = later.activities[s.activity]
        assert act.actual_start < later.data_date
        assert act.actual_finish is None or act.actual_finish >= earlier.data_date
    # The owner's change CO-01 (added in U05) drove completion in window U05-U06: the demo's story.
    assert ("U05-U06", "CO1-DES") in {(s.window, s.activity) for s in steps}
    assert steps[-1].activity == "M900"


# --- near-critical trend and key dates -------------------------------------------------------


def test_near_critical_counts_and_paths_match_networkx(demo, demo_trend):
    """Counts by margin and the paths they form, against networkx's weakly connected components (reference)."""
    rows = near_critical_trend(demo, demo_trend.schedules)
    crit = demo.project.critical_float
    for row, snap, res in zip(rows, demo.snapshots, demo_trend.schedules, strict=True):
        for m, count, paths in zip(row.margins, row.counts, row.paths, strict=True):
            ids = {a for a, x in res.activities.items() if x.status != "finished" and x.total_float <= crit + m}
            g = nx.Graph()
            g.add_nodes_from(ids)
            g.add_edges_from((lk.pred, lk.succ) for lk in snap.links if lk.pred in ids and lk.succ in ids)
            assert count == len(ids)
            assert paths == nx.number_connected_components(g)
        # Margin 0 is the engine's own critical count.
        assert row.counts[0] == len(res.critical_ids)
        assert list(row.counts) == sorted(row.counts)


def test_float_to_key_date_matches_numpy_busday_count_and_the_engine(demo, demo_trend):
    """M-RIV (finish-by 25 March 2027, five-day calendar) forecast 6 April 2027 at U10: -6 working days.

    numpy.busday_count (reference) over 26 March - 6 April 2027 with the
    calendar's holidays (26 and 29 March are public holidays in the demo)
    counts 6 working days; the engine's own total float of M-RIV, whose
    finish-by constraint governs its late finish, is the same -6.
    """
    cal = demo.calendars["5d"]
    hol = [np.datetime64(h) for h in cal.holidays]
    n = int(np.busday_count(np.datetime64("2027-03-26"), np.datetime64("2027-04-07"), weekmask="1111100", holidays=hol))
    assert n == 6
    assert float_to_date(demo, "5d", date(2027, 4, 6), date(2027, 3, 25)) == -n
    # Early: 24 March against 25 March is one working day of float (U08's figure).
    assert float_to_date(demo, "5d", date(2027, 3, 24), date(2027, 3, 25)) == 1
    assert float_to_date(demo, "5d", date(2027, 3, 25), date(2027, 3, 25)) == 0
    rows = key_dates(demo, demo_trend.schedules)
    u10 = {k.milestone: k for k in rows[-1]}
    assert u10["M-RIV"].float_to_date == -6 == demo_trend.schedules[-1].activities["M-RIV"].total_float
    # The completion against the contract completion (10 June 2027), forecast 23 July 2027:
    # 11 June and six full weeks from 14 June to 23 July, no holiday between: -(1 + 30) = -31.
    assert u10["M900"].constraint == "contract-completion"
    assert (u10["M900"].key_date, u10["M900"].forecast, u10["M900"].float_to_date) == (date(2027, 6, 10), date(2027, 7, 23), -31)


# --- report pages ----------------------------------------------------------------------------


def test_window_charts_caption_names_the_events_acting_in_each_window(demo, demo_full):
    """Each window chart's caption lists the events whose periods overlap the window's days (from events.csv)."""
    text = _text(demo_full)
    snaps = demo.snapshots
    for a, b in zip(snaps, snaps[1:], strict=False):
        last = b.data_date - timedelta(days=1)
        acting = sorted((e for e in demo.events if e.start <= last and e.finish >= a.data_date), key=lambda e: (e.start, e.id))
        head = f"Window {a.id}-{b.id} ({long_date(a.data_date)} to {long_date(last)}):"
        at = text.index(head)
        caption = text[at: text.index(".", text.index("events acting in it", at))]
        names = [e.id for e in acting]
        expected = "none" if not names else names[0] if len(names) == 1 else ", ".join(names[:-1]) + " and " + names[-1]
        assert f"events acting in it: {expected}" in caption, head


def test_as_built_and_near_critical_pages_on_the_demo(demo, demo_trend, demo_full):
    """Found by caption with their figures: the as-built chain's ends and counts, U10's near-critical row."""
    text = _text(demo_full)
    steps = as_built_critical_path(demo, demo_trend.schedules)
    worked = [s for s in steps if not s.forecast]
    assert "As-built critical path: dark bars are actual, light bars forecast" in text
    assert (f"{len(worked)} activities drove completion over {len({s.window for s in worked})} windows, and "
            f"{len(steps) - len(worked)} more are forecast to, from M000 to M900") in text
    row = near_critical_trend(demo, demo_trend.schedules)[-1]
    assert "Activities still to do within each margin of critical, at each data date." in text
    assert f"U10 4 Jan 2027 {row.counts[0]} {row.paths[0]} {row.counts[1]} {row.paths[1]} {row.counts[2]} {row.paths[2]}" in text
    assert ("At U10 these key dates are forecast late: Practical completion (M900) forecast 23 July 2027 against "
            "10 June 2027, -31 working days to its key date") in text


def test_monthly_template_carries_the_exhibits(demo):
    text = _text(build_report(demo, "monthly"))
    assert "This month's window on a calendar" in text
    assert "Window U09-U10 (7 December 2026 to 3 January 2027):" in text
    assert "Near-critical work and key dates" in text


def test_exhibit_pages_are_deterministic_and_escape_casefile_text():
    """Same inputs, same bytes; a markup-like event id, title and activity name print verbatim."""
    cf = small_casefile()
    ev = Event("EV<1>&", 'Late <b>drawings</b> & "RFIs"', "OWN", "excusable-compensable",
               date(2026, 1, 12), date(2026, 1, 30), ("A200",))
    cf = type(cf)(cf.project, cf.calendars, {**cf.parties, "OWN": Party("OWN", "Owner <x>", "owner")}, cf.snapshots,
                  events=(ev,), inputs=cf.inputs)
    one, two = build_report(cf, "full"), build_report(cf, "full")
    assert one == two
    text = _text(one)
    assert "events acting in it: EV<1>&" in text
    assert ESCAPE_NAME in text
    assert "Near-critical work and key dates" in text and "As-built critical path" in text


def test_bad_margins_are_a_template_error(tmp_path):
    from forensic.core.errors import TemplateError
    from forensic.report import load_template

    src = load_template("full").path.read_text(encoding="utf-8").replace("margins = [0, 5, 10]", 'margins = [0, "five"]', 1)
    (tmp_path / "t.toml").write_text(src, encoding="utf-8")
    with pytest.raises(TemplateError, match="margins: expected a list of whole working days"):
        build_report(small_casefile(), tmp_path / "t.toml")


def test_report_progress_steps_are_called_and_do_not_change_the_bytes():
    """The progress callback sees each step; the PDF is the same with or without it."""
    cf = small_casefile()
    seen: list[str] = []
    with_progress = build_report(cf, "full", progress=seen.append)
    assert with_progress == build_report(cf, "full")
    assert seen[0] == "scheduling 3 snapshots" and seen[-1] == "writing the pages"
    assert "windows analysis" in seen


def test_status_printer_is_silent_when_piped_and_quick(capsys):
    """No line when stderr is not a terminal (pytest captures it); forced, a line once a second has passed."""
    from forensic.cli._progress import status_printer

    status_printer("report")("windows analysis")
    assert capsys.readouterr().err == ""
    ticks = iter([0.0, 0.2, 1.5])
    p = status_printer("report", force=True, clock=lambda: next(ticks))
    p("windows analysis")
    p("writing the pages")
    assert capsys.readouterr().err == "forensic report: windows analysis ...\nforensic report: writing the pages ...\n"
