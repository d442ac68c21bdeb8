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
from functools import partial
from pathlib import Path

from forensic.core.errors import ForensicError, InputProblem, NotFoundError, OutputError
from forensic.core.tables import Table

__all__ = ["BatchRow", "Runner", "batch_table", "check_report_dir", "find_casefiles", "report_names", "run_batch", "run_one"]

MANIFEST = "casefile.toml"
_NAME_MAX = 200  # bytes of a report name before "-report.pdf" (NAME_MAX is 255 on common file systems)


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
    write_failed: bool = False


Runner = Callable[[list[Path], str | None, dict[Path, str], Callable[[BatchRow], None] | None], list[BatchRow]]
"""How a batch's casefiles are run: ``runner(paths, report_dir, names, progress)`` -> rows in path order."""


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


def report_names(paths: list[Path], folder: str | os.PathLike[str]) -> dict[Path, str]:
    """The report file name of each casefile: its path under ``folder``, parts joined by ``-``.

    ``a/claim`` gives ``a-claim-report.pdf`` and ``b/claim`` gives
    ``b-claim-report.pdf``, so two casefiles whose folders have the same
    name get different reports; a casefile at ``folder`` itself is named by
    its folder. A name is cut to 200 bytes, and a name already taken
    (compared regardless of case, as on case-insensitive file systems) gets
    ``~2``, ``~3``... in path order, so the same portfolio always gives the
    same names.
    """
    root_name = Path(os.path.realpath(folder)).name
    names: dict[Path, str] = {}
    seen: set[str] = set()
    for p in paths:
        rel = Path(os.path.relpath(p, folder))
        stem = "-".join(rel.parts) if rel.parts else root_name or "casefile"
        stem = stem.encode("utf-8", "surrogateescape")[:_NAME_MAX].decode("utf-8", "ignore") or "casefile"
        candidate, n = stem, 1
        while candidate.casefold() in seen:
            n += 1
            candidate = f"{stem}~{n}"
        seen.add(candidate.casefold())
        names[p] = f"{candidate}-report.pdf"
    return names


def run_one(path: str | os.PathLike[str], report_dir: str | None = None, report_name: str | None = None) -> BatchRow:
    """Check and analyse one casefile; any library error becomes the row's ``error``.

    With ``report_dir`` the full report is written there as ``report_name``
    (default ``<casefile folder name>-report.pdf``); a failure to write it
    sets ``write_failed``.
    """
    from forensic.analysis.attribution.delay import analyse_delay
    from forensic.casefile.reading import load_casefile
    from forensic.casefile.validation import validate_casefile

    t0 = time.perf_counter()
    name = str(path)
    try:
        cf = load_casefile(path)
        validate_casefile(cf)
        an = analyse_delay(cf)
        out = None
        if report_dir is not None:
            try:
                out = _report(cf, Path(report_dir), report_name)
            except OutputError as exc:
                return BatchRow(name, False, None, None, None, time.perf_counter() - t0, str(exc), None,
                                write_failed=True)
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


def _report(cf, folder: Path, report_name: str | None = None) -> str:
    """Write the casefile's full report (the default template) into ``folder``, atomically."""
    from forensic.casefile.outputs import atomic_write
    from forensic.report import build_report

    if report_name is None:
        report_name = f"{cf.root.name if cf.root is not None else 'casefile'}-report.pdf"
    target = folder / report_name
    protected = [cf.root / rel for rel in cf.inputs] if cf.root is not None else []
    atomic_write(target, build_report(cf), protected)
    return report_name


def _only_reports(entries) -> bool:
    """An earlier report folder: nothing but regular ``.pdf`` files."""
    return all(e.name.endswith(".pdf") and e.is_file(follow_symlinks=False) for e in entries)


def check_report_dir(report_dir: str | os.PathLike[str]) -> Path:
    """Decide, before anything runs, whether the report folder may be written; return its real path.

    It must be new, empty, or hold only the ``.pdf`` reports of an earlier
    run (replaced whole), outside every casefile folder, with its parent in place.
    """
    from forensic.casefile.outputs import check_folder

    return check_folder(report_dir, replaceable=_only_reports, what="reports")


def run_batch(
    folder: str | os.PathLike[str],
    *,
    jobs: int | None = None,
    report_dir: str | os.PathLike[str] | None = None,
    progress: Callable[[BatchRow], None] | None = None,
    runner: Runner | None = None,
) -> list[BatchRow]:
    """Run :func:`run_one` on every casefile under ``folder`` on ``jobs`` processes (default: every core).

    ``runner`` replaces the local process pool: it is called as
    ``runner(paths, report_dir, names, progress)`` and returns the rows in
    ``paths`` order (:func:`forensic.cli.portfolio_cluster.run_on_cluster`
    sends them to a Dask distributed cluster).

    Rows come back in path order; ``progress`` is called as each casefile finishes.
    On an interrupt the pending casefiles are cancelled and the interrupt is raised.

    With ``report_dir`` the reports (named by :func:`report_names`) are
    built in a hidden temporary folder beside it and the folder is renamed
    into place whole when every casefile has run; if any report could not
    be written, nothing is written and :class:`OutputError` says why.
    """
    paths = find_casefiles(folder)
    run = runner if runner is not None else partial(_run_on_pool, jobs=jobs)
    if report_dir is None:
        return run(paths, None, {}, progress)
    from forensic.casefile.outputs import staged_folder

    names = report_names(paths, folder)
    with staged_folder(report_dir, replaceable=_only_reports, what="reports") as tmp:
        rows = run(paths, str(tmp), names, progress)
        failed = [r for r in rows if r.write_failed]
        if failed:
            raise OutputError(f"{failed[0].error}; no report was written to {report_dir}")
    return [r if r.report is None else _with_report(r, Path(report_dir) / r.report) for r in rows]


def _with_report(row: BatchRow, path: Path) -> BatchRow:
    from dataclasses import replace

    return replace(row, report=str(path))


def _run_on_pool(paths: list[Path], rdir: str | None, names: dict[Path, str],
                 progress: Callable[[BatchRow], None] | None, *, jobs: int | None) -> list[BatchRow]:
    jobs = max(1, jobs or os.cpu_count() or 1)
    rows: dict[str, BatchRow] = {}
    if jobs == 1 or len(paths) <= 1:
        for p in paths:
            row = rows[str(p)] = run_one(p, rdir, names.get(p))
            if progress is not None:
                progress(row)
        return [rows[str(p)] for p in paths]
    pool = ProcessPoolExecutor(max_workers=min(jobs, len(paths)))
    try:
        futures = {pool.submit(run_one, str(p), rdir, names.get(p)): str(p) for p in paths}
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
