"""A portfolio beyond one machine: the batch's casefiles sent to a Dask distributed scheduler.

``forensic batch FOLDER --cluster ADDRESS`` runs the same job as the local
process pool (:func:`forensic.cli.portfolio.run_one`: load, validate, windows
analysis with the half-step split and attribution, optionally the report) on
the workers of an existing Dask distributed cluster. Each casefile is one
task, so the rows are the local run's row for row; only ``seconds`` (each
worker's own time) differs.

The workers read the casefiles, and write the reports, at the paths the
client sees, made absolute: they must share the file system (a network
share mounted at the same path on every worker, as in the usual
cluster set-up). Dask distributed is an optional extra
(``pip install 'forensic[cluster]'``); without it ``--cluster`` is refused
with that instruction, and the local pool stays the default.

References
----------
Dask distributed documentation, "Futures" (``Client.submit``,
``as_completed``) and "Deploy Dask clusters".
"""

from __future__ import annotations

import os
from collections.abc import Callable
from dataclasses import replace
from pathlib import Path

from forensic.cli.portfolio import BatchRow, run_one
from forensic.core.errors import ForensicError

__all__ = ["ClusterUnavailable", "CONNECT_SECONDS", "run_on_cluster"]

CONNECT_SECONDS = 10
"""How long to wait for the scheduler before giving up (seconds)."""


class ClusterUnavailable(ForensicError, RuntimeError):
    """Dask distributed is not installed, or its scheduler cannot be reached."""


def _client(address: str):
    try:
        from distributed import Client
    except ImportError as exc:
        msg = ("--cluster needs Dask distributed, an optional extra: "
               "pip install 'forensic[cluster]' (or pip install 'dask[distributed]')")
        raise ClusterUnavailable(msg) from exc
    try:
        return Client(address, timeout=CONNECT_SECONDS)
    except (OSError, TimeoutError, ValueError) as exc:
        msg = f"cannot reach the Dask scheduler at {address}: {exc}"
        raise ClusterUnavailable(msg) from exc


def run_on_cluster(paths: list[Path], report_dir: str | None, names: dict[Path, str],
                   progress: Callable[[BatchRow], None] | None = None, *, address: str) -> list[BatchRow]:
    """Run :func:`run_one` for every casefile on the cluster at ``address``; rows in ``paths`` order.

    A task that fails on its worker (a crash, a lost worker) becomes its
    row's error, as in the local pool; an interrupt cancels what is pending.
    """
    if not paths:
        return []
    client = _client(address)
    from distributed import as_completed

    rdir = os.path.abspath(report_dir) if report_dir is not None else None
    rows: dict[str, BatchRow] = {}
    try:
        futures = {}
        for p in paths:
            fut = client.submit(run_one, os.path.abspath(p), rdir, names.get(p), pure=False)
            futures[fut] = str(p)
        try:
            for fut in as_completed(list(futures)):
                name = futures[fut]
                try:
                    row = replace(fut.result(), casefile=name)
                except Exception as exc:  # a failure on the worker: record it, go on  # noqa: BLE001
                    row = BatchRow(name, False, None, None, None, 0.0, f"{type(exc).__name__}: {exc}")
                rows[name] = row
                if progress is not None:
                    progress(row)
        except BaseException:
            client.cancel(list(futures))
            raise
    finally:
        client.close()
    return [rows[str(p)] for p in paths]
