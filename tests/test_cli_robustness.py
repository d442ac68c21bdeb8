"""Issue 22 through the real command line: no internal errors, bounded and inert messages.

Each test runs the command as a user would (click's runner, or ``python -m
forensic`` in a subprocess where a signal or the process's exit matters) and
checks the exit status, the ``Error:`` line with the file, line and value,
that there is no traceback, and that the casefile's files are unchanged.
"""

from __future__ import annotations

import json
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


def _pdf_text(path: Path) -> str:
    from pypdf import PdfReader

    return "\n".join(page.extract_text() or "" for page in PdfReader(str(path)).pages)


def test_a_name_of_30000_characters_and_a_word_of_5000_letters_lay_out_with_the_full_text_in_the_appendix(tmp_path):
    """A table cell is cut at 300 characters with an ellipsis and a note; the appendix prints the whole text.

    Before, a 30,000-character name made one table row some 8,000 points
    tall, taller than a page (757 points of frame on A4): reportlab's
    LayoutError, an internal error. The cut is ours (forensic.report.pdf.CELL_CHARS).
    """
    root = write_casefile(tmp_path)
    words = " ".join(f"w{i:05d}" for i in range(5000))[:30000]  # 30,000 characters ending in "w4285"
    long_word = "Z" * 5000
    for rel in ("snapshots/BL/activities.csv", "snapshots/U01/activities.csv"):
        edit(root, rel, "Excavate wet well", words)
        edit(root, rel, "Pour base slab", f"Pour {long_word} slab")
    before = tree(root)
    out = tmp_path / "out" / "r.pdf"
    out.parent.mkdir()
    result = CliRunner().invoke(main, ["report", str(root), "--out", str(out)])
    assert result.exit_code == 0, result.output
    assert tree(root) == before
    text = _pdf_text(out)
    assert "Appendix: full text of shortened entries" in text
    assert "[full text: note 1]" in text
    appendix = text[text.rindex("Appendix: full text of shortened entries"):]
    tokens = appendix.split()
    assert [t for t in tokens if t.startswith("w0")] == words.split()  # every word of the 30,000, in order
    assert appendix.count("Z") == 5000  # the long word whole, wrapped over lines


def test_a_template_nested_five_thousand_levels_deep_is_refused(tmp_path):
    """tomllib recurses once a level: 5,000 nested arrays raise RecursionError, now a named refusal."""
    root = write_casefile(tmp_path)
    tpl = tmp_path / "deep.toml"
    tpl.write_text((REPO / "report_templates" / "full.toml").read_text(encoding="utf-8")
                   + "\nx = " + "[" * 5000 + "]" * 5000 + "\n", encoding="utf-8")
    before = tree(root)
    result = CliRunner().invoke(main, ["report", str(root), "--template", str(tpl), "--out", str(tmp_path / "r.pdf")])
    assert result.exit_code == 1
    assert result.output.startswith("Error: ") and "internal error" not in result.output
    assert "deep.toml: not valid TOML (nested too deeply)" in result.output
    assert not (tmp_path / "r.pdf").exists()
    assert tree(root) == before


# -- limits and floods -------------------------------------------------------------------------


def _seven_one_day_weeks(folder: Path) -> Path:
    """The 3.6 KB hostile casefile: seven calendars of one working day a week, tasks of 36,500 days."""
    days = ["mon", "tue", "wed", "thu", "fri", "sat", "sun"]
    manifest = ['format = "forensic-casefile/2"', "", "[project]", 'name = "Seven one-day weeks"',
                'default_calendar = "c0"', ""]
    for i, d in enumerate(days):
        manifest += ["[[calendar]]", f'id = "c{i}"', f'workdays = ["{d}"]', ""]
    manifest += ["[[snapshot]]", 'id = "BL"', 'role = "baseline"', "data_date = 2026-01-05",
                 'activities = "a.csv"', 'links = "l.csv"']
    folder.mkdir()
    (folder / "casefile.toml").write_text("\n".join(manifest) + "\n", encoding="utf-8")
    rows = ["id,name,duration,calendar", *(f"T{i},Task {i},36500,c{i}" for i in range(7))]
    (folder / "a.csv").write_text("\n".join(rows) + "\n", encoding="utf-8")
    (folder / "l.csv").write_text("pred,succ,type,lag\n" + "".join(f"T{i},T{i + 1},FS,36500\n" for i in range(6)),
                                  encoding="utf-8")
    return folder


def test_seven_one_day_weeks_and_century_tasks_are_refused_within_a_small_address_space(tmp_path):
    """Before, check peaked at 2.8 GB building working-day indices to the year 9999; now it is refused on loading.

    The process runs with its address space capped at 1.5 GB (RLIMIT_AS): a
    MemoryError would show as an internal error. T0 alone: 36,500 working
    days at one a week need at least 7 * 36,499 + 1 = 255,494 calendar days.
    """
    import resource

    root = _seven_one_day_weeks(tmp_path / "seven")
    assert sum(p.stat().st_size for p in root.iterdir()) < 4096  # a few KB of input
    before = tree(root)

    def cap() -> None:
        resource.setrlimit(resource.RLIMIT_AS, (1536 * 1024 * 1024, resource.RLIM_INFINITY))

    env = {**_env(), "OPENBLAS_NUM_THREADS": "1", "OMP_NUM_THREADS": "1"}
    proc = subprocess.run([sys.executable, "-m", "forensic", "check", str(root)], cwd=tmp_path, env=env,
                          capture_output=True, text=True, timeout=120, preexec_fn=cap)
    assert proc.returncode == 1, proc.stderr
    assert proc.stderr.startswith("Error: a.csv, line 2, duration: activity T0 alone needs at least 255494 "
                                  "calendar days (36500 working days on calendar c0 (1 working day a week)); "
                                  "over the ceiling of 100 years (36525 days)")
    assert "Traceback" not in proc.stderr and "internal error" not in proc.stderr
    assert tree(root) == before


def test_fifty_thousand_loops_print_fifty_problems_and_a_count(tmp_path):
    """50,000 two-activity loops gave 7.6 MB of messages; now the first 50 and "... and 49950 more"."""
    root = write_casefile(tmp_path)
    n = 50_000
    with open(root / "snapshots/BL/activities.csv", "a", encoding="utf-8") as fh:
        for i in range(n):
            fh.write(f"X{i}a,Loop {i} a,task,1,,,,,,,CON,CIV,,,\nX{i}b,Loop {i} b,task,1,,,,,,,CON,CIV,,,\n")
    with open(root / "snapshots/BL/links.csv", "a", encoding="utf-8") as fh:
        for i in range(n):
            fh.write(f"X{i}a,X{i}b,FS,0\nX{i}b,X{i}a,FS,0\n")
    before = tree(root)
    result = CliRunner().invoke(main, ["check", str(root)])
    assert result.exit_code == 1
    lines = result.output.splitlines()
    assert lines[0] == "Error: 50000 problems in the casefile:"
    # links.csv: the header is line 1, the valid links lines 2-4, so loop i is on lines 5 + 2i and 6 + 2i.
    assert lines[1] == ("  snapshots/BL/links.csv, line 5: logic loop through the links on lines 5, 6; a loop has "
                        "no schedule, break one of its links (value: 'X0a -> X0b -> X0a')")
    assert len(lines) == 1 + 50 + 1
    assert lines[-1].startswith("  ... and 49950 more problems not listed")
    assert len(result.output) < 20_000
    assert tree(root) == before


def test_a_loop_through_five_thousand_activities_is_shown_by_its_ends(tmp_path):
    """One loop through 5,000 activities: its first and last ten activities and the count, one short line."""
    root = write_casefile(tmp_path)
    n = 5000
    with open(root / "snapshots/BL/activities.csv", "a", encoding="utf-8") as fh:
        fh.writelines(f"C{i:04d},Step {i},task,1,,,,,,,CON,CIV,,,\n" for i in range(n))
    with open(root / "snapshots/BL/links.csv", "a", encoding="utf-8") as fh:
        fh.writelines(f"C{i:04d},C{(i + 1) % n:04d},FS,0\n" for i in range(n))
    result = CliRunner().invoke(main, ["check", str(root)])
    assert result.exit_code == 1
    assert len(result.output) < 1000
    assert "... (4980 more) ..." in result.output and "(5000 activities)" in result.output


def test_a_window_list_of_twenty_thousand_unknown_snapshots_prints_fifty(tmp_path):
    """Each unknown window boundary is a problem; only the first 50 are printed, then the count."""
    root = write_casefile(tmp_path)
    items = ", ".join(f'"W{i}"' for i in range(20_000))
    edit(root, "casefile.toml", 'windows = ["U01"]', f"windows = [{items}]")
    result = CliRunner().invoke(main, ["check", str(root)])
    assert result.exit_code == 1
    assert result.output.startswith("Error: 20000 problems in the casefile:")
    assert "... and 19950 more problems not listed" in result.output
    assert len(result.output.splitlines()) == 52


# -- silent acceptance -------------------------------------------------------------------------


def test_compare_with_the_newer_snapshot_first_warns_that_the_order_is_reversed(tmp_path):
    """U01 (2026-02-02) given before BL (2026-01-05): the comparison runs, with a warning on stderr."""
    root = write_casefile(tmp_path)
    runner = CliRunner(mix_stderr=False) if "mix_stderr" in CliRunner.__init__.__code__.co_varnames else CliRunner()
    result = runner.invoke(main, ["compare", str(root), "U01", "BL", "--json"])
    assert result.exit_code == 0
    assert ("warning: the order is reversed: OLD U01 (data date 2026-02-02) is later than NEW BL "
            "(data date 2026-01-05)") in result.stderr
    assert "warning" not in result.stdout
    result = runner.invoke(main, ["compare", str(root), "BL", "U01", "--json"])
    assert result.exit_code == 0 and "reversed" not in result.stderr


@pytest.mark.parametrize("epoch", ["1700000000", "0", "not-a-number"])
def test_source_date_epoch_is_ignored_so_the_same_inputs_give_the_same_pdf_bytes(epoch, tmp_path):
    """The decision (docs/robustness.md): SOURCE_DATE_EPOCH is ignored; the PDF depends on the inputs only.

    reportlab would stamp the creation date from the variable (and fail on
    "not-a-number"); the report is already reproducible without it.
    """
    root = write_casefile(tmp_path)
    plain, stamped = tmp_path / "plain.pdf", tmp_path / "stamped.pdf"
    env = {k: v for k, v in os.environ.items() if k != "SOURCE_DATE_EPOCH"}
    r1 = CliRunner(env={**env, "SOURCE_DATE_EPOCH": None}).invoke(main, ["report", str(root), "--out", str(plain)])
    r2 = CliRunner(env={"SOURCE_DATE_EPOCH": epoch}).invoke(main, ["report", str(root), "--out", str(stamped)])
    assert r1.exit_code == 0 and r2.exit_code == 0, (r1.output, r2.output)
    assert plain.read_bytes() == stamped.read_bytes()
    assert os.environ.get("SOURCE_DATE_EPOCH") == env.get("SOURCE_DATE_EPOCH")  # put back as it was


def _rename_everywhere(root: Path, old: str, new: str) -> None:
    for path in root.rglob("*.csv"):
        path.write_text(path.read_text(encoding="utf-8").replace(old, new), encoding="utf-8")


def test_an_id_mixing_latin_and_cyrillic_letters_is_warned_about(tmp_path):
    """"A12О" ending in a Cyrillic О (U+041E) prints like "A12O": check warns, naming both scripts.

    An id of one script (the Cyrillic "Р120") is not warned about: it may be
    the casefile's own language.
    """
    root = write_casefile(tmp_path)
    _rename_everywhere(root, "A120", "\u0420120")
    result = CliRunner().invoke(main, ["check", str(root)])
    assert result.exit_code == 0, result.output
    assert "mixes letters" not in result.output
    _rename_everywhere(root, "\u0420120", "A12\u041e")
    before = tree(root)
    result = CliRunner().invoke(main, ["check", str(root)])
    assert result.exit_code == 0, result.output
    assert ("snapshots/BL/activities.csv, line 4: activity id 'A12\u041e' mixes letters of the CYRILLIC and "
            "LATIN scripts") in result.output
    assert tree(root) == before


def test_check_prints_at_most_fifty_warnings_and_the_count_of_the_rest(tmp_path):
    """60 activities with no successor: 60 open-end warnings (and more); text mode lists 50, JSON all."""
    root = write_casefile(tmp_path)
    with open(root / "snapshots/BL/activities.csv", "a", encoding="utf-8") as fh:
        fh.writelines(f"Q{i:02d},Loose end {i},task,1,,,,,,,CON,CIV,,,\n" for i in range(60))
    result = CliRunner().invoke(main, ["check", str(root)])
    assert result.exit_code == 0, result.output
    count = int(next(line for line in result.output.splitlines() if line.endswith("warning(s):")).split()[0])
    assert count > 60
    assert sum(line.startswith("  warning: ") for line in result.output.splitlines()) == 50
    assert f"  ... and {count - 50} more warnings not listed (--json lists every one)" in result.output
    result = CliRunner().invoke(main, ["check", str(root), "--json"])
    assert len(json.loads(result.stdout)["warnings"]) == count
