"""Logic loops: a network with a loop has no schedule, so a casefile with one is refused.

Every snapshot is checked for logic loops, since the critical path method
has no solution on a cyclic network (Kelley and Walker 1959): Kahn's
topological sort (the engine's) finds whether there is one, then the
strongly connected components (networkx, Tarjan 1972) name each loop, with
the lines of its links. A fragnet is also checked against each snapshot
it could be inserted into (AACE RP 52R-06), since a loop its ties close
would stop the time impact analysis.
"""

from __future__ import annotations

from collections.abc import Collection

from forensic.casefile.csvread import Problems
from forensic.core.engine import topological_order
from forensic.core.errors import LOOP_SHOWN, LOOP_WHOLE, LogicLoopError, loop_text
from forensic.core.model import Link

__all__ = ["check_fragnet_loops", "check_loops"]


def check_loops(ids: list[str], links: list[Link], rel: str, problems: Problems) -> None:
    """Report every logic loop of a network, naming its activities and the link lines.

    Kahn's topological sort (the engine's) finds whether there is a loop; the
    strongly connected components (networkx, Tarjan 1972) then give each
    loop separately, so one pass reports them all.
    """
    pos = {a: i for i, a in enumerate(ids)}
    succs: list[list[int]] = [[] for _ in ids]
    for link in links:
        if link.pred in pos and link.succ in pos:
            succs[pos[link.pred]].append(pos[link.succ])
    try:
        topological_order(ids, succs)
        return
    except LogicLoopError:
        pass
    import networkx as nx  # only to name the loops: a casefile without one never loads it

    line_of: dict[tuple[str, str], int] = {}
    graph = nx.DiGraph()
    for link in links:
        if link.pred in pos and link.succ in pos:
            graph.add_edge(link.pred, link.succ)
            line_of.setdefault((link.pred, link.succ), link.line or 0)
    components = [c for c in nx.strongly_connected_components(graph) if len(c) > 1]
    components.sort(key=lambda c: min(pos[a] for a in c))
    for comp in components:
        loop = _shortest_loop(min(comp, key=pos.__getitem__), comp, graph)
        lines = [line_of[(u, v)] for u, v in zip(loop, [*loop[1:], loop[0]], strict=True)]
        problems.add(rel, min(lines), None, loop_text(loop),
                     f"logic loop through the links on lines {_lines_text(lines)}; "
                     "a loop has no schedule, break one of its links")


def _shortest_loop(source: str, comp: set[str], graph) -> list[str]:
    """The shortest loop through ``source`` inside its strongly connected component (breadth first).

    Linear in the component's links, and the same loop every run (the
    links are visited in file order): one pass over 50,000 small loops costs
    no more than their links, where a networkx subgraph per loop did not.
    """
    parent = {source: source}
    queue = [source]
    for u in queue:  # the list grows while it is read: breadth-first order
        for v in graph.successors(u):
            if v == source:
                loop = [u]
                while loop[-1] != source:
                    loop.append(parent[loop[-1]])
                return loop[::-1]
            if v in comp and v not in parent:
                parent[v] = u
                queue.append(v)
    return [source]  # unreachable: every member of a component lies on a loop through the source


def _lines_text(lines: list[int]) -> str:
    """Line numbers as ``3, 4, 5``; a long list as its first and last few and the count."""
    if len(lines) <= LOOP_WHOLE:
        return ", ".join(map(str, lines))
    return (f"{', '.join(map(str, lines[:LOOP_SHOWN]))}, ... ({len(lines) - 2 * LOOP_SHOWN} more) ..., "
            f"{', '.join(map(str, lines[-LOOP_SHOWN:]))}")


def _has_loop(ids: list[str], links: list[Link]) -> bool:
    pos = {a: i for i, a in enumerate(ids)}
    succs: list[list[int]] = [[] for _ in ids]
    for link in links:
        if link.pred in pos and link.succ in pos:  # a bad row is reported with its table
            succs[pos[link.pred]].append(pos[link.succ])
    try:
        topological_order(ids, succs)
    except LogicLoopError:
        return True
    return False



def check_fragnet_loops(
    fragnet_ids: Collection[str],
    fragnet_links: list[Link],
    snapshots: list,
    rel: str,
    problems: Problems,
) -> None:
    """Report a loop that a fragnet's ties close with a snapshot's own logic.

    The fragnet is checked against every snapshot that has all the
    activities it ties to and none of its own ids (the snapshots it could
    be inserted into, AACE RP 52R-06); a loop there would stop the time impact analysis, so the
    casefile is refused now, naming the loop, the fragnet link lines in it
    and the snapshots where it closes.
    """
    own = set(fragnet_ids)
    ties = {a for link in fragnet_links for a in (link.pred, link.succ)} - own
    where: list[str] = []
    found: tuple[str, list[int]] | None = None
    for snap in snapshots:
        if not ties <= set(snap.activities) or own & set(snap.activities):
            continue  # cannot be inserted here (forensic.analysis.impact.insert_fragnet refuses it)
        if _has_loop(list(snap.activities), snap.links):
            continue  # the snapshot's own loop is reported with the snapshot
        if not _has_loop([*snap.activities, *own], [*snap.links, *fragnet_links]):
            continue
        where.append(snap.id)
        if found is None:
            import networkx as nx  # only to name the loop

            graph = nx.DiGraph()
            graph.add_edges_from((x.pred, x.succ) for x in snap.links)
            graph.add_edges_from((x.pred, x.succ) for x in fragnet_links)
            mine = {(x.pred, x.succ): x.line or 0 for x in reversed(fragnet_links)}
            for comp in nx.strongly_connected_components(graph):
                if len(comp) > 1 and comp & own:
                    cycle = nx.find_cycle(graph.subgraph(comp))
                    loop = [u for u, _ in cycle]
                    found = (loop_text(loop), sorted(mine[e] for e in cycle if e in mine))
                    break
    if found is not None:
        shown, lines = found
        problems.add(rel, lines[0] if lines else None, None, shown,
                     f"the fragnet's links (lines {_lines_text(lines)}) close a logic loop with "
                     f"the links of snapshot {', '.join(where)}; a loop has no schedule, break one of them")

