"""Issue 22 through the real command line: no internal errors, bounded and inert messages.

Each test runs the command as a user would (click's runner, or ``python -m
forensic`` in a subprocess where a signal or the process's exit matters) and
checks the exit status, the ``Error:`` line with the file, line and value,
that there is no traceback, and that the casefile's files are unchanged.
"""

from __future__ import annotations

import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest
from click.testing import CliRunner

from forensic.cli import main
from tests.casefile_helpers import edit, write_casefile
from tests.test_corpus import tree

REPO = Path(__file__).resolve().parents[1]
DEMO = REPO / "casefiles" / "riverside"


def _env() -> dict[str, str]:
    env = {**os.environ, "PYTHONPATH": str(REPO)}
    env.pop("FORENSIC_DEBUG", None)
    return env


@pytest.mark.parametrize("delay", [0.0, 0.05, 0.2, 0.45])
def test_ctrl_c_in_the_first_half_second_of_report_exits_130_without_a_traceback(delay, tmp_path):
    """SIGINT while the command line is still importing (or building): one line, status 130, no traceback.

    130 = 128 + SIGINT (2), the shell's convention for a process ended by
    Ctrl-C (common practice; POSIX sh "Exit Status"). The PDF is not written.
    """
    proc = subprocess.Popen([sys.executable, "-m", "forensic", "report", str(DEMO), "--out", "r.pdf"],
                            cwd=tmp_path, env=_env(), stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    # Python's own start-up (the site module) is before any code of ours and
    # can take seconds on a loaded machine; wait until forensic's imports have
    # begun (numpy's extension mapped into the process), then interrupt.
    maps = Path(f"/proc/{proc.pid}/maps")
    deadline = time.monotonic() + 60
    while time.monotonic() < deadline and proc.poll() is None:
        try:
            if "numpy" in maps.read_text():
                break
        except OSError:
            break
        time.sleep(0.002)
    time.sleep(delay)
    proc.send_signal(signal.SIGINT)
    out, err = proc.communicate(timeout=120)
    if proc.returncode == 0:  # the report was faster than the delay on this machine: nothing to interrupt
        assert (tmp_path / "r.pdf").is_file()
        return
    assert proc.returncode == 130, (out, err)
    assert "Traceback" not in err and "KeyboardInterrupt" not in err
    assert err.strip() == "Interrupted; nothing was written."
    assert sorted(os.listdir(tmp_path)) == []


def test_a_fragnet_folder_named_with_a_terminal_escape_is_refused_and_shown_escaped(tmp_path):
    """The folder name is quoted with its escape written out (\\x1b), never raw: no title set, no screen cleared."""
    root = write_casefile(tmp_path)
    hostile = root / "fragnets" / "EV\x1b]0;owned\x07\x1b[2J"
    hostile.mkdir()
    (hostile / "activities.csv").write_text("id,name,duration\nF20,Pump,1\n", encoding="utf-8")
    (hostile / "links.csv").write_text("pred,succ,type,lag\n", encoding="utf-8")
    before = tree(root)
    result = CliRunner().invoke(main, ["check", str(root)])
    assert result.exit_code == 1
    assert result.output.startswith("Error: ")
    assert "\x1b" not in result.output and "\x07" not in result.output
    assert "fragnets/EV\\x1b]0;owned\\x07\\x1b[2J: a fragnet folder name may not contain control" in result.output
    assert tree(root) == before


def test_a_dot_folder_in_fragnets_is_reported_as_ignored(tmp_path):
    """A hidden folder is not a fragnet: check says so; an event naming it hears why it is not found."""
    root = write_casefile(tmp_path)
    (root / "fragnets" / "..V3").mkdir()
    result = CliRunner().invoke(main, ["check", str(root)])
    assert result.exit_code == 0, result.output
    assert "fragnets/..V3: a folder whose name starts with a dot is ignored" in result.output
    edit(root, "events.csv", ",EV02,Site diary", ",..V3,Site diary")
    result = CliRunner().invoke(main, ["check", str(root)])
    assert result.exit_code == 1
    assert "events.csv, line 3, fragnet: no such fragnet folder under fragnets/; found EV02; a folder whose " \
           "name starts with a dot is ignored (value: '..V3')" in result.output
