"""Pieces shared by the commands: loading a casefile, output options, writing."""

from __future__ import annotations

import functools
from collections.abc import Callable
from pathlib import Path

import click

from ..model import Casefile
from ..outputs import atomic_write

__all__ = ["casefile_argument", "emit", "format_options", "load", "pick_format"]


def casefile_argument(func: Callable) -> Callable:
    """The CASEFILE argument: a casefile folder (its manifest is casefile.toml)."""
    return click.argument("casefile", metavar="CASEFILE", type=click.Path(path_type=Path))(func)


def format_options(func: Callable) -> Callable:
    """``--json`` and ``--csv``: machine-readable output instead of the readable text."""

    @click.option("--json", "as_json", is_flag=True, help="Print JSON (stable keys, documented in README.md and docs/).")
    @click.option("--csv", "as_csv", is_flag=True, help="Print CSV (one table).")
    @functools.wraps(func)
    def wrapper(*args, **kwargs):
        if kwargs.get("as_json") and kwargs.get("as_csv"):
            raise click.UsageError("choose one of --json and --csv")
        return func(*args, **kwargs)

    return wrapper


def pick_format(as_json: bool, as_csv: bool) -> str:
    return "json" if as_json else "csv" if as_csv else "text"


def load(path: Path) -> Casefile:
    """Load and validate a casefile; its errors reach the user as ``Error: ...``."""
    from ..casefile import load_casefile

    return load_casefile(path)


def emit(text: str, out: Path | None = None, casefile: Casefile | None = None) -> None:
    """Print ``text``, or write it atomically to ``out`` (never over a casefile input)."""
    if out is None:
        click.echo(text, nl=False)
        return
    protected = []
    if casefile is not None and casefile.root is not None:
        protected = [casefile.root / rel for rel in casefile.inputs]
    atomic_write(out, text, protected)
    click.echo(f"wrote {out}", err=True)
