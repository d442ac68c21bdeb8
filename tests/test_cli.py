"""The command line as a user meets it: help, documentation, the schedule contract, errors."""

import json
from pathlib import Path

import pytest
from click.testing import CliRunner

from forensic.casefile.reading import load_casefile
from forensic.cli import COMMANDS as LAZY_COMMANDS
from forensic.cli import main
from forensic.core.engine import schedule_snapshot

ROOT = Path(__file__).resolve().parent.parent
DEMO = ROOT / "casefiles" / "riverside"
COMMANDS = sorted(LAZY_COMMANDS)  # the group loads each command's module lazily (forensic.cli._base)


def test_every_lazy_command_loads_and_no_command_is_unlisted():
    """Each name in COMMANDS loads a command of that name, and no registered command is missing from it."""
    import click

    ctx = click.Context(main)
    for name in COMMANDS:
        assert main.get_command(ctx, name).name == name
    assert sorted(main.commands) == COMMANDS


@pytest.mark.parametrize("name", COMMANDS)
def test_every_command_has_help_with_an_example(name):
    """`forensic COMMAND --help` exits 0 and shows an example (our CLI convention)."""
    result = CliRunner().invoke(main, [name, "--help"])
    assert result.exit_code == 0, result.output
    assert "Example" in result.output


@pytest.mark.parametrize("name", COMMANDS)
def test_every_command_is_documented_in_the_readme(name):
    """Each command is listed in README.md's command table."""
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    assert f"`forensic {name}" in readme


def test_schedule_json_keeps_its_documented_keys():
    """`forensic schedule --json` prints the contract keys, with the engine's figures."""
    result = CliRunner().invoke(main, ["schedule", str(DEMO), "--snapshot", "U03", "--json"])
    assert result.exit_code == 0, result.output
    data = json.loads(result.output)
    assert {"snapshot", "data_date", "completion", "activities", "longest_path"} <= set(data)
    keys = {"id", "early_start", "early_finish", "late_start", "late_finish", "total_float",
            "free_float", "critical", "driving_predecessors"}
    assert all(keys <= set(a) for a in data["activities"])
    expected = schedule_snapshot(load_casefile(DEMO), "U03")
    assert data["completion"] == expected.completion.isoformat()
    assert data["longest_path"] == list(expected.longest_path)
    finished = [a for a in data["activities"] if a["status"] == "finished"]
    assert finished and all(a["total_float"] is None for a in finished)


def test_schedule_csv_has_one_row_per_activity():
    """`forensic schedule --csv` has a header and one row per activity of the snapshot."""
    result = CliRunner().invoke(main, ["schedule", str(DEMO), "--snapshot", "BL", "--csv"])
    assert result.exit_code == 0
    lines = result.output.strip().split("\n")
    assert lines[0].startswith("id,name,status,early_start")
    assert len(lines) - 1 == len(load_casefile(DEMO).snapshot("BL").activities)


def test_check_passes_on_the_demo():
    """`forensic check` accepts the demo casefile (exit 0) and names the project."""
    result = CliRunner().invoke(main, ["check", str(DEMO)])
    assert result.exit_code == 0, result.output
    assert "the casefile is valid" in result.output


@pytest.mark.parametrize(
    ("args", "message"),
    [
        (["check", "no-such-folder"], "Error: no-such-folder: casefile folder not found"),
        (["schedule", str(DEMO), "--snapshot", "U99"], "Error: no snapshot 'U99' in the casefile"),
        (["schedule", str(DEMO), "--json", "--csv"], "choose one of --json and --csv"),
    ],
)
def test_errors_are_one_line_without_a_traceback(args, message):
    """User mistakes give `Error: ...`, a non-zero exit and no traceback."""
    result = CliRunner().invoke(main, args)
    assert result.exit_code != 0
    assert message in result.output
    assert "Traceback" not in result.output


def test_demo_copies_the_casefile_and_never_overwrites_a_changed_copy(tmp_path):
    """`forensic demo` copies into --out; a changed copy there is refused, not overwritten."""
    runner = CliRunner()
    result = runner.invoke(main, ["demo", "--out", str(tmp_path)])
    assert result.exit_code == 0, result.output
    copy = tmp_path / "riverside"
    assert (copy / "casefile.toml").read_bytes() == (DEMO / "casefile.toml").read_bytes()
    (copy / "events.csv").write_text("changed\n", encoding="utf-8")
    again = runner.invoke(main, ["demo", "--out", str(tmp_path)])
    assert again.exit_code == 1
    assert "not an unchanged copy" in again.output
    assert (copy / "events.csv").read_text(encoding="utf-8") == "changed\n"


@pytest.mark.parametrize(
    ("args", "header"),
    [
        (["impact", str(DEMO), "--event", "EV03", "--csv"], "event,into,id,name,before,after,impact"),
        (["but-for", str(DEMO), "--party", "OWN", "--csv"], "case,events_removed,not_represented"),
        (["recover", str(DEMO), "--snapshot", "U08", "--days", "2", "--csv"], "id,name,status,days"),
    ],
)
def test_analysis_commands_print_csv(args, header):
    """impact, but-for and recover print their main table as CSV with --csv (issue contract: --csv on each command)."""
    result = CliRunner().invoke(main, args)
    assert result.exit_code == 0, result.output
    assert result.output.startswith(header)
    assert len(result.output.strip().split("\n")) >= 2


def test_a_closed_pipe_stops_quietly(tmp_path):
    """`forensic ... | head` ends without an internal error (Python docs, signal module, "Note on SIGPIPE")."""
    import os
    import subprocess
    import sys

    read_end, write_end = os.pipe()
    os.close(read_end)  # the reader is gone before the first byte: every write fails with EPIPE
    try:
        proc = subprocess.run(
            [sys.executable, "-m", "forensic", "schedule", str(DEMO)],
            cwd=ROOT, stdout=write_end, stderr=subprocess.PIPE, timeout=60, check=False,
        )
    finally:
        os.close(write_end)
    err = proc.stderr.decode("utf-8")
    assert proc.returncode == 1  # the Python docs' recipe exits 1
    assert "internal error" not in err and "Traceback" not in err


@pytest.mark.parametrize(
    "args",
    [
        ["windows", str(DEMO), "--json"],
        ["impact", str(DEMO), "--event", "EV03", "--event", "EV07", "--cumulative", "--json"],
        ["but-for", str(DEMO), "--party", "OWN", "--json"],
    ],
)
def test_json_units_are_spelt_like_the_manifest(args):
    """Every JSON "unit" is the manifest's delay_unit token (calendar-days / working-days)."""
    result = CliRunner().invoke(main, args)
    assert result.exit_code == 0, result.output
    units = set()

    def walk(x):
        if isinstance(x, dict):
            for k, v in x.items():
                if k == "unit":
                    units.add(v)
                walk(v)
        elif isinstance(x, list):
            for v in x:
                walk(v)

    walk(json.loads(result.stdout))  # warnings go to stderr
    assert units == {"calendar-days"}  # the demo's delay_unit


@pytest.mark.parametrize(
    "args",
    [
        ["impact", "--event", "EV03", "--json"],
        ["but-for", "--party", "OWN", "--csv"],
        ["recover", "--snapshot", "U08", "--days", "2", "--json"],
    ],
)
def test_analysis_out_writes_atomically_and_never_over_an_input(tmp_path, args):
    """--out on impact, but-for and recover writes the file, and refuses a casefile's own file."""
    runner = CliRunner()
    target = tmp_path / "result.txt"
    ok = runner.invoke(main, [args[0], str(DEMO), *args[1:], "--out", str(target)])
    assert ok.exit_code == 0, ok.output
    assert target.read_text(encoding="utf-8").strip()
    manifest = DEMO / "casefile.toml"
    before = manifest.read_bytes()
    refused = runner.invoke(main, [args[0], str(DEMO), *args[1:], "--out", str(manifest)])
    assert refused.exit_code == 1
    assert "refusing to write over a casefile input" in refused.output
    assert manifest.read_bytes() == before
