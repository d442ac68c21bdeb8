"""Private helpers of the casefile loader: safe file reading, CSV tables, field parsing.

Nothing here raises on bad input. Every helper records what is wrong in a
:class:`Problems` collector (file, line or key, value, what was expected)
and returns ``None`` for the value it could not read, so the loader can go
on and report every problem of a casefile in one pass.
"""

from __future__ import annotations

import csv
import hashlib
import io
import math
import re
import unicodedata
from dataclasses import dataclass
from datetime import date
from pathlib import Path, PurePosixPath

from forensic.core.errors import InputProblem

__all__ = [
    "MAX_DATES",
    "MAX_DURATION",
    "MAX_ID_CHARS",
    "MAX_TEXT_CHARS",
    "check_id",
    "check_text",
    "mixed_scripts",
    "MAX_YEAR",
    "MIN_YEAR",
    "Problems",
    "Row",
    "check_year",
    "find_unsafe_char",
    "parse_date",
    "parse_int",
    "parse_number",
    "read_table",
    "read_text",
    "resolve_inside",
    "unsafe_message",
]

# Dates outside these years are almost always typing slips (2206 for 2026);
# the window is wide enough for any real programme (common practice).
MIN_YEAR = 1900
MAX_YEAR = 2200
# A ceiling on any duration or lag in working days: 36,500 is a century of
# seven-day weeks, beyond any real programme; it keeps a slip such as
# 2000000 from sending the engine over a horizon of millennia.
MAX_DURATION = 36_500

# Characters refused anywhere in casefile text: C0 controls other than tab,
# line feed and carriage return (an escape sequence could rewrite the
# terminal), DEL and the C1 controls, a byte-order mark inside the text (a
# sign of files pasted together), and the bidirectional embedding, override
# and isolate controls that can make text display in another order than it
# reads (Unicode TR36, CVE-2021-42574 "Trojan Source"; common practice).
# The Unicode non-characters U+FFFE and U+FFFF (and U+FDD0-U+FDEF) are refused
# too: they are never text, and an XLSX workbook holding one cannot be reopened.
_UNSAFE = re.compile("[\x00-\x08\x0b\x0c\x0e-\x1f\x7f-\x9f\ufeff\u202a-\u202e\u2066-\u2069"
                     "\ufdd0-\ufdef\ufffe\uffff]")

# Ceilings on the length of one value (docs/robustness.md, "Ceilings"). An
# id is a short key (real ones run to a few dozen characters); a name may be
# long (a description pasted into it) but not a book: the report prints a
# table cell's first 300 characters and the rest in its appendix.
MAX_ID_CHARS = 200
MAX_TEXT_CHARS = 40_000
# At most this many dates in one holidays or extra_workdays list: 20,000
# dates is over fifty years of every day (common practice: a calendar lists
# a few dozen holidays a year).
MAX_DATES = 20_000

# Characters that cannot be seen in an id: no-break and other spaces, zero-
# width spaces and joiners, the soft hyphen, direction marks, word joiners,
# fillers and variation selectors (Unicode TR39 and UTS 55 list them as
# confusable or default-ignorable). "P20" with a zero-width space would be
# another activity that prints the same.
_INVISIBLE = re.compile("[\u00a0\u00ad\u034f\u061c\u115f\u1160\u17b4\u17b5\u180b-\u180f"
                        "\u2000-\u200f\u2028\u2029\u202f\u205f-\u2064\u3000\u3164\ufe00-\ufe0f"
                        "\uffa0\U000e0000-\U000e0fff]")

# ASCII digits only: ``\d`` and ``int()`` also take full-width and
# Arabic-Indic digits, which would read "１０" as 10 without a word.
_ISO_DATE = re.compile(r"^[0-9]{4}-[0-9]{2}-[0-9]{2}$")
_WHOLE = re.compile(r"^[+-]?[0-9]+$")
_DECIMAL = re.compile(r"^[+-]?([0-9]+(\.[0-9]*)?|\.[0-9]+)$")
_NOT_ASCII_DIGIT = re.compile(r"[^\x00-\x7f]")
# More digits than this is no duration (and Python refuses to convert an
# integer string of over 4,300 digits): refused before int() sees it.
_MAX_DIGITS = 15


# The ASCII characters _UNSAFE lets through: tab, line feed, carriage return and the printable ones.
_SAFE_ASCII = bytes([9, 10, 13, *range(32, 127)])


def plain_ascii(data: bytes, text: str) -> bool:
    """Whether ``text`` (decoded from ``data``) is ASCII with no character :func:`find_unsafe_char` refuses.

    A quick screen for the common case (a few milliseconds for megabytes):
    ``False`` only means the full search must look.
    """
    return text.isascii() and not data.translate(None, _SAFE_ASCII)


def find_unsafe_char(text: str) -> tuple[int, str] | None:
    """The index and ``U+XXXX`` name of the first refused character of ``text``, or ``None``."""
    hit = _UNSAFE.search(text)
    if hit is None:
        return None
    return hit.start(), f"U+{ord(hit.group()):04X}"


def check_id(raw: str, rel: str, line: int | None, key: str, problems: Problems) -> bool:
    """Record a problem and return ``False`` when ``raw`` is too long or holds an invisible character."""
    if len(raw) > MAX_ID_CHARS:
        problems.add(rel, line, key, raw, f"an id may have at most {MAX_ID_CHARS} characters; this one has {len(raw)}")
        return False
    hit = _INVISIBLE.search(raw)
    if hit is not None:
        problems.add(rel, line, key, f"U+{ord(hit.group()):04X} at character {hit.start() + 1} of {raw!r}",
                     "an id may not contain an invisible character (a no-break or zero-width space, a joiner, "
                     "a soft hyphen): it would look like another id")
        return False
    return True


def check_text(raw: str, rel: str, line: int | None, key: str, problems: Problems) -> bool:
    """Record a problem and return ``False`` when a name or title is over :data:`MAX_TEXT_CHARS`."""
    if len(raw) > MAX_TEXT_CHARS:
        problems.add(rel, line, key, raw, f"a name or title may have at most {MAX_TEXT_CHARS} characters; "
                     f"this one has {len(raw)}")
        return False
    return True


def mixed_scripts(raw: str) -> tuple[str, ...]:
    """The scripts of the letters of ``raw`` when there are two or more (``P20`` with a Cyrillic ``Р``).

    The script is the first word of the letter's Unicode name (LATIN,
    CYRILLIC, GREEK...), a simplification of Unicode UAX 24 that is enough to
    spot look-alike letters in an id (UTS 39, "mixed-script confusables").
    """
    if raw.isascii():
        return ()
    scripts = set()
    for c in raw:
        if c.isalpha():
            scripts.add(unicodedata.name(c, "UNKNOWN").split()[0])
    return tuple(sorted(scripts)) if len(scripts) > 1 else ()


class Problems:
    """Collects :class:`InputProblem` records; ``limit_hit`` marks a ceiling reached."""

    def __init__(self) -> None:
        self.items: list[InputProblem] = []
        self.limits: list[InputProblem] = []  # the ceilings reached, also in ``items``

    @property
    def limit_hit(self) -> bool:
        return bool(self.limits)

    def add_limit(self, file: str, line: int | None, value: object, message: str) -> None:
        """Record that a file or table is over a ceiling (see ``forensic.casefile.Limits``)."""
        self.add(file, line, None, value, message)
        self.limits.append(self.items[-1])

    def add(
        self,
        file: str,
        line: int | None,
        key: str | None,
        value: object,
        message: str,
    ) -> None:
        shown = None if value is None else str(value)
        self.items.append(InputProblem(file, line, key, shown, message))

    def __len__(self) -> int:
        return len(self.items)


def resolve_inside(root: Path, rel: object, problems: Problems, manifest: str, key: str) -> tuple[str, Path] | None:
    """Check a manifest path and return ``(relative posix path, absolute path)``.

    The path must be a relative, forward-slash path that stays inside the
    casefile folder, also after symbolic links are followed.
    """
    if not isinstance(rel, str) or not rel.strip():
        problems.add(manifest, None, key, rel, "expected a path relative to the casefile folder, as a string")
        return None
    bad = find_unsafe_char(rel)
    if bad is not None:
        problems.add(manifest, None, key, bad[1], "a path may not contain control characters")
        return None
    if "\\" in rel:
        problems.add(manifest, None, key, rel, "use forward slashes (/) in paths")
        return None
    pure = PurePosixPath(rel)
    if pure.is_absolute() or re.match(r"^[A-Za-z]:", rel):
        problems.add(manifest, None, key, rel, "expected a path relative to the casefile folder, not an absolute path")
        return None
    if ".." in pure.parts:
        problems.add(manifest, None, key, rel, "the path climbs out of the casefile folder with '..'; keep every input inside it")
        return None
    full = root / pure
    real_root = root.resolve()
    try:
        real = full.resolve()
    except (OSError, RuntimeError):  # a symlink loop
        problems.add(manifest, None, key, rel, "the path cannot be resolved (a symbolic link loop?)")
        return None
    if real != real_root and real_root not in real.parents:
        problems.add(manifest, None, key, rel, "the path leads outside the casefile folder through a symbolic link")
        return None
    return pure.as_posix(), full


def read_text(path: Path, rel: str, max_bytes: int, problems: Problems, hashes: dict[str, str]) -> str | None:
    """Read a UTF-8 file read-only; record its SHA-256 in ``hashes``; ``None`` on a problem.

    A UTF-8 byte-order mark is accepted. UTF-16, NUL bytes and bytes that are
    not UTF-8 are refused with the position of the first bad byte.
    """
    if not path.is_file():
        what = "is a folder, expected a file" if path.is_dir() else "file not found"
        problems.add(rel, None, None, None, what)
        return None
    size = path.stat().st_size
    if size > max_bytes:
        problems.add_limit(rel, None, size, f"file is {size} bytes, over the limit of {max_bytes} bytes; it is not read")
        return None
    with open(path, "rb") as fh:  # read-only; never written
        data = fh.read(max_bytes + 1)
    if len(data) > max_bytes:  # grew while we looked
        problems.add_limit(rel, None, len(data), f"file is over the limit of {max_bytes} bytes")
        return None
    hashes[rel] = hashlib.sha256(data).hexdigest()
    if data.startswith((b"\xff\xfe", b"\xfe\xff")):
        problems.add(rel, 1, None, f"0x{data[:2].hex()} at byte 0",
                     "file starts with a UTF-16 byte-order mark; save it as UTF-8")
        return None
    nul = data.find(b"\x00")
    if nul >= 0:
        line = data.count(b"\n", 0, nul) + 1
        problems.add(rel, line, None, f"byte {nul}", "file contains a NUL byte; expected UTF-8 text (is it UTF-16 or binary?)")
        return None
    try:
        text = data.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        line = data.count(b"\n", 0, exc.start) + 1
        bad = data[exc.start : exc.start + 1].hex()
        problems.add(rel, line, None, f"0x{bad} at byte {exc.start}", "file is not UTF-8; save it as UTF-8")
        return None
    unsafe = None if plain_ascii(data, text) else find_unsafe_char(text)
    if unsafe is not None:
        at, name = unsafe
        line = text.count("\n", 0, at) + 1
        problems.add(rel, line, None, name, unsafe_message(name, "file contains"))
        return None
    return text


def unsafe_message(name: str, lead: str) -> str:
    """What a refused character is, for the message: a control or direction character, or a non-character."""
    code = int(name[2:], 16)
    if code >= 0xFDD0 and (code <= 0xFDEF or code >= 0xFFFE):
        return (f"{lead} a Unicode non-character (never text; a workbook holding one cannot be reopened); "
                "expected printable text")
    return f"{lead} a control or text-direction character; expected printable text"


@dataclass(slots=True, eq=False)  # not frozen: built once per CSV line, and frozen init is slower
class Row:
    """One data row of a CSV table: its 1-based line and its cells by column."""

    line: int
    cells: dict[str, str]

    def get(self, column: str) -> str:
        return self.cells.get(column, "")


def read_table(
    text: str,
    rel: str,
    required: tuple[str, ...],
    optional: tuple[str, ...],
    max_rows: int,
    problems: Problems,
) -> list[Row] | None:
    """Parse a CSV with a header row; check the columns; return the non-blank rows.

    Unknown, duplicated and missing required columns are problems; a missing
    required column returns ``None`` (no row can be read). Rows with a
    different number of cells than the header are problems and are skipped.
    Cells are stripped of surrounding blanks; wholly blank rows are skipped.
    """
    reader = csv.reader(io.StringIO(text, newline=""), strict=True)
    header: list[str] | None = None
    header_line = 0
    rows: list[Row] = []
    allowed = required + optional
    strip = str.strip
    width = -1
    last_line = 0
    try:
        for record in reader:
            first_line, last_line = last_line + 1, reader.line_num
            cells = list(map(strip, record))
            if not any(cells):
                continue
            if header is None:
                header, header_line, width = cells, first_line, len(cells)
                if not _check_header(header, header_line, rel, required, allowed, problems):
                    return None
                continue
            if len(cells) != width:
                problems.add(rel, first_line, None, len(cells), f"row has {len(cells)} cells, the header has {width}")
                continue
            if len(rows) >= max_rows:
                problems.add_limit(rel, first_line, f"row {max_rows + 1}",
                                   f"more than {max_rows} rows, over the limit; the rest is not read")
                return None
            rows.append(Row(first_line, dict(zip(header, cells, strict=True))))
    except csv.Error as exc:
        problems.add(rel, reader.line_num, None, None, f"not valid CSV: {exc}")
        return None
    if header is None:
        problems.add(rel, 1, None, None, f"missing header row; expected the columns {', '.join(required)}")
        return None
    return rows


def _check_header(header: list[str], line: int, rel: str, required, allowed, problems: Problems) -> bool:
    ok = True
    seen: set[str] = set()
    for number, name in enumerate(header, 1):
        if not name:
            problems.add(rel, line, f"column {number}", "", "a column of the header has no name")
            ok = False
            continue
        if name in seen:
            problems.add(rel, line, name, name, "column appears twice in the header")
            ok = False
        seen.add(name)
        if name not in allowed:
            problems.add(rel, line, name, name, f"unknown column; expected only {', '.join(allowed)}")
    missing = [c for c in required if c not in seen]
    for name in missing:
        problems.add(rel, line, name, None, f"required column {name!r} is missing from the header")
    return ok and not missing


def parse_date(raw: str, rel: str, line: int | None, key: str, problems: Problems) -> date | None:
    """An ISO date ``YYYY-MM-DD`` in years 1900-2200; ``None`` (and a problem) otherwise."""
    if not _ISO_DATE.match(raw):
        problems.add(rel, line, key, raw, "expected an ISO date YYYY-MM-DD")
        return None
    try:
        value = date.fromisoformat(raw)
    except ValueError:
        problems.add(rel, line, key, raw, "no such date in the calendar")
        return None
    return check_year(value, rel, line, key, problems)


def check_year(value: date, rel: str, line: int | None, key: str, problems: Problems) -> date | None:
    if not MIN_YEAR <= value.year <= MAX_YEAR:
        problems.add(rel, line, key, value.isoformat(), f"date outside the years {MIN_YEAR}-{MAX_YEAR}")
        return None
    return value


def parse_int(
    raw: str,
    rel: str,
    line: int | None,
    key: str,
    problems: Problems,
    *,
    minimum: int | None = 0,
    maximum: int = MAX_DURATION,
    what: str = "whole working days",
) -> int | None:
    """A whole number in ``[minimum, maximum]`` (no fractions, no exponents, no NaN)."""
    if not _WHOLE.match(raw):
        if any(c.isdigit() for c in raw) and _NOT_ASCII_DIGIT.search(raw):
            problems.add(rel, line, key, raw, f"expected {what} in the digits 0-9 (a whole number)")
        else:
            problems.add(rel, line, key, raw, f"expected {what} (a whole number)")
        return None
    if len(raw.lstrip("+-").lstrip("0")) > _MAX_DIGITS:
        bound = f"at most {maximum}" if minimum is not None else f"between {-maximum} and {maximum}"
        problems.add(rel, line, key, raw, f"expected {what} of {bound} (the number has "
                     f"{len(raw.lstrip('+-'))} digits)")
        return None
    value = int(raw)
    lo = -maximum if minimum is None else minimum
    if value < lo:
        problems.add(rel, line, key, raw, f"expected {what} of at least {lo}")
        return None
    if value > maximum:
        problems.add(rel, line, key, raw, f"expected {what} of at most {maximum}")
        return None
    return value


def parse_number(
    raw: str,
    rel: str,
    line: int | None,
    key: str,
    problems: Problems,
    *,
    minimum: float = 0.0,
    maximum: float = math.inf,
) -> float | None:
    """A finite decimal number in ``[minimum, maximum]`` (no NaN, no infinity, no exponent)."""
    if not _DECIMAL.match(raw):
        problems.add(rel, line, key, raw, "expected a decimal number such as 12.5 (digits 0-9)")
        return None
    value = float(raw)
    if not (minimum <= value <= maximum) or not math.isfinite(value):
        span = f"between {minimum:g} and {maximum:g}" if math.isfinite(maximum) else f"of at least {minimum:g}"
        problems.add(rel, line, key, raw, f"expected a number {span}")
        return None
    return value
