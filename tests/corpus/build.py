"""Build the corpus of malformed casefiles from the valid one (tests/casefile_helpers.py).

Each case of ``cases.toml`` is the valid casefile with a few operations
applied (``ops``) and the one problem the loader must report (``expect``:
file, line or manifest key, value, and a part of the message). Where the
bytes matter (other encodings, binary, NUL, an empty file) an operation puts
a committed file from ``files/`` in place. Building is deterministic: the
same case always gives the same bytes.

Run ``python tests/corpus/build.py OUT`` to write every case into
``OUT/<case name>/`` for a look by hand; the tests build each case into a
temporary folder instead.

Operations (``do``):

- ``replace``: replace the one occurrence of ``old`` in ``file`` by ``new``
  (``times`` repeats ``new``);
- ``write`` / ``append``: set or extend ``file`` with ``text`` (``times`` repeats it);
- ``put``: copy ``files/<source>`` byte for byte to ``file``;
- ``remove``: delete ``file``; ``remove-folder``: delete the folder ``file`` and all it holds;
- ``mkdir``: make the folder ``file`` (``text`` optional, ignored);
- ``symlink``: make ``file`` a symbolic link to ``target`` (relative to the
  folder that holds the casefile, so outside it);
- ``chain``: append ``count`` tasks to ``activities`` and links to ``links``
  that run from ``start`` through them and back into ``end`` (a long loop).
"""

from __future__ import annotations

import shutil
import sys
import tomllib
from dataclasses import dataclass
from pathlib import Path

if __package__ in (None, ""):  # run as a script
    sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

from tests.casefile_helpers import write_casefile  # noqa: E402

__all__ = ["CASES_FILE", "Case", "build_case", "load_cases"]

HERE = Path(__file__).resolve().parent
CASES_FILE = HERE / "cases.toml"
FILES = HERE / "files"
CATEGORIES = ("encoding", "csv-shape", "values", "references", "logic", "manifest", "events-fragnets",
              "internal-errors", "limits", "silent-acceptance")


@dataclass(frozen=True)
class Case:
    """One malformed casefile: how to make it and the problem it must be refused with."""

    name: str
    category: str
    ops: tuple[dict, ...]
    file: str
    line: int | None
    key: str | None
    value: str | None
    says: str


def load_cases(path: Path = CASES_FILE) -> list[Case]:
    """Every case of the manifest, in file order; names are unique."""
    doc = tomllib.loads(path.read_text(encoding="utf-8"))
    cases = []
    for c in doc["case"]:
        e = c["expect"]
        cases.append(Case(c["name"], c["category"], tuple(c["ops"]), e["file"], e.get("line"),
                          e.get("key"), e.get("value"), e["says"]))
    names = [c.name for c in cases]
    assert len(set(names)) == len(names), "case names must be unique"
    assert all(c.category in CATEGORIES for c in cases), "unknown category"
    return cases


def _apply(root: Path, op: dict) -> None:
    do = op["do"]
    path = root / op["file"] if "file" in op else None
    if do == "replace":
        text = path.read_text(encoding="utf-8")
        assert text.count(op["old"]) == 1, f"{op['old']!r} should occur once in {op['file']}"
        path.write_bytes(text.replace(op["old"], op["new"] * op.get("times", 1)).encode("utf-8"))
    elif do in ("write", "append"):
        path.parent.mkdir(parents=True, exist_ok=True)
        with open(path, "ab" if do == "append" else "wb") as fh:
            fh.write((op["text"] * op.get("times", 1)).encode("utf-8"))
    elif do == "put":
        path.parent.mkdir(parents=True, exist_ok=True)
        path.write_bytes((FILES / op["source"]).read_bytes())
    elif do == "remove":
        path.unlink()
    elif do == "remove-folder":
        shutil.rmtree(path)
    elif do == "mkdir":
        path.mkdir(parents=True)
    elif do == "symlink":
        target = root.parent / op["target"]
        target.parent.mkdir(parents=True, exist_ok=True)
        target.write_text(op.get("text", ""), encoding="utf-8")
        path.unlink(missing_ok=True)
        path.symlink_to(target)
    elif do == "chain":
        ids = [f"{op['prefix']}{i:02d}" for i in range(1, op["count"] + 1)]
        with open(root / op["activities"], "a", encoding="utf-8", newline="") as fh:
            for aid in ids:
                fh.write(f"{aid},Chained step {aid},task,1,,,,,,,CON,CIV,,,\n")
        ends = [op["start"], *ids, op["end"]]
        with open(root / op["links"], "a", encoding="utf-8", newline="") as fh:
            for pred, succ in zip(ends, ends[1:], strict=False):
                fh.write(f"{pred},{succ},FS,0\n")
    else:
        raise ValueError(f"unknown corpus operation {do!r}")


def build_case(case: Case, folder: Path) -> Path:
    """Write the valid casefile under ``folder``, apply the case's operations; return its root."""
    root = write_casefile(folder)
    for op in case.ops:
        _apply(root, op)
    return root


def main(argv: list[str]) -> int:
    if len(argv) != 1:
        print("usage: python tests/corpus/build.py OUT", file=sys.stderr)
        return 2
    out = Path(argv[0])
    for case in load_cases():
        build_case(case, out / case.name)
    print(f"wrote {len(load_cases())} cases under {out}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main(sys.argv[1:]))
