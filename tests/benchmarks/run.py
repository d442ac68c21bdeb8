"""The scale benchmark (issue 9): a ladder of synthetic networks, windows at 20,000 x 24, the demo report.

Not collected by pytest (tests/conftest.py ignores this folder). Run from
the repository root::

    python tests/benchmarks/run.py                      # the whole ladder
    python tests/benchmarks/run.py --sizes 1000,5000 --skip-windows --out /tmp/b.json
    python tests/benchmarks/run.py --sizes "" --skip-end-to-end --skip-windows --skip-report   # start-up, eot/windows

Each case runs in a fresh subprocess, so its peak memory (``ru_maxrss``) is
its own. Times are medians of ``--runs`` runs. The CPM figure is a full
schedule of the last update (both passes, floats, driving links, longest
path) with the engine's compile caches cleared before each run; the
reference is networkx ``dag_longest_path`` (a forward pass only) on the same
network, edge weight = predecessor duration + lag, graph building not timed.
"""

from __future__ import annotations

import argparse
import json
import os
import platform
import resource
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

LADDER = (1000, 5000, 10000, 20000, 50000, 100000)


def _peak_mb() -> float:
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024  # KiB on Linux


def _clear_caches() -> None:
    from forensic.core.network import clear_caches

    clear_caches()


def case_cpm(n: int, runs: int) -> dict:
    """Generate n activities with 2 updates, write, load, schedule the last update; networkx reference."""
    import networkx as nx

    from forensic.casefile.reading import load_casefile
    from forensic.casefile.synthetic import generate_casefile
    from forensic.casefile.writing import write_casefile
    from forensic.core.engine import schedule

    t = time.perf_counter()
    cf = generate_casefile(n, updates=2, seed=1)
    gen_s = time.perf_counter() - t
    with tempfile.TemporaryDirectory() as tmp:
        write_casefile(cf, tmp)
        t = time.perf_counter()
        cf = load_casefile(tmp)
        load_s = (time.perf_counter() - t) / len(cf.snapshots)
    snap = cf.snapshots[-1]
    times = []
    for _ in range(runs):
        _clear_caches()
        t = time.perf_counter()
        result = schedule(snap, cf.calendars, cf.project)
        times.append(time.perf_counter() - t)
    graph = nx.DiGraph()
    graph.add_nodes_from(snap.activities)
    for k in snap.links:
        graph.add_edge(k.pred, k.succ, weight=snap.activities[k.pred].duration + k.lag)
    nx_times = []
    for _ in range(runs):
        t = time.perf_counter()
        nx.dag_longest_path(graph, weight="weight")
        nx_times.append(time.perf_counter() - t)
    acts, links = len(snap.activities), len(snap.links)
    cpm = statistics.median(times)
    ref = statistics.median(nx_times)
    return {
        "case": "cpm", "activities": acts, "links": links, "snapshots": len(cf.snapshots),
        "generate_s": gen_s, "load_per_snapshot_s": load_s, "cpm_s": cpm, "cpm_runs_s": times,
        "networkx_s": ref, "ratio": cpm / ref, "cpm_us_per_item": 1e6 * cpm / (acts + links),
        "load_us_per_item": 1e6 * load_s / (acts + links), "completion": result.completion.isoformat(),
        "peak_mb": _peak_mb(),
    }


def case_windows(folder: str) -> dict:
    """Load a written casefile and run the windows analysis (half-step), then the full attribution."""
    from forensic.analysis.attribution.delay import analyse_delay
    from forensic.analysis.windows import analyse_windows
    from forensic.casefile.reading import load_casefile

    t0 = time.perf_counter()
    cf = load_casefile(folder)
    load_s = time.perf_counter() - t0
    t = time.perf_counter()
    an = analyse_windows(cf)
    windows_s = time.perf_counter() - t
    total_windows = time.perf_counter() - t0
    t = time.perf_counter()
    delay = analyse_delay(cf)
    delay_s = time.perf_counter() - t
    return {
        "case": "windows", "activities": len(cf.snapshots[-1].activities), "snapshots": len(cf.snapshots),
        "load_s": load_s, "load_per_snapshot_s": load_s / len(cf.snapshots), "windows_s": windows_s,
        "load_plus_windows_s": total_windows, "attribution_s": delay_s,
        "load_plus_windows_plus_attribution_s": load_s + windows_s + delay_s,
        "total_slip": an.total_slip, "ledger_balanced": delay.ledger.balanced, "peak_mb": _peak_mb(),
    }


def case_report(runs: int) -> dict:
    """The demo casefile's full report (load + every analysis + PDF), median of runs."""
    from forensic.casefile.reading import load_casefile
    from forensic.report import build_report

    times = []
    for _ in range(runs):
        t = time.perf_counter()
        pdf = build_report(load_casefile(ROOT / "casefiles" / "riverside"))
        times.append(time.perf_counter() - t)
    return {"case": "report", "report_s": statistics.median(times), "runs_s": times, "bytes": len(pdf), "peak_mb": _peak_mb()}


def _tree_rss_kb(pid: int) -> int:
    """Resident set of a process and all its descendants, in KiB (Linux /proc)."""
    total = 0
    try:
        with open(f"/proc/{pid}/statm") as f:
            total = int(f.read().split()[1]) * os.sysconf("SC_PAGE_SIZE") // 1024
        with open(f"/proc/{pid}/task/{pid}/children") as f:
            kids = [int(k) for k in f.read().split()]
    except (OSError, ValueError):
        return total
    return total + sum(_tree_rss_kb(k) for k in kids)


def command_figures(cmd: list[str]) -> dict:
    """One run of a whole command: wall seconds and the peak resident set of it and its workers (sampled every 0.2 s)."""
    t = time.perf_counter()
    proc = subprocess.Popen(cmd, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, cwd=ROOT)
    peak = 0
    while proc.poll() is None:
        peak = max(peak, _tree_rss_kb(proc.pid))
        time.sleep(0.2)
    if proc.returncode != 0:
        raise SystemExit(f"{cmd} failed with status {proc.returncode}")
    return {"wall_s": time.perf_counter() - t, "peak_tree_mb": peak / 1024}


def _median_wall(cmd: list[str], runs: int) -> float:
    times = []
    for _ in range(runs):
        t = time.perf_counter()
        subprocess.run(cmd, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, check=True, cwd=ROOT)
        times.append(time.perf_counter() - t)
    return statistics.median(times)


def case_startup(runs: int) -> dict:
    """``forensic --help`` start-up against ``python -c "import click"`` (issue 20 target: <= 2x)."""
    py = sys.executable
    forensic_s = _median_wall([py, "-m", "forensic", "--help"], runs)
    click_s = _median_wall([py, "-c", "import click"], runs)
    return {"forensic_help_s": forensic_s, "import_click_s": click_s, "ratio": forensic_s / click_s}


def case_xlsx(n: int, runs: int) -> dict:
    """One sheet of ``n`` rows (the schedule table of a synthetic casefile) written as XLSX (issue 20: <= 4 s)."""
    from forensic.casefile.synthetic import generate_casefile
    from forensic.core.engine import schedule
    from forensic.core.tables import schedule_table
    from forensic.exchange.export import to_xlsx

    cf = generate_casefile(n, updates=0, seed=1)
    snap = cf.snapshots[-1]
    table = schedule_table(schedule(snap, cf.calendars, cf.project), snap)
    times = []
    for _ in range(runs):
        t = time.perf_counter()
        data = to_xlsx([table])
        times.append(time.perf_counter() - t)
    return {"rows": len(table.rows), "columns": len(table.columns), "xlsx_s": statistics.median(times),
            "bytes": len(data), "peak_mb": _peak_mb()}


def case_eot_ratio(runs: int) -> dict:
    """``forensic eot --json`` against ``forensic windows --json`` on the demo casefile (issue 18 target: <= 3x).

    The two commands run in turn, ``runs`` times each, so a change of load
    on the machine falls on both; the medians of wall time, and of the CPU
    time (user + system) of each child, are quoted.
    """
    py, demo = sys.executable, str(ROOT / "casefiles" / "riverside")
    cmds = {"eot": [py, "-m", "forensic", "eot", demo, "--json"],
            "windows": [py, "-m", "forensic", "windows", demo, "--json"]}
    env = {**os.environ, "PYTHONPATH": str(ROOT)}  # this checkout's package, not an installed copy
    wall: dict[str, list[float]] = {k: [] for k in cmds}
    cpu: dict[str, list[float]] = {k: [] for k in cmds}
    for _ in range(runs):
        for name, cmd in cmds.items():
            before = resource.getrusage(resource.RUSAGE_CHILDREN)
            t = time.perf_counter()
            subprocess.run(cmd, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, check=True, cwd=ROOT, env=env)
            wall[name].append(time.perf_counter() - t)
            after = resource.getrusage(resource.RUSAGE_CHILDREN)
            cpu[name].append(after.ru_utime - before.ru_utime + after.ru_stime - before.ru_stime)
    med = {k: statistics.median(v) for k, v in wall.items()}
    med_cpu = {k: statistics.median(v) for k, v in cpu.items()}
    return {"eot_s": med["eot"], "windows_s": med["windows"], "ratio": med["eot"] / med["windows"],
            "eot_cpu_s": med_cpu["eot"], "windows_cpu_s": med_cpu["windows"],
            "cpu_ratio": med_cpu["eot"] / med_cpu["windows"], "eot_runs_s": wall["eot"], "windows_runs_s": wall["windows"]}


def case_end_to_end(n: int, runs: int) -> dict:
    """``forensic schedule --json`` end to end on n activities, against csv + networkx dag_longest_path in one run.

    The reference reads the same two CSV files with the csv module, builds a
    networkx DiGraph (edge weight = predecessor duration + lag) and takes
    ``dag_longest_path``, in one Python process: the whole job a user would
    otherwise script by hand, without calendars, progress or floats.
    """
    from forensic.casefile.synthetic import generate_casefile
    from forensic.casefile.writing import write_casefile

    py = sys.executable
    with tempfile.TemporaryDirectory() as tmp:
        write_casefile(generate_casefile(n, updates=1, seed=1), tmp)
        snap = sorted(p for p in (Path(tmp) / "snapshots").iterdir())[-1]
        ref = (
            "import csv,sys,networkx as nx\n"
            "d={r['id']:int(r['duration'] or 0) for r in csv.DictReader(open(sys.argv[1],encoding='utf-8'))}\n"
            "g=nx.DiGraph()\n"
            "g.add_nodes_from(d)\n"
            "g.add_weighted_edges_from((r['pred'],r['succ'],d[r['pred']]+int(r.get('lag') or 0))"
            " for r in csv.DictReader(open(sys.argv[2],encoding='utf-8')))\n"
            "print(len(nx.dag_longest_path(g)))\n"
        )
        forensic_s = _median_wall([py, "-m", "forensic", "schedule", tmp, "--json"], runs)
        reference_s = _median_wall([py, "-c", ref, str(snap / "activities.csv"), str(snap / "links.csv")], runs)
    return {"activities": n, "forensic_schedule_json_s": forensic_s, "csv_networkx_s": reference_s,
            "ratio": forensic_s / reference_s}


def _sub(args: list[str]) -> dict:
    out = subprocess.run([sys.executable, __file__, *args], capture_output=True, text=True, check=False)
    if out.returncode != 0:
        raise SystemExit(f"case {args} failed:\n{out.stderr}")
    return json.loads(out.stdout.strip().splitlines()[-1])


def machine() -> dict:
    model = ""
    try:
        for line in Path("/proc/cpuinfo").read_text().splitlines():
            if line.startswith("model name"):
                model = line.split(":", 1)[1].strip()
                break
    except OSError:
        pass
    return {"nproc": os.cpu_count(), "cpu": model, "python": platform.python_version(),
            "platform": platform.platform(), "loadavg_at_start": os.getloadavg()}


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sizes", default=",".join(map(str, LADDER)), help="comma-separated activity counts")
    ap.add_argument("--runs", type=int, default=5, help="runs per timing (median quoted)")
    ap.add_argument("--windows-size", type=int, default=20000)
    ap.add_argument("--windows-updates", type=int, default=24)
    ap.add_argument("--skip-windows", action="store_true")
    ap.add_argument("--skip-report", action="store_true")
    ap.add_argument("--out", default="benchmark-results.json", help="JSON results file")
    ap.add_argument("--case", help=argparse.SUPPRESS)
    ap.add_argument("--arg", help=argparse.SUPPRESS)
    ap.add_argument("--end-to-end-size", type=int, default=50000)
    ap.add_argument("--skip-end-to-end", action="store_true")
    ap.add_argument("--skip-eot", action="store_true", help="skip the eot / windows ratio on the demo")
    ap.add_argument("--xlsx-rows", type=int, default=50000, help="rows of the XLSX sheet case (0 skips it)")
    a = ap.parse_args()
    if a.case == "cpm":
        print(json.dumps(case_cpm(int(a.arg), a.runs)))
        return
    if a.case == "windows":
        print(json.dumps(case_windows(a.arg)))
        return
    if a.case == "xlsx":
        print(json.dumps(case_xlsx(int(a.arg), a.runs)))
        return
    if a.case == "report":
        print(json.dumps(case_report(a.runs)))
        return

    results: dict = {"machine": machine(), "command": " ".join([Path(sys.executable).name, *sys.argv]), "cpm": []}
    print(f"{'activities':>10} {'links':>7} {'load/snap s':>11} {'CPM s':>7} {'networkx s':>10} "
          f"{'ratio':>5} {'CPM us/item':>11} {'peak MB':>8}")
    for n in [int(x) for x in a.sizes.split(",") if x]:
        r = _sub(["--case", "cpm", "--arg", str(n), "--runs", str(a.runs)])
        results["cpm"].append(r)
        print(f"{r['activities']:>10} {r['links']:>7} {r['load_per_snapshot_s']:>11.3f} {r['cpm_s']:>7.3f} "
              f"{r['networkx_s']:>10.3f} {r['ratio']:>5.2f} {r['cpm_us_per_item']:>11.2f} {r['peak_mb']:>8.0f}")
    r = case_startup(max(a.runs, 5))
    results["startup"] = r
    print(f"\nstart-up: forensic --help {r['forensic_help_s']:.3f} s, python -c 'import click' "
          f"{r['import_click_s']:.3f} s: {r['ratio']:.2f}x")
    if not a.skip_end_to_end:
        r = case_end_to_end(a.end_to_end_size, max(1, min(a.runs, 3)))
        results["end_to_end"] = r
        print(f"end to end: forensic schedule --json on {r['activities']} activities {r['forensic_schedule_json_s']:.2f} s, "
              f"csv + networkx dag_longest_path {r['csv_networkx_s']:.2f} s: {r['ratio']:.2f}x")
    if not a.skip_eot:
        r = case_eot_ratio(max(3, min(a.runs, 5)))
        results["eot_ratio"] = r
        print(f"demo eot / windows: forensic eot --json {r['eot_s']:.2f} s, forensic windows --json "
              f"{r['windows_s']:.2f} s: {r['ratio']:.2f}x (CPU {r['eot_cpu_s']:.2f} s / {r['windows_cpu_s']:.2f} s: "
              f"{r['cpu_ratio']:.2f}x)")
    if a.xlsx_rows:
        r = _sub(["--case", "xlsx", "--arg", str(a.xlsx_rows), "--runs", str(max(1, min(a.runs, 3)))])
        results["xlsx"] = r
        print(f"XLSX: one sheet of {r['rows']} rows x {r['columns']} columns in {r['xlsx_s']:.2f} s "
              f"({r['bytes'] / 1e6:.1f} MB), peak {r['peak_mb']:.0f} MB")
    if not a.skip_windows:
        from forensic.casefile.synthetic import generate_casefile
        from forensic.casefile.writing import write_casefile

        with tempfile.TemporaryDirectory() as tmp:
            t = time.perf_counter()
            cf = generate_casefile(a.windows_size, updates=a.windows_updates, seed=1)
            gen_s = time.perf_counter() - t
            write_casefile(cf, tmp)
            del cf
            r = _sub(["--case", "windows", "--arg", tmp])
            r["command"] = {jobs: command_figures([sys.executable, "-m", "forensic", "windows", tmp, "--json",
                                                   "--jobs", jobs]) for jobs in ("1", "auto")}
        r["generate_s"] = gen_s
        results["windows"] = r
        print(f"\nwindows, {r['activities']} activities x {r['snapshots'] - 1} updates: generate {gen_s:.1f} s; "
              f"load {r['load_s']:.1f} s ({r['load_per_snapshot_s']:.2f} s/snapshot) + half-step windows "
              f"{r['windows_s']:.1f} s = {r['load_plus_windows_s']:.1f} s; attribution and ledger "
              f"{r['attribution_s']:.1f} s more; peak {r['peak_mb']:.0f} MB (in process, eager, runs kept)")
        for jobs, c in r["command"].items():
            print(f"  forensic windows --json --jobs {jobs}: {c['wall_s']:.1f} s, peak {c['peak_tree_mb']:.0f} MB "
                  "for the command and its workers (issue 20 target: <= 15 s, <= 2 GB at 20,000 x 24)")
    if not a.skip_report:
        try:
            import forensic.report  # noqa: F401
        except ImportError:
            print("\nreport: forensic.report is not available in this version; skipped")
        else:
            r = _sub(["--case", "report", "--runs", str(max(1, min(a.runs, 3)))])
            results["report"] = r
            print(f"\ndemo full report: {r['report_s']:.2f} s (median of {len(r['runs_s'])}), peak {r['peak_mb']:.0f} MB")
    results["machine"]["loadavg_at_end"] = os.getloadavg()
    Path(a.out).write_text(json.dumps(results, indent=2) + "\n", encoding="utf-8")
    print(f"\nwrote {a.out}")


if __name__ == "__main__":
    main()
