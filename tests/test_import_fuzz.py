"""Property-based fuzzing of the importer (hypothesis): mutated mappings and sources.

Random mutations of the worked example's mapping (lines dropped or
repeated, values replaced by other TOML values) and of its CSV sources
(cells replaced by hostile text, bytes changed) must either import (and
then load again) or fail with the project's own errors
(:class:`forensic.core.errors.ForensicError`), never another exception; a
failed import leaves nothing behind (no ``--out``, no temporary folder).
The property is the one issue 10 states for the loader; the hostile values
are common practice in fuzzing text parsers, as in tests/test_fuzz.py.
"""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from forensic.casefile.reading import load_casefile
from forensic.core.errors import ForensicError
from forensic.exchange.importer.importing import import_casefile
from tests.test_fuzz import NASTY

EXAMPLE = Path(__file__).resolve().parent.parent / "examples" / "import"
FILES = {p.name: p.read_bytes() for p in sorted(EXAMPLE.iterdir()) if p.is_file()}
CSVS = sorted(n for n in FILES if n.endswith(".csv"))
TOML_VALUES = [
    '""', '" "', "0", "-1", "8.5", "1e400", "nan", "true", "[]", "{}", '["%d/%m/%Y", 5]', "2026-02-28",
    "2026-03-02T10:00:00", '"30/02/2026"', '"../x"', '"/etc/passwd"', '"a/b"', '"."', '".hidden"',
    '"\\u001b[2J"', '"\\u202e"', '{ sheet = "Tasks" }', '{ file = 5 }', '{ file = "x.xlsx", sheet = 1 }',
    '"hours"', '"days"', '"fraction"', '"up"', '"utf-16"', '";"', '"\\t"', '["-", ""]', '"FS"', '["fs", "FS"]',
    '"tasks-baseline.csv"', '"logic-update1.csv"', '"delays.csv"', '"mapping.toml"', '"baseline"',
]


@st.composite
def mutated(draw) -> dict[str, bytes]:
    """The example's files with one to three mutations of the mapping or the sources."""
    files = dict(FILES)
    for _ in range(draw(st.integers(1, 3))):
        kind = draw(st.sampled_from(["toml-value", "toml-drop", "toml-dup", "cell", "byte"]))
        if kind.startswith("toml"):
            lines = files["mapping.toml"].decode("utf-8", "replace").split("\n")
            i = draw(st.integers(0, len(lines) - 1))
            if kind == "toml-value" and "=" in lines[i]:
                lines[i] = lines[i].split("=", 1)[0] + "= " + draw(st.sampled_from(TOML_VALUES))
            elif kind == "toml-drop":
                del lines[i]
            else:
                lines.insert(i, lines[i])
            files["mapping.toml"] = "\n".join(lines).encode("utf-8")
            continue
        name = draw(st.sampled_from(CSVS))
        data = files[name]
        if kind == "byte":
            at = draw(st.integers(0, len(data) - 1))
            files[name] = data[:at] + bytes([draw(st.integers(0, 255))]) + data[at + 1:]
            continue
        lines = data.decode("utf-8", "replace").split("\n")
        i = draw(st.integers(0, len(lines) - 1))
        row = lines[i].split(",")
        row[draw(st.integers(0, len(row) - 1))] = draw(st.one_of(st.sampled_from(NASTY), st.text(max_size=10)))
        lines[i] = ",".join(row)
        files[name] = "\n".join(lines).encode("utf-8", "surrogatepass")
    return files


EXAMPLES = int(os.environ.get("FORENSIC_FUZZ_EXAMPLES", "100"))


@settings(max_examples=max(EXAMPLES // 4, 20), deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(mutated())
def test_mutated_import_succeeds_or_raises_forensic_errors_only(files):
    """A mutated mapping or source imports (and reloads), or raises a ForensicError and writes nothing."""
    with tempfile.TemporaryDirectory() as tmp:
        src = Path(tmp) / "src"
        src.mkdir()
        for name, data in files.items():
            (src / name).write_bytes(data)
        out = Path(tmp) / "out"
        try:
            report = import_casefile(src / "mapping.toml", out)
        except ForensicError:
            assert sorted(os.listdir(tmp)) == ["src"]  # nothing written, no temporary folder left
        else:
            assert load_casefile(report.out).snapshots
        assert {p.name: p.read_bytes() for p in src.iterdir()} == files  # sources never modified
