"""The standard's provisions, one module per edition.

Each edition module holds the clauses planshear applies as small functions and tables
named by their clause, so that a reviewer can read every provision in one file and adding
an edition is adding a module. The rest of the code calls :func:`edition`.
"""

from __future__ import annotations

from types import ModuleType

from . import asce7_16

__all__ = ["EDITIONS", "DEFAULT_EDITION", "edition"]

#: Editions planshear implements, by the name used in ``[plan] code``.
EDITIONS: dict[str, ModuleType] = {asce7_16.EDITION: asce7_16}
DEFAULT_EDITION = asce7_16.EDITION


def edition(name: str = DEFAULT_EDITION) -> ModuleType:
    """The module of the edition ``name`` (e.g. "ASCE 7-16")."""
    return EDITIONS[name]
