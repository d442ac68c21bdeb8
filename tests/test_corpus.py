"""The corpus of malformed casefiles (tests/corpus/cases.toml) through the real command line.

Each case must be refused with exit status 1 and a message that names the
file, the line or manifest key, and the value (the casefile format,
"Errors"), with no traceback, and with nothing written: neither the
casefile folder nor the working directory changes. The expected problem of
each case is stated in the corpus manifest, worked out by hand from the
valid casefile of tests/casefile_helpers.py and the byte offsets of the
committed files (tests/corpus/files/).
"""

from __future__ import annotations

import collections
import hashlib
import json
import os
import subprocess
import sys
from pathlib import Path

import pytest
from click.testing import CliRunner

from forensic.cli import main
from forensic.core.errors import printable
from tests.corpus.build import CATEGORIES, Case, build_case, load_cases

CASES = load_cases()
REPO = Path(__file__).resolve().parents[1]


def tree(folder: Path) -> dict[str, str]:
    """Every file and link under ``folder``: relative path -> SHA-256 or link target."""
    out = {}
    for dirpath, dirnames, filenames in os.walk(folder):
        for name in dirnames + filenames:
            p = Path(dirpath) / name
            rel = p.relative_to(folder).as_posix()
            if p.is_symlink():
                out[rel] = "-> " + os.readlink(p)
            elif p.is_file():
                out[rel] = hashlib.sha256(p.read_bytes()).hexdigest()
            else:
                out[rel] = "folder"
    return out


def problem_line(case: Case, output: str) -> str:
    """The line of the error output that reports the case's problem (asserts there is one)."""
    wanted = [case.file, case.says]
    if case.line is not None:
        wanted.append(f"line {case.line}")
    if case.key is not None:
        wanted.append(case.key)
    if case.value is not None:
        wanted.append(f"(value: {case.value!r})")
    for line in output.splitlines():
        if all(w in line for w in wanted):
            return line
    raise AssertionError(f"no line with {wanted} in:\n{output}")


@pytest.fixture
def workdir(tmp_path, monkeypatch):
    """An empty working directory, to show that a refused run leaves no stray file."""
    cwd = tmp_path / "cwd"
    cwd.mkdir()
    monkeypatch.chdir(cwd)
    return cwd


def test_corpus_covers_every_category_with_forty_cases_or_more():
    """The corpus has at least 40 cases and at least three in each category the issue lists."""
    counts = collections.Counter(c.category for c in CASES)
    # Categories and the minimum of 40: issue 10 (robustness and security).
    assert len(CASES) >= 40
    assert all(counts[c] >= 3 for c in CATEGORIES), counts


@pytest.mark.parametrize("case", CASES, ids=[c.name for c in CASES])
def test_malformed_casefile_is_refused_by_check(case, tmp_path, workdir):
    """forensic check refuses the case: exit 1, file/line-or-key/value named, no traceback, nothing written."""
    root = build_case(case, tmp_path / "in")
    before = tree(tmp_path / "in")
    result = CliRunner().invoke(main, ["check", str(root), "--json"])
    assert result.exit_code == 1, result.output
    assert result.stderr.startswith("Error: ")  # click.ClickException (common practice)
    assert "Traceback" not in result.output and "internal error" not in result.output
    problem_line(case, result.stderr)
    # With --json, stdout is {"valid": false, "problems": [...]} and one problem is the case's (issue 21).
    data = json.loads(result.stdout)
    assert data["valid"] is False
    # JSON carries the raw text; the case names it as the message prints it (escaped, forensic.core.errors.printable).
    assert any(printable(p["file"]) == case.file and case.says in p["message"]
               and (case.line is None or p["line"] == case.line)
               and (case.key is None or p["key"] == case.key)
               and (case.value is None or printable(str(p["value"])) == case.value) for p in data["problems"]), data
    assert tree(tmp_path / "in") == before
    assert list(workdir.iterdir()) == []


COMMANDS = [
    ["schedule", "--json"],
    ["windows", "--csv"],
    ["impact", "--all"],
    ["but-for"],
    ["recover", "--snapshot", "U01", "--days", "1"],
    ["report", "--out", "report.pdf"],
    ["compare", "BL", "U01"],
]
SOME = [c for c in CASES if c.name in ("nan-duration", "loop-only-the-fragnet-creates", "dot-dot-path")]


@pytest.mark.parametrize("command", COMMANDS, ids=[c[0] for c in COMMANDS])
@pytest.mark.parametrize("case", SOME, ids=[c.name for c in SOME])
def test_every_loading_command_refuses_a_malformed_casefile(case, command, tmp_path, workdir):
    """The other loading commands refuse a bad casefile just as check does, before any analysis."""
    root = build_case(case, tmp_path / "in")
    before = tree(tmp_path / "in")
    result = CliRunner().invoke(main, [command[0], str(root), *command[1:]])
    assert result.exit_code == 1, result.output
    assert "Traceback" not in result.output
    problem_line(case, result.output)
    assert tree(tmp_path / "in") == before
    assert list(workdir.iterdir()) == []


SUBPROCESS = [c for c in CASES if c.name in ("latin1-activities", "manifest-nested-too-deeply")]


@pytest.mark.parametrize("case", SUBPROCESS, ids=[c.name for c in SUBPROCESS])
def test_malformed_casefile_is_refused_by_python_m_forensic(case, tmp_path, workdir):
    """`python -m forensic check` in a real process: exit 1, the message on stderr, no traceback."""
    root = build_case(case, tmp_path / "in")
    before = tree(tmp_path / "in")
    env = {**os.environ, "PYTHONPATH": str(REPO)}
    env.pop("FORENSIC_DEBUG", None)
    proc = subprocess.run([sys.executable, "-m", "forensic", "check", str(root)], cwd=workdir, env=env,
                          capture_output=True, text=True, timeout=60)
    assert proc.returncode == 1
    assert proc.stdout == ""
    assert proc.stderr.startswith("Error: ") and "Traceback" not in proc.stderr
    problem_line(case, proc.stderr)
    assert tree(tmp_path / "in") == before
    assert list(workdir.iterdir()) == []
