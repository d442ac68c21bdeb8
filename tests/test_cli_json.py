"""Every JSON output is traced to its run: ``forensic_version`` and the SHA-256 of each input.

The digests are recomputed here with :mod:`hashlib` from the casefile's
files on disk (the reference: FIPS 180-4 SHA-256 as Python's standard
library implements it), not read back from the loader.
"""

from __future__ import annotations

import hashlib
import json
from pathlib import Path

import pytest
from click.testing import CliRunner

import forensic
from forensic.casefile.reading import load_casefile
from forensic.cli import main
from forensic.core.engine import schedule_snapshot
from forensic.core.tables import schedule_json

ROOT = Path(__file__).resolve().parent.parent
DEMO = ROOT / "casefiles" / "riverside"


def _expected_digests() -> dict[str, str]:
    # The inputs are the manifest and every CSV table the manifest names (the
    # demo's README.md and story.toml are documentation, not inputs).
    files = [DEMO / "casefile.toml", *sorted(DEMO.rglob("*.csv"))]
    return {p.relative_to(DEMO).as_posix(): hashlib.sha256(p.read_bytes()).hexdigest() for p in files}


JSON_COMMANDS = [
    ["check", str(DEMO), "--json"],
    ["check", str(DEMO), "--quality", "--snapshot", "U02", "--json"],
    ["schedule", str(DEMO), "--json"],
    ["windows", str(DEMO), "--windows", "U02,U04", "--json"],
    ["compare", str(DEMO), "U01", "U02", "--json"],
    ["impact", str(DEMO), "--event", "EV03", "--json"],
    ["impact", str(DEMO), "--event", "EV03", "--event", "EV07", "--json"],
    ["impact", str(DEMO), "--all", "--cumulative", "--json"],
    ["but-for", str(DEMO), "--json"],
    ["impact", str(DEMO), "--all", "--series", "--json"],
    ["eot", str(DEMO), "--json"],
]


@pytest.mark.parametrize("args", JSON_COMMANDS, ids=lambda a: " ".join(a[:1] + a[2:]))
def test_every_json_output_carries_the_version_and_the_input_digests(args):
    result = CliRunner().invoke(main, args)
    assert result.exit_code == 0, result.output
    data = json.loads(result.stdout)
    docs = data if isinstance(data, list) else [data]
    expected = _expected_digests()
    assert len(expected) == 28  # the demo: manifest, events, 2 fragnets x 2 tables, 11 snapshots x 2 tables
    for doc in docs:
        assert doc["forensic_version"] == forensic.__version__
        assert doc["inputs_sha256"] == expected


def test_the_stamp_adds_keys_and_keeps_every_existing_one():
    result = CliRunner().invoke(main, ["schedule", str(DEMO), "--snapshot", "U03", "--json"])
    data = json.loads(result.stdout)
    plain = json.loads(json.dumps(schedule_json(schedule_snapshot(load_casefile(DEMO), "U03")), default=str))
    # Every key of the unstamped document, with its value, and only the two new keys besides.
    assert {k: data[k] for k in plain} == plain
    assert set(data) - set(plain) == {"forensic_version", "inputs_sha256"}
    assert list(data)[-2:] == ["forensic_version", "inputs_sha256"]  # appended after the document's own keys


def test_export_json_and_out_files_are_stamped_too(tmp_path):
    out = tmp_path / "all.json"
    result = CliRunner().invoke(main, ["export", str(DEMO), "--json", str(out), "--no-inputs"])
    assert result.exit_code == 0, result.output
    data = json.loads(out.read_text(encoding="utf-8"))
    assert data["tables"] and data["forensic_version"] == forensic.__version__
    assert data["inputs_sha256"] == _expected_digests()
    out2 = tmp_path / "s.json"
    result = CliRunner().invoke(main, ["schedule", str(DEMO), "--json", "--out", str(out2)])
    assert result.exit_code == 0, result.output
    assert json.loads(out2.read_text(encoding="utf-8"))["inputs_sha256"] == _expected_digests()
