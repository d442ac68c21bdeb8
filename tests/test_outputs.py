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

from forensic.casefile.outputs import atomic_write
from forensic.cli import main
from forensic.core.errors import OutputError
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
    proc = _start("from forensic.casefile.outputs import atomic_write\n"
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


# --- hostile output targets (issue 22): the corpus and the cases it cannot hold ---------

import errno  # noqa: E402
import hashlib  # noqa: E402
import socket  # noqa: E402
import stat  # noqa: E402
import threading  # noqa: E402
import tomllib  # noqa: E402

from hypothesis import HealthCheck, given, settings  # noqa: E402
from hypothesis import strategies as st  # noqa: E402

OUTPUT_CASES = tomllib.loads((REPO / "tests" / "corpus" / "outputs.toml").read_text(encoding="utf-8"))["case"]
LONG = "n" * 260  # one name over the 255-byte NAME_MAX of common file systems (POSIX limits.h)


def snapshot_tree(folder: Path) -> dict[str, str]:
    """Every entry under ``folder``: relative path -> kind, and the SHA-256 of a file or a link's target."""
    out = {}
    for dirpath, dirnames, filenames in os.walk(folder):
        for name in dirnames + filenames:
            p = Path(dirpath) / name
            rel = p.relative_to(folder).as_posix()
            mode = os.lstat(p).st_mode
            if stat.S_ISLNK(mode):
                out[rel] = "link -> " + os.readlink(p)
            elif stat.S_ISREG(mode):
                out[rel] = "file " + hashlib.sha256(p.read_bytes()).hexdigest()
            elif stat.S_ISFIFO(mode):
                out[rel] = "fifo"
            elif stat.S_ISSOCK(mode):
                out[rel] = "socket"
            else:
                out[rel] = "folder"
    return out


def _setup(tmp_path: Path, item: dict, keep: list) -> None:
    path = tmp_path / item["path"]
    path.parent.mkdir(parents=True, exist_ok=True)
    make = item["make"]
    if make == "symlink":
        path.symlink_to(tmp_path / item["target"])
    elif make == "folder":
        path.mkdir()
    elif make == "file":
        path.write_text("the user's own file\n", encoding="utf-8")
    elif make == "fifo":
        os.mkfifo(path)
    elif make == "socket":
        sock = socket.socket(socket.AF_UNIX)
        sock.bind(str(path))
        keep.append(sock)
    else:
        raise ValueError(make)


@pytest.mark.parametrize("case", OUTPUT_CASES, ids=[c["name"] for c in OUTPUT_CASES])
def test_hostile_output_target(case, tmp_path, monkeypatch):
    """Each corpus target is refused: exit 1, 'Error: ' and the reason, no traceback, nothing changed under TMP."""
    root = write_casefile(tmp_path)
    (tmp_path / "out").mkdir()
    monkeypatch.chdir(tmp_path / "out")
    keep: list = []
    for item in case.get("setup", []):
        _setup(tmp_path, item, keep)
    fill = {"case": str(root), "out": str(tmp_path / "out"), "tmp": str(tmp_path), "repo": str(REPO), "long": LONG}
    args = [a.format(**fill) for a in case["args"]]
    before = snapshot_tree(tmp_path)
    result = CliRunner().invoke(main, args)
    for sock in keep:
        sock.close()
    assert result.exit_code == case.get("exit", 1), result.output
    assert result.output.startswith("Error: ") if result.exit_code == 1 else "\nError: " in result.output
    assert case["says"].format(**fill) in result.output
    assert "Traceback" not in result.output and "internal error" not in result.output
    assert snapshot_tree(tmp_path) == before


def test_out_to_a_fifo_is_written_in_place(tmp_path):
    """--out naming a FIFO writes through it (the reader gets the JSON) and leaves the FIFO a FIFO."""
    root = write_casefile(tmp_path)
    fifo = tmp_path / "pipe"
    os.mkfifo(fifo)
    got: list[bytes] = []
    reader = threading.Thread(target=lambda: got.append(fifo.read_bytes()))
    reader.start()
    result = CliRunner().invoke(main, ["schedule", str(root), "--json", "--out", str(fifo)])
    reader.join(timeout=30)
    assert result.exit_code == 0, result.output
    assert got and got[0].startswith(b'{\n  "snapshot": "U01"')
    assert stat.S_ISFIFO(os.lstat(fifo).st_mode)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["case", "pipe"]  # no temporary left


def test_out_through_a_link_writes_the_file_it_leads_to(tmp_path):
    """A link outside any casefile is followed: the file it leads to is written, the link stays a link."""
    root = write_casefile(tmp_path)
    (tmp_path / "real").mkdir()
    link = tmp_path / "latest.json"
    link.symlink_to(tmp_path / "real" / "schedule.json")  # dangling until written
    result = CliRunner().invoke(main, ["schedule", str(root), "--json", "--out", str(link)])
    assert result.exit_code == 0, result.output
    assert link.is_symlink() and os.readlink(link) == str(tmp_path / "real" / "schedule.json")
    assert (tmp_path / "real" / "schedule.json").read_text(encoding="utf-8").startswith("{")
    assert sorted(p.name for p in (tmp_path / "real").iterdir()) == ["schedule.json"]


def test_a_full_disk_keeps_the_old_file_and_says_cannot_write(tmp_path, monkeypatch):
    """os.replace failing with ENOSPC: 'Error: cannot write FILE: No space left on device', old file kept, no .part."""
    root = write_casefile(tmp_path)
    before = snapshot_tree(root)
    target = tmp_path / "schedule.json"
    target.write_text("old result\n", encoding="utf-8")

    def full(*_args):
        raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))

    monkeypatch.setattr(os, "replace", full)
    result = CliRunner().invoke(main, ["schedule", str(root), "--json", "--out", str(target)])
    assert result.exit_code == 1
    assert result.output == f"Error: cannot write {target}: No space left on device\n"
    assert target.read_text(encoding="utf-8") == "old result\n"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["case", "schedule.json"]
    assert snapshot_tree(root) == before


@pytest.mark.parametrize("err", [errno.EROFS, errno.EACCES, errno.ENOSPC])
def test_a_failing_csv_folder_writes_nothing_at_all(tmp_path, monkeypatch, err):
    """export --csv-dir failing at the 15th file (read-only, permission denied, full disk): no folder, no temp."""
    root = write_casefile(tmp_path)
    import forensic.casefile.outputs as outputs

    real_fsync, calls = os.fsync, []

    def failing_fsync(fd):
        calls.append(fd)
        if len(calls) == 15:
            raise OSError(err, os.strerror(err))
        real_fsync(fd)

    monkeypatch.setattr(outputs.os, "fsync", failing_fsync)
    result = CliRunner().invoke(main, ["export", str(root), "--csv-dir", str(tmp_path / "tables")])
    assert result.exit_code == 1
    assert result.output.endswith(f"Error: cannot write {tmp_path / 'tables'}: {os.strerror(err)}\n")
    assert sorted(p.name for p in tmp_path.iterdir()) == ["case"]


def test_csv_file_names_are_unique_and_the_count_is_the_count_written(tmp_path):
    """Snapshots Ä1 and Ü1 both sanitise to 'activities-_1'; the second gets '~2' and every table has a file."""
    from forensic.core.tables import Table
    from forensic.exchange.export import csv_file_names

    tables = [Table(n, ("a",), ()) for n in ("activities-Ä1", "activities-Ü1", "Links", "links", "")]
    # By hand: Ä and Ü are outside [A-Za-z0-9._-] and become "_"; "links" equals "Links" regardless of case.
    assert csv_file_names(tables) == ["activities-_1.csv", "activities-_1~2.csv", "Links.csv", "links~2.csv",
                                      "table.csv"]
    root = write_casefile(tmp_path)
    for rel in ("casefile.toml",):
        text = (root / rel).read_text(encoding="utf-8")
        (root / rel).write_text(text.replace('id = "U01"', 'id = "Ä1"'), encoding="utf-8")
    (root / "snapshots" / "U01").rename(root / "snapshots" / "Ü1")
    text = (root / "casefile.toml").read_text(encoding="utf-8").replace("snapshots/U01/", "snapshots/Ü1/")
    (root / "casefile.toml").write_text(text.replace('windows = ["U01"]', 'windows = ["Ä1"]'), encoding="utf-8")
    result = CliRunner().invoke(main, ["export", str(root), "--csv-dir", str(tmp_path / "t")])
    assert result.exit_code == 0, result.output
    written = sorted((tmp_path / "t").iterdir())
    assert f"wrote {len(written)} CSV files" in result.output
    assert {"activities-_1.csv", "activities-BL.csv"} <= {p.name for p in written}


def test_a_250_byte_name_can_be_written(tmp_path):
    """The temporary name is short (.forensic-XXXXXXXX.part), so a legal 250-byte name is written."""
    root = write_casefile(tmp_path)
    name = "n" * 245 + ".json"  # 250 bytes, under NAME_MAX = 255 (POSIX limits.h)
    result = CliRunner().invoke(main, ["schedule", str(root), "--json", "--out", str(tmp_path / name)])
    assert result.exit_code == 0, result.output
    assert (tmp_path / name).is_file()


def test_import_through_a_link_to_an_empty_folder_follows_the_umask(tmp_path):
    """import --out LINK (to an empty folder) fills the folder; folders 0755 and files 0644 under umask 022."""
    target = tmp_path / "empty"
    target.mkdir()
    link = tmp_path / "imported"
    link.symlink_to(target)
    old = os.umask(0o022)
    try:
        result = CliRunner().invoke(main, ["import", str(REPO / "examples/import/mapping.toml"), "--out", str(link)])
    finally:
        os.umask(old)
    assert result.exit_code == 0, result.output
    assert link.is_symlink() and (target / "casefile.toml").is_file()
    # 0o777 & ~0o022 = 0o755 for folders, 0o666 & ~0o022 = 0o644 for files (POSIX mkdir(2), open(2)).
    modes = {p.relative_to(target).as_posix(): p.stat().st_mode & 0o777 for p in [target, *target.rglob("*")]}
    assert modes["."] == 0o755
    assert all(m == (0o755 if (target / rel).is_dir() else 0o644) for rel, m in modes.items()), modes
    assert [p.name for p in tmp_path.iterdir() if p.name.startswith(".")] == []


def test_batch_reports_of_same_named_folders_are_named_by_relative_path(tmp_path):
    """a/claim and b/claim give a-claim-report.pdf and b-claim-report.pdf, and the command says so."""
    for sub in ("a", "b"):
        write_casefile(tmp_path / "port" / sub).rename(tmp_path / "port" / sub / "claim")
    reports = tmp_path / "reports"
    result = CliRunner().invoke(main, ["batch", str(tmp_path / "port"), "--jobs", "1", "--csv",
                                       "--report", str(reports)])
    assert result.exit_code == 0, result.output
    assert sorted(p.name for p in reports.iterdir()) == ["a-claim-report.pdf", "b-claim-report.pdf"]
    assert "named by each casefile's path under" in result.output
    assert f"{tmp_path / 'port' / 'a' / 'claim'} -> a-claim-report.pdf" in result.output
    assert [p.name for p in tmp_path.iterdir()] == ["port", "reports"] or \
        sorted(p.name for p in tmp_path.iterdir()) == ["port", "reports"]


def test_batch_on_a_folder_that_is_one_casefile(tmp_path):
    """batch CASEFILE --csv (the casefile at the folder's root) gives one valid row, exit 0."""
    root = write_casefile(tmp_path)
    before = snapshot_tree(root)
    result = CliRunner().invoke(main, ["batch", str(root), "--csv", "--jobs", "1"])
    assert result.exit_code == 0, result.output
    assert f"{root},true,2," in result.output  # two snapshots, BL and U01 (tests/casefile_helpers.py)
    assert snapshot_tree(root) == before


_PLACES = st.sampled_from(["case", "case/snapshots", "case/snapshots/BL", "case/fragnets/EV02", "out", "out/sub",
                           "link-to-case", "link-to-out", "link-to-case/snapshots", ".", "case/.."])
_NAMES = st.sampled_from(["x.json", "casefile.toml", "events.csv", "activities.csv", "links.csv", "README.md",
                          "link-to-events", "new"])


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(place=_PLACES, name=_NAMES)
def test_any_out_target_is_written_outside_the_casefile_or_not_at_all(tmp_path_factory, place, name):
    """Random --out targets inside and outside a casefile, also through links: the casefile never changes, and
    either the real target (outside) was written, exit 0, or nothing at all was, exit 1."""
    tmp = tmp_path_factory.mktemp("h")
    root = write_casefile(tmp)
    (tmp / "out" / "sub").mkdir(parents=True)
    (tmp / "link-to-case").symlink_to(root)
    (tmp / "link-to-out").symlink_to(tmp / "out")
    (tmp / "out" / "link-to-events").symlink_to(root / "events.csv")
    target = tmp / place / name
    real = Path(os.path.realpath(target))
    inside = real.is_relative_to(root)
    before = snapshot_tree(tmp)
    result = CliRunner().invoke(main, ["schedule", str(root), "--json", "--out", str(target)])
    after = snapshot_tree(tmp)
    assert "Traceback" not in result.output and "internal error" not in result.output
    if inside:
        assert result.exit_code == 1 and "nothing is written inside a casefile folder" in result.output
        assert after == before
    else:
        assert result.exit_code == 0, result.output
        changed = {k for k in set(before) | set(after) if before.get(k) != after.get(k)}
        assert changed == {real.relative_to(tmp).as_posix()}
        assert real.read_text(encoding="utf-8").startswith("{")


def test_batch_reports_that_cannot_be_written_leave_no_folder(tmp_path, monkeypatch):
    """A full disk while writing a batch report: 'Error: cannot write ...', and no report folder, no temporary."""
    write_casefile(tmp_path / "port")

    def full(*_args):
        raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC))

    monkeypatch.setattr(os, "replace", full)
    result = CliRunner().invoke(main, ["batch", str(tmp_path / "port"), "--jobs", "1", "--report",
                                       str(tmp_path / "reports")])
    assert result.exit_code == 1
    assert "Error: cannot write" in result.output and "No space left on device" in result.output
    assert "no report was written" in result.output and "Traceback" not in result.output
    assert sorted(p.name for p in tmp_path.iterdir()) == ["port"]
