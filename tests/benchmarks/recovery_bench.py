"""Benchmark of the recovery analysis: 2,000 activities, 300 of them crashable (issue 7).

Not collected by pytest (the name has no ``test_`` prefix). Run it with
``python tests/benchmarks/recovery_bench.py`` from the repository root.
"""

from __future__ import annotations

import random
import sys
import time
from datetime import date
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

from forensic.calendars import DAY_NAMES  # noqa: E402
from forensic.model import Activity, Calendar, Casefile, Link, Project, Snapshot, frozen_mapping  # noqa: E402
from forensic.recovery import recover  # noqa: E402

__all__ = ["bench_recovery", "bench_network"]


def bench_network(n: int = 2000, crashable: int = 300, seed: int = 7) -> Casefile:
    """An invented layered network: mostly FS links, some SS/FF with lags, one completion milestone."""
    rng = random.Random(seed)
    width = 40
    crash_ids = set(rng.sample(range(n), crashable))
    acts = []
    for i in range(n):
        kw = {}
        if i in crash_ids:
            kw = dict(crash_days=rng.randint(1, 5), crash_cost=float(rng.randint(100, 5000)))
        acts.append(Activity(f"A{i:04d}", f"activity {i}", rng.randint(2, 20), **kw))
    acts.append(Activity("DONE", "completion", 0, kind="closing-milestone"))
    links = []
    for i in range(width, n):
        layer = i // width
        preds = rng.sample(range((layer - 1) * width, layer * width), rng.randint(1, 3))
        for p in preds:
            typ = rng.choices(["FS", "SS", "FF"], weights=[8, 1, 1])[0]
            lag = rng.randint(0, 3) if typ != "FS" else rng.choice([0, 0, 0, 1, -1])
            links.append(Link(f"A{p:04d}", f"A{i:04d}", typ, lag))
    has_succ = {link.pred for link in links}
    links += [Link(a.id, "DONE") for a in acts[:-1] if a.id not in has_succ]
    five = Calendar("5d", DAY_NAMES[:5], holidays=(date(2026, 12, 25), date(2027, 1, 1)))
    snap = Snapshot("BM", date(2026, 1, 5), frozen_mapping({a.id: a for a in acts}), tuple(links), role="baseline")
    project = Project("benchmark", "5d", completion="DONE")
    return Casefile(project, frozen_mapping({"5d": five}), frozen_mapping(), (snap,))


def bench_recovery(days: int = 10) -> dict[str, float]:
    """Time one plan (cost and count objectives) and the full time-cost curve; returns seconds."""
    cf = bench_network()
    out: dict[str, float] = {}
    t = time.perf_counter()
    r = recover(cf, "BM", days=days, curve=False)
    out["plan_cost_s"] = time.perf_counter() - t
    t = time.perf_counter()
    rc = recover(cf, "BM", days=days, objective="count", curve=False)
    out["plan_count_s"] = time.perf_counter() - t
    t = time.perf_counter()
    full = recover(cf, "BM", days=days, curve=True)
    out["plan_and_curve_s"] = time.perf_counter() - t
    out["curve_points"] = len(full.curve)
    out["max_working_days"] = full.max_working_days
    out["plan_cost"] = r.plan.cost
    out["plan_shortened"] = len(r.plan.shortenings)
    out["count_shortened"] = len(rc.plan.shortenings)
    return out


if __name__ == "__main__":
    for key, value in bench_recovery().items():
        print(f"{key}: {value:.3f}" if isinstance(value, float) else f"{key}: {value}")
