"""The loader's ceilings (:class:`Limits`), in a module of their own so the command line can read them cheaply.

``forensic.casefile.Limits`` is the same class; the command line's
``--max-*`` options build one without importing the loader.
"""

from __future__ import annotations

from dataclasses import dataclass

__all__ = ["Limits"]


@dataclass(frozen=True, slots=True)
class Limits:
    """Ceilings on the size of what the loader reads, so a stray file cannot exhaust memory.

    The defaults are generous: far beyond the largest real programmes
    (tens of thousands of activities) yet small enough to load in seconds.
    """

    max_file_bytes: int = 64 * 1024 * 1024
    max_activities: int = 200_000  # per snapshot or fragnet
    max_links: int = 600_000  # per snapshot or fragnet

    def __post_init__(self) -> None:
        for name in ("max_file_bytes", "max_activities", "max_links"):
            value = getattr(self, name)
            if isinstance(value, bool) or not isinstance(value, int) or value < 1:
                msg = f"Limits.{name} must be a positive whole number, not {value!r}"
                raise ValueError(msg)
