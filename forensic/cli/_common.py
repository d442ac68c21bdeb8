"""Pieces shared by the commands: loading a casefile, output options, writing."""

from __future__ import annotations

import contextlib
import functools
import os
import shutil
import sys
import textwrap
from collections.abc import Callable, Iterable, Iterator
from pathlib import Path

import click

from forensic.casefile.outputs import atomic_write, check_output
from forensic.core.model import Casefile
from forensic.core.version import __version__
from forensic.exchange.writers import dumps_json

from ._progress import progress_wanted

__all__ = ["casefile_argument", "check_every_snapshot", "emit", "emit_json", "emit_xlsx", "format_options", "limit_hint", "limit_hinted", "load",
           "fit", "pick_format", "provenance", "say", "stamped_json", "status", "status_shown", "table_text", "terminal_width", "xlsx_option"]


def casefile_argument(func: Callable) -> Callable:
    """The CASEFILE argument: a casefile folder (its manifest is casefile.toml)."""
    return click.argument("casefile", metavar="CASEFILE", type=click.Path(path_type=Path))(func)


_OUT = "forensic.out"
_CASEFILE = "forensic.casefile.reading"
_XLSX_KEY = "forensic.xlsx"
_WIDE = "forensic.wide"


def _remember_xlsx(ctx: click.Context, _param, value):
    if value is not None:
        ctx.meta[_XLSX_KEY] = value
    return value


def xlsx_option(func: Callable) -> Callable:
    """``--xlsx FILE``: also write the command's tables to one formatted workbook.

    The option is not passed to the command; the command hands its tables
    to :func:`emit_xlsx`, which writes them only when the option was given.
    """
    return click.option(
        "--xlsx", type=click.Path(path_type=Path, dir_okay=False), metavar="FILE", expose_value=False,
        callback=_remember_xlsx, help="Also write the tables to FILE, a workbook with a sheet per table.",
    )(func)


def _protected(casefile: Casefile | None, extra: Iterable[Path]) -> list[Path]:
    """The files an output must never overwrite: the casefile's inputs and ``extra``."""
    protected = list(extra)
    if casefile is not None and casefile.root is not None:
        protected += [casefile.root / rel for rel in casefile.inputs]
    return protected


def emit_xlsx(tables, casefile: Casefile | None = None, protected: Iterable[Path] = ()) -> None:
    """Write ``tables`` to the ``--xlsx`` workbook when one was asked for (atomically, never over an input).

    ``protected`` adds files to refuse besides the loaded casefile's inputs
    (``batch``, which loads its casefiles in worker processes).
    """
    ctx = click.get_current_context(silent=True)
    if ctx is None:
        return
    out = ctx.meta.get(_XLSX_KEY)
    if out is None:
        return
    casefile = casefile if casefile is not None else ctx.meta.get(_CASEFILE)
    from forensic.exchange.export import to_xlsx

    atomic_write(out, to_xlsx(list(tables)), _protected(casefile, protected))
    click.echo(f"wrote {out}", err=True)


def _remember_wide(ctx: click.Context, _param, value):
    if value:
        ctx.meta[_WIDE] = True
    return value


def terminal_width() -> int | None:
    """The width text output is fitted to, or None for the full width.

    ``--wide`` gives None; else ``COLUMNS`` when it is set to a number (as
    POSIX shells export it); else the terminal's width when standard output
    is a terminal; piped output (not a terminal) keeps the full width.
    """
    ctx = click.get_current_context(silent=True)
    if ctx is not None and ctx.meta.get(_WIDE):
        return None
    columns = os.environ.get("COLUMNS", "").strip()
    if columns.isdigit() and int(columns) > 0:
        return max(int(columns), 20)
    if sys.stdout.isatty():
        return max(shutil.get_terminal_size().columns, 20)
    return None


def table_text(table, keep: tuple[str, ...] = (), max_width: int = 40) -> str:
    """:func:`forensic.exchange.writers.to_text` fitted to :func:`terminal_width` (``keep``: the columns kept longest)."""
    from forensic.exchange.writers import to_text

    return to_text(table, max_width=max_width, width=terminal_width(), keep=keep)


def fit(text: str) -> str:
    """Prose wrapped to :func:`terminal_width`, line by line (ids are never broken at a hyphen)."""
    width = terminal_width()
    if width is None:
        return text
    out = []
    for line in text.split("\n"):
        if len(line) <= width:
            out.append(line)
        else:
            out += textwrap.wrap(line, width=width, subsequent_indent="  ", break_on_hyphens=False,
                                 break_long_words=False)
    return "\n".join(out)


def say(text: str, err: bool = False) -> None:
    """Echo prose wrapped by :func:`fit`."""
    click.echo(fit(text), err=err)


def format_options(func: Callable) -> Callable:
    """``--json``, ``--csv`` (machine-readable output instead of the text), ``--out FILE`` and ``--xlsx FILE``.

    ``--out FILE`` writes the JSON or CSV atomically to FILE instead of
    printing it (never over a file of the casefile); it needs ``--json`` or
    ``--csv``.
    """

    @xlsx_option
    @click.option("--wide", is_flag=True, expose_value=False, callback=_remember_wide,
                  help="Text tables at full width, every column (default: fitted to the terminal).")
    @click.option("--json", "as_json", is_flag=True, help="Print JSON (stable keys, documented in README.md and docs/).")
    @click.option("--csv", "as_csv", is_flag=True, help="Print CSV (one table).")
    @click.option("--out", type=click.Path(dir_okay=False, path_type=Path), metavar="FILE",
                  help="Write the JSON or CSV to FILE (atomically; never over a casefile file).")
    @functools.wraps(func)
    def wrapper(*args, **kwargs):
        out = kwargs.pop("out")
        if kwargs.get("as_json") and kwargs.get("as_csv"):
            raise click.UsageError("choose one of --json and --csv")
        if out is not None and not (kwargs.get("as_json") or kwargs.get("as_csv")):
            raise click.UsageError("--out writes JSON or CSV: add --json or --csv")
        ctx = click.get_current_context()
        ctx.meta[_OUT] = out
        # Refusals are decided before the command loads or writes anything
        # (docs/robustness.md, "Outputs"); the write checks again.
        targets = [t for t in (out, ctx.meta.get(_XLSX_KEY)) if t is not None]
        real = [check_output(t) for t in targets]
        if len(real) == 2 and real[0] == real[1]:
            raise click.UsageError("--out and --xlsx name the same file")
        return func(*args, **kwargs)

    return wrapper


def pick_format(as_json: bool, as_csv: bool) -> str:
    return "json" if as_json else "csv" if as_csv else "text"


def _limit_hint(problem) -> str:
    """The option (and environment variable) that raises the ceiling a problem hit."""
    if "bytes" in problem.message:
        return "--max-file-mb or FORENSIC_MAX_FILE_MB"
    if problem.file.endswith("links.csv") or "rows of links" in problem.message:
        return "--max-links or FORENSIC_MAX_LINKS"
    return "--max-activities or FORENSIC_MAX_ACTIVITIES"  # activities and events rows


def limit_hint(exc) -> str:
    """The sentence that tells which options raise the ceilings a ``LimitExceeded`` hit."""
    hints = sorted({_limit_hint(p) for p in exc.problems if "limit" in p.message})
    return f"(raise the limit with {' / '.join(hints)} if the file is genuine)"


@contextlib.contextmanager
def limit_hinted() -> Iterator[None]:
    """A ceiling hit inside (loading, or a snapshot read lazily) is reported with the option that raises it."""
    from forensic.core.errors import LimitExceeded

    try:
        yield
    except LimitExceeded as exc:
        raise click.ClickException(f"{exc}\n{limit_hint(exc)}") from None


def check_every_snapshot(casefile: Casefile) -> None:
    """Read the snapshots of a lazily loaded casefile that the command has not read, so a bad one is refused.

    Every loading command refuses a casefile with a problem in any snapshot
    (tests/test_corpus.py); a command that loaded lazily calls this before it
    writes anything. Nothing is read twice and none is kept.
    """
    from forensic.core.model import SnapshotSequence

    if isinstance(casefile.snapshots, SnapshotSequence):
        with limit_hinted():
            casefile.snapshots.check_rest()


def load(path: Path, *, lazy: bool = False) -> Casefile:
    """Load and validate a casefile within the group's ``--max-*`` limits.

    Its errors reach the user as ``Error: ...``; an over-limit error says
    which option raises the ceiling. The casefile is remembered so that
    :func:`emit` never writes over one of its files. ``lazy`` reads each
    snapshot's tables when the command first uses it
    (:func:`forensic.casefile.reading.load_casefile`): a problem in them is
    raised then, before any output is written.
    """
    from forensic.casefile.reading import Limits, load_casefile

    ctx = click.get_current_context(silent=True)
    limits = ctx.find_object(Limits) if ctx is not None else None
    with limit_hinted():
        cf = load_casefile(path, limits=limits, lazy=lazy)
    if ctx is not None:
        ctx.meta[_CASEFILE] = cf
    return cf


def load_lazily(path: Path) -> Casefile:
    """:func:`load` with ``lazy=True``; a casefile refused there is read whole, for the whole read's error.

    The lazy load stops at the first problem of the manifest, events,
    fragnets or file sizes; the whole read also lists every bad snapshot's
    problems with it, as a command that reads the casefile whole says.
    """
    with whole_read_on_error(path):
        return load(path, lazy=True)


@contextlib.contextmanager
def whole_read_on_error(path: Path) -> Iterator[None]:
    """A block working on a lazily loaded casefile: on an error in it the casefile is read whole first.

    A bad casefile then raises the whole read's error (every bad snapshot,
    every ceiling hit, a fragnet loop named once), as a command that reads
    the casefile whole first says; a good one lets the block's own error (an
    unknown id, say) pass. The commands that load lazily read and check
    their snapshots inside it (``schedule``, ``compare``, ``recover``,
    ``windows``).
    """
    try:
        yield
    except Exception:
        load(path)  # raises the whole casefile's error, if it has one
        raise


def emit(text: str, out: Path | None = None, casefile: Casefile | None = None,
         protected: Iterable[Path] = ()) -> None:
    """Print ``text``, or write it atomically to ``out`` (never over a casefile input).

    ``out`` and ``casefile`` default to the command's ``--out`` and the
    casefile it loaded; ``protected`` adds files to refuse (``batch``).
    """
    ctx = click.get_current_context(silent=True)
    if ctx is not None:
        out = out if out is not None else ctx.meta.get(_OUT)
        casefile = casefile if casefile is not None else ctx.meta.get(_CASEFILE)
    if out is None:
        click.echo(text, nl=False)
        return
    atomic_write(out, text, _protected(casefile, protected))
    click.echo(f"wrote {out}", err=True)


def provenance(casefile: Casefile | None) -> dict[str, object]:
    """The keys that trace a JSON output to its run, as the report's record of inputs does.

    ``forensic_version`` is the software that computed it; ``inputs_sha256``
    maps each casefile file read (its path relative to the casefile folder,
    in sorted order) to the SHA-256 of its bytes, the same digests the PDF's
    "inputs" section lists (``Casefile.inputs``, hashed by the loader). A
    casefile built in memory, or none, gives an empty mapping.
    """
    inputs = {} if casefile is None else dict(sorted(casefile.inputs.items()))
    return {"forensic_version": __version__, "inputs_sha256": inputs}


def emit_json(obj: object, out: Path | None = None, casefile: Casefile | None = None,
              protected: Iterable[Path] = ()) -> None:
    """:func:`emit` a JSON document stamped with :func:`provenance` (every existing key kept).

    The two keys are added after the document's own keys; a list of
    documents (``impact --event A --event B``) stamps each one. A key the
    document already has is never overwritten.
    """
    ctx = click.get_current_context(silent=True)
    if casefile is None and ctx is not None:
        casefile = ctx.meta.get(_CASEFILE)
    emit(stamped_json(obj, casefile), out=out, casefile=casefile, protected=protected)


def stamped_json(obj: object, casefile: Casefile | None = None) -> str:
    """The text :func:`emit_json` writes: ``obj`` stamped with :func:`provenance`, encoded by ``dumps_json``."""
    if casefile is None:
        ctx = click.get_current_context(silent=True)
        casefile = ctx.meta.get(_CASEFILE) if ctx is not None else None
    stamp = provenance(casefile)

    def stamped(doc: object) -> object:
        if not isinstance(doc, dict):
            return doc
        return {**doc, **{k: v for k, v in stamp.items() if k not in doc}}

    obj = [stamped(d) for d in obj] if isinstance(obj, list) else stamped(obj)
    return dumps_json(obj)


def status_shown() -> bool:
    """Whether :func:`status` lines are shown (a terminal, or ``forensic --progress``)."""
    return sys.stderr.isatty() or progress_wanted()


def status(message: str) -> None:
    """A status line on stderr for long work, shown only at a terminal or under ``forensic --progress``."""
    if status_shown():
        click.echo(message, err=True)
