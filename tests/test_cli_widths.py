"""Text tables fit the terminal: ``COLUMNS=80`` fits, ``--wide`` and pipes keep the full width."""

from __future__ import annotations

from pathlib import Path

import pytest
from click.testing import CliRunner

from forensic.analysis.attribution.delay import analyse_delay
from forensic.analysis.windows import windows_table
from forensic.casefile.reading import load_casefile
from forensic.cli import main
from forensic.core.tables import Table
from forensic.exchange.writers import to_text

ROOT = Path(__file__).resolve().parent.parent
DEMO = str(ROOT / "casefiles" / "riverside")

COMMANDS = [
    ["schedule", DEMO],
    ["windows", DEMO],
    ["compare", DEMO, "U04", "U05"],
    ["compare", DEMO, "U01", "U02"],
    ["impact", DEMO, "--all"],
    ["impact", DEMO, "--all", "--cumulative"],
    ["but-for", DEMO],
    ["check", DEMO, "--quality", "--snapshot", "U05"],
    ["eot", DEMO],
    ["recover", DEMO, "--snapshot", "U10", "--target", "2027-07-09"],
]


@pytest.mark.parametrize("args", COMMANDS, ids=lambda a: " ".join([a[0], *a[2:]]))
def test_every_line_fits_80_columns(args, monkeypatch):
    wide = CliRunner().invoke(main, args)
    assert wide.exit_code == 0, wide.output
    monkeypatch.setenv("COLUMNS", "80")
    res = CliRunner().invoke(main, args)
    assert res.exit_code == 0, res.output
    assert max(len(line) for line in res.stdout.splitlines()) <= 80
    # Not a terminal and COLUMNS unset (the autouse fixture): the full width, wider than 80.
    assert max(len(line) for line in wide.stdout.splitlines()) > 80
    # --wide gives the full table even with COLUMNS set.
    full = CliRunner().invoke(main, [*args, "--wide"])
    assert full.stdout == wide.stdout


def test_schedule_at_80_keeps_ids_whole_and_names_what_it_left_out(monkeypatch):
    monkeypatch.setenv("COLUMNS", "80")
    out = CliRunner().invoke(main, ["schedule", DEMO]).stdout
    cf = load_casefile(DEMO)
    ids = set(cf.snapshots[-1].activities)
    rows = [line.split()[0] for line in out.splitlines() if line.split() and line.split()[0] in ids]
    assert set(rows) == ids  # every activity's id shown whole (rows of the table)
    assert "columns not shown" in out and "--wide" in out
    assert "total" in out and "float" in out  # the float is among the columns kept


def test_windows_lists_become_counts_and_numbers_align_right(monkeypatch):
    # At 200 columns the windows table still overflows with its id lists, so they become counts;
    # the U04-U05 window joined the path with as many activities as the analysis lists.
    monkeypatch.setenv("COLUMNS", "200")
    out = CliRunner().invoke(main, ["windows", DEMO]).stdout
    an = analyse_delay(load_casefile(DEMO))
    table = windows_table(an.windows)
    n = len(next(r for r in table.records() if r["window"] == "U04-U05")["path_joined"])
    assert n > 1
    row = next(line for line in out.splitlines() if line.startswith("U04-U05"))
    assert f"{n} activities" in row
    assert max(len(line) for line in out.splitlines()) <= 200
    # Right alignment: the slip column's "14" and the U05-U06 row's "-1" end at the same place.
    header = next(line for line in out.splitlines() if line.startswith("window"))
    u56 = next(line for line in out.splitlines() if line.startswith("U05-U06"))
    end = header.index("slip") + len("slip")
    assert row[:end].endswith(" 14") and u56[:end].endswith(" -1")


def test_to_text_fits_a_small_table_step_by_step():
    t = Table("t", ("id", "name", "total_float", "driving_predecessors"),
              (("A", "A long name of the activity", 3, ("X", "Y", "Z")), ("BB", "short", -12, ("X",))))
    # Full width, by hand: id 2, name 27, total_float 11, driving_predecessors 20, joined by two spaces.
    full = to_text(t).splitlines()
    assert full[0] == "id  name                         total_float  driving_predecessors"
    assert full[2] == "A   A long name of the activity            3  X Y Z"
    assert full[3] == "BB  short                                -12  X"
    # Width 45: 2+27+11+20+6 = 66 > 45. Lists become counts ("3 activities", 12; header 20): 66 still.
    # Headers split at an underscore: "total"/"float" 5, "driving"/"predecessors" 12; the name is cut
    # to at least 12, then grows into what is left: 45 - (2 + 5 + 12 + 6) = 20 characters.
    fitted = to_text(t, width=45).splitlines()
    # Each row: id ljust 2, name ljust 20, float rjust 5, the list; two spaces between.
    assert fitted[0] == "id  " + "name".ljust(20) + "  total  driving"
    assert fitted[1] == "    " + "".ljust(20) + "  float  predecessors"
    # The name is cut to 19 characters and "…" (a space before the cut is dropped: "the" then "…").
    assert fitted[3] == "A   " + "A long name of the…".ljust(20) + "  " + "3".rjust(5) + "  3 activities"
    assert fitted[4] == "BB  " + "short".ljust(20) + "  " + "-12".rjust(5) + "  X"  # one id stays an id
    assert max(len(x) for x in fitted) <= 45
    # Width 30: 2 + 12 + 5 + 12 + 6 = 37 > 30, so the last column goes; 30 - (2+5+4) = 19 for the name.
    narrow = to_text(t, width=30).splitlines()
    assert narrow[3] == "A   " + "A long name of the…".ljust(19) + "  " + "3".rjust(5)
    note = " ".join(narrow[5:])
    assert note == "(1 of 4 columns not shown: driving_predecessors; --wide shows every column)"
    assert max(len(x) for x in narrow) <= 30
