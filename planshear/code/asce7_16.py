"""ASCE/SEI 7-16, Minimum Design Loads and Associated Criteria for Buildings and Other
Structures, Chapter 12: the clauses planshear applies, one function or table per clause.

Units: forces in N (any consistent unit works: the clauses are proportional).
"""

from __future__ import annotations

from dataclasses import dataclass

__all__ = ["EDITION", "FpxValues", "fpx_12_10_1_1", "CollectorRule", "collector_rule_12_10_2_1",
           "amplified_displacement_12_8_6", "drift_within_limit_12_12_1"]

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


@dataclass(frozen=True)
class CollectorRule:
    """How §12.10.2.1 turns a collector force computed at the case's force F into its
    design force: design = ``factor`` × N(F). ``uncapped`` and ``cap`` are the same kind
    of factors for the largest of items 2 and 3 and for Exception 1; ``governs`` says which
    applied, ``note`` what was not evaluated."""

    factor: float
    uncapped: float
    cap: float | None
    governs: str
    note: str = ""


def collector_rule_12_10_2_1(omega0: float, case_force: float, fpx: FpxValues | None,
                             light_frame: bool = False) -> CollectorRule:
    """§12.10.2.1 (SDC C–F) for collectors, their splices and connections: the largest of
    (2) the overstrength load effect, Ω0 × the forces of Eq. 12.10-1, and (3) the forces of
    Eq. 12.10-2 without overstrength; Exception 1: need not exceed the forces of Eq. 12.10-3
    without overstrength; Exception 2: structures braced entirely by light-frame shear
    walls use the §12.10.1.1 forces (no Ω0). Item (1), Ω0 × the ELF or modal forces of the
    vertical system, needs the story force and is not evaluated here. Collector forces are
    proportional to the diaphragm force, so each term is a factor on N at ``case_force`` (N).
    ``omega0`` ≤ 1 means the engineer did not ask for overstrength (e.g. SDC B): factor 1.
    Item list and exceptions from memory of ASCE 7-16; Exception 1 as quoted from ASCE 7-10
    (same content, which referred to the basic combinations of §12.4.2.3)."""
    if light_frame:
        return CollectorRule(1.0, 1.0, None, "Exception 2: braced entirely by light-frame shear walls (no Ω0)")
    if omega0 <= 1.0:
        return CollectorRule(1.0, 1.0, None, "no overstrength (Ω0 = 1 given)")
    if fpx is None:
        return CollectorRule(omega0, omega0, None, "Ω0 × case force",
                             "Exception 1 cap not evaluated: the load gives a total, not the Fpx inputs")
    item2 = omega0 * fpx.eq_12_10_1
    item3 = fpx.eq_12_10_2
    uncapped = max(item2, item3)
    if fpx.eq_12_10_3 < uncapped:
        return CollectorRule(fpx.eq_12_10_3 / case_force, uncapped / case_force, fpx.eq_12_10_3 / case_force,
                             "Exception 1: capped at the forces of Eq. 12.10-3 without Ω0")
    governs = "item 2: Ω0 × forces of Eq. 12.10-1" if item2 >= item3 else "item 3: forces of Eq. 12.10-2"
    return CollectorRule(uncapped / case_force, uncapped / case_force, fpx.eq_12_10_3 / case_force, governs)


def amplified_displacement_12_8_6(delta_xe: float, Cd: float, Ie: float) -> float:
    """§12.8.6, Eq. 12.8-15: δx = Cd·δxe / Ie, the elastic displacement δxe (m) amplified
    for the inelastic response (deformation compatibility, §12.12.4, uses the same δx)."""
    return Cd * delta_xe / Ie


def drift_within_limit_12_12_1(delta_x: float, story_height: float, allowable_ratio: float) -> bool:
    """§12.12.1 / Table 12.12-1: the design story drift Δ = δx (for one story) must not
    exceed Δa = (allowable ratio)·hsx; the ratio is the engineer's pick from the table
    (risk category and structure type)."""
    return abs(delta_x) <= allowable_ratio * story_height
