"""Build a casefile from tabular schedule exports, described by the user's mapping (:func:`import_casefile`).

The mapping is a TOML file the user writes about their own export (read and
checked by :mod:`forensic.exchange.importer.mapping`; docs/import-export.md documents every
key with a worked example, examples/import/). Each source row is converted
to the casefile format's vocabulary (:mod:`forensic.exchange.importer.conversion`), then read
by the loader's own row readers, so a bad value is reported with the
*source* file (or ``book.xlsx[sheet]``), its row number, the user's column
name and the value. The casefile is then written to a temporary sibling of
the output folder, loaded again with :func:`~forensic.casefile.load_casefile`
and checked with :func:`~forensic.casefile.validation.validate_casefile` (every
snapshot must schedule), and only then renamed into place. Nothing is
guessed: what the import dropped (source columns it did not use, blank
rows, times of day) or defaulted (a blank relationship type read as FS, a
duration rounded to whole days) is listed in the report.

Hostile sources are held to the loader's ceilings
(:class:`~forensic.casefile.Limits`: file size before reading, rows per
table, a workbook's unpacked size) and character rule, and a problem the
reload finds (a logic loop) is mapped back from the written casefile's file
and line to the user's source and row (:mod:`forensic.exchange.importer.origins`), so every
message names what the user can fix.

References
----------
AACE International Recommended Practice 29R-03, Forensic Schedule Analysis,
sec. 2.1 (source validation: the schedules analysed are identified, and
every change made to bring them into the analysis is recorded).
"""

from __future__ import annotations

import os
from dataclasses import dataclass, replace
from pathlib import Path

from forensic.casefile.csvread import Problems, Row
from forensic.casefile.outputs import check_folder, staged_folder
from forensic.casefile.reading import Limits, load_casefile
from forensic.casefile.records import read_activities, read_events, read_links
from forensic.casefile.validation import ValidationResult, validate_casefile
from forensic.casefile.writing import write_casefile
from forensic.core.errors import CasefileError, ImportMappingError, LimitExceeded, OutputError
from forensic.core.model import Casefile, Event, Fragnet, Snapshot, frozen_mapping
from forensic.exchange.importer.conversion import Converter, conversion_notes
from forensic.exchange.importer.mapping import FIELDS, FORMAT, ImportMapping, import_settings
from forensic.exchange.importer.origins import Origins, find_origins
from forensic.exchange.importer.sources import close_books, read_source

__all__ = ["FIELDS", "FORMAT", "ImportReport", "import_casefile", "read_mapping"]


@dataclass(frozen=True, slots=True)
class ImportReport:
    """What an import wrote and everything it dropped or defaulted on the way.

    ``notes`` lists each thing dropped or defaulted (with counts);
    ``warnings`` are the loader's and the engine's warnings on the result.
    """

    out: Path
    casefile: Casefile
    validation: ValidationResult
    notes: tuple[str, ...]
    warnings: tuple[str, ...]


def read_mapping(path: str | os.PathLike[str], *, limits: Limits | None = None) -> tuple[Casefile, tuple[str, ...]]:
    """Read the mapping and its sources into a casefile in memory, with the import notes.

    Parameters
    ----------
    path : str or path-like
        The mapping TOML.
    limits : Limits, optional
        The loader's ceilings, applied to the mapping and to every source:
        file size (checked before reading; a workbook also unpacked), and
        rows per table (activities and events tables: ``max_activities``;
        links tables: ``max_links``).

    Raises
    ------
    ImportMappingError
        Listing every problem of the mapping and of the source rows, each
        naming the mapping key, or the source file (``book.xlsx[sheet]``),
        row, column and value.
    LimitExceeded
        When a file or table is over a ceiling (only the ceilings are listed).
    """
    cf, notes, _back = _read(Path(path), limits or Limits())
    return cf, notes


def _raise(problems: Problems):
    if problems.limit_hit:  # tables not read whole: other problems may be echoes of the missing rows
        err = LimitExceeded(problems.limits)
        if len(err.problems) > 1:
            err.args = (f"{len(err.problems)} problems in the import:\n" + "\n".join(f"  {p}" for p in err.problems),)
        raise err
    raise ImportMappingError(problems.items)


def _read(path: Path, limits: Limits) -> tuple[Casefile, tuple[str, ...], tuple[dict, dict]]:
    """The casefile, the notes, and what :class:`Origins` needs to name the sources."""
    problems = Problems()
    m = ImportMapping(path, problems, limits)
    if problems:
        _raise(problems)
    project, parties, calendars = import_settings(m, problems)
    if problems:  # without the parties and calendars, every row naming one would be reported too
        _raise(problems)
    conv = Converter(m, problems)
    warnings: list[str] = []
    cal_ids = tuple(calendars)
    books: dict = {}
    try:
        return _read_all(m, conv, project, parties, calendars, cal_ids, books, problems, warnings)
    finally:
        close_books(books)


def _read_all(m: ImportMapping, conv: Converter, project, parties, calendars, cal_ids, books, problems, warnings):
    """Read every source table; cross-table checks only when every table could be read.

    A table that cannot be read at all (a missing column) leaves its ids
    unknown, so the checks that look ids up across tables (fragnet ties,
    the activities an event hit) wait for the next run rather than report a
    cascade of unknown ids.
    """
    complete = True

    def table(ref, what: str) -> list[Row] | None:
        nonlocal complete
        if ref is None:
            complete = False
            return None
        ceiling = m.limits.max_links if what == "links" else m.limits.max_activities
        src = read_source(ref[0], ref[2], ref[1], m.values.encoding, m.values.delimiter, problems, books,
                          max_bytes=m.limits.max_file_bytes, max_rows=ceiling, what=f"rows of {what}")
        rows = None if src is None else conv.rows(what, src)
        complete = complete and rows is not None
        return rows

    snapshots: list[Snapshot] = []
    all_ids: set[str] = set()
    for spec in m.snapshots:
        rows = table(spec["activities"], "activities")
        lrows = table(spec["links"], "links")
        if rows is None:
            continue
        acts = read_activities(rows, spec["activities"][2], calendars=cal_ids, parties=tuple(parties),
                               data_date=spec["data_date"], problems=problems, warnings=warnings)
        all_ids.update(acts.ids)
        if lrows is None or spec["data_date"] is None:
            continue
        finished = {a.id for a in acts.activities.values() if a.actual_finish is not None}
        links = read_links(lrows, spec["links"][2], known=acts.ids, finished=finished,
                           problems=problems, warnings=warnings)
        snapshots.append(Snapshot(spec["id"], spec["data_date"], frozen_mapping(acts.activities),
                                  tuple(links), spec["role"]))
    fragnets: dict[str, Fragnet] = {}
    for spec in m.fragnets:
        rows = table(spec["activities"], "activities")
        lrows = table(spec["links"], "links")
        if rows is None:
            continue
        acts = read_activities(rows, spec["activities"][2], calendars=cal_ids, parties=tuple(parties),
                               data_date=None, problems=problems, warnings=warnings)
        if lrows is None or not complete:
            continue
        links = read_links(lrows, spec["links"][2], known=set(acts.ids) | all_ids, finished=(),
                           problems=problems, warnings=warnings,
                           unknown_hint="no activity with this id in the fragnet or in any snapshot")
        fragnets[spec["id"]] = Fragnet(spec["id"], frozen_mapping(acts.activities), tuple(links))
    events: tuple[Event, ...] = ()
    event_spec = m.events
    erows = table(event_spec, "events") if event_spec is not None else None
    if event_spec is not None and erows is not None and complete:
        events = tuple(read_events(erows, event_spec[2], parties=parties, snapshot_ids=all_ids, problems=problems,
                                   fragnets={k: tuple(f.activities) for k, f in fragnets.items()}))
    conv.drop_echoes()
    if problems:
        _raise(problems)
    cf = Casefile(project, frozen_mapping(calendars), frozen_mapping(parties), tuple(snapshots),
                  events, frozen_mapping(fragnets))
    return cf, tuple(m.notes) + conversion_notes(conv), (find_origins(cf, m), m.columns)


def import_casefile(mapping: str | os.PathLike[str], out: str | os.PathLike[str], *,
                    limits: Limits | None = None) -> ImportReport:
    """Build, validate and write a casefile from the sources a mapping describes.

    Parameters
    ----------
    mapping : str or path-like
        The mapping TOML (docs/import-export.md).
    out : str or path-like
        The casefile folder to create. It must not exist, or be empty.
    limits : Limits, optional
        The ceilings on file size and rows (:func:`read_mapping`); the
        written casefile is loaded within the same ceilings.

    Returns
    -------
    ImportReport
        The folder, the loaded casefile, its validation, and what was
        dropped or defaulted.

    Raises
    ------
    ImportMappingError
        For problems in the mapping or the source rows, or in the casefile
        built from them (as found by the loader); nothing is written.
    LimitExceeded
        When a mapping, settings or source file, or a table, is over a ceiling.
    OutputError
        When ``out`` exists and is not an empty folder.
    ScheduleError
        When a snapshot cannot be scheduled; nothing is written.

    References
    ----------
    AACE International Recommended Practice 29R-03, sec. 2.1 (source validation).
    """
    target = Path(out)
    if target.exists() and (not target.is_dir() or any(target.iterdir())):
        msg = f"{target}: already exists and is not an empty folder; give a new folder for the casefile"
        raise OutputError(msg)
    check_folder(target, what="casefile")  # outside any casefile folder, parent exists (docs/robustness.md)
    limits = limits or Limits()
    m_path = Path(mapping)
    cf, notes, (origins, columns) = _read(m_path, limits)
    back = Origins(origins, m_path.name, columns)
    with staged_folder(target, what="casefile") as tmp:
        write_casefile(cf, tmp)
        try:
            loaded = load_casefile(tmp, limits=limits)
        except CasefileError as exc:
            raise ImportMappingError([back.problem(p) for p in exc.problems]) from None
        validation = validate_casefile(loaded)
        validation = replace(validation, warnings=tuple(back.warning(w) for w in validation.warnings))
    final = load_casefile(target, limits=limits)
    return ImportReport(target, final, validation, notes, validation.warnings)
