"""Benchmark of the recovery analysis (issues 7 and 22).

Not collected by pytest (the name has no ``test_`` prefix). Run it from the
repository root with ``python tests/benchmarks/recovery_bench.py`` (2,000
activities, 300 crashable: one plan, the count objective, plan and curve) or
with ``--ladder`` (activities, crashable share, calendars: seconds of the
``recover`` command's work under the default time limit; the table of
docs/benchmark.md).
"""

from __future__ import annotations

import random
import sys
import time
from datetime import date
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

from forensic.analysis.recovery import recover  # noqa: E402
from forensic.core.calendars import DAY_NAMES  # noqa: E402
from forensic.core.model import (
    Activity,
    Calendar,
    Casefile,
    Link,
    Project,
    Snapshot,
    frozen_mapping,
)  # noqa: E402

__all__ = ["LADDER", "SYNTH", "bench_ladder", "bench_network", "bench_recovery", "synth_all_crashable"]


CALENDARS = {
    "5d": Calendar("5d", DAY_NAMES[:5], holidays=(date(2026, 12, 25), date(2027, 1, 1))),
    "6d": Calendar("6d", DAY_NAMES[:6], holidays=(date(2026, 4, 3), date(2026, 12, 25))),
    "7d": Calendar("7d", DAY_NAMES, holidays=(date(2026, 12, 25),)),
}


def bench_network(n: int = 2000, crashable: int = 300, seed: int = 7, calendars: int = 1) -> Casefile:
    """An invented layered network: mostly FS links, some SS/FF with lags, one completion milestone.

    With ``calendars`` 2 or 3, activities are spread over the 5-, 6- and
    7-day calendars above (each activity its own), so links cross calendars.
    """
    rng = random.Random(seed)
    width = 40
    crash_ids = set(rng.sample(range(n), crashable))
    cal_ids = list(CALENDARS)[:calendars]
    acts = []
    for i in range(n):
        kw = {}
        if i in crash_ids:
            kw = dict(crash_days=rng.randint(1, 5), crash_cost=float(rng.randint(100, 5000)))
        if calendars > 1:
            kw["calendar"] = rng.choice(cal_ids)
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
    snap = Snapshot("BM", date(2026, 1, 5), frozen_mapping({a.id: a for a in acts}), tuple(links), role="baseline")
    project = Project("benchmark", "5d", completion="DONE")
    return Casefile(project, frozen_mapping(CALENDARS), frozen_mapping(), (snap,))


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


# The ladder recorded in docs/benchmark.md: (activities, crashable share, calendars, days asked).
LADDER = (
    (200, 1.0, 1, 5), (200, 1.0, 3, 5), (500, 1.0, 1, 5), (500, 1.0, 3, 5),
    (2000, 0.15, 1, 10), (2000, 0.15, 3, 10), (2000, 1.0, 1, 10), (5000, 1.0, 1, 60),
)
# ``forensic synth`` networks with every task crashable: (activities asked for, days asked).
SYNTH = ((200, 5), (500, 5))


def synth_all_crashable(n: int, seed: int = 1) -> Casefile:
    """A ``forensic synth`` casefile (three calendars, constraints, progress) with every task crashable.

    Its latest update gets ``crash_days`` = a third of each task's duration (at
    least 1) and a cost of 500 to 5,000 a day, the shape of the issue 22 attack.
    """
    from dataclasses import replace

    from forensic.casefile.synthetic import generate_casefile

    cf = generate_casefile(n, updates=3, seed=seed)
    rng = random.Random(seed)
    snap = cf.snapshots[-1]
    acts = {
        a.id: (replace(a, crash_days=max(1, a.duration // 3), crash_cost=float(rng.randint(5, 50) * 100))
               if a.kind == "task" and a.duration > 1 else a)
        for a in snap.activities.values()
    }
    snap = replace(snap, activities=frozen_mapping(acts))
    return replace(cf, snapshots=(*cf.snapshots[:-1], snap))


def bench_ladder(time_limit: float = 60.0, ladder=LADDER, synth=SYNTH):
    """Plan and curve (the ``recover`` command's work) per rung, with the default time limit (one row each)."""
    cases = [(n, share, cals, days, None) for n, share, cals, days in ladder]
    cases += [(n, 1.0, 3, days, "synth") for n, days in synth]
    for n, share, cals, days, kind in cases:
        if kind == "synth":
            cf = synth_all_crashable(n)
            snap = cf.snapshots[-1]
            total = len(snap.activities)
            crashable = sum(1 for a in snap.activities.values() if a.crash_days)
            share = crashable / total
        else:
            cf = bench_network(n, round(n * share), calendars=cals)
            snap, total = cf.snapshots[0], n
        t = time.perf_counter()
        r = recover(cf, snap.id, days=days, time_limit=time_limit)
        yield {
            "network": kind or "layered", "activities": total, "crashable_share": share, "calendars": cals,
            "days": days, "seconds": time.perf_counter() - t, "curve_points": len(r.curve), "proven": r.proven,
            "cost": r.plan.cost,
        }


if __name__ == "__main__":
    if "--ladder" in sys.argv:
        print("| network | activities | crashable | calendars | --days | seconds | curve points | proven least-cost |")
        print("|---|---:|---:|---:|---:|---:|---:|---|")
        for row in bench_ladder():
            print(f"| {row['network']} | {row['activities']:,} | {row['crashable_share']:.0%} | {row['calendars']} "
                  f"| {row['days']} "
                  f"| {row['seconds']:.1f} | {row['curve_points']} | {'yes' if row['proven'] else 'no'} |", flush=True)
    else:
        for key, value in bench_recovery().items():
            print(f"{key}: {value:.3f}" if isinstance(value, float) else f"{key}: {value}")
