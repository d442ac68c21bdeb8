"""Naming the user's sources in problems the reload of an imported casefile finds.

A problem the reload of the written casefile finds (a logic loop, say) is
reported by the loader against the written casefile's file and line. This
module maps it back to the user's source (``book.xlsx[sheet]`` or the CSV
file) and row, and the written file's column to the user's column, so every
message names what the user can fix.

References
----------
AACE International Recommended Practice 29R-03, Forensic Schedule Analysis,
sec. 2.1 (source validation).
"""

from __future__ import annotations

import re

from forensic.core.errors import InputProblem
from forensic.core.model import Casefile
from forensic.exchange.importer.mapping import ImportMapping

__all__: list[str] = []


def find_origins(cf: Casefile, m: ImportMapping) -> dict[str, tuple[str, tuple[int, ...]]]:
    """Each casefile table the writer will write -> (source label, source row of each written line).

    The writer (:mod:`forensic.casefile.writing`) writes a header, then one line per
    record in order, so line ``k + 2`` of the written file is record ``k``,
    whose ``line`` is its row in the source.
    """
    labels = {}
    for kind, specs in (("snapshots", m.snapshots), ("fragnets", m.fragnets)):
        for spec in specs:
            for what in ("activities", "links"):
                if spec[what] is not None:
                    labels[f"{kind}/{spec['id']}/{what}.csv"] = spec[what][2]
    out: dict[str, tuple[str, tuple[int, ...]]] = {}

    def put(rel: str, records) -> None:
        if rel in labels:
            out[rel] = (labels[rel], tuple(r.line or 0 for r in records))

    for snap in cf.snapshots:
        put(f"snapshots/{snap.id}/activities.csv", snap.activities.values())
        put(f"snapshots/{snap.id}/links.csv", snap.links)
    for frag in cf.fragnets.values():
        put(f"fragnets/{frag.id}/activities.csv", frag.activities.values())
        put(f"fragnets/{frag.id}/links.csv", frag.links)
    if m.events is not None:
        out["events.csv"] = (m.events[2], tuple(e.line or 0 for e in cf.events))
    return out


_LINES = re.compile(r"\b(lines?) (\d+(?:, \d+)*)")


class Origins:
    """Maps the written casefile's files and lines back to the user's sources and rows."""

    def __init__(self, origins: dict[str, tuple[str, tuple[int, ...]]], mapping: str, m_columns):
        self.origins = origins
        self.mapping = mapping
        self.columns = m_columns

    def line(self, rel: str, line: int | None) -> int | None:
        rows = self.origins[rel][1]
        if line is None or not 2 <= line < len(rows) + 2:
            return line
        return rows[line - 2]

    def text(self, rel: str, text: str) -> str:
        """``text`` with every "line N" / "lines N, M" of ``rel`` turned into source rows."""
        return _LINES.sub(lambda h: f"{h.group(1)} " + ", ".join(
            str(self.line(rel, int(n))) for n in h.group(2).split(", ")), text)

    def problem(self, p: InputProblem) -> InputProblem:
        if p.file == "casefile.toml":
            return InputProblem(self.mapping, p.line, p.key, p.value, p.message)
        if p.file not in self.origins:
            return p
        table = p.file.rsplit("/", 1)[-1].removesuffix(".csv")
        key = self.columns.get(table, {}).get(p.key, p.key) if p.key else p.key
        return InputProblem(self.origins[p.file][0], self.line(p.file, p.line), key, p.value,
                            self.text(p.file, p.message))

    def warning(self, w: str) -> str:
        for rel, (label, _rows) in self.origins.items():
            if w.startswith(f"{rel}, line "):
                head, _, rest = w.partition(": ")
                return f"{label}, {self.text(rel, head[len(rel) + 2:])}: {self.text(rel, rest)}"
        return w
