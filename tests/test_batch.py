"""forensic batch: every casefile under a folder, on a process pool, with a summary and an exit status."""

import json

from click.testing import CliRunner

from forensic.analysis.attribution.delay import analyse_delay
from forensic.casefile.reading import load_casefile
from forensic.casefile.synthetic import generate_casefile
from forensic.casefile.writing import write_casefile
from forensic.cli import main
from forensic.cli.portfolio import find_casefiles, run_batch


def portfolio(tmp_path, broken=True):
    for name, seed in (("alpha", 1), ("beta", 2)):
        write_casefile(generate_casefile(300, updates=2, seed=seed), tmp_path / "jobs" / name)
    if broken:
        bad = tmp_path / "jobs" / "nested" / "gamma"
        write_casefile(generate_casefile(300, updates=1, seed=3), bad)
        (bad / "snapshots" / "U01" / "links.csv").write_text("pred,succ\nSTART,NOPE\n", encoding="utf-8")
    return tmp_path / "jobs"


def test_finds_every_casefile_under_the_folder(tmp_path):
    """Casefiles are found at any depth, in path order, and not inside a casefile's own folders."""
    root = portfolio(tmp_path)
    assert [p.relative_to(root).as_posix() for p in find_casefiles(root)] == ["alpha", "beta", "nested/gamma"]


def test_pool_rows_match_a_direct_run(tmp_path):
    """Each row's slip is the windows analysis's total slip (reference: analyse_delay run directly)."""
    root = portfolio(tmp_path, broken=False)
    rows = run_batch(root, jobs=2)
    for row in rows:
        assert row.valid and row.error is None
        direct = analyse_delay(load_casefile(row.casefile))
        assert row.slip == direct.ledger.total_slip
        assert row.snapshots == 3


def test_a_failing_casefile_is_reported_and_sets_exit_status_one(tmp_path):
    """The broken casefile gets its error in the table, the others still run; exit 1."""
    root = portfolio(tmp_path)
    res = CliRunner().invoke(main, ["batch", str(root), "--jobs", "2", "--json"])
    assert res.exit_code == 1
    data = json.loads(res.stdout)
    by_name = {r["casefile"].rsplit("/", 1)[-1]: r for r in data["casefiles"]}
    assert by_name["alpha"]["valid"] and by_name["beta"]["valid"]
    assert not by_name["gamma"]["valid"]
    assert "NOPE" in by_name["gamma"]["error"]
    assert data["failed"] == 1


def test_out_and_xlsx_never_overwrite_a_casefile_file(tmp_path):
    """--out and --xlsx refuse a file of a casefile under FOLDER (RULES: never over a casefile input)."""
    root = portfolio(tmp_path, broken=False)
    manifest = root / "alpha" / "casefile.toml"
    before = manifest.read_bytes()
    for args in (["--json", "--out", str(manifest)], ["--xlsx", str(manifest)]):
        res = CliRunner().invoke(main, ["batch", str(root), "--jobs", "1", *args])
        assert res.exit_code == 1  # common practice: an input error is exit status 1
        assert "refusing to write over a casefile input" in res.output
        assert manifest.read_bytes() == before


def test_xlsx_writes_the_summary_workbook(tmp_path):
    """--xlsx writes the summary table as a sheet (docs/import-export.md: --xlsx on every analysis command)."""
    import openpyxl  # reference library for reading the workbook back

    root = portfolio(tmp_path, broken=False)
    book = tmp_path / "summary.xlsx"
    res = CliRunner().invoke(main, ["batch", str(root), "--jobs", "1", "--xlsx", str(book)])
    assert res.exit_code == 0, res.output
    sheet = openpyxl.load_workbook(book)["batch"]
    assert sheet.max_row == 3  # a header row and one row per casefile (alpha, beta)
