"""Property-based fuzzing of the loader and the CLI (hypothesis).

Random byte, cell and line mutations of the valid casefile of
tests/casefile_helpers.py must either load (and then schedule and validate)
or fail with the project's own errors (:class:`forensic.core.errors.ForensicError`),
never with another exception; through the command line they give exit
status 0 or 1 and never a traceback or an "internal error". The property
is the one the issue states (issue 10); the hostile cell values are common
practice in fuzzing text parsers (signs, exponents, NaN, huge numbers,
control and formatting characters, quotes).
"""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

from click.testing import CliRunner
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from forensic.casefile.reading import load_casefile
from forensic.casefile.validation import validate_casefile
from forensic.cli import main
from forensic.core.errors import ForensicError
from tests.casefile_helpers import FILES

NAMES = sorted(FILES)
CSV_NAMES = [n for n in NAMES if n.endswith(".csv")]
NASTY = [
    "", " ", "-1", "+3", "0", "1e9", "NaN", "inf", "-inf", "1.5", "99999999999999999999",
    "2026-02-30", "2026-13-01", "0000-01-01", "9999-12-31", "2026-1-5", "FS", "SF", "XX",
    "M100", "A110", "A120", "M900", "F10", "EV02", "5d", "7d", "OWN", "WX", "task",
    "closing-milestone", "start-fixed", '"', '""', "=1+1", "@SUM(A1)", "\t", "\r", "\x1b[2J",
    "\u202e", "\ufeff", "\x00", "é", "𝔘", "a\nb", ",", "%s%n{0}", "{__import__('os')}",
]
cells = st.one_of(st.sampled_from(NASTY), st.text(max_size=12))


def _write(tmp: str, files: dict[str, bytes]) -> Path:
    root = Path(tmp) / "case"
    for rel, data in files.items():
        path = root / rel
        path.parent.mkdir(parents=True, exist_ok=True)
        path.write_bytes(data)
    return root


@st.composite
def mutated(draw) -> dict[str, bytes]:
    """The valid casefile's files with one to three random mutations."""
    files = {k: v.encode("utf-8") for k, v in FILES.items()}
    for _ in range(draw(st.integers(1, 3))):
        kind = draw(st.sampled_from(["byte", "insert", "delete", "cell", "line-drop", "line-dup", "line-swap"]))
        name = draw(st.sampled_from(CSV_NAMES if kind == "cell" else NAMES))
        data = files[name]
        if kind in ("byte", "insert", "delete"):
            at = draw(st.integers(0, len(data)))
            if kind == "byte" and at < len(data):
                data = data[:at] + bytes([draw(st.integers(0, 255))]) + data[at + 1:]
            elif kind == "insert":
                data = data[:at] + draw(st.binary(min_size=1, max_size=8)) + data[at:]
            else:
                data = data[:at] + data[at + draw(st.integers(1, 20)):]
            files[name] = data
            continue
        lines = data.decode("utf-8", "replace").split("\n")
        i = draw(st.integers(0, len(lines) - 1))
        if kind == "cell":
            row = lines[i].split(",")
            row[draw(st.integers(0, len(row) - 1))] = draw(cells)
            lines[i] = ",".join(row)
        elif kind == "line-drop":
            del lines[i]
        elif kind == "line-dup":
            lines.insert(i, lines[i])
        else:
            j = draw(st.integers(0, len(lines) - 1))
            lines[i], lines[j] = lines[j], lines[i]
        files[name] = "\n".join(lines).encode("utf-8", "surrogatepass")
    return files


# FORENSIC_FUZZ_EXAMPLES raises the count for a longer campaign (docs/robustness.md).
EXAMPLES = int(os.environ.get("FORENSIC_FUZZ_EXAMPLES", "100"))
FUZZ = settings(max_examples=EXAMPLES, deadline=None, suppress_health_check=[HealthCheck.too_slow])
CLI_FUZZ = settings(max_examples=max(EXAMPLES // 3, 10), deadline=None,
                    suppress_health_check=[HealthCheck.too_slow])


@FUZZ
@given(mutated())
def test_mutated_casefile_loads_or_raises_forensic_errors_only(files):
    """A mutated casefile loads and validates, or raises a ForensicError; no other exception."""
    with tempfile.TemporaryDirectory() as tmp:
        root = _write(tmp, files)
        try:
            cf = load_casefile(root)
            validate_casefile(cf)  # schedules every snapshot
        except ForensicError:
            pass


@CLI_FUZZ
@given(mutated())
def test_mutated_casefile_through_check_exits_0_or_1_without_traceback(files):
    """forensic check on a mutated casefile exits 0 or 1 with a plain message, never a traceback."""
    with tempfile.TemporaryDirectory() as tmp:
        root = _write(tmp, files)
        result = CliRunner().invoke(main, ["check", str(root)])
    assert result.exit_code in (0, 1), result.output
    assert "Traceback" not in result.output
    assert "internal error" not in result.output, result.output
    if result.exit_code == 1:
        assert result.output.startswith("Error: ")
