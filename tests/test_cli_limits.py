"""The loading ceilings on the command line: --max-file-mb, --max-activities, --max-links and their variables.

The helper casefile has 4 activities and 3 links per snapshot
(tests/casefile_helpers.py); a sparse file (POSIX truncate) is large on
paper and costs no disk, so refusing it quickly shows it was not read.
"""

from __future__ import annotations

import time

import pytest
from click.testing import CliRunner

from forensic.cli import main
from tests.casefile_helpers import FILES, write_casefile


def test_huge_file_is_refused_by_size_without_being_read(tmp_path):
    """A 10 GiB activities file is refused from its size in well under a second."""
    root = write_casefile(tmp_path)
    with open(root / "snapshots/BL/activities.csv", "r+b") as fh:
        fh.truncate(10 * 1024**3)
    start = time.perf_counter()
    result = CliRunner().invoke(main, ["check", str(root)])
    assert time.perf_counter() - start < 5  # reading 10 GiB would take far longer (common practice)
    assert result.exit_code == 1
    assert "snapshots/BL/activities.csv: file is 10737418240 bytes, over the limit of 67108864 bytes" in result.output
    assert "--max-file-mb or FORENSIC_MAX_FILE_MB" in result.output


@pytest.mark.parametrize(("args", "env", "says"), [
    (["--max-activities", "3"], {}, "snapshots/BL/activities.csv, line 5: more than 3 rows"),
    ([], {"FORENSIC_MAX_ACTIVITIES": "3"}, "--max-activities or FORENSIC_MAX_ACTIVITIES"),
    (["--max-links", "2"], {}, "snapshots/BL/links.csv, line 4: more than 2 rows"),
    ([], {"FORENSIC_MAX_LINKS": "2"}, "--max-links or FORENSIC_MAX_LINKS"),
    ([], {"FORENSIC_MAX_FILE_MB": "1"}, None),
])
def test_ceilings_by_option_or_environment_variable(tmp_path, args, env, says):
    """Each ceiling is set by its group option or its variable; over it, exit 1 naming file, line and option."""
    root = write_casefile(tmp_path)
    if says is None:  # 1 MiB: the small casefile passes, a 2 MiB one does not
        assert CliRunner().invoke(main, ["check", str(root)], env=env).exit_code == 0
        (root / "events.csv").write_text((root / "events.csv").read_text() + "\n" * (2 * 1024**2))
        size = len(FILES["events.csv"].encode()) + 2 * 1024**2
        says = f"events.csv: file is {size} bytes, over the limit of 1048576 bytes"  # 1 MiB = 2**20
    result = CliRunner().invoke(main, [*args, "check", str(root)], env=env)
    assert result.exit_code == 1, result.output
    assert says in result.output
    assert "Traceback" not in result.output


def test_ceiling_must_be_a_positive_whole_number(tmp_path):
    """--max-activities 0 is a usage error (exit 2) naming the option and its variable."""
    result = CliRunner().invoke(main, ["--max-activities", "0", "check", str(write_casefile(tmp_path))])
    assert result.exit_code == 2
    assert "--max-activities" in result.output and "x>=1" in result.output


def test_ceilings_reach_every_loading_command(tmp_path):
    """The group's ceiling applies to schedule and windows as well as check."""
    root = write_casefile(tmp_path)
    for command in (["schedule", "--json"], ["windows", "--json"], ["impact", "--all"]):
        result = CliRunner().invoke(main, ["--max-links", "1", command[0], str(root), *command[1:]])
        assert result.exit_code == 1 and "more than 1 rows" in result.output, result.output
        assert "raise the limit with --max-links" in result.output, result.output
