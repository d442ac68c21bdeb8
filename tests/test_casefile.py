"""Tests of the casefile loader: a valid load, and one refusal per kind of input problem.

The expected values come from the casefile format, version 1
(/work/shared/casefile-format.md, "the format" below) and from the invented
casefile in tests/casefile_helpers.py; SHA-256 digests are checked against
Python's hashlib (reference library).
"""

from __future__ import annotations

import hashlib
import os
from datetime import date

import pytest

from forensic.analysis.impact import insert_fragnet
from forensic.casefile.reading import Limits, load_casefile
from forensic.core.errors import CasefileError, FragnetError, LimitExceeded
from tests.casefile_helpers import FILES, edit, find_problem, refused, write_casefile

BL_ACT = "snapshots/BL/activities.csv"
U01_ACT = "snapshots/U01/activities.csv"
BL_LINKS = "snapshots/BL/links.csv"
U01_LINKS = "snapshots/U01/links.csv"
TOML = "casefile.toml"
FRAG_ACT = "fragnets/EV02/activities.csv"
FRAG_LINKS = "fragnets/EV02/links.csv"


@pytest.fixture
def root(tmp_path):
    return write_casefile(tmp_path)


# -- a valid casefile -----------------------------------------------------------


def test_valid_casefile_lands_every_field_in_the_model(root):
    """Every manifest key and CSV column of the helper casefile reaches the model."""
    cf = load_casefile(root)
    # Expected values: the helper casefile's text, read by hand.
    p = cf.project
    assert (p.name, p.default_calendar, p.completion) == ("Riverside pump station", "5d", "M900")
    assert p.contract_completion == date(2026, 6, 30)
    assert (p.delay_unit, p.progress_logic, p.critical_float) == ("working-days", "override", 1)
    assert [(x.id, x.name, x.role) for x in cf.parties.values()] == [
        ("OWN", "Water board", "owner"), ("CON", "Civils contractor", "contractor"), ("WX", "Weather", "neutral")]
    cal = cf.calendars["5d"]
    assert cal.workdays == ("mon", "tue", "wed", "thu", "fri")
    assert cal.holidays == (date(2026, 4, 3),) and cal.extra_workdays == (date(2026, 4, 4),)
    assert len(cf.calendars["7d"].workdays) == 7
    assert [s.id for s in cf.snapshots] == ["BL", "U01"]
    assert cf.baseline.id == "BL" and cf.baseline.role == "baseline" and cf.updates[0].role == "update"
    assert cf.snapshot("U01").data_date == date(2026, 2, 2)
    assert dict(cf.snapshot("BL").sources) == {"activities": BL_ACT, "links": BL_LINKS}
    assert cf.windows == ("U01",)
    assert cf.root == root

    a110 = cf.snapshot("BL").activities["A110"]
    assert (a110.name, a110.kind, a110.duration, a110.remaining) == ("Excavate wet well", "task", 10, 10)
    assert (a110.party, a110.area, a110.percent_complete) == ("CON", "CIV", 0.0)
    assert (a110.crash_days, a110.crash_cost, a110.calendar, a110.line) == (2, 1500.0, None, 3)
    a120 = cf.snapshot("BL").activities["A120"]
    assert a120.kind == "task"  # blank kind = task (the format)
    assert (a120.calendar, a120.constraint, a120.constraint_date) == ("7d", "start-from", date(2026, 1, 26))

    u = cf.snapshot("U01").activities
    assert (u["A110"].actual_start, u["A110"].actual_finish) == (date(2026, 1, 6), date(2026, 1, 19))
    assert u["A110"].remaining == 0  # blank remaining on a finished activity = 0 (the format)
    assert (u["A120"].remaining, u["A120"].percent_complete) == (2, 60.0)
    # An actual date on a milestone marks it achieved; it carries both dates.
    assert u["M100"].actual_start == u["M100"].actual_finish == date(2026, 1, 5)
    assert u["M900"].remaining == 0

    links = cf.snapshot("BL").links
    assert [(x.pred, x.succ, x.type, x.lag, x.line) for x in links] == [
        ("M100", "A110", "FS", 0, 2), ("A110", "A120", "SS", 3, 3), ("A120", "M900", "FS", 0, 4)]

    ev1, ev2 = cf.events
    assert ev1.category == "excusable-compensable"  # from the owner's role (the format)
    assert (ev1.start, ev1.finish, ev1.activities, ev1.reference, ev1.line) == (
        date(2026, 1, 5), date(2026, 1, 9), ("A110",), "Letter 014", 2)
    assert (ev2.party, ev2.category, ev2.fragnet, ev2.activities) == (
        "WX", "excusable-noncompensable", "EV02", ("A120", "F10"))

    frag = cf.fragnets["EV02"]
    assert list(frag.activities) == ["F10"] and frag.activities["F10"].duration == 2
    assert [(x.pred, x.succ) for x in frag.links] == [("A110", "F10"), ("F10", "A120")]

    assert set(cf.inputs) == set(FILES)
    for rel, digest in cf.inputs.items():
        assert digest == hashlib.sha256((root / rel).read_bytes()).hexdigest()  # hashlib
    # M100 -> A110 in U01 joins two finished activities: history, no warning.
    assert cf.warnings == ()


def test_link_from_unfinished_into_finished_work_is_a_warning(tmp_path):
    """A finished successor of unfinished work is out of sequence: the link has no effect (a warning)."""
    root = write_casefile(tmp_path)
    edit(root, U01_ACT, "Notice to proceed,opening-milestone,0,,,2026-01-05,", "Notice to proceed,opening-milestone,0,,,,")
    cf = load_casefile(root)
    assert cf.warnings == (
        f"{U01_LINKS}, line 2: link M100 -> A110 has no effect, because A110 is finished and M100 is not",
    )


def test_manifest_path_is_accepted_in_place_of_the_folder(root):
    """load_casefile takes the folder or its casefile.toml."""
    assert load_casefile(root / TOML).project.name == "Riverside pump station"


def test_byte_order_mark_is_accepted(root):
    """A UTF-8 byte-order mark before the header is not part of the first column name (the format)."""
    path = root / BL_ACT
    path.write_bytes(b"\xef\xbb\xbf" + path.read_bytes())
    assert "M100" in load_casefile(root).snapshot("BL").activities


def test_files_are_not_modified_by_loading(root):
    """Loading leaves every input byte for byte as it was (rules: never modify inputs)."""
    before = {rel: (root / rel).read_bytes() for rel in FILES}
    load_casefile(root)
    assert {rel: (root / rel).read_bytes() for rel in FILES} == before


def test_in_progress_activity_without_remaining_is_refused(root):
    """Remaining may be blank only when not started or finished (the format); else nothing is guessed."""
    edit(root, U01_ACT, "A120,Pour base slab,,5,2,", "A120,Pour base slab,,5,,")
    find_problem(refused(root), U01_ACT, line=4, key="remaining", value="", says="in progress")


def test_in_progress_with_nothing_remaining_is_a_warning(root):
    """Remaining 0 without an actual finish loads, with a warning (common practice: a likely missing finish)."""
    edit(root, U01_ACT, "A120,Pour base slab,,5,2,", "A120,Pour base slab,,5,0,")
    cf = load_casefile(root)
    assert cf.snapshot("U01").activities["A120"].remaining == 0
    assert f"{U01_ACT}, line 4: activity A120 is in progress with remaining 0 and no actual_finish" in cf.warnings


# -- manifest problems -----------------------------------------------------------

MANIFEST_CASES = [
    # (old text, new text, key, value, part of the message); the format, casefile.toml.
    ('format = "forensic-casefile/2"\n', "", "format", None, "missing"),
    ('"forensic-casefile/2"', '"forensic-casefile/9"', "format", "forensic-casefile/9", "unknown casefile format"),
    ('name = "Riverside pump station"\n', "", "project.name", None, "required"),
    ("critical_float = 1", 'critical_float = "1"', "project.critical_float", "1", "whole number"),
    ("critical_float = 1", "critical_float = true", "project.critical_float", "True", "whole number"),
    ('delay_unit = "working-days"', 'delay_unit = "weeks"', "project.delay_unit", "weeks", "expected one of"),
    ('progress_logic = "override"', 'progress_logic = "kept"', "project.progress_logic", "kept", "expected one of"),
    ("contract_completion = 2026-06-30", "contract_completion = 2026-06-30T12:00:00",
     "project.contract_completion", "2026-06-30 12:00:00", "no time of day"),
    ('default_calendar = "5d"', 'default_calendar = "6d"', "project.default_calendar", "6d", "unknown calendar"),
    ('completion = "M900"', 'completion = "M999"', "project.completion", "M999", "no activity"),
    ("critical_float = 1", "critical_float = 1\ncolour = 3", "project.colour", "colour", "unknown key"),
    ('activities = "snapshots/BL/activities.csv"', 'activities = "/etc/passwd"',
     "snapshot BL.activities", "/etc/passwd", "absolute"),
    ('activities = "snapshots/BL/activities.csv"', 'activities = "../outside.csv"',
     "snapshot BL.activities", "../outside.csv", "climbs out"),
    ('activities = "snapshots/BL/activities.csv"', 'activities = "snapshots\\\\BL\\\\activities.csv"',
     "snapshot BL.activities", "snapshots\\BL\\activities.csv", "forward slashes"),
    ('links = "snapshots/U01/links.csv"\n', "", "snapshot U01.links", None, "required"),
    ("data_date = 2026-02-02", "data_date = 2026-01-05", "snapshot U01.data_date", "2026-01-05", "strictly increase"),
    ("data_date = 2026-02-02", "data_date = 2026-02-30", None, None, "not valid TOML"),
    ("data_date = 2026-02-02", 'data_date = "2026-02-30"', "snapshot U01.data_date", "2026-02-30", "expected a date"),
    ("data_date = 2026-02-02", "data_date = 2306-02-02", "snapshot U01.data_date", "2306-02-02", "1900-2200"),
    ('id = "U01"\n', 'id = "U01"\nrole = "baseline"\n', "snapshot.role", "BL, U01", "exactly one"),
    ('role = "baseline"\n', "", "snapshot.role", "none", "exactly one"),
    ('role = "baseline"\n', 'role = "first"\n', "snapshot BL.role", "first", "expected one of"),
    ('windows = ["U01"]', 'windows = ["U07"]', "windows", "U07", "no snapshot"),
    ('windows = ["U01"]', 'windows = ["U01", "BL"]', "windows", "BL", "in snapshot order"),
    ('role = "owner"', 'role = "client"', "party #1.role", "client", "expected one of"),
    ('id = "CON"', 'id = "OWN"', "party #2.id", "OWN", "duplicate party"),
    ('id = "7d"', 'id = "5d"', "calendar 5d.id", "5d", "duplicate calendar"),
    ('workdays = ["mon", "tue", "wed", "thu", "fri"]', 'workdays = ["mon", "tues"]',
     "calendar 5d.workdays", "tues", "unknown day name"),
    ('workdays = ["mon", "tue", "wed", "thu", "fri"]', 'workdays = ["mon", "mon"]',
     "calendar 5d.workdays", "mon", "twice"),
    ('workdays = ["mon", "tue", "wed", "thu", "fri"]', "workdays = []",
     "calendar 5d.workdays", "[]", "at least one working day"),
    ("holidays = [2026-04-03]", "holidays = [2026-04-03, 2026-04-03]",
     "calendar 5d.holidays", "2026-04-03", "twice"),
    ("extra_workdays = [2026-04-04]", "extra_workdays = [2026-04-03]",
     "calendar 5d.extra_workdays", "2026-04-03", "also listed as a holiday"),
]


@pytest.mark.parametrize(("old", "new", "key", "value", "says"), MANIFEST_CASES,
                         ids=[f"{c[2]}:{c[4]}" for c in MANIFEST_CASES])
def test_manifest_problem_names_key_and_value(root, old, new, key, value, says):
    """Each manifest mistake is refused naming casefile.toml, the key and the value (the format, Errors)."""
    edit(root, TOML, old, new)
    find_problem(refused(root), TOML, key=key, value=value, says=says)


def test_events_key_placed_after_a_table_gets_a_hint(root):
    """In TOML a key below [[snapshot]] belongs to it; the message says to move it to the top."""
    edit(root, TOML, 'events = "events.csv"\n', "")
    path = root / TOML
    path.write_text(path.read_text() + 'events = "events.csv"\n')
    find_problem(refused(root), TOML, key="snapshot U01.events", value="events", says="top-level key")


def test_manifest_that_is_not_toml_is_refused(root):
    """A TOML syntax error is reported with tomllib's position (reference library: tomllib)."""
    (root / TOML).write_text('format = "forensic-casefile/2\n')
    find_problem(refused(root), TOML, says="not valid TOML")


def test_missing_manifest_and_missing_folder(tmp_path):
    """No casefile.toml, or no folder at all, is refused with the path."""
    find_problem(refused(tmp_path), TOML, says="file not found")
    gone = tmp_path / "nowhere"
    find_problem(refused(gone), str(gone), says="folder not found")


def test_path_escaping_through_a_symlink_is_refused(root, tmp_path):
    """A manifest path inside the folder that is a symbolic link to outside it is refused."""
    outside = tmp_path / "outside.csv"
    outside.write_text(FILES[BL_ACT])
    link = root / "snapshots" / "BL" / "activities.csv"
    link.unlink()
    os.symlink(outside, link)
    find_problem(refused(root), TOML, key="snapshot BL.activities", value=BL_ACT, says="symbolic link")


def test_missing_file_is_refused(root):
    """A file the manifest names must exist."""
    (root / U01_LINKS).unlink()
    find_problem(refused(root), U01_LINKS, says="file not found")


# -- file encodings and table shape ------------------------------------------------------------


@pytest.mark.parametrize(("data", "line", "value", "says"), [
    ("id,name\n".encode("utf-16-le"), 1, "byte 1", "NUL byte"),  # no BOM: NULs (Python codecs)
    ("id,name\n".encode("utf-16"), 1, "0xfffe at byte 0", "UTF-16"),  # little-endian BOM (Python codecs)
    (b"id,name,duration\nA1,Dig\x00,3\n", 2, "byte 23", "NUL byte"),
    (b"id,name,duration\nA1,D\xe9blai,3\n", 2, "0xe9 at byte 21", "not UTF-8"),  # Latin-1 e-acute
])
def test_undecodable_files_are_refused_naming_the_file(root, data, line, value, says):
    """UTF-16, NUL bytes and non-UTF-8 bytes are refused with file, line and byte position."""
    (root / BL_ACT).write_bytes(data)
    find_problem(refused(root), BL_ACT, line=line, value=value, says=says)


TABLE_CASES = [
    # (file, old, new, line, key, value, message part)
    (BL_ACT, None, "", 1, None, None, "missing header"),
    (BL_ACT, "kind,duration,", "kind,", 1, "duration", None, "required column"),
    (BL_ACT, "crash_cost\n", "crash_cost,colour\n", 1, "colour", "colour", "unknown column"),
    (BL_ACT, "area,", "area,area,", 1, "area", "area", "twice"),
    (BL_ACT, "party,area,", "party,,", 1, "column 12", "", "no name"),
    (BL_ACT, "CON,CIV,0,2,1500\n", "CON,CIV,0,2,1500,extra\n", 3, None, "16", "cells"),
    (BL_LINKS, "A110,A120,SS,3\n", "A110,A120,SS\n", 3, None, "3", "cells"),
    (BL_LINKS, None, 'pred,succ\n"M100,A110\n', 2, None, None, "not valid CSV"),
]


@pytest.mark.parametrize(("rel", "old", "new", "line", "key", "value", "says"), TABLE_CASES,
                         ids=[c[6] for c in TABLE_CASES])
def test_table_shape_problems(root, rel, old, new, line, key, value, says):
    """Header and row shape problems name the file, line, column and value."""
    if old is None:
        (root / rel).write_text(new)
    else:
        edit(root, rel, old, new)
    find_problem(refused(root), rel, line=line, key=key, value=value, says=says)


# -- activity rows ---------------------------------------------------------------------

A110 = "A110,Excavate wet well,task,10,,,,,,,CON,CIV,0,2,1500"
U_A110 = "A110,Excavate wet well,task,10,,2026-01-06,2026-01-19,,,,CON,CIV,100,2,1500"
ACTIVITY_CASES = [
    # (file, new row replacing A110, key, value, message part); the format, activities.csv.
    (BL_ACT, "M100,Dup,task,1,,,,,,,,,,,", "id", "M100", "duplicate activity id"),
    (BL_ACT, "A 110,Gap,task,1,,,,,,,,,,,", "id", "A 110", "blanks"),
    (BL_ACT, "A110,,task,10,,,,,,,,,,,", "name", "", "required"),
    (BL_ACT, "A110,X,job,10,,,,,,,,,,,", "kind", "job", "expected one of"),
    (BL_ACT, "A110,X,task,-1,,,,,,,,,,,", "duration", "-1", "at least 0"),
    (BL_ACT, "A110,X,task,2.5,,,,,,,,,,,", "duration", "2.5", "whole number"),
    (BL_ACT, "A110,X,task,ten,,,,,,,,,,,", "duration", "ten", "whole number"),
    (BL_ACT, "A110,X,task,nan,,,,,,,,,,,", "duration", "nan", "whole number"),
    (BL_ACT, "A110,X,task,1e3,,,,,,,,,,,", "duration", "1e3", "whole number"),
    (BL_ACT, "A110,X,task,99999999,,,,,,,,,,,", "duration", "99999999", "at most 36500"),
    (BL_ACT, "A110,X,task,,,,,,,,,,,,", "duration", "", "required"),
    (BL_ACT, "A110,X,task,10,40000,,,,,,,,,,", "remaining", "40000", "at most 36500"),
    (BL_ACT, "A110,X,task,10,-3,,,,,,,,,,", "remaining", "-3", "at least 0"),
    (BL_ACT, "A110,X,task,10,,,,9d,,,,,,,", "calendar", "9d", "unknown calendar"),
    (BL_ACT, "A110,X,task,10,,,,,,,ACME,,,,", "party", "ACME", "unknown party"),
    (BL_ACT, "A110,X,task,10,,,,,as-late-as-possible,2026-02-02,,,,,", "constraint",
     "as-late-as-possible", "expected one of"),
    (BL_ACT, "A110,X,task,10,,,,,start-fixed,,,,,,", "constraint_date", "", "needs a constraint_date"),
    (BL_ACT, "A110,X,task,10,,,,,,2026-02-02,,,,,", "constraint_date", "2026-02-02", "without a constraint"),
    (BL_ACT, "A110,X,task,10,,,,,start-fixed,2026-02-30,,,,,", "constraint_date", "2026-02-30", "no such date"),
    (BL_ACT, "A110,X,task,10,,,,,start-fixed,02/03/2026,,,,,", "constraint_date", "02/03/2026", "ISO date"),
    (BL_ACT, "A110,X,task,10,,,,,start-fixed,1899-12-31,,,,,", "constraint_date", "1899-12-31", "1900-2200"),
    (BL_ACT, "A110,X,task,10,,,,,start-fixed,2201-01-01,,,,,", "constraint_date", "2201-01-01", "1900-2200"),
    (BL_ACT, "A110,X,task,10,,,,,,,,,120,,", "percent_complete", "120", "between 0 and 100"),
    (BL_ACT, "A110,X,task,10,,,,,,,,,-5,,", "percent_complete", "-5", "between 0 and 100"),
    (BL_ACT, "A110,X,task,10,,,,,,,,,NaN,,", "percent_complete", "NaN", "decimal number"),
    (BL_ACT, "A110,X,task,10,,,,,,,,,,-2,", "crash_days", "-2", "at least 0"),
    (BL_ACT, "A110,X,task,10,,,,,,,,,,11,", "crash_days", "11", "more than the duration"),
    (BL_ACT, "A110,X,task,10,,,,,,,,,,,-100", "crash_cost", "-100", "at least 0"),
    (BL_ACT, "A110,X,closing-milestone,3,,,,,,,,,,,", "duration", "3", "milestone has duration 0"),
    (BL_ACT, "A110,X,closing-milestone,0,2,,,,,,,,,,", "remaining", "2", "milestone has remaining 0"),
]
PROGRESS_CASES = [
    # In U01 (data date 2026-02-02); the format, Progress and Time and dates.
    (U01_ACT, "A110,X,task,10,,2026-01-19,2026-01-06,,,,,,,,", "actual_finish", "2026-01-06", "before actual_start"),
    (U01_ACT, "A110,X,task,10,,,2026-01-19,,,,,,,,", "actual_finish", "2026-01-19", "needs an actual_start"),
    (U01_ACT, "A110,X,task,10,,2026-01-06,2026-02-02,,,,,,,,", "actual_finish", "2026-02-02",
     "before the data date"),
    (U01_ACT, "A110,X,task,10,4,2026-02-03,,,,,,,,,", "actual_start", "2026-02-03", "before the data date"),
    (U01_ACT, "A110,X,task,10,3,2026-01-06,2026-01-19,,,,,,,,", "remaining", "3", "finished activity"),
    (U01_ACT, "A110,X,opening-milestone,0,,2026-01-06,2026-01-07,,,,,,,,", "actual_finish", "2026-01-07",
     "one date"),
]


@pytest.mark.parametrize(("rel", "row", "key", "value", "says"), ACTIVITY_CASES + PROGRESS_CASES,
                         ids=[f"{c[2]}:{c[3]}" for c in ACTIVITY_CASES + PROGRESS_CASES])
def test_activity_problem_names_file_line_column_and_value(root, rel, row, key, value, says):
    """Each bad activity cell is refused naming the file, line 3, the column and the value."""
    edit(root, rel, (A110 if rel == BL_ACT else U_A110) + "\n", row + "\n")
    find_problem(refused(root), rel, line=3, key=key, value=value, says=says)


# -- link rows -----------------------------------------------------------------------

LINK_CASES = [
    # (new row replacing line 3, key, value, message part); the format, links.csv.
    ("A110,A999,SS,3", "succ", "A999", "no activity"),
    ("A110,A110,SS,3", "succ", "A110", "itself"),
    ("M100,A110,FS,0", "succ", "M100 -> A110 FS", "duplicate link; first on line 2"),
    ("A110,A120,XX,3", "type", "XX", "expected one of"),
    ("A110,A120,fs,3", "type", "fs", "expected one of"),
    ("A110,A120,SS,1.5", "lag", "1.5", "whole number"),
    ("A110,A120,SS,99999999", "lag", "99999999", "at most"),
    ("A110,,SS,3", "succ", "", "required"),
]


@pytest.mark.parametrize(("row", "key", "value", "says"), LINK_CASES, ids=[c[3] for c in LINK_CASES])
def test_link_problem_names_file_line_column_and_value(root, row, key, value, says):
    """Each bad link is refused naming links.csv, line 3, the column and the value."""
    edit(root, BL_LINKS, "A110,A120,SS,3\n", row + "\n")
    find_problem(refused(root), BL_LINKS, line=3, key=key, value=value, says=says)


def test_negative_lag_is_a_lead_and_accepted(root):
    """A negative lag is a lead (the format, links.csv)."""
    edit(root, BL_LINKS, "A110,A120,SS,3\n", "A110,A120,SS,-2\n")
    assert load_casefile(root).snapshot("BL").links[1].lag == -2


def test_logic_loop_names_activities_and_link_lines(root):
    """A loop is refused naming links.csv, its activities and every link line (Kelley and Walker 1959: no CPM on a cycle)."""
    path = root / U01_LINKS
    path.write_text(path.read_text() + "M900,A110,FS,0\n")
    p = find_problem(refused(root), U01_LINKS, line=3, value="A110 -> A120 -> M900 -> A110", says="logic loop")
    assert "lines 3, 4, 5" in p.message


def test_two_separate_loops_are_both_reported(root):
    """Each strongly connected component is one loop report (Tarjan 1972, via networkx)."""
    (root / BL_LINKS).write_text("pred,succ\nM100,A110\nA110,M100\nA120,M900\nM900,A120\n")
    err = refused(root)
    find_problem(err, BL_LINKS, line=2, value="M100 -> A110 -> M100", says="logic loop")
    find_problem(err, BL_LINKS, line=4, value="A120 -> M900 -> A120", says="logic loop")


# -- events and fragnets -----------------------------------------------------------------

EV01 = "EV01,Late site access,OWN,,2026-01-05,2026-01-09,A110,,Letter 014"
EVENT_CASES = [
    # (new row replacing EV01, key, value, message part); the format, events.csv.
    ("EV01,Late site access,ACME,,2026-01-05,2026-01-09,A110,,", "party", "ACME", "unknown party"),
    ("EV01,Late site access,OWN,,2026-01-09,2026-01-05,A110,,", "finish", "2026-01-05", "before it starts"),
    ("EV01,Late site access,OWN,excusable,2026-01-05,2026-01-09,A110,,", "category", "excusable",
     "expected one of"),
    ("EV01,Late site access,OWN,,2026-01-05,2026-01-09,A110,EV09,", "fragnet", "EV09", "no such fragnet"),
    ("EV01,Late site access,OWN,,2026-01-05,2026-01-09,A111,,", "activities", "A111", "any snapshot"),
    ("EV01,Late site access,OWN,,2026-01-05,2026-01-09,F10,,", "activities", "F10", "event's fragnet"),
    ("EV01,Late site access,OWN,,2026-13-05,2026-01-09,A110,,", "start", "2026-13-05", "no such date"),
    ("EV02,Late site access,OWN,,2026-01-05,2026-01-09,A110,,", "id", "EV02", "duplicate event id"),
    (",Late site access,OWN,,2026-01-05,2026-01-09,A110,,", "id", "", "required"),
]


@pytest.mark.parametrize(("row", "key", "value", "says"), EVENT_CASES, ids=[c[3] for c in EVENT_CASES])
def test_event_problem_names_file_line_column_and_value(root, row, key, value, says):
    """Each bad event is refused naming events.csv, its line, the column and the value."""
    edit(root, "events.csv", EV01 + "\n", row + "\n")
    line = 3 if key == "id" and value == "EV02" else 2
    find_problem(refused(root), "events.csv", line=line, key=key, value=value, says=says)


def test_fragnet_activity_sharing_an_id_with_a_later_update_loads(root):
    """A fragnet may reuse the id its work takes once an update incorporates it (casefiles/README.md)."""
    # U01 has taken the pump-out (F10) into its programme; the fragnet keeps the same id.
    edit(root, U01_ACT, "M900,Station complete", "F10,Pump out flooded pit,task,2,,,,,,,CON,,,,\nM900,Station complete")
    cf = load_casefile(root)
    assert "F10" in cf.fragnets["EV02"].activities and "F10" in cf.snapshot("U01").activities


def test_fragnet_sharing_an_id_is_refused_only_when_inserted_into_that_snapshot(root):
    """The clash is refused at insertion, naming the id (AACE RP 52R-06: a fragnet adds new work)."""
    edit(root, U01_ACT, "M900,Station complete", "F10,Pump out flooded pit,task,2,,,,,,,CON,,,,\nM900,Station complete")
    cf = load_casefile(root)
    frag = cf.fragnets["EV02"]
    into_bl, _ = insert_fragnet(cf.snapshot("BL"), frag)
    assert "F10" in into_bl.activities
    with pytest.raises(FragnetError, match="F10"):
        insert_fragnet(cf.snapshot("U01"), frag)


@pytest.mark.parametrize("missing", [FRAG_LINKS, FRAG_ACT])
def test_missing_fragnet_file_is_reported_alone(root, missing):
    """A fragnet folder with a file missing gives one problem, not a knock-on "no such fragnet" in events.csv."""
    (root / missing).unlink()
    err = refused(root)
    # Expected: the one real problem (the casefile format: a fragnet folder holds both files).
    assert [(p.file, p.message) for p in err.problems] == [(missing, "file not found")]
    assert "events.csv" not in str(err)


def test_fragnet_link_to_an_id_found_nowhere_is_refused(root):
    """A fragnet link must tie to the fragnet or to some snapshot's activities (the format, events.csv)."""
    edit(root, FRAG_LINKS, "A110,F10", "A111,F10")
    find_problem(refused(root), FRAG_LINKS, line=2, key="pred", value="A111", says="fragnet or in any snapshot")


def test_loop_inside_a_fragnet_is_refused(root):
    """A fragnet's own links are checked for loops like a snapshot's (Kelley and Walker 1959)."""
    (root / FRAG_ACT).write_text("id,name,duration\nF10,Pump out,2\nF11,Clean,1\n")
    (root / FRAG_LINKS).write_text("pred,succ\nF10,F11\nF11,F10\n")
    find_problem(refused(root), FRAG_LINKS, line=2, value="F10 -> F11 -> F10", says="logic loop")


def test_fragnet_folder_without_links_is_refused(root):
    """A fragnet folder holds activities.csv and links.csv (the format)."""
    (root / FRAG_LINKS).unlink()
    find_problem(refused(root), FRAG_LINKS, says="file not found")


# -- collecting, limits ----------------------------------------------------------------


def test_every_problem_is_reported_at_once(root):
    """Problems in three files come back in one CasefileError (DEVELOPERS.md: refused whole)."""
    edit(root, TOML, 'progress_logic = "override"', 'progress_logic = "kept"')
    edit(root, BL_ACT, A110, A110.replace(",10,", ",-1,"))
    edit(root, BL_LINKS, "A110,A120,SS,3", "A110,A120,SX,3")
    err = refused(root)
    assert {p.file for p in err.problems} == {TOML, BL_ACT, BL_LINKS}
    assert str(err).startswith("3 problems in the casefile:")


@pytest.mark.parametrize(("limits", "rel", "says"), [
    (Limits(max_file_bytes=4000), BL_ACT, "over the limit of 4000 bytes"),
    (Limits(max_activities=3), BL_ACT, "more than 3 rows"),
    (Limits(max_links=2), BL_LINKS, "more than 2 rows"),
])
def test_limits_refuse_oversized_input(root, limits, rel, says):
    """A file or table over its ceiling raises LimitExceeded (a CasefileError) naming the file."""
    path = root / BL_ACT
    path.write_text(path.read_text() + "\n" * 4000)  # blank lines: only the size grows
    with pytest.raises(LimitExceeded) as info:
        load_casefile(root, limits=limits)
    assert any(p.file == rel and says in p.message for p in info.value.problems)


def test_limits_must_be_positive_whole_numbers():
    """Limits rejects a zero or non-integer ceiling at construction."""
    with pytest.raises(ValueError, match="max_links"):
        Limits(max_links=0)
    with pytest.raises(ValueError, match="max_file_bytes"):
        Limits(max_file_bytes=1.5)


def test_casefile_error_is_a_value_error(root):
    """Callers may catch the builtin ValueError (errors.py: nearest builtin)."""
    edit(root, TOML, 'progress_logic = "override"', 'progress_logic = "kept"')
    with pytest.raises(ValueError):
        load_casefile(root)
    assert issubclass(CasefileError, ValueError)


def test_readme_example_casefile_loads(tmp_path):
    """The small example in casefiles/README.md is a valid casefile (the user documentation holds)."""
    import re
    from pathlib import Path

    readme = (Path(__file__).parent.parent / "casefiles" / "README.md").read_text(encoding="utf-8")
    example = readme.split("## A small example", 1)[1]
    blocks = dict(re.findall(r"^`([^`]+)`[^\n]*:\n\n```[a-z]*\n(.*?)```", example, flags=re.S | re.M))
    assert set(blocks) == {TOML, U01_ACT, U01_LINKS, "events.csv"}
    files = dict(blocks)
    # The baseline: the same activities before any progress.
    header, *rows = blocks[U01_ACT].splitlines()
    files[BL_ACT] = "\n".join([header] + [",".join(r.split(",")[:4] + ["", "", ""] + r.split(",")[7:])
                                         for r in rows]) + "\n"
    files[BL_LINKS] = blocks[U01_LINKS]
    for rel, text in files.items():
        (tmp_path / rel).parent.mkdir(parents=True, exist_ok=True)
        (tmp_path / rel).write_text(text, encoding="utf-8")
    cf = load_casefile(tmp_path)
    assert [s.id for s in cf.snapshots] == ["BL", "U01"]
    assert cf.snapshot("U01").activities["A120"].remaining == 2  # as written in the example
    assert cf.events[0].category == "excusable-compensable"  # owner's role (the format)


def test_record_moved_to_another_line_keeps_every_other_field():
    """The loader's fast copy of a reused record equals dataclasses.replace (reference: the standard library)."""
    from dataclasses import replace
    from datetime import date

    from forensic.casefile.records import _moved
    from forensic.core.model import Activity

    a = Activity("A1", "Pour slab", 5, "task", 3, date(2026, 1, 5), None, "5d", "start-from",
                 date(2026, 1, 2), "CON", "Z1", 40.0, 2, 900.0, 17)
    assert _moved(a, 99) == replace(a, line=99)
