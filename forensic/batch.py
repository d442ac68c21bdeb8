"""Many casefiles at once: check and windows analysis over a folder, on every core.

A drift review across a portfolio runs the same job on many casefiles. Each
casefile is loaded, validated (every snapshot scheduled) and analysed by
windows with the half-step split and attribution, in its own worker process
(:class:`concurrent.futures.ProcessPoolExecutor`); a failure in one casefile
is recorded in its row and does not stop the others.

References
----------
AACE International Recommended Practice 29R-03, Forensic Schedule Analysis,
sec. 2.1 (source validation) and protocols 3.3-3.4 (windows analysis).
"""

from __future__ import annotations

import os
import time
from collections.abc import Callable
from concurrent.futures import ProcessPoolExecutor, as_completed
from dataclasses import dataclass
from pathlib import Path

from .errors import ForensicError, InputProblem, NotFoundError
from .tables import Table

__all__ = ["BatchRow", "batch_table", "find_casefiles", "run_batch", "run_one"]

MANIFEST = "casefile.toml"


@dataclass(frozen=True, slots=True)
class BatchRow:
    """The outcome for one casefile: valid or not, its size, its total slip, time taken, the error."""

    casefile: str
    valid: bool
    snapshots: int | None
    slip: int | None
    unit: str | None
    seconds: float
    error: str | None = None
    report: str | None = None
    problems: tuple[InputProblem, ...] = ()


def find_casefiles(folder: str | os.PathLike[str]) -> list[Path]:
    """Every folder at or under ``folder`` that holds a ``casefile.toml``, sorted by path.

    Hidden folders (a leading dot, such as a half-written ``.x.part``) are skipped.
    """
    root = Path(folder)
    if not root.is_dir():
        msg = f"{root}: no such folder"
        raise NotFoundError(msg)
    found = []
    for dirpath, dirnames, filenames in os.walk(root):
        dirnames[:] = sorted(d for d in dirnames if not d.startswith("."))
        if MANIFEST in filenames:
            found.append(Path(dirpath))
            dirnames[:] = []  # a casefile's own folders (snapshots, fragnets) hold no casefile
    return sorted(found)


def run_one(path: str | os.PathLike[str], report_dir: str | None = None) -> BatchRow:
    """Check and analyse one casefile; any library error becomes the row's ``error``."""
    from .attribution import analyse_delay
    from .casefile import load_casefile
    from .validation import validate_casefile

    t0 = time.perf_counter()
    name = str(path)
    try:
        cf = load_casefile(path)
        validate_casefile(cf)
        an = analyse_delay(cf)
        out = None
        if report_dir is not None:
            out = _report(cf, Path(report_dir))
        return BatchRow(name, True, len(cf.snapshots), an.ledger.total_slip, an.unit, time.perf_counter() - t0, None, out)
    except ForensicError as exc:
        problems = tuple(getattr(exc, "problems", ()))
        return BatchRow(name, False, None, None, None, time.perf_counter() - t0, _summary(exc, problems),
                        problems=problems)


def _summary(exc: ForensicError, problems: tuple[InputProblem, ...]) -> str:
    """The error of a failed casefile on one line, keeping every problem ("2 problems: a; b")."""
    if len(problems) > 1:
        return f"{len(problems)} problems in the casefile: " + "; ".join(str(p) for p in problems)
    text = " ".join(line.strip() for line in str(exc).strip().splitlines() if line.strip())
    return text or type(exc).__name__


def _report(cf, folder: Path) -> str:
    """Write the casefile's full report (the default template) into ``folder``, atomically."""
    from .outputs import atomic_write
    from .report import build_report

    name = cf.root.name if cf.root is not None else "casefile"
    target = folder / f"{name}-report.pdf"
    protected = [cf.root / rel for rel in cf.inputs] if cf.root is not None else []
    atomic_write(target, build_report(cf), protected)
    return str(target)


def run_batch(
    folder: str | os.PathLike[str],
    *,
    jobs: int | None = None,
    report_dir: str | os.PathLike[str] | None = None,
    progress: Callable[[BatchRow], None] | None = None,
) -> list[BatchRow]:
    """Run :func:`run_one` on every casefile under ``folder`` on ``jobs`` processes (default: every core).

    Rows come back in path order; ``progress`` is called as each casefile finishes.
    On an interrupt the pending casefiles are cancelled and the interrupt is raised.
    """
    paths = find_casefiles(folder)
    jobs = max(1, jobs or os.cpu_count() or 1)
    rdir = None if report_dir is None else str(report_dir)
    rows: dict[str, BatchRow] = {}
    if jobs == 1 or len(paths) <= 1:
        for p in paths:
            row = rows[str(p)] = run_one(p, rdir)
            if progress is not None:
                progress(row)
        return [rows[str(p)] for p in paths]
    pool = ProcessPoolExecutor(max_workers=min(jobs, len(paths)))
    try:
        futures = {pool.submit(run_one, str(p), rdir): str(p) for p in paths}
        for fut in as_completed(futures):
            try:
                row = fut.result()
            except Exception as exc:  # a crash in a worker: record it, go on  # noqa: BLE001
                row = BatchRow(futures[fut], False, None, None, None, 0.0, f"{type(exc).__name__}: {exc}")
            rows[futures[fut]] = row
            if progress is not None:
                progress(row)
    except BaseException:
        pool.shutdown(wait=False, cancel_futures=True)
        raise
    pool.shutdown()
    return [rows[str(p)] for p in paths]


def batch_table(rows: list[BatchRow]) -> Table:
    """One row per casefile: casefile, valid, snapshots, slip, unit, seconds, error."""
    return Table(
        "batch",
        ("casefile", "valid", "snapshots", "slip", "unit", "seconds", "error"),
        tuple((r.casefile, r.valid, r.snapshots, r.slip, r.unit, round(r.seconds, 2), r.error) for r in rows),
    )
