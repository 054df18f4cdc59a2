"""ASCE/SEI 7-16, Minimum Design Loads and Associated Criteria for Buildings and Other
Structures, Chapter 12: the clauses planshear applies, one function or table per clause.

Units: forces in N (any consistent unit works: the clauses are proportional).
"""

from __future__ import annotations

from dataclasses import dataclass

__all__ = ["EDITION", "FpxValues", "fpx_12_10_1_1"]

EDITION = "ASCE 7-16"


@dataclass(frozen=True)
class FpxValues:
    """Diaphragm design force of §12.10.1.1 with the three equations' values (N)."""

    eq_12_10_1: float  # (ΣFi / Σwi) · wpx
    eq_12_10_2: float  # lower bound 0.2 · SDS · Ie · wpx (mandatory)
    eq_12_10_3: float  # upper bound 0.4 · SDS · Ie · wpx (need not be exceeded)
    governing: str  # "12.10-1", "12.10-2" or "12.10-3"

    @property
    def value(self) -> float:
        """Fpx (N): Eq. 12.10-1 bounded by Eqs. 12.10-2 and 12.10-3."""
        return {"12.10-1": self.eq_12_10_1, "12.10-2": self.eq_12_10_2, "12.10-3": self.eq_12_10_3}[self.governing]


def fpx_12_10_1_1(wpx: float, SDS: float, Ie: float, story_force_ratio: float) -> FpxValues:
    """§12.10.1.1, Eqs. 12.10-1 to 12.10-3: Fpx = (ΣFi/Σwi)·wpx (``story_force_ratio`` =
    ΣFi/Σwi for the levels at and above this one), not less than 0.2·SDS·Ie·wpx and need
    not exceed 0.4·SDS·Ie·wpx; ``wpx`` is the weight tributary to the diaphragm (N)."""
    raw = story_force_ratio * wpx
    lower = 0.2 * SDS * Ie * wpx
    upper = 0.4 * SDS * Ie * wpx
    governing = "12.10-2" if raw < lower else "12.10-3" if raw > upper else "12.10-1"
    return FpxValues(raw, lower, upper, governing)
