"""Many records of a frozen, slotted dataclass built at once from their columns.

The loader's fast path makes 50,000 activities and 100,000 links a
snapshot. Calling a frozen dataclass once a record runs its generated
``__init__`` (one ``object.__setattr__`` a field, in Python); for a class
with no ``__post_init__``, :func:`built` makes the empty records and then
fills one field across all of them at a time through the field's slot, so
the loop runs inside the interpreter's built-in iterators. The records are
the same as the constructor's: the same fields, values, equality and hash.
"""

from __future__ import annotations

import dataclasses
from collections import deque
from collections.abc import Sequence
from itertools import repeat
from typing import Any, TypeVar

__all__ = ["built"]

T = TypeVar("T")


def built(cls: type[T], columns: Sequence[Sequence[Any]]) -> list[T]:
    """``[cls(*row) for row in zip(*columns)]``, by slots for a frozen dataclass without ``__post_init__``.

    ``columns`` holds one sequence for each field of ``cls``, in field order,
    all of one length. Any other class is built by calling it.
    """
    names = [f.name for f in dataclasses.fields(cls)]  # type: ignore[arg-type]
    if len(columns) != len(names):
        msg = f"{cls.__name__} has {len(names)} fields, not {len(columns)}"
        raise ValueError(msg)
    n = len(columns[0]) if columns else 0
    if any(len(col) != n for col in columns):
        raise ValueError("columns of different lengths")
    if not _by_slots(cls, names):
        return list(map(cls, *columns))
    records = list(map(object.__new__, repeat(cls, n)))
    for name, values in zip(names, columns, strict=True):
        deque(map(getattr(cls, name).__set__, records, values), maxlen=0)
    return records


def _by_slots(cls: type, names: list[str]) -> bool:
    """Whether every field is a slot and the constructor does no more than set them (no ``__post_init__``)."""
    slots = getattr(cls, "__slots__", ())
    return (dataclasses.is_dataclass(cls) and not hasattr(cls, "__post_init__") and tuple(slots) == tuple(names)
            and all(f.init for f in dataclasses.fields(cls)))
