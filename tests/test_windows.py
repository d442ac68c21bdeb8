"""Windows analysis and the half-step split on hand-built casefiles (answers worked out here)."""

from datetime import date

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from forensic.analysis.windows import analyse_windows, half_step, window_boundaries, windows_table
from forensic.core.errors import NotFoundError, WindowSpecError

from .delay_cases import D0, casefile, day, ms, snap, task


def chain_case():
    """A(10) -> B(10) -> M; at day 10 A is in progress with 4 days left (4 days lost)."""
    bl = snap("BL", D0, [task("A", 10), task("B", 10), ms()], [("A", "B"), ("B", "M")], role="baseline")
    u1 = snap(
        "U01", day(10),
        [task("A", 10, actual_start=D0, remaining=4), task("B", 10), ms()],
        [("A", "B"), ("B", "M")],
    )
    return casefile([bl, u1])


def test_single_chain_slip_is_all_progress():
    """A loses 4 days: completion moves from day 19 to day 23, all of it progress (worked by hand)."""
    w = analyse_windows(chain_case()).windows[0]
    # BL: A days 0-9, B days 10-19, M on day 19 (7-day calendar, inclusive finishes).
    assert w.completion_before == day(19)
    # Half-step and U01: A days 10-13 (4 remaining from the data date), B 14-23, M day 23.
    assert w.half_step_completion == day(23)
    assert w.completion_after == day(23)
    assert (w.slip, w.progress_slip, w.revision_slip) == (4, 4, 0)
    assert w.critical_path_before == ("A", "B", "M")
    assert (w.start, w.end) == (D0, day(10))


def logic_change_case():
    """A(10) then B(5) and C(5) in parallel; U01 adds B -> C with progress exactly as planned."""
    acts = [task("A", 10), task("B", 5), task("C", 5), ms()]
    links = [("A", "B"), ("A", "C"), ("B", "M"), ("C", "M")]
    bl = snap("BL", D0, acts, links, role="baseline")
    done = [task("A", 10, actual_start=D0, actual_finish=day(9)), task("B", 5), task("C", 5), ms()]
    u1 = snap("U01", day(10), done, [*links, ("B", "C")])
    return casefile([bl, u1])


def test_logic_change_slip_is_all_revision():
    """A new B -> C link adds C's 5 days to the path: slip 5, progress 0, revision 5 (worked by hand)."""
    w = analyse_windows(logic_change_case()).windows[0]
    assert w.completion_before == day(14)  # B, C days 10-14
    assert w.half_step_completion == day(14)  # progress exactly as planned
    assert w.completion_after == day(19)  # C now days 15-19
    assert (w.slip, w.progress_slip, w.revision_slip) == (5, 0, 5)
    assert "C" in w.critical_path_after


def test_half_step_keeps_earlier_plan_and_later_progress():
    """The half-step has the earlier links and durations and the later actual dates (AACE 29R-03, 3.4)."""
    cf = logic_change_case()
    hs = half_step(cf.snapshots[0], cf.snapshots[1])
    assert hs.snapshot.links == cf.snapshots[0].links
    assert hs.snapshot.data_date == day(10)
    assert hs.snapshot.activities["A"].actual_finish == day(9)
    assert (hs.added, hs.deleted) == ((), ())


def test_added_and_deleted_activities_are_reported_and_fall_in_revision():
    """U01 drops C and adds a 7-day X after B: X's days are revision, C's removal too (worked by hand)."""
    cf = logic_change_case()
    bl = cf.snapshots[0]
    u1 = snap(
        "U01", day(10),
        [task("A", 10, actual_start=D0, actual_finish=day(9)), task("B", 5), task("X", 7), ms()],
        [("A", "B"), ("B", "X"), ("X", "M")],
    )
    cf2 = casefile([bl, u1])
    w = analyse_windows(cf2).windows[0]
    assert (w.added, w.deleted) == (("X",), ("C",))
    # Half-step: C kept, not started, days 10-14: M day 14, no progress slip.
    assert w.progress_slip == 0
    # U01: B 10-14, X 15-21, M day 21: revision 7.
    assert (w.completion_after, w.revision_slip) == (day(21), 7)


def test_gain_is_a_negative_slip():
    """A finishes 2 days early and the data date lets B start at once: a gain of 2 (worked by hand)."""
    bl = snap("BL", D0, [task("A", 10), task("B", 10), ms()], [("A", "B"), ("B", "M")], role="baseline")
    u1 = snap(
        "U01", day(8),
        [task("A", 10, actual_start=D0, actual_finish=day(7)), task("B", 10), ms()],
        [("A", "B"), ("B", "M")],
    )
    w = analyse_windows(casefile([bl, u1])).windows[0]
    assert (w.slip, w.progress_slip) == (-2, -2)  # B days 8-17 instead of 10-19


def test_working_day_unit_counts_the_default_calendar():
    """On a 5-day calendar a slip over a weekend counts working days only (casefile delay_unit)."""
    bl = snap("BL", D0, [task("A", 5), ms()], [("A", "M")], role="baseline")
    # A is planned Mon 5 - Fri 9 Jan; at Mon 12 Jan it has 2 days left: Mon 12 - Tue 13 Jan.
    u1 = snap("U01", date(2026, 1, 12), [task("A", 5, actual_start=D0, remaining=2), ms()], [("A", "M")])
    wd = analyse_windows(casefile([bl, u1], unit="working-days", cal="5d")).windows[0]
    cd = analyse_windows(casefile([bl, u1], unit="calendar-days", cal="5d")).windows[0]
    assert wd.completion_after == date(2026, 1, 13)
    assert wd.slip == 2  # Mon 12 and Tue 13 (common practice: working days of the default calendar)
    assert cd.slip == 4  # Fri 9 -> Tue 13 is 4 calendar days


def three_updates():
    acts = [task("A", 30), ms()]
    links = [("A", "M")]
    bl = snap("BL", D0, acts, links, role="baseline")
    us = [
        snap(f"U0{i}", day(7 * i), [task("A", 30, actual_start=D0, remaining=30 - 7 * i + i), ms()], links)
        for i in (1, 2, 3)
    ]
    return casefile([bl, *us])


def test_user_windows_group_updates_and_cover_the_whole_record():
    """--windows U02 gives BL-U02 and U02-U03; slips still add up to the total (telescoping)."""
    cf = three_updates()
    assert window_boundaries(cf, ["U02"]) == ("BL", "U02", "U03")
    an = analyse_windows(cf, ["U02"])
    # A loses one day a week: completion day 29 -> 32 over three weeks.
    assert an.total_slip == 3
    assert [w.slip for w in an.windows] == [2, 1]
    assert windows_table(an).records()[0]["window"] == "BL-U02"


def test_user_windows_out_of_order_or_unknown_are_errors():
    """Unknown or out-of-order window ids are refused with the value named."""
    cf = three_updates()
    with pytest.raises(NotFoundError, match="U09"):
        window_boundaries(cf, ["U09"])
    with pytest.raises(WindowSpecError, match="U03,U01"):
        window_boundaries(cf, ["U03", "U01"])


@st.composite
def random_updates(draw):
    """A random network and a later update with random progress, durations and one maybe-added link."""
    n = draw(st.integers(2, 8))
    durs = draw(st.lists(st.integers(1, 8), min_size=n, max_size=n))
    edges = sorted(draw(st.sets(st.tuples(st.integers(0, n - 1), st.integers(0, n - 1)).filter(lambda e: e[0] < e[1]), max_size=2 * n)))
    ids = [f"T{i}" for i in range(n)]
    links = [(ids[p], ids[s]) for p, s in edges] + [(i, "M") for i in ids]
    bl = snap("BL", D0, [task(i, d) for i, d in zip(ids, durs, strict=True)] + [ms()], links, role="baseline")
    dd = draw(st.integers(1, 12))
    later = []
    for i, d in zip(ids, durs, strict=True):
        state = draw(st.sampled_from(["none", "prog", "done"]))
        newd = max(1, d + draw(st.integers(-2, 3)))
        if state == "done":
            f = draw(st.integers(0, dd - 1))
            later.append(task(i, newd, actual_start=D0, actual_finish=day(f)))
        elif state == "prog":
            later.append(task(i, newd, actual_start=D0, remaining=draw(st.integers(0, 6))))
        else:
            later.append(task(i, newd))
    extra = draw(st.booleans())
    new_links = list(links)
    if extra and n >= 2:
        new_links.append((ids[0], ids[-1]))
    u1 = snap("U01", day(dd), later + [ms()], sorted(set(new_links)))
    return casefile([bl, u1])


@settings(max_examples=60, deadline=None)
@given(random_updates())
def test_progress_plus_revision_equals_slip(cf):
    """Conservation: progress slip + revision slip = slip, and window slips sum to the total."""
    an = analyse_windows(cf)
    for w in an.windows:
        assert w.progress_slip + w.revision_slip == w.slip
    assert sum(w.slip for w in an.windows) == an.total_slip


def test_as_planned_vs_as_built_variances():
    """A planned days 0-9 is in progress with 4 left at day 10: forecast finish day 13, variance +4 (worked by hand)."""
    from forensic.analysis.asbuilt import as_planned_vs_as_built, asbuilt_table

    rows = {r.id: r for r in as_planned_vs_as_built(chain_case())}
    a = rows["A"]
    assert (a.as_planned_start, a.as_planned_finish, a.as_planned_days) == (D0, day(9), 10)
    assert (a.as_built_start, a.as_built_finish, a.forecast) == (D0, day(13), True)
    assert (a.start_slip, a.finish_slip, a.duration_growth) == (0, 4, 4)
    assert rows["M"].finish_slip == 4
    assert asbuilt_table(tuple(rows.values())).records()[0]["id"] == "A"


def test_windows_command_prints_json_and_tables(monkeypatch):
    """`forensic windows` prints the documented JSON, the CSV table, and the text with the ledger."""
    import json

    from click.testing import CliRunner

    import forensic.cli.windows as cmd
    from forensic.cli import main

    monkeypatch.setattr(cmd, "load_lazily", lambda path: chain_case())
    monkeypatch.setattr("forensic.cli._common.load", lambda path, **_: chain_case())  # the whole read on an error
    runner = CliRunner()
    out = runner.invoke(main, ["windows", "x", "--json"])
    assert out.exit_code == 0, out.output
    data = json.loads(out.output)
    assert data["windows"][0]["slip"] == 4 and data["ledger"]["balanced"] is True
    csv = runner.invoke(main, ["windows", "x", "--csv", "--table", "ledger"])
    assert csv.output.splitlines()[0].startswith("window,excusable_compensable")
    text = runner.invoke(main, ["windows", "x"])
    assert "balances" in text.output
    bad = runner.invoke(main, ["windows", "x", "--windows", "U09"])
    assert bad.exit_code == 1 and "Error: --windows: no snapshot 'U09'" in bad.output
    assert "Example:" in runner.invoke(main, ["windows", "--help"]).output


def test_as_built_table_headers_use_the_as_planned_as_built_terms():
    """The table's columns carry AACE RP 29R-03's as-planned / as-built terms and our word "slip"."""
    from forensic.analysis.asbuilt import ASBUILT_COLUMNS

    assert ASBUILT_COLUMNS == ("id", "name", "status", "as_planned_start", "as_planned_finish", "as_planned_days",
                               "as_built_start", "as_built_finish", "as_built_days", "forecast",
                               "start_slip", "finish_slip", "duration_growth")


def test_windows_auto_groups_at_the_updates_where_the_driving_path_changes():
    """Demo: the path switches in BL-U01, U04-U05, U05-U06, U06-U07 and U08-U09, so auto bounds at U01, U05, U06, U07, U09.

    From the demo's story (casefiles/riverside/README.md): site works join the
    path in BL-U01 (SITE-040); in U04-U05 the critical area moves from the hall
    to the library (the hall deck and cladding leave it unfinished); in U05-U06
    both are critical; in U06-U07 the library alone; in U08-U09 the south
    curtain wall leaves the path. U01-U04, U07-U08 and U09-U10 keep their path.
    """
    from forensic.analysis.attribution.delay import analyse_delay  # noqa: PLC0415
    from forensic.analysis.windows import auto_boundaries  # noqa: PLC0415
    from forensic.casefile.demo import demo_source  # noqa: PLC0415
    from forensic.casefile.reading import load_casefile  # noqa: PLC0415

    cf = load_casefile(demo_source())
    stable = [w.label for w in analyse_windows(cf).windows if not w.path_switched]
    assert stable == ["U01-U02", "U02-U03", "U03-U04", "U07-U08", "U09-U10"]
    assert auto_boundaries(cf) == ("BL", "U01", "U05", "U06", "U07", "U09", "U10")
    an = analyse_delay(cf, ["auto"])
    assert [w.label for w in an.windows.windows] == ["BL-U01", "U01-U05", "U05-U06", "U06-U07", "U07-U09", "U09-U10"]
    assert an.ledger.balanced and an.ledger.total_slip == 43
