"""Hostile and broken import sources and mappings, through the real command line (forensic import).

Each case is the worked example of examples/import/ with one mutation,
in the style of the loader's corpus (tests/corpus/): the import must exit
with status 1 and a message naming the file (or ``book.xlsx[sheet]``), the
row, the column or mapping key, and the value, with no traceback; nothing
may be written to ``--out`` (nor a temporary folder left beside it), and
the source files must be unchanged. Expected places are worked out by hand
from the example files (tasks-baseline.csv: the header is line 1, KL-110 is
line 4; logic-baseline.csv: KL-210 -> KL-300 is line 8).
"""

from __future__ import annotations

import hashlib
import os
import shutil
import time
import zipfile
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path

import pytest
from click.testing import CliRunner

from forensic.cli import main

ROOT = Path(__file__).resolve().parent.parent
EXAMPLE = ROOT / "examples" / "import"
TASKS = "tasks-baseline.csv"
LOGIC = "logic-baseline.csv"


def _replace(folder: Path, name: str, old: str, new: str) -> None:
    path = folder / name
    text = path.read_text(encoding="utf-8")
    assert text.count(old) == 1, f"{old!r} should occur once in {name}"
    path.write_text(text.replace(old, new), encoding="utf-8", newline="")


def _bytes(folder: Path, name: str, old: bytes, new: bytes) -> None:
    path = folder / name
    data = path.read_bytes()
    assert data.count(old) == 1
    path.write_bytes(data.replace(old, new))


def _workbook(path: Path, rows: list[list], extra: Callable | None = None) -> None:
    from openpyxl import Workbook

    wb = Workbook()
    ws = wb.active
    ws.title = "Tasks"
    for row in rows:
        ws.append(row)
    if extra is not None:
        extra(ws)
    wb.save(path)


def _tasks_rows(folder: Path) -> list[list]:
    import csv

    with open(folder / TASKS, encoding="utf-8", newline="") as fh:
        return [list(r) for r in csv.reader(fh)]


def _use_sheet(folder: Path, book: str = "tasks.xlsx") -> None:
    _replace(folder, "mapping.toml", f'activities = "{TASKS}"', f'activities = {{ file = "{book}", sheet = "Tasks" }}')


# -- the mutations -----------------------------------------------------------------------------


def latin1_text(f: Path) -> None:
    # "Abutment piles" with an e-acute saved as Latin-1 (0xe9), on line 4
    _bytes(f, TASKS, b"KL-110,Abutment piles", b"KL-110,Abutment pil\xe9s")


def utf16_file(f: Path) -> None:
    text = (f / TASKS).read_text(encoding="utf-8")
    (f / TASKS).write_bytes(text.encode("utf-16"))  # with its byte-order mark (Python codecs)


def nul_in_cell(f: Path) -> None:
    _bytes(f, TASKS, b"KL-110,Abutment piles", b"KL-110,Abutment\x00piles")


def escape_sequence_in_name(f: Path) -> None:
    _replace(f, TASKS, "KL-110,Abutment piles", "KL-110,Abutment \x1b[2J piles")


def bidi_override_in_id(f: Path) -> None:
    _replace(f, LOGIC, "KL-210,KL-300,fs", "KL-210,KL-\u202e300,fs")


def unterminated_quote(f: Path) -> None:
    _replace(f, TASKS, "KL-110,Abutment piles", 'KL-110,"Abutment piles')


def unsaved_formula(f: Path) -> None:
    rows = _tasks_rows(f)
    rows[3][3] = "=10*8"  # KL-110's duration as a formula that no spreadsheet program has saved
    _workbook(f / "tasks.xlsx", rows)
    _use_sheet(f)


def not_a_workbook(f: Path) -> None:
    shutil.copy(f / TASKS, f / "tasks.xlsx")  # CSV text under a workbook's name
    _use_sheet(f)


def zip_bomb(f: Path) -> None:
    _workbook(f / "tasks.xlsx", _tasks_rows(f))
    with zipfile.ZipFile(f / "tasks.xlsx", "a", compression=zipfile.ZIP_DEFLATED) as z:
        z.writestr("xl/padding.xml", b"\0" * (11 * 1024 * 1024))  # 11 MiB of zeros packs into a few KiB
    _use_sheet(f)


def sheet_declaring_a_million_rows(f: Path) -> None:
    def far(ws) -> None:
        ws.cell(row=1_048_576, column=16_384, value="x")  # the last cell a workbook can have

    _workbook(f / "tasks.xlsx", _tasks_rows(f), far)
    _use_sheet(f)


def tasks_padded_to_two_mib(f: Path) -> None:
    _replace(f, TASKS, "north and south", "north and south " + "x" * (2 * 1024 * 1024))


def toml_syntax_error(f: Path) -> None:
    _replace(f, "mapping.toml", "hours_per_day = 8", "hours_per_day = = 8")


def toml_nested_too_deeply(f: Path) -> None:
    _replace(f, "mapping.toml", "hours_per_day = 8", "hours_per_day = 8\nblanks = " + "[" * 5000 + "]" * 5000)


def hours_per_day_as_text(f: Path) -> None:
    _replace(f, "mapping.toml", "hours_per_day = 8", 'hours_per_day = "8"')


def unknown_encoding(f: Path) -> None:
    _replace(f, "mapping.toml", "hours_per_day = 8", 'hours_per_day = 8\nencoding = "utf-99"')


def exponent_duration(f: Path) -> None:
    _replace(f, TASKS, "KL-110,Abutment piles,Work,80,", "KL-110,Abutment piles,Work,8e1,")


def underscore_duration(f: Path) -> None:
    _replace(f, TASKS, "KL-110,Abutment piles,Work,80,", "KL-110,Abutment piles,Work,8_0,")


def full_width_digits_in_lag(f: Path) -> None:
    # logic-baseline.csv line 3: KL-100 -> KL-110, its lag in hours written in full-width digits
    _replace(f, LOGIC, "KL-100,KL-110,Finish-Start,0", "KL-100,KL-110,Finish-Start,\uff10")


def short_row(f: Path) -> None:
    # KL-110 loses its last five cells (Began ... Notes): an in-progress task would read as not started
    _replace(f, TASKS, "KL-110,Abutment piles,Work,80,,,,5d,BLD,0%,north and south", "KL-110,Abutment piles,Work,80,,")


def rot13_encoding(f: Path) -> None:
    # rot13 is a codec (codecs.lookup finds it) but maps str to str, not bytes to text
    _replace(f, "mapping.toml", "hours_per_day = 8", 'hours_per_day = 8\nencoding = "rot13"')


def base64_encoding(f: Path) -> None:
    _replace(f, "mapping.toml", "hours_per_day = 8", 'hours_per_day = 8\nencoding = "base64"')


def long_delimiter(f: Path) -> None:
    _replace(f, "mapping.toml", "hours_per_day = 8", 'hours_per_day = 8\ndelimiter = ";;"')


def snapshot_id_climbing_out(f: Path) -> None:
    _replace(f, "mapping.toml", 'id = "U01"', 'id = "../../escaped"')


def single_bracket_party(f: Path) -> None:
    text = (f / "mapping.toml").read_text(encoding="utf-8")
    text = text.replace('[[party]]\nid = "BLD"\nname = "Brookfold Civils (contractor)"\nrole = "contractor"\n', "")
    (f / "mapping.toml").write_text(text.replace("[[party]]", "[party]"), encoding="utf-8")


def control_character_in_project_name(f: Path) -> None:
    _replace(f, "mapping.toml", 'name = "Kestrel Lane footbridge"', 'name = "Kestrel \\u001b]0;owned\\u0007 Lane"')


@dataclass(frozen=True)
class Case:
    name: str
    mutate: Callable[[Path], None]
    wanted: tuple[str, ...]  # each must appear in one line of the error output
    options: tuple[str, ...] = ()


# mapping.toml: hours_per_day is on line 73.
# tasks-baseline.csv: "KL-110,Abutment pil" starts at byte 2 of line 4 after the 3 lines above it
_LINE4 = len("\n".join((EXAMPLE / TASKS).read_text(encoding="utf-8").split("\n")[:3])) + 1
CASES = [
    Case("latin1-text", latin1_text,
         ("tasks-baseline.csv, line 4", "not utf-8 text", "set [values] encoding",
          f"(value: '0xe9 at byte {_LINE4 + len('KL-110,Abutment pil')}')")),
    Case("utf16-file", utf16_file,
         ("tasks-baseline.csv, line 1", "looks like UTF-16", "(value: '0xff at byte 0')")),
    Case("nul-in-cell", nul_in_cell, ("tasks-baseline.csv, line 4", "NUL character", "(value: 'U+0000')")),
    Case("escape-sequence-in-name", escape_sequence_in_name,
         ("tasks-baseline.csv, line 4, Item", "name: contains a control", "(value: 'U+001B')")),
    Case("bidi-override-in-link", bidi_override_in_id,
         ("logic-baseline.csv, line 8, Next Item", "text-direction", "(value: 'U+202E')")),
    Case("unterminated-quote", unterminated_quote, ("tasks-baseline.csv, line 4", "not valid CSV", "check its quotes")),
    Case("unsaved-formula", unsaved_formula,
         ("tasks.xlsx[Tasks], line 4, Span (h)", "formula with no saved value", "never evaluated",
          "(value: '=10*8')")),
    Case("not-a-workbook", not_a_workbook, ("tasks.xlsx[Tasks]", "cannot open the workbook")),
    Case("zip-bomb", zip_bomb,
         ("tasks.xlsx[Tasks]", "unpacks to", "over 10 times the file limit of 1048576 bytes", "--max-file-mb"),
         ("--max-file-mb", "1")),
    Case("sheet-declaring-a-million-rows", sheet_declaring_a_million_rows,
         ("tasks.xlsx[Tasks], line 1002", "more than 1000 rows of activities (blank rows included)",
          "--max-activities"), ("--max-activities", "1000")),
    Case("activities-over-the-row-limit", lambda f: None,
         ("tasks-baseline.csv, line 7", "more than 5 rows of activities", "(value: 'row 7')", "--max-activities"),
         ("--max-activities", "5")),
    Case("links-over-the-row-limit", lambda f: None,
         ("logic-baseline.csv, line 5", "more than 3 rows of links", "--max-links"), ("--max-links", "3")),
    Case("source-over-the-file-limit", tasks_padded_to_two_mib,
         ("tasks-baseline.csv", "over the limit of 1048576 bytes; it is not read", "--max-file-mb"),
         ("--max-file-mb", "1")),
    Case("toml-syntax-error", toml_syntax_error, ("mapping.toml", "not valid TOML", "at line 73")),
    Case("toml-nested-too-deeply", toml_nested_too_deeply, ("mapping.toml", "nested too deeply")),
    Case("hours-per-day-as-text", hours_per_day_as_text,
         ("mapping.toml, values.hours_per_day", "expected a number of hours", "(value: '8')")),
    Case("unknown-encoding", unknown_encoding, ("mapping.toml, values.encoding", "(value: 'utf-99')")),
    Case("exponent-duration", exponent_duration,
         ("tasks-baseline.csv, line 4, Span (h)", "no exponent such as 1e1", "(value: '8e1')")),
    Case("underscore-duration", underscore_duration,
         ("tasks-baseline.csv, line 4, Span (h)", "no underscore", "(value: '8_0')")),
    Case("full-width-digit-lag", full_width_digits_in_lag,
         ("logic-baseline.csv, line 3, Gap (h)", "in the digits 0-9", "(value: '\uff10')")),
    Case("short-row", short_row,
         ("tasks-baseline.csv, line 4", "row has 6 cells, the header has 11", "(value: '6')")),
    Case("rot13-encoding", rot13_encoding,
         ("mapping.toml, values.encoding", "expected a text encoding", "(value: 'rot13')")),
    Case("base64-encoding", base64_encoding,
         ("mapping.toml, values.encoding", "expected a text encoding", "(value: 'base64')")),
    Case("long-delimiter", long_delimiter, ("mapping.toml, values.delimiter", "one character", "(value: ';;')")),
    Case("snapshot-id-climbing-out", snapshot_id_climbing_out,
         ("mapping.toml, snapshot ../../escaped.id", "names a casefile folder", "(value: '../../escaped')")),
    Case("single-bracket-party", single_bracket_party, ("mapping.toml, party", "expected [[party]] tables")),
    Case("control-character-in-project-name", control_character_in_project_name,
         ("mapping.toml, project.name", "control or text-direction", "(value: 'U+001B')")),
]


def tree(folder: Path) -> dict[str, str]:
    """Every file under ``folder``: relative path -> SHA-256."""
    return {p.relative_to(folder).as_posix(): hashlib.sha256(p.read_bytes()).hexdigest()
            for p in sorted(folder.rglob("*")) if p.is_file()}


def test_at_least_twelve_hostile_import_cases() -> None:
    """The import has a corpus of its own, at least twelve cases (the brief for issue 10 and 11)."""
    assert len(CASES) >= 12
    assert len({c.name for c in CASES}) == len(CASES)


@pytest.mark.parametrize("case", CASES, ids=[c.name for c in CASES])
def test_hostile_import_is_refused_cleanly(case: Case, tmp_path: Path, monkeypatch) -> None:
    """Exit 1, the file/row/column-or-key and value named, no traceback, nothing written, sources unchanged."""
    work = tmp_path / "work"
    src = work / "src"
    shutil.copytree(EXAMPLE, src)
    case.mutate(src)
    before = tree(src)
    monkeypatch.chdir(work)
    monkeypatch.delenv("FORENSIC_DEBUG", raising=False)
    started = time.monotonic()
    result = CliRunner().invoke(main, [*case.options, "import", str(src / "mapping.toml"), "--out", str(work / "out")])
    assert time.monotonic() - started < 20  # no hang on a hostile source (generous for slow machines)
    assert result.exit_code == 1, result.output
    assert result.output.startswith("Error: ")  # click.ClickException (common practice)
    assert "Traceback" not in result.output and "internal error" not in result.output, result.output
    text = result.output
    first = case.wanted[0]
    assert any(all(w in line for w in case.wanted if not w.startswith("--")) for line in text.splitlines()
               if first in line), f"no line with {case.wanted} in:\n{text}"
    for hint in (w for w in case.wanted if w.startswith("--")):
        assert hint in text
    assert sorted(os.listdir(work)) == ["src"]  # no --out, no temporary .out.*.part folder
    assert not (tmp_path / "escaped").exists()
    assert tree(src) == before


def test_hidden_sheets_hidden_rows_and_merged_cells_are_reported_in_what_the_import_prints(tmp_path, monkeypatch):
    """Read as they are, but said: a reader of the workbook would not see them, or see them otherwise.

    The Tasks sheet is hidden behind a visible Cover sheet; sheet row 4
    (KL-110) is hidden; K5:K6 (two Notes cells) are merged.
    """
    work = tmp_path / "work"
    src = work / "src"
    shutil.copytree(EXAMPLE, src)

    def hide(ws) -> None:
        ws.row_dimensions[4].hidden = True
        ws.merge_cells("K5:K6")
        ws.sheet_state = "hidden"
        ws.parent.create_sheet("Cover", 0).append(["see the Tasks sheet"])

    _workbook(src / "tasks.xlsx", _tasks_rows(src), hide)
    _use_sheet(src)
    before = tree(src)
    monkeypatch.chdir(work)
    result = CliRunner().invoke(main, ["import", str(src / "mapping.toml"), "--out", str(work / "out")])
    assert result.exit_code == 0, result.output
    assert "activities: tasks.xlsx[Tasks] is a hidden sheet; it was read like any other" in result.output
    assert "activities: tasks.xlsx[Tasks]: hidden rows read like any other (1: 4)" in result.output
    assert ("activities: tasks.xlsx[Tasks]: merged cells, each read as its top-left cell with the others blank "
            "(1: K5:K6)") in result.output
    assert tree(src) == before
