"""Tests of forensic.exchange.export: every table of a casefile to CSV, JSON and a formatted workbook."""

from __future__ import annotations

import csv
import io
import json
from datetime import date, datetime
from pathlib import Path

import pytest
from click.testing import CliRunner
from openpyxl import load_workbook

from forensic.casefile.reading import load_casefile
from forensic.cli import main
from forensic.core.tables import Table
from forensic.exchange.export import (
    FIXED_TIMESTAMP,
    casefile_tables,
    sheet_names,
    tables_json,
    to_xlsx,
    write_csv_dir,
)
from forensic.exchange.writers import to_csv
from tests.casefile_helpers import write_casefile

RISKY = Table(
    "risky",
    ("id", "name", "when", "days", "flag"),
    (
        ("A1", "=HYPERLINK(\"http://example.invalid\")", date(2026, 3, 2), 5, True),
        ("A2", "+1", date(2026, 3, 3), -2, False),
        ("A3", "-Surfacing", None, 0.5, None),
        ("A4", "@SUM(A1:A2)", date(2026, 3, 4), 7, True),
        ("A5", "\tTabbed", date(2026, 3, 5), 1, False),
        ("A6", "Plain text", date(2026, 3, 6), 2, True),
    ),
)


@pytest.fixture(scope="module")
def small(tmp_path_factory) -> tuple:
    """The loader tests' small casefile (tests/casefile_helpers.py) and all its tables."""
    cf = load_casefile(write_casefile(tmp_path_factory.mktemp("small")))
    return cf, casefile_tables(cf)


def test_every_analysis_has_its_tables(small) -> None:
    """Inputs, schedules, quality, comparisons, windows, contributors, ledger, as-built, impact per event and but-for are all there."""
    _cf, export = small
    names = [t.name for t in export.tables]
    # Expected names: each analysis's own table function (forensic/windows.py, attribution.py, ...).
    assert names[:7] == ["activities-BL", "links-BL", "activities-U01", "links-U01", "events",
                         "fragnet-EV02-activities", "fragnet-EV02-links"]
    for name in ("schedule-BL", "schedule-U01", "quality", "compare-BL-U01", "windows", "contributors", "ledger", "ledger-cumulative",
                 "as-planned-vs-as-built", "impact-EV01-milestones", "impact-EV02-milestones",
                 "impact-EV02-float", "impact-series", "but-for", "but-for-events"):
        assert name in names
    assert export.skipped == ()


def test_recovery_that_cannot_be_met_is_listed_as_skipped(small) -> None:
    """An analysis that cannot run is reported with its reason, and the other tables still come."""
    cf, _ = small
    export = casefile_tables(cf, recover_days=1, inputs=False)
    assert len(export.skipped) == 1 and export.skipped[0].startswith("recovery of 1 days on U01: ")
    assert "cannot be met" in export.skipped[0]
    assert [t.name for t in export.tables][:4] == ["schedule-BL", "schedule-U01", "quality", "compare-BL-U01"]


def test_workbook_has_a_sheet_per_table_with_real_dates(small, tmp_path: Path) -> None:
    """The XLSX opens with openpyxl: expected sheets, frozen header, widths, date cells with a date format."""
    _cf, export = small
    path = tmp_path / "all.xlsx"
    path.write_bytes(to_xlsx(export.tables))
    wb = load_workbook(path)
    assert wb.sheetnames == [t.name for t in export.tables]
    ws = wb["schedule-U01"]
    header = [c.value for c in ws[1]]
    assert header[:5] == ["id", "name", "status", "early_start", "early_finish"]
    assert ws.freeze_panes == "A2"
    assert ws[1][0].font.bold
    row = {h: c for h, c in zip(header, ws[3], strict=True)}  # A110, after M100 in topological order
    assert row["id"].value == "A110"
    # Expected: the loader test casefile's U01 has A110 actually started 2026-01-06 (casefile_helpers.py).
    assert row["early_start"].is_date and row["early_start"].value == datetime(2026, 1, 6)
    assert row["early_start"].number_format == "yyyy-mm-dd"
    # 19 characters shown (the longest name + 2); the file stores the width with the cell
    # padding, truncate((n * 7 + 5) / 7 * 256) / 256 for the default font's 7-pixel digit
    # (ECMA-376 Part 1, 18.3.1.13 "col", the width formula; from memory).
    n = len("Excavate wet well") + 2
    assert ws.column_dimensions["B"].width == int((n * 7 + 5) / 7 * 256) / 256
    assert isinstance(wb["activities-BL"]["D3"].value, int)  # numbers stay numbers


def test_workbook_is_deterministic(small) -> None:
    """Two writes of the same tables give identical bytes; created and modified are the fixed date."""
    _cf, export = small
    first, second = to_xlsx(export.tables), to_xlsx(export.tables)
    assert first == second
    wb = load_workbook(io.BytesIO(first))
    assert wb.properties.created == FIXED_TIMESTAMP
    assert wb.properties.modified == FIXED_TIMESTAMP


def test_formula_like_text_is_neutralised_in_csv() -> None:
    """CSV cells starting with = + - @ or a tab get a leading apostrophe; numbers do not (OWASP)."""
    rows = list(csv.reader(io.StringIO(to_csv(RISKY))))
    # Expected values: the OWASP CSV injection guidance (prefix a single quote).
    assert [r[1] for r in rows[1:]] == ["'=HYPERLINK(\"http://example.invalid\")", "'+1", "'-Surfacing",
                                         "'@SUM(A1:A2)", "'\tTabbed", "Plain text"]
    assert rows[2][3] == "-2"  # a negative number is a number, not text to neutralise


def test_formula_like_text_is_neutralised_in_xlsx(tmp_path: Path) -> None:
    """Workbook text cells are inert strings (never formulas); dates are date cells, numbers numbers."""
    path = tmp_path / "risky.xlsx"
    path.write_bytes(to_xlsx([RISKY]))
    ws = load_workbook(path)["risky"]
    names = [ws.cell(row=r, column=2) for r in range(2, 8)]
    assert all(c.data_type == "s" for c in names)  # "f" would be a formula (openpyxl cell types)
    assert names[0].value == "'=HYPERLINK(\"http://example.invalid\")"
    assert names[3].value == "'@SUM(A1:A2)"
    assert ws["D3"].value == -2 and ws["E2"].value is True
    assert ws["C2"].is_date and ws["C4"].value is None


def test_sheet_names_are_cut_and_made_unique() -> None:
    """Sheet names keep to 31 characters without []:*?/\\ and stay unique regardless of case."""
    long = "impact-EV-with-a-very-long-identifier-milestones"
    tables = [Table(n, ("a",), ()) for n in (long, long + "-2", "a/b", "A_B")]
    names = sheet_names(tables)
    # Expected: the workbook sheet-name rules (ECMA-376 limits, 31 characters; common practice).
    assert names[0] == long[:31]
    assert names[1] == long[:29] + "~2"
    assert names[2] == "a_b" and names[3] == "A_B~2"
    assert all(len(n) <= 31 for n in names)


def test_csv_folder_and_json_hold_every_table(small, tmp_path: Path) -> None:
    """One CSV file per table; the JSON lists the tables with columns and rows as objects."""
    _cf, export = small
    paths = write_csv_dir(export.tables, tmp_path / "tables")
    assert [p.name for p in paths] == [f"{t.name}.csv" for t in export.tables]
    doc = json.loads(tables_json(export.tables))
    by_name = {t["name"]: t for t in doc["tables"]}
    assert list(by_name) == [t.name for t in export.tables]
    first = by_name["activities-BL"]["rows"][0]
    assert first["id"] == "M100" and first["kind"] == "opening-milestone"
    schedule = by_name["schedule-U01"]["rows"]
    assert {r["id"]: r["early_start"] for r in schedule}["A110"] == "2026-01-06"


def test_cli_export_writes_workbook_csv_and_json(small, tmp_path: Path) -> None:
    """`forensic export CASEFILE --xlsx --csv-dir --json` writes all three and says so."""
    cf, export = small
    args = ["export", str(cf.root), "--xlsx", str(tmp_path / "a.xlsx"), "--csv-dir", str(tmp_path / "csv"),
            "--json", str(tmp_path / "a.json")]
    result = CliRunner().invoke(main, args)
    assert result.exit_code == 0, result.output
    assert f"({len(export.tables)} sheets)" in result.output
    assert load_workbook(tmp_path / "a.xlsx").sheetnames == [t.name for t in export.tables]
    assert (tmp_path / "csv" / "ledger.csv").is_file()
    assert json.loads((tmp_path / "a.json").read_text(encoding="utf-8"))["tables"][0]["name"] == "activities-BL"


def test_cli_export_needs_an_output_and_never_writes_over_an_input(small, tmp_path: Path) -> None:
    """No output option is a usage error; an output over a casefile input is refused."""
    cf, _ = small
    none = CliRunner().invoke(main, ["export", str(cf.root)])
    assert none.exit_code == 2 and "give at least one of --xlsx FILE" in none.output
    target = cf.root / "events.csv"
    before = target.read_bytes()
    over = CliRunner().invoke(main, ["export", str(cf.root), "--json", str(target)])
    assert over.exit_code == 1 and "refusing to write over a casefile input" in over.output
    assert target.read_bytes() == before


@pytest.mark.parametrize(
    ("command", "sheets"),
    [
        (["schedule", "--snapshot", "BL"], ["schedule-BL"]),
        (["check"], ["snapshots"]),
        (["check", "--quality"], ["quality"]),
        (["compare", "BL", "U01"], ["compare-BL-U01"]),
        (["but-for"], ["but-for", "but-for-events"]),
        (["impact", "--event", "EV02"], ["impact-EV02-milestones", "impact-EV02-float"]),
    ],
)
def test_analysis_commands_take_xlsx(small, tmp_path: Path, command: list[str], sheets: list[str]) -> None:
    """--xlsx FILE on an analysis command writes its tables to a workbook beside its usual output."""
    cf, _ = small
    out = tmp_path / "out.xlsx"
    result = CliRunner().invoke(main, [command[0], str(cf.root), *command[1:], "--xlsx", str(out)])
    assert result.exit_code == 0, result.output
    assert load_workbook(out).sheetnames == sheets
    assert f"wrote {out}" in result.output


def test_bare_operator_is_a_text_cell_in_xlsx() -> None:
    """"==" is written as a text cell (data type "s"), not as a formula (openpyxl cell types)."""
    import io

    from openpyxl import load_workbook

    from forensic.core.tables import Table
    from forensic.exchange.export import to_xlsx

    data = to_xlsx([Table("t", ("comparison",), (("==",), ("<=",)))])
    ws = load_workbook(io.BytesIO(data)).active
    assert [(c.value, c.data_type) for c in ws["A"][1:]] == [("==", "s"), ("<=", "s")]
