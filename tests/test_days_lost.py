"""events.csv ``days_lost``: read, validated and written back (casefile format 2, events.csv)."""

from pathlib import Path

import pytest

from forensic.casefile.reading import load_casefile
from forensic.casefile.writing import events_csv, write_casefile

from .casefile_helpers import edit, find_problem, refused
from .casefile_helpers import write_casefile as write_case

HEAD = "id,title,party,category,start,finish,activities,fragnet,reference"
HEAD_LOST = "id,title,party,category,start,finish,activities,fragnet,days_lost,reference"
EV01 = "EV01,Late site access,OWN,,2026-01-05,2026-01-09,A110,,Letter 014"
EV02 = "EV02,Flooded pit after storm,WX,excusable-noncompensable,2026-01-20,2026-01-21,A120 F10,EV02,Site diary 20 Jan"


@pytest.fixture
def root(tmp_path: Path) -> Path:
    return write_case(tmp_path)


def with_days_lost(root: Path, ev01: str, ev02: str = "") -> None:
    """Add the days_lost column (blank unless given) to both events of the helper casefile."""
    edit(root, "events.csv", HEAD, HEAD_LOST)
    edit(root, "events.csv", EV01, EV01.replace(",Letter 014", f",{ev01},Letter 014"))
    edit(root, "events.csv", EV02, EV02.replace(",Site diary", f",{ev02},Site diary"))


def test_one_number_applies_to_every_activity_hit(root):
    """``days_lost = 3`` on an event that hit A120 and F10 is 3 days on each (casefile format 2)."""
    with_days_lost(root, "", "3")
    cf = load_casefile(root)
    assert cf.event("EV02").days_lost == (("A120", 3), ("F10", 3))
    assert cf.event("EV01").days_lost == ()  # blank: not stated


def test_pairs_give_each_activity_its_days_and_unnamed_hits_lose_none(root):
    """``F10:2`` names one of the two hits; A120, not named, lost 0 (the stated figure is the whole of it)."""
    with_days_lost(root, "A110:4", "F10:2")
    cf = load_casefile(root)
    assert cf.event("EV01").days_lost == (("A110", 4),)
    assert cf.event("EV02").days_lost == (("A120", 0), ("F10", 2))


@pytest.mark.parametrize(("value", "shown", "says"), [
    ("2.5", "2.5", "whole number"),
    ("-1", "-1", "at least 0"),
    ("A999:2", "A999:2", "not among the activities the event hit"),
    ("A110:2 A110:3", "A110:3", "given twice"),
    ("A110:x", "x", "whole number"),
    ("A110", "A110", "or ACT:days pairs"),
    ("A110:2 3", "3", "expected one number, or ACT:days"),
])
def test_bad_days_lost_is_refused_naming_file_line_column_and_value(root, value, shown, says):
    """Validated like every other column: the file, line 2, ``days_lost`` and the value (casefile format 2)."""
    with_days_lost(root, value)
    find_problem(refused(root), "events.csv", line=2, key="days_lost", value=shown, says=says)


def test_a_number_with_no_activity_hit_is_refused(root):
    """A number of days lost must have activities to apply to."""
    with_days_lost(root, "2")
    edit(root, "events.csv", "2026-01-09,A110,", "2026-01-09,,")
    find_problem(refused(root), "events.csv", line=2, key="days_lost", value="2", says="needs the activities")


def test_writer_adds_the_column_only_when_some_event_states_it(root, tmp_path):
    """Written back, the column appears only when used; one figure for all hits is written as one number."""
    cf = load_casefile(root)
    assert events_csv(cf.events).splitlines()[0] == HEAD  # demo and older casefiles keep their bytes
    with_days_lost(root, "A110:4", "3")
    cf = load_casefile(root)
    text = events_csv(cf.events)
    assert text.splitlines()[0] == HEAD_LOST
    assert ",A110,,4,Letter 014" in text and ",A120 F10,EV02,3,Site diary" in text
    out = tmp_path / "copy"
    write_casefile(cf, out)
    again = load_casefile(out)
    assert [e.days_lost for e in again.events] == [e.days_lost for e in cf.events]
