"""The engine against a published FS-only project network with floats.

Source (FROM MEMORY, not checked against the book in this session):
Hillier, F. S. and Lieberman, G. J., *Introduction to Operations Research*,
chapter "Project Management with PERT/CPM", the Reliable Construction Co.
example: 14 activities A..N with durations in weeks, project duration 44
weeks, critical path A-B-C-E-F-J-L-N. The durations, predecessors, the 44
weeks and the critical path are as I remember them from the book; the
per-activity slacks below were worked by hand here (shown in the comments)
and are cross-checked independently with networkx longest paths and with
``tests/reference_engine.py``.

Weeks are taken as days of a seven-day calendar, so boundary ``t`` of the
textbook is the date 2026-01-01 + t days (a start date) and a finish at
boundary ``t`` is dated the day before (inclusive dates).
"""

from datetime import date, timedelta

import networkx as nx
import pytest

from forensic.core.calendars import DAY_NAMES
from forensic.core.engine import schedule
from forensic.core.model import Activity, Calendar, Link, Project, Snapshot, frozen_mapping
from tests import reference_engine

SEVEN = Calendar("7d", DAY_NAMES)
BASE = date(2026, 1, 1)

# activity: (duration in weeks, immediate predecessors) -- from the source (memory).
NETWORK = {
    "A": (2, ""), "B": (4, "A"), "C": (10, "B"), "D": (6, "C"), "E": (4, "C"),
    "F": (5, "E"), "G": (7, "D"), "H": (9, "EG"), "I": (7, "C"), "J": (8, "FI"),
    "K": (4, "J"), "L": (5, "J"), "M": (2, "H"), "N": (6, "KL"),
}

# Hand working (forward pass, ES/EF in weeks):
#   A 0-2, B 2-6, C 6-16, D 16-22, E 16-20, I 16-23, F 20-25, G 22-29,
#   H max(20, 29)=29-38, J max(25, 23)=25-33, K 33-37, L 33-38, M 38-40,
#   N max(37, 38)=38-44; project finish 44 (the source's 44 weeks).
# Backward pass (LS/LF): N 38-44, M 42-44, L 33-38, K 34-38, J 25-33,
#   H 33-42, G 26-33, F 20-25, I 18-25, E min(20, 33)-4 = 16-20, D 20-26,
#   C 6-16, B 2-6, A 0-2.
HAND = {  # activity: (ES, EF, LS, LF, total float) in weeks, hand-worked
    "A": (0, 2, 0, 2, 0), "B": (2, 6, 2, 6, 0), "C": (6, 16, 6, 16, 0),
    "D": (16, 22, 20, 26, 4), "E": (16, 20, 16, 20, 0), "F": (20, 25, 20, 25, 0),
    "G": (22, 29, 26, 33, 4), "H": (29, 38, 33, 42, 4), "I": (16, 23, 18, 25, 2),
    "J": (25, 33, 25, 33, 0), "K": (33, 37, 34, 38, 1), "L": (33, 38, 33, 38, 0),
    "M": (38, 40, 42, 44, 4), "N": (38, 44, 38, 44, 0),
}
CRITICAL = ["A", "B", "C", "E", "F", "J", "L", "N"]  # the source's critical path (memory)


def snapshot():
    acts = [Activity(a, a, d) for a, (d, _) in NETWORK.items()]
    acts.append(Activity("FIN", "finish", 0, kind="closing-milestone"))
    links = [Link(p, a) for a, (_, preds) in NETWORK.items() for p in preds]
    links += [Link("M", "FIN"), Link("N", "FIN")]
    snap = Snapshot("BL", BASE, frozen_mapping({a.id: a for a in acts}), tuple(links))
    return snap, Project("t", "7d", completion="FIN")


def test_networkx_longest_paths_agree_with_the_hand_working():
    # Independent check (networkx): ES = longest path from the start,
    # LF = 44 - longest path from the activity's finish to the end.
    g = nx.DiGraph()
    for a, (d, preds) in NETWORK.items():
        for p in preds:
            g.add_edge(p, a, weight=NETWORK[p][0])
        g.add_edge(a, "END", weight=d)
    assert nx.dag_longest_path_length(g) == 44
    assert [x for x in nx.dag_longest_path(g) if x != "END"] == CRITICAL
    neg = {(u, v): -e["weight"] for u, v, e in g.edges(data=True)}
    for a, (es, _, _, lf, _) in HAND.items():
        # ES: longest path from A to the activity (weights are the durations before it).
        to_a = 0 if a == "A" else -nx.bellman_ford_path_length(g, "A", a, weight=lambda u, v, e: neg[u, v])
        assert to_a == es, a
        # The longest path from the activity to END includes its own duration,
        # so LF = 44 - (that length - duration).
        tail = -nx.bellman_ford_path_length(g, a, "END", weight=lambda u, v, e: neg[u, v])
        assert 44 - (tail - NETWORK[a][0]) == lf, a


@pytest.mark.parametrize("engine", [schedule, reference_engine.schedule])
def test_engine_matches_the_published_network(engine):
    snap, project = snapshot()
    r = engine(snap, {"7d": SEVEN}, project)
    assert r.completion == BASE + timedelta(days=44 - 1)  # 44 weeks (source)
    for a, (es, ef, ls, lf, tf) in HAND.items():
        x = r[a]
        got = (x.early_start, x.early_finish, x.late_start, x.late_finish, x.total_float)
        want = (BASE + timedelta(es), BASE + timedelta(ef - 1), BASE + timedelta(ls), BASE + timedelta(lf - 1), tf)
        assert got == want, a
        assert x.critical == (a in CRITICAL)
    assert [a for a in r.longest_path if a != "FIN"] == CRITICAL


# ---------------------------------------------------------------------------
# A precedence-diagramming network with start-to-start links.
#
# Source of the network (activities, durations, relationships): course
# module "Network Construction - Precedence Diagram Method" (15 March 2019),
# as found through the search tool in a stored page (aggregated at
# https://huggingface.co/datasets/nvidia/Nemotron-CC-Math-v1). Its activity
# table: A 2 (none); B 10 (A, S-S); C 13 (A); D 12 (A); E 12 (B); F 7 (B);
# G 10 (D); H 16 (D); I 6 (F); J 12 (C, G S-S); K 5 (I S-S); L 8 (E, I, K);
# M 5 (H); N 3 (G, J, L, M); all lags zero. The excerpt seen did not carry
# the module's answer table, so every number below is HAND-WORKED here and
# cross-checked with networkx and the reference engine. It has SS links but
# no FF lags; the FF rules are covered by tests/test_engine_rules.py.
PDM = {
    "A": (2, []), "B": (10, [("A", "SS")]), "C": (13, [("A", "FS")]), "D": (12, [("A", "FS")]),
    "E": (12, [("B", "FS")]), "F": (7, [("B", "FS")]), "G": (10, [("D", "FS")]),
    "H": (16, [("D", "FS")]), "I": (6, [("F", "FS")]), "J": (12, [("C", "FS"), ("G", "SS")]),
    "K": (5, [("I", "SS")]), "L": (8, [("E", "FS"), ("I", "FS"), ("K", "FS")]),
    "M": (5, [("H", "FS")]), "N": (3, [("G", "FS"), ("J", "FS"), ("L", "FS"), ("M", "FS")]),
}
# Hand working, forward: A 0-2; B SS A 0-10; C 2-15; D 2-14; E 10-22; F 10-17;
#   G 14-24; H 14-30; I 17-23; J max(C 15, G's start 14) = 15-27;
#   K SS I 17-22; L max(22, 23, 22) = 23-31; M 30-35; N max(24, 27, 31, 35) = 35-38.
# Backward from 38: N 35-38; M 30-35; L 27-35; J 23-35; K (FS L) 22-27;
#   I min(LF by L 27, LS of K 22 + 6 = 28) -> 21-27; H 14-30;
#   G min(N 35, LS of J 23 + 10 = 33) -> 23-33; F (I) 14-21; E (L) 15-27;
#   D min(G 23, H 14) -> 2-14; C (J) 10-23; B min(E 15, F 14) -> 4-14;
#   A min(LS of B 4 + 2 = 6, C 10, D 2) -> 0-2.
PDM_HAND = {  # activity: (ES, EF, LS, LF, total float), hand-worked
    "A": (0, 2, 0, 2, 0), "B": (0, 10, 4, 14, 4), "C": (2, 15, 10, 23, 8), "D": (2, 14, 2, 14, 0),
    "E": (10, 22, 15, 27, 5), "F": (10, 17, 14, 21, 4), "G": (14, 24, 23, 33, 9),
    "H": (14, 30, 14, 30, 0), "I": (17, 23, 21, 27, 4), "J": (15, 27, 23, 35, 8),
    "K": (17, 22, 22, 27, 5), "L": (23, 31, 27, 35, 4), "M": (30, 35, 30, 35, 0),
    "N": (35, 38, 35, 38, 0),
}
PDM_CRITICAL = ["A", "D", "H", "M", "N"]  # 2 + 12 + 16 + 5 + 3 = 38, hand-worked


def test_networkx_start_finish_graph_agrees_with_the_pdm_hand_working():
    # Independent check (networkx): each activity as a start node and a finish
    # node joined by its duration; FS joins finish to start, SS start to start.
    g = nx.DiGraph()
    for a, (d, preds) in PDM.items():
        g.add_edge(("s", a), ("f", a), weight=d)
        g.add_edge("BEGIN", ("s", a), weight=0)
        g.add_edge(("f", a), "END", weight=0)
        for p, typ in preds:
            g.add_edge(("f" if typ == "FS" else "s", p), ("s", a), weight=0)
    neg = {(u, v): -e["weight"] for u, v, e in g.edges(data=True)}
    w = lambda u, v, e: neg[u, v]  # noqa: E731
    assert nx.dag_longest_path_length(g) == 38
    for a, (es, ef, ls, lf, tf) in PDM_HAND.items():
        assert -nx.bellman_ford_path_length(g, "BEGIN", ("s", a), weight=w) == es, a
        # Late start = 38 less the longest path from its start node (an
        # activity is not split, so its late finish is late start + duration).
        assert 38 + nx.bellman_ford_path_length(g, ("s", a), "END", weight=w) == ls, a
        assert (ef - es, lf - ls, lf - ef) == (PDM[a][0], PDM[a][0], tf), a


@pytest.mark.parametrize("engine", [schedule, reference_engine.schedule])
def test_engine_matches_the_pdm_network_with_start_to_start_links(engine):
    acts = [Activity(a, a, d) for a, (d, _) in PDM.items()]
    acts.append(Activity("FIN", "finish", 0, kind="closing-milestone"))
    links = [Link(p, a, typ) for a, (_, preds) in PDM.items() for p, typ in preds] + [Link("N", "FIN")]
    snap = Snapshot("BL", BASE, frozen_mapping({a.id: a for a in acts}), tuple(links))
    r = engine(snap, {"7d": SEVEN}, Project("t", "7d", completion="FIN"))
    assert r.completion == BASE + timedelta(days=38 - 1)
    for a, (es, ef, ls, lf, tf) in PDM_HAND.items():
        x = r[a]
        got = (x.early_start, x.early_finish, x.late_start, x.late_finish, x.total_float)
        want = (BASE + timedelta(es), BASE + timedelta(ef - 1), BASE + timedelta(ls), BASE + timedelta(lf - 1), tf)
        assert got == want, a
        assert x.critical == (a in PDM_CRITICAL)
    assert [a for a in r.longest_path if a != "FIN"] == PDM_CRITICAL
