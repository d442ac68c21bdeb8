"""Tests of forensic.exchange.importer.importing: mappings over CSV and XLSX sources, errors, atomic output."""

from __future__ import annotations

import shutil
from dataclasses import replace
from datetime import date, datetime
from pathlib import Path

import pytest
from click.testing import CliRunner

from forensic.casefile.reading import load_casefile
from forensic.cli import main
from forensic.core.engine import schedule_snapshot
from forensic.core.errors import ImportMappingError, OutputError
from forensic.exchange.export import input_tables, to_xlsx, write_csv_dir
from forensic.exchange.importer.importing import import_casefile

ROOT = Path(__file__).resolve().parent.parent
EXAMPLE = ROOT / "examples" / "import"
RIVERSIDE = ROOT / "casefiles" / "riverside"


@pytest.fixture
def example(tmp_path: Path) -> Path:
    """A private copy of examples/import, so a test may edit its mapping."""
    folder = tmp_path / "src"
    shutil.copytree(EXAMPLE, folder)
    return folder


def edit(path: Path, old: str, new: str) -> None:
    text = path.read_text(encoding="utf-8")
    assert text.count(old) == 1, f"{old!r} should occur once in {path.name}"
    path.write_text(text.replace(old, new), encoding="utf-8")


def problems_of(mapping: Path, out: Path) -> ImportMappingError:
    with pytest.raises(ImportMappingError) as info:
        import_casefile(mapping, out)
    return info.value


def _identity_mapping(cf, folder: Path, ref) -> str:
    """A mapping that reads the tables of our own export back (settings from the casefile)."""
    lines = ['format = "forensic-import/1"', f'settings = "{(RIVERSIDE / "casefile.toml").as_posix()}"',
             f"events = {ref('events')}"]
    for s in cf.snapshots:
        lines += ["[[snapshot]]", f'id = "{s.id}"', f'role = "{s.role}"', f"data_date = {s.data_date}",
                  f"activities = {ref(f'activities-{s.id}')}", f"links = {ref(f'links-{s.id}')}"]
    for f in cf.fragnets:
        lines += ["[[fragnet]]", f'id = "{f}"', f"activities = {ref(f'fragnet-{f}-activities')}",
                  f"links = {ref(f'fragnet-{f}-links')}"]
    return "\n".join(lines) + "\n"


def _same_schedules(a, b) -> None:
    assert [s.id for s in a.snapshots] == [s.id for s in b.snapshots]
    for snap in a.snapshots:
        ra, rb = schedule_snapshot(a, snap.id), schedule_snapshot(b, snap.id)
        assert ra.activities == rb.activities
        assert ra.completion == rb.completion
        assert ra.longest_path == rb.longest_path


def test_round_trip_riverside_through_csv_export(tmp_path: Path) -> None:
    """Casefile -> CSV export -> import with a mapping gives the same schedules, events and fragnets."""
    cf = load_casefile(RIVERSIDE)
    write_csv_dir(input_tables(cf), tmp_path / "tables")
    mapping = tmp_path / "map.toml"
    mapping.write_text(_identity_mapping(cf, tmp_path, lambda name: f'"tables/{name}.csv"'), encoding="utf-8")
    report = import_casefile(mapping, tmp_path / "case")
    # Expected values: the original casefile itself (a round trip is the identity).
    _same_schedules(cf, report.casefile)
    assert report.casefile.events == cf.events
    assert dict(report.casefile.fragnets["EV03"].activities) == dict(cf.fragnets["EV03"].activities)
    assert any("settings casefile.toml: ignored keys events, format, snapshot" in n for n in report.notes)


def test_round_trip_riverside_through_one_workbook(tmp_path: Path) -> None:
    """Casefile -> XLSX export (a sheet per table, date cells) -> import gives the same schedules."""
    full = load_casefile(RIVERSIDE)
    # three snapshots keep the test fast; the CSV round trip above takes all eleven
    cf = replace(full, snapshots=tuple(full.snapshot(s) for s in ("BL", "U05", "U10")))
    (tmp_path / "all.xlsx").write_bytes(to_xlsx(input_tables(cf)))
    text = 'workbook = "all.xlsx"\n' + _identity_mapping(cf, tmp_path, lambda name: f'{{ sheet = "{name}" }}')
    mapping = tmp_path / "map.toml"
    mapping.write_text(text, encoding="utf-8")
    report = import_casefile(mapping, tmp_path / "case")
    # Expected values: the original casefile (round trip identity).
    _same_schedules(cf, report.casefile)


def test_hours_are_converted_to_working_days(example: Path, tmp_path: Path) -> None:
    """Durations and lags in hours are divided by hours_per_day (80 h at 8 h a day is 10 days)."""
    report = import_casefile(example / "mapping.toml", tmp_path / "case")
    bl = report.casefile.snapshot("BL")
    # Expected values worked out by hand from tasks-baseline.csv / logic-baseline.csv: 80/8, 56/8, 160/8, 40/8.
    assert bl.activities["KL-110"].duration == 10
    assert bl.activities["KL-120"].duration == 7
    assert bl.activities["KL-200"].duration == 20
    ss = next(k for k in bl.links if (k.pred, k.succ) == ("KL-110", "KL-120"))
    assert (ss.type, ss.lag) == ("SS", 5)
    u01 = report.casefile.snapshot("U01")
    assert u01.activities["KL-110"].remaining == 4  # 32 h / 8
    assert "activities: duration converted from hours to days (8 hours a day) (16 cells)" in report.notes


def test_hours_per_day_other_than_eight(example: Path, tmp_path: Path) -> None:
    """With 10 hours a day, 80 h is 8 days and a 40 h lag is 4 days."""
    edit(example / "mapping.toml", "hours_per_day = 8", "hours_per_day = 10\nrounding = \"up\"")
    bl = import_casefile(example / "mapping.toml", tmp_path / "case").casefile.snapshot("BL")
    # Expected values by hand: 80/10 = 8; 56/10 = 5.6 rounded up to 6; lag 40/10 = 4.
    assert bl.activities["KL-110"].duration == 8
    assert bl.activities["KL-120"].duration == 6
    assert next(k.lag for k in bl.links if k.type == "SS") == 4


@pytest.mark.parametrize(("rounding", "expected"), [("up", 8), ("nearest", 7)])
def test_fractional_days_are_rounded_only_when_asked(example: Path, tmp_path: Path, rounding: str, expected: int) -> None:
    """58 h at 8 h a day is 7.25 days: refused by default, 8 rounded up, 7 to the nearest."""
    edit(example / "tasks-baseline.csv", "Abutment caps,Work,56", "Abutment caps,Work,58")
    err = problems_of(example / "mapping.toml", tmp_path / "refused")
    # Expected: 58/8 = 7.25 (arithmetic); the default rounding is "refuse".
    assert "tasks-baseline.csv, line 5, Span (h)" in str(err)
    assert "58 hours is 7.25 days" in str(err)
    edit(example / "mapping.toml", "hours_per_day = 8", f'hours_per_day = 8\nrounding = "{rounding}"')
    report = import_casefile(example / "mapping.toml", tmp_path / "case")
    assert report.casefile.snapshot("BL").activities["KL-120"].duration == expected
    assert f"activities: duration rounded {rounding} to whole working days (1 cell)" in report.notes


def test_custom_relationship_codes_any_case(example: Path, tmp_path: Path) -> None:
    """Their codes map to ours, case-insensitively ("fs" is FS); our own codes are accepted too."""
    edit(example / "logic-baseline.csv", "KL-300,KL-900,Finish-Finish,0", "KL-300,KL-900,FINISH-FINISH,0")
    edit(example / "logic-baseline.csv", "KL-000,KL-200,Start-Start,0", "KL-000,KL-200,SS,0")
    bl = import_casefile(example / "mapping.toml", tmp_path / "case").casefile.snapshot("BL")
    types = {(k.pred, k.succ): k.type for k in bl.links}
    # Expected values: the [values.link_types] table of examples/import/mapping.toml.
    assert types["KL-210", "KL-300"] == "FS"
    assert types["KL-300", "KL-900"] == "FF"
    assert types["KL-000", "KL-200"] == "SS"
    assert types["KL-100", "KL-110"] == "FS"


def test_unknown_relationship_code_is_an_error_naming_the_codes(example: Path, tmp_path: Path) -> None:
    """A code the mapping does not list is refused with the file, row, column and the codes known."""
    edit(example / "logic-baseline.csv", "KL-210,KL-300,fs,-", "KL-210,KL-300,F2S,-")
    err = problems_of(example / "mapping.toml", tmp_path / "case")
    assert "logic-baseline.csv, line 8, Tie: type: unknown code; expected one of FF, FS, SF, SS" in str(err)
    assert "'F2S'" in str(err)
    assert not (tmp_path / "case").exists()


def test_percent_strings_and_fractions(example: Path, tmp_path: Path) -> None:
    """ "60%" reads as 60; with percent = "fraction" a bare 0.6 also reads as 60."""
    report = import_casefile(example / "mapping.toml", tmp_path / "a")
    u01 = report.casefile.snapshot("U01")
    # Expected values: the Done column of tasks-update1.csv.
    assert u01.activities["KL-110"].percent_complete == 60
    assert u01.activities["KL-200"].percent_complete == 75
    edit(example / "tasks-update1.csv", "BLD,60%,", "BLD,0.6,")
    edit(example / "mapping.toml", "hours_per_day = 8", 'hours_per_day = 8\npercent = "fraction"')
    u01 = import_casefile(example / "mapping.toml", tmp_path / "b").casefile.snapshot("U01")
    assert u01.activities["KL-110"].percent_complete == pytest.approx(60)  # 0.6 x 100
    assert u01.activities["KL-200"].percent_complete == 75  # "75%" keeps its sign's meaning


def test_several_date_formats_and_a_data_date_as_text(example: Path, tmp_path: Path) -> None:
    """Each date is tried against the formats in order; the data date may be text in them too."""
    edit(example / "tasks-update1.csv", "KL-110,Abutment piles,Work,80,32,09/03/2026",
         "KL-110,Abutment piles,Work,80,32,09-Mar-26")
    edit(example / "mapping.toml", 'date_formats = ["%d/%m/%Y"]', 'date_formats = ["%d/%m/%Y", "%d-%b-%y"]')
    cf = import_casefile(example / "mapping.toml", tmp_path / "case").casefile
    # Expected values: the strftime patterns (Python datetime docs); 26 with %y is 2026.
    assert cf.snapshot("U01").activities["KL-110"].actual_start == date(2026, 3, 9)
    assert cf.snapshot("U01").data_date == date(2026, 3, 30)
    assert cf.events[0].start == date(2026, 3, 10)


def test_date_in_no_format_is_an_error(example: Path, tmp_path: Path) -> None:
    """A date that fits none of the formats names the formats tried."""
    edit(example / "tasks-update1.csv", "KL-110,Abutment piles,Work,80,32,09/03/2026",
         "KL-110,Abutment piles,Work,80,32,2026/03/09")
    err = problems_of(example / "mapping.toml", tmp_path / "case")
    assert "tasks-update1.csv, line 4, Began: actual_start: expected a date in one of the formats %d/%m/%Y" in str(err)


def _workbook(path: Path, sheets: dict[str, list[list]]) -> None:
    from openpyxl import Workbook

    wb = Workbook()
    wb.remove(wb.active)
    for name, rows in sheets.items():
        ws = wb.create_sheet(name)
        for row in rows:
            ws.append(row)
    wb.save(path)


def test_workbook_with_a_sheet_per_table(example: Path, tmp_path: Path) -> None:
    """One workbook, a sheet per snapshot table, with real date and number cells: same casefile as the CSVs."""
    import csv

    def rows(name: str) -> list[list]:
        with open(example / name, encoding="utf-8", newline="") as fh:
            out = list(csv.reader(fh))
        for row in out[1:]:
            for i, v in enumerate(row):
                if v.count("/") == 2:
                    d, m, y = map(int, v.split("/"))
                    row[i] = datetime(y, m, d, 14, 30) if i == 5 else date(y, m, d)  # Began with a time of day
                elif v.isdigit():
                    row[i] = int(v)
                elif v.endswith("%"):
                    row[i] = int(v[:-1]) / 100  # a percent-formatted cell holds the fraction
        return out

    _workbook(example / "programme.xlsx", {
        "Tasks BL": rows("tasks-baseline.csv"), "Logic BL": rows("logic-baseline.csv"),
        "Tasks U01": rows("tasks-update1.csv"), "Logic U01": rows("logic-update1.csv"),
    })
    text = (example / "mapping.toml").read_text(encoding="utf-8")
    text = 'workbook = "programme.xlsx"\n' + text
    for old, sheet in (('"tasks-baseline.csv"', "Tasks BL"), ('"logic-baseline.csv"', "Logic BL"),
                       ('"tasks-update1.csv"', "Tasks U01"), ('"logic-update1.csv"', "Logic U01")):
        text = text.replace(old, f'{{ sheet = "{sheet}" }}')
    text = text.replace("hours_per_day = 8", 'hours_per_day = 8\npercent = "fraction"')
    (example / "book.toml").write_text(text, encoding="utf-8")
    from_book = import_casefile(example / "book.toml", tmp_path / "book")
    from_csv = import_casefile(example / "mapping.toml", tmp_path / "csv")
    # Expected values: the CSV import of the same data (the two sources hold the same table).
    _same_schedules(from_csv.casefile, from_book.casefile)
    a = from_book.casefile.snapshot("U01").activities["KL-110"]
    assert a.actual_start == date(2026, 3, 9) and a.percent_complete == pytest.approx(60)
    # five dated Began cells in tasks-update1.csv, each given 14:30 above
    assert "activities: time of day dropped from workbook date cells (5 cells)" in from_book.notes


def test_missing_sheet_lists_the_sheets(example: Path, tmp_path: Path) -> None:
    """A sheet name not in the workbook is an error that lists the sheets it has."""
    _workbook(example / "programme.xlsx", {"Tasks": [["Item Ref"]], "Logic": [["First Item"]]})
    edit(example / "mapping.toml", 'activities = "tasks-baseline.csv"',
         'activities = { file = "programme.xlsx", sheet = "Task" }')
    err = problems_of(example / "mapping.toml", tmp_path / "case")
    assert "programme.xlsx[Task], sheet: no such sheet; the workbook has 'Tasks', 'Logic'" in str(err)


def test_mapped_column_not_found_lists_the_columns_found(example: Path, tmp_path: Path) -> None:
    """A column the mapping names but the file lacks is an error listing every column found."""
    edit(example / "mapping.toml", 'duration = "Span (h)"', 'duration = "Spn (h)"')
    err = problems_of(example / "mapping.toml", tmp_path / "case")
    assert ("tasks-baseline.csv, line 1, duration: column for duration not found; the columns found are "
            "'Item Ref', 'Item', 'Type', 'Span (h)', 'To go (h)', 'Began', 'Ended', "
            "'Cal', 'Resp', 'Done', 'Notes' (value: 'Spn (h)')") in str(err)
    assert str(err).startswith("2 problems in the import:")  # one per tasks file
    assert "delays.csv" not in str(err)  # no cascade of unknown ids from the unread tables


def test_required_field_without_a_column_lists_the_columns_found(example: Path, tmp_path: Path) -> None:
    """A required field neither mapped nor present under our name is an error listing the columns."""
    edit(example / "mapping.toml", 'succ = "Next Item"\n', "")
    err = problems_of(example / "mapping.toml", tmp_path / "case")
    assert "logic-baseline.csv, line 1, succ: no column for the required field succ" in str(err)
    assert "the columns found are 'First Item', 'Next Item', 'Tie', 'Gap (h)'" in str(err)


def test_unknown_mapping_keys_and_fields_are_errors(example: Path, tmp_path: Path) -> None:
    """A misspelt key or field in the mapping is refused, naming the mapping key and what is allowed."""
    edit(example / "mapping.toml", 'duration = "Span (h)"', 'duraton = "Span (h)"')
    edit(example / "mapping.toml", "hours_per_day = 8", "hours_per_day = 8\nhour_per_day = 8")
    err = problems_of(example / "mapping.toml", tmp_path / "case")
    assert "mapping.toml, columns.activities.duraton: unknown field; the activities fields are id, name" in str(err)
    assert "mapping.toml, values.hour_per_day: unknown key" in str(err)


def test_loader_problems_name_the_source_file_and_row(example: Path, tmp_path: Path) -> None:
    """A value the loader refuses (an unknown party) is reported at the user's file and row."""
    edit(example / "tasks-baseline.csv", "KL-210,Lift deck into place,Work,16,,,,5d,BLD",
         "KL-210,Lift deck into place,Work,16,,,,5d,CRN")
    err = problems_of(example / "mapping.toml", tmp_path / "case")
    assert "tasks-baseline.csv, line 7, party: unknown party; the manifest defines CLT, BLD (value: 'CRN')" in str(err)


def test_settings_problem_found_by_the_loader_names_the_mapping(example: Path, tmp_path: Path) -> None:
    """A bad calendar setting is found by the real loader after writing, and named in the mapping."""
    edit(example / "mapping.toml", 'workdays = ["mon", "tue", "wed", "thu", "fri"]', 'workdays = ["mon", "tues"]')
    err = problems_of(example / "mapping.toml", tmp_path / "case")
    assert "mapping.toml, calendar 5d.workdays: unknown day name" in str(err)
    assert not (tmp_path / "case").exists()
    assert list(tmp_path.iterdir()) == [example]  # the temporary sibling folder was removed


def test_report_lists_what_was_dropped_and_defaulted(example: Path, tmp_path: Path) -> None:
    """Unused source columns, blank cells read by a default, and translated codes are all reported."""
    report = import_casefile(example / "mapping.toml", tmp_path / "case")
    # Expected values counted by hand in the example files: a Notes column; two "-" lags; one event.
    assert "activities: source columns not used (dropped): Notes" in report.notes
    assert "links: lag blank; read as 0 (2 cells)" in report.notes
    assert "events: no column for category; taken from the party's role (1 row)" in report.notes
    assert report.casefile.events[0].category == "excusable-compensable"  # owner's delay (SCL Protocol)


def test_out_must_be_new_or_empty(example: Path, tmp_path: Path) -> None:
    """An existing non-empty --out folder is refused; an empty one is filled."""
    busy = tmp_path / "busy"
    busy.mkdir()
    (busy / "keep.txt").write_text("mine", encoding="utf-8")
    with pytest.raises(OutputError, match="already exists and is not an empty folder"):
        import_casefile(example / "mapping.toml", busy)
    assert (busy / "keep.txt").read_text(encoding="utf-8") == "mine"
    empty = tmp_path / "empty"
    empty.mkdir()
    report = import_casefile(example / "mapping.toml", empty)
    assert (empty / "casefile.toml").is_file()
    assert load_casefile(empty).project.name == report.casefile.project.name == "Kestrel Lane footbridge"


def test_formula_apostrophe_from_our_own_export_is_removed(example: Path, tmp_path: Path) -> None:
    """Text our export neutralised ("'=...") reads back as written, and the removal is reported."""
    edit(example / "tasks-baseline.csv", "Surfacing and parapets", "'-Surfacing and parapets")
    report = import_casefile(example / "mapping.toml", tmp_path / "case")
    # Expected: tables.neutralise prefixes "'" before "-" (OWASP CSV injection guidance).
    assert report.casefile.snapshot("BL").activities["KL-300"].name == "-Surfacing and parapets"


def test_cli_import_prints_the_report(example: Path, tmp_path: Path) -> None:
    """`forensic import` writes the casefile and lists what was dropped or defaulted."""
    result = CliRunner().invoke(main, ["import", str(example / "mapping.toml"), "--out", str(tmp_path / "case")])
    assert result.exit_code == 0, result.output
    assert "2 snapshots, 16 activities, 16 links, 1 events, 0 fragnets" in result.output
    assert "source columns not used (dropped): Notes" in result.output
    again = CliRunner().invoke(main, ["import", str(example / "mapping.toml"), "--out", str(tmp_path / "case")])
    assert again.exit_code == 1
    assert "Error: " in again.output and "already exists" in again.output


def test_logic_loop_found_on_reload_names_the_source_rows(example: Path, tmp_path: Path) -> None:
    """A loop only the reload finds is reported at the user's file and rows, not the temporary casefile's."""
    # A blank line after the header shifts every source row one below its line in the written casefile.
    edit(example / "logic-baseline.csv", "Gap (h)\n", "Gap (h)\n\n")
    edit(example / "logic-baseline.csv", "KL-300,KL-900,Finish-Finish,0\n",
         "KL-300,KL-900,Finish-Finish,0\nKL-300,KL-120,Finish-Start,0\n")
    err = problems_of(example / "mapping.toml", tmp_path / "case")
    text = str(err)
    # Expected rows by hand: KL-120 -> KL-210 is row 7, KL-210 -> KL-300 row 9, KL-300 -> KL-120 row 11.
    assert "logic-baseline.csv, line 7: logic loop through the links on lines " in text
    lines = text.split("on lines ")[1].split(";")[0]
    assert sorted(map(int, lines.split(", "))) == [7, 9, 11]
    assert "snapshots/" not in text and ".part" not in text
    assert list(tmp_path.iterdir()) == [example]  # nothing written, no temporary folder left


def test_reload_warning_names_the_source_row(example: Path, tmp_path: Path) -> None:
    """A loader warning on the written casefile (a link into finished work) names the source file and row."""
    # In U01, KL-100 is finished; a new link into it from unfinished KL-200 (not after it) is a warning.
    edit(example / "logic-update1.csv", "Gap (h)\n", "Gap (h)\nKL-200,KL-100,Finish-Finish,0\n")
    report = import_casefile(example / "mapping.toml", tmp_path / "case")
    # Expected: the row just added is line 2 of logic-update1.csv (casefiles/README.md: such a link is a warning).
    assert any(w.startswith("logic-update1.csv, line 2: link KL-200 -> KL-100 has no effect") for w in report.warnings), \
        report.warnings


def test_worked_example_in_the_docs_is_the_example_mapping() -> None:
    """docs/import-export.md shows the whole example mapping, so a copy of it imports as documented."""
    import tomllib

    doc = (ROOT / "docs" / "import-export.md").read_text(encoding="utf-8")
    block = doc.split("```toml\n", 1)[1].split("```", 1)[0]
    # Expected: examples/import/mapping.toml itself (the doc's worked example).
    assert tomllib.loads(block) == tomllib.loads((EXAMPLE / "mapping.toml").read_text(encoding="utf-8"))
    assert "$ forensic import examples/import/mapping.toml --out kestrel" in doc
