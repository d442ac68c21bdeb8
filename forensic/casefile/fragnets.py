"""The fragnets of a casefile: one sub-folder of ``fragnets/`` per fragnet, read and checked.

A fragnet is the network of added or changed work that represents one
delay event (AACE RP 52R-06, time impact analysis; RP 29R-03 MIP 3.6/3.7).
Each folder holds an ``activities.csv`` and a ``links.csv``, read with the
rules of a snapshot's tables; its links may name the activities of any
snapshot, and are checked for loops on their own and once inserted into
each snapshot (:func:`forensic.casefile.records.check_fragnet_loops`).
"""

from __future__ import annotations

from pathlib import Path

from forensic.casefile.csvread import (
    check_id,
    find_unsafe_char,
    read_table,
    read_text,
    resolve_inside,
)
from forensic.casefile.limits import Limits
from forensic.casefile.loops import check_fragnet_loops, check_loops
from forensic.casefile.records import (
    ACTIVITY_COLUMNS,
    LINK_COLUMNS,
    read_activities,
    read_links,
)
from forensic.casefile.span import check_span
from forensic.core.errors import printable
from forensic.core.model import Fragnet, Snapshot, frozen_mapping

__all__ = ["read_fragnets"]


def read_fragnets(root: Path, limits: Limits, hashes, snapshot_ids: set[str], snapshots: list[Snapshot],
                  ctx) -> tuple[dict[str, Fragnet], set[str]]:
    """The fragnets read, and the names of the fragnet folders that could not be read.

    A folder whose problem is already reported (a missing or bad file) is
    still a fragnet the events may name: :func:`read_events` does not
    report it again as unknown, nor the activities an event gives with it.
    """
    problems = ctx["problems"]
    folder = root / "fragnets"
    fragnets: dict[str, Fragnet] = {}
    unreadable: set[str] = set()
    if not folder.exists() and not folder.is_symlink():
        return fragnets, unreadable
    if resolve_inside(root, "fragnets", problems, "fragnets", "fragnets") is None:
        return fragnets, unreadable
    if not folder.is_dir():
        problems.add("fragnets", None, None, None,
                     "is a file, expected a folder holding one sub-folder per fragnet")
        return fragnets, _Everything()  # the events' fragnets are echoes of this problem
    subs = sorted(p for p in folder.iterdir() if p.is_dir())
    for sub in subs:
        name = sub.name
        if name.startswith("."):
            # Hidden folders (.git, editor backups) are not fragnets; say so,
            # since an event naming one would otherwise find it missing.
            ctx["warnings"].append(f"fragnets/{printable(name)}: a folder whose name starts with a dot is ignored, "
                                   "not read as a fragnet")
            continue
        bad = find_unsafe_char(name)
        if bad is not None:
            problems.add(f"fragnets/{name}", None, None, bad[1],
                         "a fragnet folder name may not contain control or text-direction characters")
            continue
        if not check_id(name, f"fragnets/{name}", None, "folder name", problems):
            continue  # an event names a fragnet by its folder: held to the rules of an id
        unreadable.add(name)  # until it is read whole
        found = {}
        for what in ("activities", "links"):
            hit = resolve_inside(root, f"fragnets/{name}/{what}.csv", problems, f"fragnets/{name}", what)
            if hit is not None:
                found[what] = hit
        if len(found) < 2:
            continue
        rel, full = found["activities"]
        text = read_text(full, rel, limits.max_file_bytes, problems, hashes)
        rows = None if text is None else read_table(text, rel, *ACTIVITY_COLUMNS, limits.max_activities, problems)
        if rows is None:
            continue
        table = read_activities(rows, rel, data_date=None, calendars=ctx["calendars"],
                                parties=ctx["parties"], problems=problems, warnings=ctx["warnings"])
        # A fragnet activity may share its id with activities of snapshots: the
        # same work once a later update takes the change in (so but-for and
        # windows can recognise it). Only a clash with the snapshot it is
        # inserted into is refused, at insertion time (forensic.analysis.impact.insert_fragnet).
        lrel, lfull = found["links"]
        text = read_text(lfull, lrel, limits.max_file_bytes, problems, hashes)
        rows = None if text is None else read_table(text, lrel, *LINK_COLUMNS, limits.max_links, problems)
        if rows is None:
            continue
        links = read_links(rows, lrel, known=set(table.ids) | snapshot_ids, finished=(),
                           problems=problems, warnings=ctx["warnings"],
                           unknown_hint="no activity with this id in the fragnet or in any snapshot")
        before = len(problems)
        check_loops(list(table.ids), links, lrel, problems)
        if len(problems) == before:
            check_fragnet_loops(table.ids, links, snapshots, lrel, problems)
        if len(problems) == before:
            check_span(table.activities, links, ctx["calendar_objs"], ctx["default_calendar"], rel, problems)
        fragnets[name] = Fragnet(name, frozen_mapping(table.activities), tuple(links),
                                 frozen_mapping({"activities": rel, "links": lrel}))
        unreadable.discard(name)
    return fragnets, unreadable



class _Everything(set):
    """A set that holds every name (every fragnet is unreadable when ``fragnets`` is not a folder)."""

    def __contains__(self, item) -> bool:
        return True

