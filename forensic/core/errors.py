"""The one exception hierarchy of ``forensic``.

Every error the library raises on purpose is a :class:`ForensicError`, and
each also subclasses the nearest builtin, so callers may catch either. The
command line turns any of them into ``Error: ...`` and exit status 1.

Errors about input carry *where* (file, line or manifest key) and *what*
(the offending value) as structured data, and a message that says what was
expected.
"""

from __future__ import annotations

import re
from collections.abc import Sequence
from dataclasses import dataclass

__all__ = [
    "CasefileError",
    "ForensicError",
    "FragnetError",
    "ImportMappingError",
    "InputProblem",
    "LimitExceeded",
    "LogicLoopError",
    "NotFoundError",
    "OutputError",
    "RecoveryError",
    "ScheduleError",
    "TemplateError",
    "WindowSpecError",
    "loop_text",
    "printable",
    "shorten",
]

# At most this many problems are listed in one message, then a count of the
# rest: one mistake repeated 50,000 times must not print megabytes.
MAX_LISTED = 50
# A loop of more than LOOP_WHOLE activities is shown by its first and last
# LOOP_SHOWN activities and the count between them.
LOOP_WHOLE = 50
LOOP_SHOWN = 10

# A value longer than this is shown by its start and end in a message (a
# 100,000-character id would otherwise fill the terminal); the structured
# ``InputProblem.value`` keeps it whole.
SHOWN_CHARS = 400
# Characters never printed raw in a message: C0 and C1 controls other than
# line feed and tab, DEL, the byte-order mark, the bidirectional controls and
# the Unicode non-characters. A hostile name could otherwise set the
# terminal's title, clear the screen or reorder the text (Unicode TR36;
# CVE-2021-42574; common practice).
_RAW_UNSAFE = re.compile("[\x00-\x08\x0b-\x1f\x7f-\x9f\u061c\u200b-\u200f\u2028-\u202e"
                         "\u2060-\u2069\ufeff\ufff9-\ufffb\ufffe\uffff]")


def printable(text: str) -> str:
    """``text`` with every character that could drive a terminal written as an escape (``\\x1b``)."""
    def esc(hit: re.Match) -> str:
        code = ord(hit.group())
        return f"\\x{code:02x}" if code < 0x100 else f"\\u{code:04x}"
    return _RAW_UNSAFE.sub(esc, text)


def shorten(text: str, limit: int = SHOWN_CHARS) -> str:
    """``text`` cut to its start and end with an ellipsis and its length when over ``limit`` characters."""
    if len(text) <= limit:
        return text
    head = limit * 2 // 3
    tail = limit - head
    return f"{text[:head]}\u2026{text[-tail:]} [{len(text)} characters]"


class ForensicError(Exception):
    """Base class of every error raised on purpose by ``forensic``."""


@dataclass(frozen=True, slots=True)
class InputProblem:
    """One problem found in a casefile: where it is, the value, what was expected.

    ``file`` is the path relative to the casefile folder (or the manifest's
    name); ``line`` is the 1-based line number in that file, or ``None`` when
    the problem is tied to a manifest key (given in ``key``) or to the file as
    a whole.
    """

    file: str
    line: int | None
    key: str | None
    value: str | None
    message: str

    def __str__(self) -> str:
        where = self.file
        if self.line is not None:
            where += f", line {self.line}"
        if self.key:
            where += f", {self.key}"
        shown = "" if self.value is None else f" (value: {_quoted(self.value)})"
        return f"{where}: {self.message}{shown}"


def _quoted(value: str) -> str:
    """``repr`` of a value (which escapes controls), shortened when long."""
    if len(value) <= SHOWN_CHARS:
        return repr(value)
    head = SHOWN_CHARS * 2 // 3
    return f"{value[:head]!r}\u2026{value[head - SHOWN_CHARS:]!r} [{len(value)} characters]"


def loop_text(activities: Sequence[str]) -> str:
    """A loop as ``A -> B -> C -> A``; a long one as its first and last activities and the count."""
    ids = list(activities)
    if len(ids) <= LOOP_WHOLE:
        return " -> ".join([*ids, ids[0]]) if ids else ""
    head = " -> ".join(ids[:LOOP_SHOWN])
    tail = " -> ".join([*ids[-LOOP_SHOWN:], ids[0]])
    return f"{head} -> ... ({len(ids) - 2 * LOOP_SHOWN} more) ... -> {tail} ({len(ids)} activities)"


def _listing(problems: Sequence[object]) -> str:
    """The first :data:`MAX_LISTED` problems, one a line, and a count of the rest."""
    lines = [f"  {p}" for p in problems[:MAX_LISTED]]
    if len(problems) > MAX_LISTED:
        lines.append(f"  ... and {len(problems) - MAX_LISTED} more problems not listed "
                     f"(the first {MAX_LISTED} are shown; fix these and run again)")
    return "\n".join(lines)


class CasefileError(ForensicError, ValueError):
    """Raised when a casefile is invalid; it is refused whole.

    ``problems`` lists every problem found, each with file, line or key, and
    value, so the user can fix them all in one pass.
    """

    def __init__(self, problems: Sequence[InputProblem]):
        self.problems = tuple(problems)
        if len(self.problems) == 1:
            msg = str(self.problems[0])
        else:
            msg = f"{len(self.problems)} problems in the casefile:\n" + _listing(self.problems)
        super().__init__(msg)

    def __reduce__(self):
        """Rebuilt from its problems (an error raised in a worker process reaches the caller whole)."""
        return (type(self), (self.problems,))


class ImportMappingError(CasefileError):
    """Raised when an import mapping, or the source tables it describes, cannot be read.

    Each problem names the mapping file and key, or the source file (a
    workbook sheet as ``book.xlsx[sheet]``), the row, the user's column name
    and the value; a missing column's message lists the columns found.
    """

    def __init__(self, problems: Sequence[InputProblem]):
        super().__init__(problems)
        if len(self.problems) > 1:
            listing = _listing(self.problems)
            self.args = (f"{len(self.problems)} problems in the import:\n{listing}",)


class LimitExceeded(CasefileError):
    """Raised when an input exceeds a configured ceiling (file size, activities, links)."""


class ScheduleError(ForensicError, ValueError):
    """Raised when a network cannot be scheduled (for example dates beyond the supported range)."""


class LogicLoopError(ScheduleError):
    """Raised when the links form a loop; ``activities`` lists the loop in order.

    A loop has no critical path method solution (Kelley and Walker 1959
    assume an acyclic network), so it is an error, never a warning.
    """

    def __init__(self, activities: Sequence[str], where: str = ""):
        self.activities = tuple(activities)
        loop = loop_text(self.activities)
        prefix = f"{where}: " if where else ""
        msg = f"{prefix}logic loop: {loop}; a loop has no schedule, break one of its links"
        super().__init__(msg)


class FragnetError(ScheduleError):
    """Raised when a fragnet cannot be inserted into a snapshot.

    For example a tie to an activity that is neither in the fragnet nor in
    the snapshot, or a fragnet activity whose id the snapshot already has;
    the message names each offending activity and link. A fragnet that
    closes a loop raises :class:`LogicLoopError` instead.
    """


class NotFoundError(ForensicError, LookupError):
    """Raised when a snapshot, event, party or activity named by the user does not exist."""


class OutputError(ForensicError, OSError):
    """Raised when an output cannot be written, or would overwrite a casefile input."""


class TemplateError(ForensicError, ValueError):
    """Raised when a report template is missing or invalid.

    The message names the template file, the section (by number and kind)
    and the key or placeholder at fault, and says what was expected.
    """


class WindowSpecError(ForensicError, ValueError):
    """Raised when user-defined analysis windows name snapshots out of order or twice.

    The message names the option or manifest key and the offending value.
    """


class RecoveryError(ForensicError, ValueError):
    """Raised when a recovery target cannot be met by shortening the remaining work.

    ``earliest`` is the earliest completion that shortening within the
    activities' limits achieves (as rescheduled by the engine), so the caller
    can offer it instead.
    """

    def __init__(self, message: str, earliest=None):
        self.earliest = earliest
        super().__init__(message)
