"""Package faces that import on first use.

Each sub-package of ``forensic`` names its public functions and types in
``__all__`` and finds them in the module that defines them only when one is
asked for (PEP 562 module ``__getattr__``), so that ``forensic --help`` and
``import forensic.casefile`` stay as light as the modules actually used.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from importlib import import_module
from typing import Any

__all__ = ["lazy_face"]


def lazy_face(package: str, where: Mapping[str, str]) -> tuple[Callable[[str], Any], Callable[[], list[str]]]:
    """``__getattr__`` and ``__dir__`` for ``package``: each name of ``where`` from its module.

    ``where`` maps a public name to the module (relative to ``package``,
    such as ``".reading"``) that defines it.
    """

    def __getattr__(name: str) -> Any:
        module = where.get(name)
        if module is None:
            msg = f"module {package!r} has no attribute {name!r}"
            raise AttributeError(msg)
        return getattr(import_module(module, package), name)

    def __dir__() -> list[str]:
        return sorted(where)

    return __getattr__, __dir__
