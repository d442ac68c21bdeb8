"""Update-to-update comparison: one change of every kind, found exactly, with its longest-path flag; the demo story."""

import tomllib
from datetime import date
from pathlib import Path

import pytest

from forensic.analysis.compare import (
    CHANGE_KINDS,
    Change,
    compare_json,
    compare_snapshots,
    compare_table,
)
from forensic.casefile.reading import load_casefile
from forensic.core.model import (
    Activity,
    Calendar,
    Casefile,
    Link,
    Party,
    Project,
    Snapshot,
    frozen_mapping,
)

FIVE = Calendar("5d", ("mon", "tue", "wed", "thu", "fri"))
SEVEN = Calendar("7d", ("mon", "tue", "wed", "thu", "fri", "sat", "sun"))
OLD_DD = date(2026, 1, 19)  # Monday
NEW_DD = date(2026, 2, 2)  # Monday, two weeks later


def act(aid, d, **kw):
    kw.setdefault("calendar", "5d")
    return Activity(aid, kw.pop("name", f"task {aid}"), d, **kw)


def casefile(old_acts, old_links, new_acts, new_links):
    snaps = (
        Snapshot("U1", OLD_DD, frozen_mapping({a.id: a for a in old_acts}), tuple(old_links)),
        Snapshot("U2", NEW_DD, frozen_mapping({a.id: a for a in new_acts}), tuple(new_links)),
    )
    project = Project("t", "5d", completion="END")
    parties = frozen_mapping({"OWN": Party("OWN", "Owner", "owner")})
    return Casefile(project, frozen_mapping({"5d": FIVE, "7d": SEVEN}), parties, snaps)


def _pair():
    """Old and new update: a main path A-B-C (15 days) beside X (14 days), and side activities.

    Each side activity carries exactly one change; the lead put on C->END (0 -> -2) makes
    X the longest path.
    """
    end = Activity("END", "complete", 0, kind="closing-milestone", calendar="5d",
                   constraint="finish-by", constraint_date=date(2026, 2, 13))
    common = [
        Activity("ST", "start", 0, kind="opening-milestone", calendar="5d"),
        act("A", 5), act("B", 5), act("C", 5), act("X", 14), end,
    ]
    started = dict(actual_start=date(2026, 1, 12))
    old = [
        *common,
        act("D", 3, name="old name"),
        act("E", 1),
        act("G", 10, remaining=4, **started),
        act("H", 10, remaining=6, **started),
        act("I", 2),
        act("J", 2, constraint="start-from", constraint_date=date(2026, 1, 26)),
        act("K", 2),
        act("L", 2, area="A1"),
        act("N", 5, actual_start=date(2026, 1, 5), actual_finish=date(2026, 1, 9)),
        act("P", 10, remaining=2, **started),
        act("Q", 10, remaining=4, percent_complete=60, **started),
        act("R", 2, actual_start=date(2026, 1, 5), actual_finish=date(2026, 1, 6)),
        act("T", 5), act("S", 3),
    ]
    new = [
        *common,
        act("D", 3, name="new name"),  # name
        act("G", 12, remaining=4, **started),  # duration (scope up, remaining kept)
        act("H", 10, remaining=3, **started),  # remaining (ordinary progress)
        act("I", 2, calendar="7d"),  # calendar
        act("J", 2, constraint="finish-from", constraint_date=date(2026, 1, 26)),  # constraint
        act("K", 2, party="OWN"),  # party
        act("L", 2, area="A2"),  # area
        act("N", 5, actual_start=date(2026, 1, 5), actual_finish=date(2026, 1, 8)),  # actual revised
        act("P", 10, remaining=4, **started),  # remaining up, no scope change
        act("Q", 10, remaining=4, percent_complete=40, **started),  # percent down
        act("R", 2, actual_start=date(2026, 1, 5), remaining=1),  # reopened
        act("F", 1),  # added (E deleted)
        act("T", 5), act("S", 3, actual_start=date(2026, 1, 26), remaining=3),  # started before T finished
    ]
    main = [Link("ST", "A"), Link("A", "B"), Link("B", "C"), Link("ST", "X"), Link("X", "END"), Link("T", "S")]
    old_links = [*main, Link("C", "END"), Link("ST", "D"), Link("D", "END")]
    new_links = [*main, Link("C", "END", lag=-2), Link("A", "D"), Link("D", "END")]
    return casefile(old, old_links, new, new_links)


def key(c: Change):
    return (c.kind, c.activity, c.field, c.before, c.after, c.longest_path, c.pred, c.succ)


def test_one_change_of_every_kind_is_listed_exactly():
    """Every planted change is found, nothing else, with before, after and the longest-path flag."""
    r = compare_snapshots(_pair(), "U1", "U2")
    # Old path ST-A-B-C-END: 15 working days from Mon 19 Jan, to Fri 6 Feb.
    # New path ST-X-END: 14 working days from Mon 2 Feb, to Thu 19 Feb (A-B-C with the lead is 13).
    # END must finish by Fri 13 Feb: float 0 in U1 (the engine does not report positive
    # completion float), -4 in U2 (Mon 16 - Thu 19 Feb); the move is 13 calendar days,
    # 9 working days (9-13 and 16-19 Feb).
    expected = [
        ("activity-added", "F", "name", None, "task F", False, None, None),
        ("activity-deleted", "E", "name", "task E", None, False, None, None),
        ("name", "D", "name", "old name", "new name", False, None, None),
        ("duration", "G", "duration", 10, 12, False, None, None),
        ("remaining", "H", "remaining", 6, 3, False, None, None),
        ("calendar", "I", "calendar", "5d", "7d", False, None, None),
        ("constraint", "J", "constraint", "start-from", "finish-from", False, None, None),
        ("party", "K", "party", None, "OWN", False, None, None),
        ("area", "L", "area", "A1", "A2", False, None, None),
        ("link-added", "D", "link", None, "FS lag 0", True, "A", "D"),  # A was on the old path
        ("link-deleted", "D", "link", "FS lag 0", None, True, "ST", "D"),  # ST is on both
        ("link-changed", "END", "lag", 0, -2, True, "C", "END"),
        ("actual-revised", "N", "actual_finish", date(2026, 1, 9), date(2026, 1, 8), False, None, None),
        ("progress-backwards", "P", "remaining", 2, 4, False, None, None),
        ("progress-backwards", "Q", "percent_complete", 60, 40, False, None, None),
        ("reopened", "R", "actual_finish", date(2026, 1, 6), None, False, None, None),
        ("out-of-sequence", "S", "actual_start", None, date(2026, 1, 26), False, "T", "S"),
        ("longest-path-joined", "X", "longest_path", False, True, True, None, None),
        ("longest-path-left", "A", "longest_path", True, False, True, None, None),
        ("longest-path-left", "B", "longest_path", True, False, True, None, None),
        ("longest-path-left", "C", "longest_path", True, False, True, None, None),
        ("completion-moved", "END", "finish", date(2026, 2, 6), date(2026, 2, 19), True, None, None),
        ("completion-float", "END", "total_float", 0, -4, True, None, None),
    ]
    assert [key(c) for c in r.changes] == expected
    assert {c.kind for c in r.changes} == set(CHANGE_KINDS)
    assert (r.completion_change_days, r.completion_change_workdays) == (13, 9)
    assert r.old_longest_path == ("ST", "A", "B", "C", "END")
    assert r.new_longest_path == ("ST", "X", "END")
    assert r.joined == ("X",) and r.left == ("A", "B", "C")


def test_a_snapshot_compared_with_itself_has_no_changes():
    """Comparing a snapshot with itself lists nothing (common practice: no false positives)."""
    assert compare_snapshots(_pair(), "U2", "U2").changes == ()


def test_link_type_change_and_revised_actual_start_and_constraint_date():
    """A link's type, an actual start and a constraint date each show as their own field."""
    started = dict(actual_start=date(2026, 1, 12), remaining=3)
    old = [act("A", 5, **started), act("B", 5, constraint="start-from", constraint_date=date(2026, 2, 2)),
           Activity("END", "end", 0, kind="closing-milestone")]
    new = [act("A", 5, actual_start=date(2026, 1, 13), remaining=3),
           act("B", 5, constraint="start-from", constraint_date=date(2026, 2, 9)),
           Activity("END", "end", 0, kind="closing-milestone")]
    cf = casefile(old, [Link("A", "B"), Link("B", "END")], new, [Link("A", "B", "SS"), Link("B", "END")])
    r = compare_snapshots(cf, "U1", "U2")
    got = {(c.kind, c.activity, c.field, c.before, c.after) for c in r.changes}
    assert ("link-changed", "B", "type", "FS", "SS") in got
    assert ("actual-revised", "A", "actual_start", date(2026, 1, 12), date(2026, 1, 13)) in got
    assert ("constraint", "B", "constraint_date", date(2026, 2, 2), date(2026, 2, 9)) in got


def test_remaining_up_with_more_scope_is_not_progress_backwards():
    """Remaining 4 -> 8 with duration 10 -> 14 is a scope change, not a step back (common practice)."""
    started = dict(actual_start=date(2026, 1, 12))
    end = Activity("END", "end", 0, kind="closing-milestone")
    cf = casefile([act("A", 10, remaining=4, **started), end], [Link("A", "END")],
                  [act("A", 14, remaining=8, **started), end], [Link("A", "END")])
    kinds = [(c.kind, c.field) for c in compare_snapshots(cf, "U1", "U2").changes]
    assert ("progress-backwards", "remaining") not in kinds
    assert ("duration", "duration") in kinds and ("remaining", "remaining") in kinds


def test_compare_table_and_json_keys():
    """The table has one row per change; the JSON keys are the documented contract."""
    r = compare_snapshots(_pair(), "U1", "U2")
    assert len(compare_table(r).rows) == len(r.changes)
    doc = compare_json(r)
    assert set(doc) == {
        "old", "new", "completion_activity", "completion_change_days", "completion_change_workdays",
        "completion_float_change", "longest_path_joined", "longest_path_left", "counts", "changes",
    }
    assert doc["completion_float_change"] == -4
    assert doc["counts"]["longest-path-left"] == 3
    assert set(doc["changes"][0]) == {
        "kind", "activity", "pred", "succ", "field", "before", "after", "longest_path", "note",
    }


def test_compare_command_prints_groups_and_json(monkeypatch):
    """`forensic compare` groups changes by kind in text and prints the documented JSON."""
    import json

    from click.testing import CliRunner

    from forensic.cli import compare as cli_compare
    from forensic.cli import main

    cf = _pair()
    monkeypatch.setattr(cli_compare, "load_lazily", lambda path: cf)  # no casefile folder needed
    monkeypatch.setattr("forensic.cli._common.load", lambda path, **_kw: cf)  # the whole read, after an error
    runner = CliRunner()
    text = runner.invoke(main, ["compare", "case", "U1", "U2"])
    assert text.exit_code == 0, text.output
    assert "Links changed (1):" in text.output and "Finished activities reopened (1):" in text.output
    assert "+13 calendar days, +9 working days" in text.output
    out = runner.invoke(main, ["compare", "case", "U1", "U2", "--json"])
    assert json.loads(out.output)["longest_path_left"] == ["A", "B", "C"]
    csv_out = runner.invoke(main, ["compare", "case", "U1", "U2", "--csv"])
    assert csv_out.output.splitlines()[0] == "kind,activity,pred,succ,field,before,after,longest_path,note"
    missing = runner.invoke(main, ["compare", "case", "U1", "U9"])
    assert missing.exit_code == 1 and "no snapshot 'U9'" in missing.output


# -- the demo casefile's story (casefiles/riverside/README.md and story.toml) --

DEMO = Path(__file__).resolve().parents[1] / "casefiles" / "riverside"


@pytest.fixture(scope="module")
def demo():
    """The demo casefile and the facts its story pins (story.toml, written by its generator)."""
    story = tomllib.loads((DEMO / "story.toml").read_text(encoding="utf-8"))
    return load_casefile(DEMO), story


def _from_previous(cf, update):
    ids = [s.id for s in cf.snapshots]
    return compare_snapshots(cf, ids[ids.index(update) - 1], update)


def test_demo_revised_actual_finish_is_found(demo):
    """The demo's corrected actual finish (story: actual_correction) shows as actual-revised."""
    cf, story = demo
    fact = story["actual_correction"]
    r = _from_previous(cf, fact["corrected_in"])
    hits = [c for c in r.of_kind("actual-revised") if c.activity == fact["activity"]]
    assert [c.field for c in hits] == ["actual_finish"]
    reported = cf.snapshot(fact["reported_in"]).activities[fact["activity"]].actual_finish
    assert hits[0].before == reported and hits[0].after != reported


def test_demo_logic_revision_is_found(demo):
    """The demo's logic revision (story: logic_revision) shows as exactly one link deleted and one added."""
    cf, story = demo
    fact = story["logic_revision"]
    r = _from_previous(cf, fact["update"])
    deleted = [(c.pred, c.succ, c.before.split()[0]) for c in r.of_kind("link-deleted")]
    added = [(c.pred, c.succ, c.after.split()[0]) for c in r.of_kind("link-added")]
    assert [tuple(x) for x in fact["removed"]] == [x for x in deleted if x[1] == fact["removed"][0][1]]
    assert [tuple(x) for x in fact["added"]] == [x for x in added if x[1] == fact["added"][0][1]]


def test_demo_out_of_sequence_progress_is_found(demo):
    """The demo's out-of-sequence start (story: out_of_sequence) shows in the update that reports it."""
    cf, story = demo
    fact = story["out_of_sequence"]
    r = _from_previous(cf, fact["update"])
    hits = [(c.pred, c.activity, c.field) for c in r.of_kind("out-of-sequence")]
    assert (fact["unfinished_predecessor"], fact["activity"], "actual_start") in hits


def test_compare_text_joins_only_linked_activities_with_an_arrow():
    # The issue-14 rule: each longest-path chain is printed on its own line, so
    # "X -> Y" appears only where X -> Y is a link of that snapshot.
    from click.testing import CliRunner

    from forensic.cli import main

    root = Path(__file__).resolve().parents[1] / "casefiles" / "riverside"
    cf = load_casefile(root)
    old_id, new_id = cf.snapshots[0].id, cf.snapshots[-1].id
    out = CliRunner().invoke(main, ["compare", str(root), old_id, new_id])
    assert out.exit_code == 0, out.output
    lines = [ln for ln in out.output.splitlines() if ln.startswith("Longest path")]
    assert len(lines) >= 2
    for ln in lines:
        sid = ln.split()[2].rstrip(":,")
        linked = {(k.pred, k.succ) for k in cf.snapshot(sid).links}
        chain = ln.split(": ", 1)[1].split(" -> ")
        assert all(pair in linked for pair in zip(chain, chain[1:], strict=False)), ln
