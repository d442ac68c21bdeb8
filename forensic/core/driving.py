"""Driving links, the longest path and its chains, from the forward pass.

A link *drives* when its timing sets its successor's early start; the
longest path is every activity reached back from the completion through
driving links, and its chains are the same activities as separate paths,
each contiguous through driving links (AACE RP 49R-06, *Identifying the
Critical Path*: the longest path traced back from the completion through
driving relationships). Open ends (no predecessor, no successor) are
reported as warnings, as a quality check would (DCMA 14-point, check 1).
"""

from __future__ import annotations

import numpy as np

from forensic.core.network import Network
from forensic.core.passes import EarlyDates

__all__ = ["DrivingIndex", "driving_links", "longest_path_positions", "open_end_warnings", "path_chains"]


def driving_links(net: Network, active: np.ndarray, early: EarlyDates):
    """The driving predecessors of each activity, as a function of its position.

    A link drives when its timing sets the successor's early start (AACE RP
    49R-06). A link from finished work drives only when it holds the
    successor later than the data date.
    """
    lp, lsu, n = net.lp, net.lsu, net.n
    cand, es, dd_k = early.cand, early.es, early.dd_k
    drv = active & (cand == es[lsu]) & ((net.status[lp] != 2) | (cand > dd_k[lsu]))
    drv_idx = np.flatnonzero(drv)
    d_order = np.argsort(lsu[drv_idx], kind="stable")
    d_succ = lsu[drv_idx][d_order].tolist()
    d_pred = lp[drv_idx][d_order].tolist()
    d_start = np.searchsorted(np.array(d_succ, dtype=np.int64), np.arange(n + 1)).tolist()

    return DrivingIndex(d_pred, d_start)


class DrivingIndex:
    """``index(i)``: the positions of activity ``i``'s driving predecessors (a plain object, so results serialise)."""

    __slots__ = ("pred", "start")

    def __init__(self, pred: list[int], start: list[int]) -> None:
        self.pred = pred
        self.start = start

    def __call__(self, i: int) -> list[int]:
        return self.pred[self.start[i] : self.start[i + 1]]

    def __getstate__(self):
        return (self.pred, self.start)

    def __setstate__(self, state) -> None:
        self.pred, self.start = state


def longest_path_positions(net: Network, comp: int, driving_of, start_day: np.ndarray) -> list[int]:
    """Every activity reached back from the completion through driving links, in date order.

    The longest path of AACE RP 49R-06 (traced back from the completion
    through driving relationships). Ties of start date are broken by the
    number of driving links from the path's first activity (so a driving
    predecessor comes first), then by activity id: the order does not depend
    on how a topological sort happened to break its own ties.
    """
    on_path = {comp}
    stack = [comp]
    while stack:
        i = stack.pop()
        for p in driving_of(i):
            if p not in on_path:
                on_path.add(p)
                stack.append(p)
    depth: dict[int, int] = {}
    for i in net.node_order.tolist():
        if i in on_path:
            depth[i] = 1 + max((depth[p] for p in driving_of(i)), default=-1)
    sd = start_day.tolist()
    ids = net.ids
    return sorted(on_path, key=lambda i: (sd[i], depth[i], ids[i]))


_MAX_CHAINS = 50  # ties multiply chains; past this many the union alone is the answer


def path_chains(comp: int, driving_of) -> list[list[int]]:
    """The longest path as separate chains, each contiguous through driving links.

    Every chain runs from an activity with no driving predecessor to the
    completion, each step a driving link (AACE RP 49R-06: the path is traced
    back from the completion through driving relationships); two tied paths
    are two chains. Depth-first from the completion, predecessors in
    driving-link order, at most ``_MAX_CHAINS`` chains.
    """
    chains: list[list[int]] = []
    stack: list[tuple[int, list[int]]] = [(comp, [comp])]
    while stack and len(chains) < _MAX_CHAINS:
        i, tail = stack.pop()
        preds = [p for p in driving_of(i) if p not in tail]
        if not preds:
            chains.append(tail[::-1])
            continue
        for p in reversed(preds):
            stack.append((p, [*tail, p]))
    return chains


def open_end_warnings(sid: str, net: Network, comp: int) -> list[str]:
    """Unfinished activities with no predecessor (other than start milestones) or no successor (other than the completion)."""
    n, live = net.n, ~net.done
    indeg = np.bincount(net.lsu, minlength=n)
    outdeg = np.bincount(net.lp, minlength=n)
    warnings: list[str] = []
    for i in np.flatnonzero(live & (indeg == 0) & ~net.start_ms).tolist():
        warnings.append(f"snapshot {sid}: activity {net.ids[i]} has no predecessor (open start)")
    for i in np.flatnonzero(live & (outdeg == 0)).tolist():
        if i != comp:
            warnings.append(f"snapshot {sid}: activity {net.ids[i]} has no successor (open finish)")
    return warnings
