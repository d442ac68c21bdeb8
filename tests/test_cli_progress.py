"""Status lines of the long commands: silent when piped, shown under ``forensic --progress`` (issue 21).

CliRunner's standard error is not a terminal, so it stands for a pipe; the
JSON on standard output must be the same with and without the flag.
"""

from __future__ import annotations

from pathlib import Path

import pytest
from click.testing import CliRunner

from forensic.cli import main
from tests.casefile_helpers import write_casefile

DEMO = Path(__file__).resolve().parent.parent / "casefiles" / "riverside"  # crash data: the demo's (invented)

COMMANDS = {
    "windows": (["windows", "{cf}", "--json"], "Analysing"),
    "impact": (["impact", "{cf}", "--all", "--json"], "Inserting"),
    "but-for": (["but-for", "{cf}", "--json"], "as-built schedule"),
    "recover": (["recover", "{demo}", "--snapshot", "U10", "--days", "2", "--json"], "Planning the recovery"),
    "export": (["export", "{cf}", "--json", "{out}"], "forensic export: scheduling"),
}


def _run(tmp_path, args, progress: bool):
    cf = tmp_path / "case" / "case"
    if not cf.exists():
        cf = write_casefile(tmp_path / "case")
    out = tmp_path / "export.json"
    argv = [a.format(cf=cf, out=out, demo=DEMO) for a in args]
    return CliRunner().invoke(main, (["--progress"] if progress else []) + argv)


@pytest.mark.parametrize("name", sorted(COMMANDS))
def test_long_commands_are_silent_when_piped(tmp_path, name):
    args, words = COMMANDS[name]
    r = _run(tmp_path, args, progress=False)
    assert r.exit_code == 0, r.output
    assert words not in r.stderr


@pytest.mark.parametrize("name", sorted(COMMANDS))
def test_progress_flag_shows_status_lines_and_leaves_stdout_alone(tmp_path, name):
    args, words = COMMANDS[name]
    quiet = _run(tmp_path, args, progress=False)
    loud = _run(tmp_path, args, progress=True)
    assert loud.exit_code == 0, loud.output
    assert words in loud.stderr
    assert loud.stdout == quiet.stdout  # export writes its JSON to a file: both print nothing


def test_progress_after_the_command_says_where_it_goes(tmp_path):
    """``--progress`` is an option of forensic itself: given after the command, the error says so."""
    cf = write_casefile(tmp_path / "case")
    r = CliRunner().invoke(main, ["windows", str(cf), "--progress"])
    assert r.exit_code == 2
    assert "put it before the command" in r.output
