"""A small valid casefile written to a folder, for the loader tests to mutate one file at a time.

The scenario is invented: a pump station with a notice to proceed, two
civil activities and a completion milestone, a baseline and one update, two
delay events and one fragnet.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from forensic.casefile.reading import load_casefile
from forensic.core.errors import CasefileError, InputProblem

MANIFEST = """\
format = "forensic-casefile/2"
events = "events.csv"
windows = ["U01"]

[project]
name = "Riverside pump station"
completion = "M900"
contract_completion = 2026-06-30
default_calendar = "5d"
delay_unit = "working-days"
progress_logic = "override"
critical_float = 1

[[party]]
id = "OWN"
name = "Water board"
role = "owner"

[[party]]
id = "CON"
name = "Civils contractor"
role = "contractor"

[[party]]
id = "WX"
name = "Weather"
role = "neutral"

[[calendar]]
id = "5d"
workdays = ["mon", "tue", "wed", "thu", "fri"]
holidays = [2026-04-03]
extra_workdays = [2026-04-04]

[[calendar]]
id = "7d"
workdays = ["mon", "tue", "wed", "thu", "fri", "sat", "sun"]

[[snapshot]]
id = "BL"
role = "baseline"
data_date = 2026-01-05
activities = "snapshots/BL/activities.csv"
links = "snapshots/BL/links.csv"

[[snapshot]]
id = "U01"
data_date = 2026-02-02
activities = "snapshots/U01/activities.csv"
links = "snapshots/U01/links.csv"
"""

HEADER = (
    "id,name,kind,duration,remaining,actual_start,actual_finish,calendar,"
    "constraint,constraint_date,party,area,percent_complete,crash_days,crash_cost\n"
)
BL_ACTIVITIES = HEADER + (
    "M100,Notice to proceed,opening-milestone,0,,,,,,,OWN,GEN,,,\n"
    "A110,Excavate wet well,task,10,,,,,,,CON,CIV,0,2,1500\n"
    "A120,Pour base slab,,5,,,,7d,start-from,2026-01-26,CON,CIV,,,\n"
    "M900,Station complete,closing-milestone,0,,,,,finish-by,2026-06-30,CON,,,,\n"
)
U01_ACTIVITIES = HEADER + (
    "M100,Notice to proceed,opening-milestone,0,,,2026-01-05,,,,OWN,GEN,,,\n"
    "A110,Excavate wet well,task,10,,2026-01-06,2026-01-19,,,,CON,CIV,100,2,1500\n"
    "A120,Pour base slab,,5,2,2026-01-26,,7d,start-from,2026-01-26,CON,CIV,60,,\n"
    "M900,Station complete,closing-milestone,0,,,,,finish-by,2026-06-30,CON,,,,\n"
)
LINKS = "pred,succ,type,lag\nM100,A110,FS,0\nA110,A120,SS,3\nA120,M900,,\n"
EVENTS = (
    "id,title,party,category,start,finish,activities,fragnet,reference\n"
    "EV01,Late site access,OWN,,2026-01-05,2026-01-09,A110,,Letter 014\n"
    "EV02,Flooded pit after storm,WX,excusable-noncompensable,2026-01-20,2026-01-21,A120 F10,EV02,Site diary 20 Jan\n"
)
FRAGNET_ACTIVITIES = "id,name,duration,party\nF10,Pump out flooded pit,2,CON\n"
FRAGNET_LINKS = "pred,succ,type,lag\nA110,F10,FS,0\nF10,A120,FS,0\n"

FILES = {
    "casefile.toml": MANIFEST,
    "snapshots/BL/activities.csv": BL_ACTIVITIES,
    "snapshots/BL/links.csv": LINKS,
    "snapshots/U01/activities.csv": U01_ACTIVITIES,
    "snapshots/U01/links.csv": LINKS,
    "events.csv": EVENTS,
    "fragnets/EV02/activities.csv": FRAGNET_ACTIVITIES,
    "fragnets/EV02/links.csv": FRAGNET_LINKS,
}


def write_casefile(folder: Path) -> Path:
    """Write the valid casefile into ``folder/case`` and return that folder."""
    root = folder / "case"
    for rel, text in FILES.items():
        path = root / rel
        path.parent.mkdir(parents=True, exist_ok=True)
        path.write_text(text, encoding="utf-8", newline="")
    return root


def edit(root: Path, rel: str, old: str, new: str) -> None:
    """Replace the one occurrence of ``old`` in ``rel`` by ``new`` (a test's one mutation)."""
    path = root / rel
    text = path.read_text(encoding="utf-8")
    assert text.count(old) == 1, f"{old!r} should occur once in {rel}"
    path.write_text(text.replace(old, new), encoding="utf-8", newline="")


def refused(root: Path, **kwargs) -> CasefileError:
    """Load ``root`` expecting it to be refused; return the error."""
    with pytest.raises(CasefileError) as info:
        load_casefile(root, **kwargs)
    return info.value


def find_problem(
    err: CasefileError,
    file: str,
    *,
    line: int | None = None,
    key: str | None = None,
    value: str | None = None,
    says: str = "",
) -> InputProblem:
    """The problem of ``err`` at this place; asserts its file, line/key and value are in the message."""
    for p in err.problems:
        if p.file == file and p.line == line and (key is None or p.key == key) \
                and p.value == value and says in p.message:
            text = str(err)
            assert file in text
            if line is not None:
                assert f"line {line}" in text
            if key is not None:
                assert key in text
            if value is not None:
                assert repr(value) in text
            return p
    listing = "\n".join(repr(p) for p in err.problems)
    raise AssertionError(f"no problem {file}, {line}, {key}, {value!r}, {says!r} in:\n{listing}")


def break_duration(folder: Path, snapshot: str = "U05") -> str:
    """Spoil a demo copy's snapshot: the duration on line 4 of its activities becomes ``ten``; its path."""
    path = folder / "snapshots" / snapshot / "activities.csv"
    lines = path.read_text(encoding="utf-8").splitlines(keepends=True)
    cells = lines[3].split(",")
    cells[3] = "ten"  # the duration of the activity on line 4
    lines[3] = ",".join(cells)
    path.write_text("".join(lines), encoding="utf-8")
    return f"snapshots/{snapshot}/activities.csv"


def break_u05_duration(folder: Path) -> str:
    """:func:`break_duration` on U05."""
    return break_duration(folder, "U05")


def break_u03_lag(folder: Path) -> str:
    """Spoil the demo copy's U03: the lag on line 2 of its links gets an ``x``; its path."""
    path = folder / "snapshots" / "U03" / "links.csv"
    lines = path.read_text(encoding="utf-8").splitlines(keepends=True)
    cells = lines[1].split(",")
    cells[3] = "x" + cells[3].strip() + "\n"  # the lag of the link on line 2
    lines[1] = ",".join(cells)
    path.write_text("".join(lines), encoding="utf-8")
    return "snapshots/U03/links.csv"
