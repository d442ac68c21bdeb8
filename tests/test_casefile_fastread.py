"""The loader's vectorised fast path reads the same casefile, and the same problems, as the row-wise reader."""

import dataclasses
import re
import shutil
import tempfile
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings

import forensic.casefile.reading as reading
from forensic.casefile.reading import load_casefile
from forensic.casefile.synthetic import generate_casefile
from forensic.casefile.writing import write_casefile
from forensic.core.errors import CasefileError, ForensicError
from tests.corpus.build import build_case, load_cases
from tests.test_fuzz import _write as write_files
from tests.test_fuzz import mutated

CASES = load_cases()
DEMO = Path(__file__).resolve().parent.parent / "casefiles" / "riverside"


def _fields(record) -> list[tuple[str, type, object]]:
    """Every field of a record with its type, so 3 and 3.0 (or a numpy integer) differ."""
    return [(f.name, type(getattr(record, f.name)), getattr(record, f.name)) for f in dataclasses.fields(record)]


def _assert_same(fast, slow) -> None:
    assert fast == slow
    assert fast.warnings == slow.warnings
    assert [s.id for s in fast.snapshots] == [s.id for s in slow.snapshots]
    for a, b in zip(fast.snapshots, slow.snapshots, strict=True):
        assert list(a.activities) == list(b.activities)  # file order, not only the same mapping
        assert [_fields(x) for x in a.activities.values()] == [_fields(x) for x in b.activities.values()]
        assert [_fields(x) for x in a.links] == [_fields(x) for x in b.links]


@pytest.fixture(scope="module")
def synthetic(tmp_path_factory):
    root = tmp_path_factory.mktemp("fastread")
    folders = []
    for seed, size, updates in ((3, 300, 4), (8, 600, 6)):
        folder = write_casefile(generate_casefile(size, updates=updates, seed=seed), root / f"s{seed}")
        folders.append(folder)
    return folders


def _count_rowwise(monkeypatch) -> dict[str, int]:
    calls = {"activities": 0, "links": 0}
    for what, name in (("activities", "read_activities"), ("links", "read_links")):
        real = getattr(reading, name)

        def counted(*args, _real=real, _what=what, **kwargs):
            calls[_what] += 1
            return _real(*args, **kwargs)

        monkeypatch.setattr(reading, name, counted)
    return calls


def test_demo_casefile_is_the_same_on_both_paths_and_uses_the_fast_path(monkeypatch):
    slow = load_casefile(DEMO, vectorised=False)
    calls = _count_rowwise(monkeypatch)
    fast = load_casefile(DEMO, vectorised=True)
    monkeypatch.undo()
    assert calls == {"activities": 0, "links": 0}, "the demo's tables (names quoted) fell back to the row-wise reader"
    _assert_same(fast, slow)


def test_synthetic_casefiles_are_the_same_on_both_paths_and_use_the_fast_path(synthetic, monkeypatch):
    for folder in synthetic:
        slow = load_casefile(folder, vectorised=False)
        calls = _count_rowwise(monkeypatch)
        fast = load_casefile(folder, vectorised=True)
        monkeypatch.undo()
        assert calls == {"activities": 0, "links": 0}, "a clean synthetic table fell back to the row-wise reader"
        assert len(fast.snapshots) > 3
        assert fast.warnings, "the synthetic casefiles have links into finished work (warnings to compare)"
        _assert_same(fast, slow)


def test_by_default_only_a_long_table_takes_the_fast_path(tmp_path, monkeypatch):
    """The demo's short tables are read row by row; a synthetic one of 7,000 activities by the fast path."""
    calls = _count_rowwise(monkeypatch)
    load_casefile(DEMO)
    assert calls["activities"] > 0 and calls["links"] > 0
    folder = write_casefile(generate_casefile(7000, updates=1, seed=5), tmp_path / "big")
    calls = _count_rowwise(monkeypatch)
    big = load_casefile(folder)
    assert calls == {"activities": 0, "links": 0}
    monkeypatch.undo()
    _assert_same(big, load_casefile(folder, vectorised=False))


def _problems(folder):
    out = []
    for vectorised in (True, False):
        try:
            out.append(("loaded", load_casefile(folder, vectorised=vectorised)))
        except CasefileError as exc:
            out.append(("refused", [dataclasses.astuple(p) for p in exc.problems]))
    return out


def _quote_all(line: str) -> str:
    return ",".join(f'"{cell}"' for cell in line.split(","))


EDITS = {
    "duplicate id": lambda t: t.replace("\n", "\n" + t.splitlines()[2] + "\n", 1),
    "bad duration": lambda t: t.replace(",task,", ",task,x", 1),
    "padded cell": lambda t: t.replace(",task,", ", task ,", 1),
    "crlf": lambda t: t.replace("\n", "\r\n"),
    "blank lines": lambda t: t.replace("\n", "\n\n", 3) + ",,,,,,,,,,,,,,\n",
    "quoted name": lambda t: t.replace(",task,", ',"task",', 1),
    "short row": lambda t: t + "X1,name\n",
    "bad date": lambda t: t.replace("-0", "-1", 1),
    "unknown calendar": lambda t: t.replace(",5d,", ",9d,", 1),
    "non-ascii id": lambda t: t.replace("\n", "\n\u0420", 2),
    "late actual": lambda t: t.replace("2027-", "2199-", 1),
    "over the span ceiling": lambda t: re.sub(r",task,[0-9]+,,,,", ",task,36500,,,,", t),
    "quoted comma": lambda t: t.replace(",Start of works,", ',"Start, of works",', 1),
    "quoted line break": lambda t: t.replace(",Start of works,", ',"Start of\nworks",', 1),
    "doubled quotes": lambda t: t.replace(",Start of works,", ',"Start ""of"" works",', 1),
    "quote inside a cell": lambda t: t.replace(",Start of works,", ',Start "of" works,', 1),
    "blank after a quote": lambda t: t.replace(",Start of works,", ',"Start of works" ,', 1),
    "blanks inside quotes": lambda t: t.replace(",Start of works,", ',"  Start of works ",', 1),
    "every cell quoted": lambda t: "\n".join(_quote_all(line) for line in t.splitlines()) + "\n",
    "every row quoted": lambda t: "\n".join([t.splitlines()[0], *map(_quote_all, t.splitlines()[1:])]) + "\n",
    "empty quoted row": lambda t: t + '""' + ',""' * 14 + "\n",
}


@pytest.mark.parametrize("edit", sorted(EDITS))
def test_an_edited_activities_table_gives_the_same_result_on_both_paths(edit, synthetic, tmp_path):
    folder = shutil.copytree(synthetic[0], tmp_path / "cf")
    target = sorted((folder / "snapshots").iterdir())[2] / "activities.csv"
    text = target.read_text(encoding="utf-8")
    target.write_text(EDITS[edit](text), encoding="utf-8", newline="")
    assert target.read_bytes() != text.encode("utf-8")
    fast, slow = _problems(folder)
    assert fast == slow
    assert fast[0] == ("loaded" if edit in LOADS else "refused")


# The edits the row-wise reader accepts (the fast path hands them to it, and the casefile loads).
LOADS = {"padded cell", "crlf", "blank lines", "quoted name", "padded lag", "quoted comma", "quoted line break",
         "doubled quotes", "quote inside a cell", "blanks inside quotes", "every cell quoted", "every row quoted",
         "empty quoted row"}

LINK_EDITS = {
    "unknown end": lambda t: t.replace("\n", "\nNOPE,START,FS,0\n", 1),
    "duplicate link": lambda t: t + t.splitlines()[1] + "\n",
    "self link": lambda t: t + "START,START,FS,0\n",
    "bad lag": lambda t: t.replace(",FS,0", ",FS,1.5", 1),
    "bad type": lambda t: t.replace(",FS,", ",XX,", 1),
    "padded lag": lambda t: t.replace(",FS,0", ",FS, 0 ", 1),
    "logic loop": lambda t: t + t.splitlines()[1].split(",")[1] + ",START,FS,0\n",
}


@pytest.mark.parametrize("edit", sorted(LINK_EDITS))
def test_an_edited_links_table_gives_the_same_result_on_both_paths(edit, synthetic, tmp_path):
    folder = shutil.copytree(synthetic[1], tmp_path / "cf")
    target = sorted((folder / "snapshots").iterdir())[3] / "links.csv"
    text = target.read_text(encoding="utf-8")
    target.write_text(LINK_EDITS[edit](text), encoding="utf-8", newline="")
    assert target.read_bytes() != text.encode("utf-8")
    fast, slow = _problems(folder)
    assert fast == slow
    assert fast[0] == ("loaded" if edit in LOADS else "refused")


def _outcome(folder, vectorised):
    try:
        return "loaded", load_casefile(folder, vectorised=vectorised)
    except CasefileError as exc:
        return type(exc).__name__, [dataclasses.astuple(p) for p in exc.problems]
    except ForensicError as exc:
        return type(exc).__name__, str(exc)


@pytest.mark.parametrize("case", CASES, ids=[c.name for c in CASES])
def test_every_corpus_case_is_refused_alike_on_both_paths(case, tmp_path):
    """The hostile corpus (tests/corpus/cases.toml) with the fast path forced on every table."""
    root = build_case(case, tmp_path)
    fast, slow = _outcome(root, True), _outcome(root, False)
    assert fast == slow
    assert fast[0] != "loaded"


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(mutated())
def test_a_mutated_casefile_loads_or_fails_alike_on_both_paths(files):
    """The fuzz test's mutations (tests/test_fuzz.py) with the fast path forced: the same casefile or problems."""
    with tempfile.TemporaryDirectory() as tmp:
        root = write_files(tmp, files)
        assert _outcome(root, True) == _outcome(root, False)
