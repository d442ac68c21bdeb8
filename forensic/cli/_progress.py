"""Status lines on standard error while a long command works.

A status line is shown only when standard error is a terminal (or when
asked for explicitly) and only once the command has been working for more
than about a second, so quick runs and piped output stay silent. Lines go
to standard error, never to standard output, which carries the results.
"""

from __future__ import annotations

import sys
import time
from collections.abc import Callable

import click

__all__ = ["PROGRESS_KEY", "progress_wanted", "status_printer"]

DELAY_SECONDS = 1.0
PROGRESS_KEY = "forensic.progress"  # click context meta: ``forensic --progress`` was given


def progress_wanted() -> bool:
    """Whether ``forensic --progress`` (or ``FORENSIC_PROGRESS``) asked for status lines off a terminal."""
    ctx = click.get_current_context(silent=True)
    return bool(ctx is not None and ctx.meta.get(PROGRESS_KEY))


def status_printer(command: str, *, force: bool = False, clock: Callable[[], float] = time.monotonic) -> Callable[[str], None]:
    """A ``progress(step)`` callable for ``command``: prints ``forensic COMMAND: step ...`` on stderr when due.

    Due: standard error is a terminal (or ``--progress``) and the command has
    worked for more than about a second; under ``--progress`` every step shows.
    """
    force = force or progress_wanted()
    enabled = force or sys.stderr.isatty()
    started = clock()

    def progress(step: str) -> None:
        if enabled and (force or clock() - started >= DELAY_SECONDS):
            click.echo(f"forensic {command}: {step} ...", err=True)

    return progress
