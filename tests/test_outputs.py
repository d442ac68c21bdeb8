"""Nothing lost: inputs are only read, outputs are atomic, and never written over a casefile file.

The atomicity rests on ``os.replace`` being an atomic rename on POSIX and
Windows (Python documentation, os.replace); the interrupted-write tests
kill a real writer process mid-write and look at what is left.
"""

from __future__ import annotations

import builtins
import io
import os
import signal
import subprocess
import sys
from pathlib import Path

import pytest
from click.testing import CliRunner

from forensic.cli import main
from forensic.errors import OutputError
from forensic.outputs import atomic_write
from tests.casefile_helpers import FILES, write_casefile

REPO = Path(__file__).resolve().parents[1]

# A child that writes a large payload through atomic_write, slowly, and says
# when it has begun, so the parent can kill it in the middle.
SLOW_WRITER = r"""
import os, sys, time
real_fdopen = os.fdopen

class Slow:
    def __init__(self, fh): self.fh = fh
    def __enter__(self): return self
    def __exit__(self, *exc): return self.fh.__exit__(*exc)
    def flush(self): self.fh.flush()
    def fileno(self): return self.fh.fileno()
    def write(self, data):
        for i in range(0, len(data), 4096):
            self.fh.write(data[i:i + 4096]); self.fh.flush()
            if i == 0:
                print("writing", flush=True)
            time.sleep(0.01)

os.fdopen = lambda fd, mode: Slow(real_fdopen(fd, mode))
"""


def _start(code: str, cwd: Path) -> subprocess.Popen:
    env = {**os.environ, "PYTHONPATH": str(REPO)}
    proc = subprocess.Popen([sys.executable, "-c", SLOW_WRITER + code], cwd=cwd, env=env,
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    assert proc.stdout.readline().strip() == "writing"
    return proc


def test_killed_writer_leaves_the_old_output_intact(tmp_path):
    """SIGKILL in the middle of atomic_write: the old file is untouched; only a hidden .part is left."""
    target = tmp_path / "result.json"
    target.write_text("old result\n", encoding="utf-8")
    proc = _start("from forensic.outputs import atomic_write\n"
                  "atomic_write('result.json', b'x' * 4_000_000)\n", tmp_path)
    parts = list(tmp_path.glob(".forensic-*.part"))
    assert len(parts) == 1 and 0 < parts[0].stat().st_size < 4_000_000  # caught mid-write
    proc.send_signal(signal.SIGKILL)
    proc.wait(timeout=30)
    assert proc.returncode == -signal.SIGKILL
    assert target.read_text(encoding="utf-8") == "old result\n"


def test_interrupted_command_cleans_up_and_keeps_the_old_output(tmp_path):
    """Ctrl-C (SIGINT) while forensic schedule --out writes: exit 130, old file kept, no temporary left."""
    root = write_casefile(tmp_path)
    target = tmp_path / "schedule.json"
    target.write_text("old result\n", encoding="utf-8")
    proc = _start(f"from forensic.cli import main\nmain(['schedule', {str(root)!r}, '--json', "
                  f"'--out', 'schedule.json'], prog_name='forensic')\n", tmp_path)
    proc.send_signal(signal.SIGINT)
    _, err = proc.communicate(timeout=30)
    assert proc.returncode == 130, err  # 128 + SIGINT (common practice)
    assert "Interrupted; nothing was written." in err and "Traceback" not in err
    assert target.read_text(encoding="utf-8") == "old result\n"
    assert list(tmp_path.glob("*.part")) + list(tmp_path.glob(".*.part")) == []


def test_out_replaces_the_old_output_whole(tmp_path):
    """forensic schedule --json --out writes the new file in place of the old, leaving no temporary."""
    root = write_casefile(tmp_path)
    target = tmp_path / "schedule.json"
    target.write_text("old result\n", encoding="utf-8")
    result = CliRunner().invoke(main, ["schedule", str(root), "--json", "--out", str(target)])
    assert result.exit_code == 0, result.output
    assert target.read_text(encoding="utf-8").startswith('{\n  "snapshot": "U01"')
    assert sorted(p.name for p in tmp_path.iterdir()) == ["case", "schedule.json"]


@pytest.mark.parametrize("rel", sorted(FILES))
def test_out_refuses_every_casefile_file(tmp_path, rel):
    """--out naming any file of the casefile is refused (exit 1) and the file is unchanged."""
    root = write_casefile(tmp_path)
    before = (root / rel).read_bytes()
    result = CliRunner().invoke(main, ["check", str(root), "--csv", "--out", str(root / rel)])
    assert result.exit_code == 1
    assert result.output.startswith("Error: ")
    assert f"nothing is written inside a casefile folder ({root})" in result.output
    assert (root / rel).read_bytes() == before


def test_out_refuses_a_casefile_file_reached_through_a_link_or_dots(tmp_path):
    """A symbolic link to an input, or a path with '..' into it, is refused as well."""
    root = write_casefile(tmp_path)
    link = tmp_path / "innocent.csv"
    link.symlink_to(root / "events.csv")
    sneaky = root / "snapshots" / "BL" / ".." / "U01" / "links.csv"
    for target in (link, sneaky):
        result = CliRunner().invoke(main, ["schedule", str(root), "--json", "--out", str(target)])
        assert result.exit_code == 1 and "refusing" in result.output
    assert (root / "events.csv").read_text(encoding="utf-8") == FILES["events.csv"]
    assert (root / "snapshots/U01/links.csv").read_text(encoding="utf-8") == FILES["snapshots/U01/links.csv"]


def test_atomic_write_refuses_protected_path_before_touching_anything(tmp_path):
    """atomic_write raises OutputError for a protected path and creates no temporary file."""
    victim = tmp_path / "links.csv"
    victim.write_text("pred,succ\n", encoding="utf-8")
    with pytest.raises(OutputError):
        atomic_write(victim, "overwritten", [victim])
    assert victim.read_text(encoding="utf-8") == "pred,succ\n"
    assert [p.name for p in tmp_path.iterdir()] == ["links.csv"]


def test_commands_open_casefile_files_read_only(tmp_path, monkeypatch):
    """Every file opened inside the casefile during check and schedule is opened for reading only."""
    root = write_casefile(tmp_path).resolve()
    opened: list[tuple[str, str]] = []
    real_open, real_os_open = builtins.open, os.open

    def spy_open(file, mode="r", *args, **kwargs):
        opened.append((str(file), mode))
        return real_open(file, mode, *args, **kwargs)

    def spy_os_open(path, flags, *args, **kwargs):
        writing = flags & (os.O_WRONLY | os.O_RDWR | os.O_CREAT | os.O_TRUNC | os.O_APPEND)
        opened.append((str(path), "w" if writing else "r"))
        return real_os_open(path, flags, *args, **kwargs)

    monkeypatch.setattr(builtins, "open", spy_open)
    monkeypatch.setattr(io, "open", spy_open)
    monkeypatch.setattr(os, "open", spy_os_open)
    for args in (["check", str(root)], ["schedule", str(root), "--json"]):
        result = CliRunner().invoke(main, args)
        assert result.exit_code == 0, result.output
    inside = [(f, m) for f, m in opened if Path(f).resolve().is_relative_to(root)]
    assert len(inside) >= 2 * len(FILES)  # the spy saw every file, twice
    assert all(set(m) <= {"r", "b", "t"} for _, m in inside), inside


@pytest.mark.parametrize(("umask", "expected"), [(0o022, 0o644), (0o077, 0o600)])
def test_outputs_follow_the_umask_through_the_cli(tmp_path, umask, expected):
    demo = Path(__file__).resolve().parent.parent / "casefiles" / "riverside"
    out = tmp_path / "schedule.json"
    code = (
        f"import os, sys; os.umask({umask:#o}); from forensic.cli import main; "
        f"sys.argv = ['forensic', 'schedule', {str(demo)!r}, '--snapshot', 'BL', '--json', '--out', {str(out)!r}]; "
        "main()"
    )
    env = {**os.environ, "PYTHONPATH": str(Path(__file__).resolve().parent.parent)}
    proc = subprocess.run([sys.executable, "-c", code], env=env, capture_output=True, text=True, timeout=120)
    assert proc.returncode == 0, proc.stderr
    assert out.stat().st_mode & 0o777 == expected
    assert not list(tmp_path.glob("*.part"))
