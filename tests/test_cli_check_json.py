"""``check --json`` on an invalid casefile, and ``batch`` keeping every problem of a failed casefile."""

from __future__ import annotations

import json
import shutil
from pathlib import Path

from click.testing import CliRunner

from forensic.cli import main
from forensic.cli.portfolio import batch_table, run_one

ROOT = Path(__file__).resolve().parent.parent
DEMO = ROOT / "casefiles" / "riverside"


def _two_problems(tmp_path: Path) -> Path:
    """The demo with two mistakes a user makes, in two files.

    By hand: links.csv of U02, line 2 (the first data row) gets the link type
    "QQ" (not one of FS, SS, FF, SF); activities.csv of U03, line 3 gets the
    duration "x20" (not a whole number). Both are reported, in file order.
    """
    cf = tmp_path / "bad"
    shutil.copytree(DEMO, cf)
    links = cf / "snapshots" / "U02" / "links.csv"
    lines = links.read_text(encoding="utf-8").splitlines(keepends=True)
    assert lines[1].split(",")[2] == "FS"
    parts = lines[1].split(",")
    parts[2] = "QQ"
    lines[1] = ",".join(parts)
    links.write_text("".join(lines), encoding="utf-8")
    acts = cf / "snapshots" / "U03" / "activities.csv"
    lines = acts.read_text(encoding="utf-8").splitlines(keepends=True)
    header = lines[0].strip().split(",")
    col = header.index("duration")
    parts = lines[2].split(",")
    assert parts[col] == "20"
    parts[col] = "x20"
    lines[2] = ",".join(parts)
    acts.write_text("".join(lines), encoding="utf-8")
    return cf


def test_check_json_on_an_invalid_casefile_lists_every_problem_with_exit_1(tmp_path):
    cf = _two_problems(tmp_path)
    res = CliRunner().invoke(main, ["check", str(cf), "--json"])
    assert res.exit_code == 1  # common practice: invalid input is exit status 1
    data = json.loads(res.stdout)
    assert data["valid"] is False
    assert data["problems"] == [
        {"file": "snapshots/U02/links.csv", "line": 2, "key": "type", "value": "QQ",
         "message": "expected one of FS, SS, FF, SF"},
        {"file": "snapshots/U03/activities.csv", "line": 3, "key": "duration", "value": "x20",
         "message": "expected whole working days (a whole number)"},
    ]
    assert "Error: 2 problems in the casefile" in res.stderr  # the text for a person still goes to stderr


def test_check_json_on_a_missing_folder_is_one_problem_without_a_line(tmp_path):
    res = CliRunner().invoke(main, ["check", str(tmp_path / "nowhere"), "--json"])
    assert res.exit_code == 1
    data = json.loads(res.stdout)
    assert data["valid"] is False and len(data["problems"]) == 1
    (p,) = data["problems"]
    assert set(p) == {"file", "line", "key", "value", "message"} and p["line"] is None
    assert "not found" in p["message"]


def test_check_json_on_a_valid_casefile_still_says_valid(tmp_path):
    res = CliRunner().invoke(main, ["check", str(DEMO), "--json"])
    assert res.exit_code == 0
    assert json.loads(res.stdout)["valid"] is True


def test_check_json_out_never_lands_on_a_file_of_the_invalid_casefile(tmp_path):
    cf = _two_problems(tmp_path)
    target = cf / "casefile.toml"
    before = target.read_bytes()
    res = CliRunner().invoke(main, ["check", str(cf), "--json", "--out", str(target)])
    assert res.exit_code == 1
    assert target.read_bytes() == before


def test_batch_keeps_every_problem_of_a_failed_casefile(tmp_path):
    cf = _two_problems(tmp_path / "jobs")
    row = run_one(cf)
    assert not row.valid and len(row.problems) == 2
    # One line in the summary table, every problem in it (before: only "2 problems in the casefile:").
    assert row.error.startswith("2 problems in the casefile: snapshots/U02/links.csv, line 2, type")
    assert "snapshots/U03/activities.csv, line 3, duration" in row.error
    assert "\n" not in row.error
    assert batch_table([row]).rows[0][-1] == row.error
    res = CliRunner().invoke(main, ["batch", str(tmp_path / "jobs"), "--jobs", "1", "--json"])
    assert res.exit_code == 1
    data = json.loads(res.stdout)
    assert data["forensic_version"] and data["inputs_sha256"] == {}  # stamped (each casefile read in a worker)
    (rec,) = data["casefiles"]
    assert [(p["file"], p["line"], p["value"]) for p in rec["problems"]] == [
        ("snapshots/U02/links.csv", 2, "QQ"), ("snapshots/U03/activities.csv", 3, "x20")]


def test_table_without_csv_is_refused_and_report_says_wrote_on_stderr(tmp_path):
    res = CliRunner().invoke(main, ["windows", str(DEMO), "--table", "ledger"])
    assert res.exit_code == 2  # click's usage error status
    assert "--table chooses the table printed by --csv: add --csv" in res.stderr
    ok = CliRunner().invoke(main, ["windows", str(DEMO), "--table", "ledger", "--csv"])
    assert ok.exit_code == 0 and ok.stdout.startswith("window,excusable_compensable")
    out = tmp_path / "r.pdf"
    rep = CliRunner().invoke(main, ["report", str(DEMO), "--template", "monthly", "--out", str(out)])
    assert rep.exit_code == 0, rep.output
    assert rep.stdout == "" and rep.stderr.startswith(f"wrote {out}")


def test_a_group_option_after_the_command_says_to_put_it_before():
    res = CliRunner().invoke(main, ["check", str(DEMO), "--max-activities", "10"])
    assert res.exit_code == 2
    assert "No such option '--max-activities' after the command." in res.stderr
    assert "put it before the command (forensic --max-activities N check ...)" in res.stderr
