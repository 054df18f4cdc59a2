"""ASCE/SEI 7-16, Minimum Design Loads and Associated Criteria for Buildings and Other
Structures, Chapter 12: the clauses planshear applies, one function or table per clause.

Units: forces in N (any consistent unit works: the clauses are proportional).
"""

from __future__ import annotations

from dataclasses import dataclass

__all__ = [
    "EDITION",
    "FpxValues",
    "fpx_12_10_1_1",
    "ElfDistribution",
    "elf_exponent_12_8_3",
    "elf_distribution_12_8_3",
    "CollectorRule",
    "collector_rule_12_10_2_1",
    "amplified_displacement_12_8_6",
    "BASES",
    "INCREASE_12_3_3_4",
    "collector_increase_applies_12_3_3_4",
    "CombinationFactors",
    "combination_factors_2_3_2_4",
    "drift_within_limit_12_12_1",
    "TORSIONAL_1A",
    "TORSIONAL_1B",
    "REENTRANT_PROJECTION",
    "OPEN_AREA_LIMIT",
    "STIFFNESS_CHANGE_LIMIT",
    "SDC_APPLICATION",
    "SECTION_TEXT",
    "SDCS",
    "torsional_irregularity_12_3_1",
    "torsional_amplification_12_8_4_3",
    "reentrant_corner_type_2",
    "diaphragm_discontinuity_type_3",
    "stiffness_change_type_3",
    "sections_applying",
]

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


@dataclass(frozen=True)
class ElfDistribution:
    """Vertical distribution of the ELF base shear, §12.8.3, for the levels listed bottom
    to top, and what it gives the diaphragm at ``level`` (0-based)."""

    k: float  # distribution exponent
    cvx: tuple[float, ...]  # vertical distribution factors Cvx, Eq. 12.8-12
    forces: tuple[float, ...]  # Fx = Cvx·V at every level, Eq. 12.8-11 (N)
    level: int
    story_force_ratio: float  # ΣFi/Σwi over the levels i ≥ level (Eq. 12.10-1)

    @property
    def fx(self) -> float:
        """Story force Fx (N) at the diaphragm's level."""
        return self.forces[self.level]


def elf_exponent_12_8_3(period: float) -> float:
    """§12.8.3: k = 1 for T ≤ 0.5 s, 2 for T ≥ 2.5 s, linear in between (``period`` T in s)."""
    return float(min(2.0, max(1.0, 1.0 + (period - 0.5) / 2.0)))


def elf_distribution_12_8_3(base_shear: float, heights: list[float], weights: list[float], level: int,
                            period: float | None = None, k: float | None = None) -> ElfDistribution:
    """§12.8.3, Eqs. 12.8-11 and 12.8-12: Fx = Cvx·V with Cvx = wx·hx^k / Σ wi·hi^k, for
    levels at ``heights`` (any length unit, above the base) with seismic weights
    ``weights`` (N); ``level`` is the diaphragm's level (0-based, bottom first); k from the
    period T (s) unless given. Also ΣFi/Σwi over the levels at and above ``level``, the
    ratio of Eq. 12.10-1."""
    exponent = elf_exponent_12_8_3(period) if k is None else float(k)
    terms = [w * h**exponent for w, h in zip(weights, heights, strict=True)]
    cvx = tuple(t / sum(terms) for t in terms)
    forces = tuple(c * base_shear for c in cvx)
    ratio = sum(forces[level:]) / sum(weights[level:])
    return ElfDistribution(exponent, cvx, forces, level, ratio)


def collector_rule_12_10_2_1(omega0: float, case_force: float, fpx: FpxValues | None,
                             light_frame: bool = False, fx: float | None = None,
                             sdc: str | None = None) -> CollectorRule:
    """§12.10.2.1 (SDC C–F) for collectors, their splices and connections: the largest of
    (2) the overstrength load effect, Ω0 × the forces of Eq. 12.10-1, and (3) the forces of
    Eq. 12.10-2 without overstrength; Exception 1: need not exceed the forces of Eq. 12.10-3
    without overstrength; Exception 2: structures braced entirely by light-frame shear
    walls use the §12.10.1.1 forces (no Ω0). Item (1), Ω0 × the ELF or modal forces of the
    vertical system, is evaluated when the story force ``fx`` (N) is given. Collector forces are
    proportional to the diaphragm force, so each term is a factor on N at ``case_force`` (N).
    ``omega0`` ≤ 1 means the engineer did not ask for overstrength (e.g. SDC B): factor 1.
    Item list and exceptions from memory of ASCE 7-16; Exception 1 as quoted from ASCE 7-10
    (same content, which referred to the basic combinations of §12.4.2.3)."""
    if sdc in ("A", "B"):
        return CollectorRule(1.0, 1.0, None, f"no overstrength: §12.10.2.1 applies to SDC C–F (SDC {sdc} given)")
    if light_frame:
        return CollectorRule(1.0, 1.0, None, "Exception 2: braced entirely by light-frame shear walls (no Ω0)")
    if omega0 <= 1.0:
        return CollectorRule(1.0, 1.0, None, "no overstrength (Ω0 = 1 given)")
    item1 = omega0 * fx if fx is not None else 0.0
    note = "" if fx is not None else "item 1 (Ω0 × ELF forces) not evaluated: no story force fx given"
    if fpx is None:
        value = max(omega0 * case_force, item1)
        return CollectorRule(value / case_force, value / case_force, None,
                             "item 1: Ω0 × Fx" if item1 > omega0 * case_force else "Ω0 × case force",
                             "Exception 1 cap not evaluated: the load gives a total, not the Fpx inputs")
    item2 = omega0 * fpx.eq_12_10_1
    item3 = fpx.eq_12_10_2
    uncapped = max(item1, item2, item3)
    if fpx.eq_12_10_3 < uncapped:
        return CollectorRule(fpx.eq_12_10_3 / case_force, uncapped / case_force, fpx.eq_12_10_3 / case_force,
                             "Exception 1: capped at the forces of Eq. 12.10-3 without Ω0", note)
    governs = ("item 1: Ω0 × Fx (ELF)" if item1 >= max(item2, item3)
               else "item 2: Ω0 × forces of Eq. 12.10-1" if item2 >= item3 else "item 3: forces of Eq. 12.10-2")
    return CollectorRule(uncapped / case_force, uncapped / case_force, fpx.eq_12_10_3 / case_force, governs, note)


def amplified_displacement_12_8_6(delta_xe: float, Cd: float, Ie: float) -> float:
    """§12.8.6, Eq. 12.8-15: δx = Cd·δxe / Ie, the elastic displacement δxe (m) amplified
    for the inelastic response (deformation compatibility, §12.12.4, uses the same δx)."""
    return Cd * delta_xe / Ie


def drift_within_limit_12_12_1(delta_x: float, story_height: float, allowable_ratio: float) -> bool:
    """§12.12.1 / Table 12.12-1: the design story drift Δ = δx (for one story) must not
    exceed Δa = (allowable ratio)·hsx; the ratio is the engineer's pick from the table
    (risk category and structure type)."""
    return bool(abs(delta_x) <= allowable_ratio * story_height)


# --- Table 12.3-1, horizontal structural irregularities -------------------------------------

#: Type 1a torsional irregularity: δmax/δavg above this, accidental torsion included.
TORSIONAL_1A = 1.2
#: Type 1b extreme torsional irregularity.
TORSIONAL_1B = 1.4
#: Type 2 re-entrant corner: both projections beyond the corner above this share of the
#: plan dimension in their direction.
REENTRANT_PROJECTION = 0.15
#: Type 3 diaphragm discontinuity: cut-out or open area above this share of the gross
#: enclosed diaphragm area ...
OPEN_AREA_LIMIT = 0.50
#: ... or a change of effective diaphragm stiffness of more than this from one story to the next.
STIFFNESS_CHANGE_LIMIT = 0.50

SDCS = ("A", "B", "C", "D", "E", "F")

#: Table 12.3-1, column "Reference Section" → "Seismic Design Category Application", for
#: the types planshear detects. FROM MEMORY of ASCE 7-16 (the standard's text was not at
#: hand); the Ax row (§12.8.4.3, C–F for 1a) agrees with the restatement in Taly (2010)
#: Eq. (7.73) (VALIDATION.md 1.8). Check against the standard before relying on it.
SDC_APPLICATION: dict[str, dict[str, str]] = {
    "1a": {"12.3.3.4": "DEF", "12.7.3": "BCDEF", "12.8.4.3": "CDEF", "12.12.1": "CDEF",
           "Table 12.6-1": "DEF", "16.3.4": "BCDEF"},
    "1b": {"12.3.3.1": "EF", "12.3.3.4": "D", "12.3.4.2": "D", "12.7.3": "BCD", "12.8.4.3": "CD",
           "12.12.1": "CD", "Table 12.6-1": "D", "16.3.4": "BCD"},
    "2": {"12.3.3.4": "DEF", "Table 12.6-1": "DEF"},
    "3": {"12.3.3.4": "DEF", "Table 12.6-1": "DEF"},
}

#: What each reference section requires, in short (paraphrased, from memory).
SECTION_TEXT: dict[str, str] = {
    "12.3.3.1": "§12.3.3.1: Type 1b is not permitted in SDC E or F",
    "12.3.3.4": ("§12.3.3.4: increase the §12.10.1.1 design forces by 25 % for connections of diaphragms to "
                 "vertical elements and to collectors, and for collectors and their connections (forces "
                 "calculated with the overstrength factor Ω0, §12.4.3, need not be increased)"),
    "12.3.4.2": "§12.3.4.2: the redundancy factor ρ = 1.0 option is limited (see the clause)",
    "12.7.3": "§12.7.3: a three-dimensional structural model is required",
    "12.8.4.3": "§12.8.4.3: multiply the accidental torsion by Ax = (δmax/(1.2·δavg))², 1.0 ≤ Ax ≤ 3.0",
    "12.12.1": "§12.12.1: story drift is the largest difference of deflections along any edge of the story",
    "Table 12.6-1": "Table 12.6-1: the equivalent lateral force procedure may not be permitted (see the table)",
    "16.3.4": "§16.3.4: response history analysis needs a three-dimensional model",
}


def torsional_irregularity_12_3_1(ratio: float) -> str | None:
    """Table 12.3-1 Types 1a / 1b from ``ratio`` = δmax/δavg (story drift at the two ends,
    accidental torsion included): "1b" above 1.4, "1a" above 1.2, else None."""
    if ratio > TORSIONAL_1B:
        return "1b"
    if ratio > TORSIONAL_1A:
        return "1a"
    return None


def torsional_amplification_12_8_4_3(delta_max: float, delta_avg: float) -> float:
    """§12.8.4.3, Eq. 12.8-14: Ax = (δmax / (1.2·δavg))², not less than 1.0 nor more
    than 3.0 (δ in any one length unit, computed with Ax = 1)."""
    if delta_avg <= 0:  # rotation dominates: the bound governs
        return 3.0
    return float(min(3.0, max(1.0, (delta_max / (1.2 * delta_avg)) ** 2)))


def reentrant_corner_type_2(projection_x: float, dimension_x: float, projection_y: float,
                            dimension_y: float) -> bool:
    """Table 12.3-1 Type 2: both plan projections beyond a re-entrant corner greater than
    15 % of the plan dimension in their direction (lengths in one unit)."""
    return (projection_x > REENTRANT_PROJECTION * dimension_x
            and projection_y > REENTRANT_PROJECTION * dimension_y)


def diaphragm_discontinuity_type_3(open_area: float, gross_area: float) -> bool:
    """Table 12.3-1 Type 3, open-area part: cut-out or open area greater than 50 % of the
    gross enclosed diaphragm area (areas in one unit)."""
    return open_area > OPEN_AREA_LIMIT * gross_area


def stiffness_change_type_3(adjacent_ratio: float) -> tuple[bool, float]:
    """Table 12.3-1 Type 3, stiffness part, from ``adjacent_ratio`` = effective diaphragm
    stiffness of the adjacent story / this one's. Returns (irregular, change) with the
    change taken relative to the smaller of the two stiffnesses, the stricter reading of
    "more than 50 % from one story to the next" (irregular below 2/3 or above 1.5)."""
    change = max(adjacent_ratio, 1.0 / adjacent_ratio) - 1.0
    return change > STIFFNESS_CHANGE_LIMIT, change


def sections_applying(irregularity_type: str, sdc: str) -> list[str]:
    """Reference sections of Table 12.3-1 that apply to ``irregularity_type`` ("1a",
    "1b", "2", "3") in Seismic Design Category ``sdc`` ("A"…"F"), in table order."""
    return [section for section, categories in SDC_APPLICATION[irregularity_type].items() if sdc in categories]


#: Design bases of §2.3 (strength, LRFD) and §2.4 (allowable stress, ASD).
BASES = ("LRFD", "ASD")


@dataclass(frozen=True)
class CombinationFactors:
    """Factors on the lateral load effect of one case for its design values: ``vertical``
    for walls and their reactions, ``diaphragm`` for diaphragm shears, chords and collectors
    (collector overstrength forces included), with the combination they come from."""

    vertical: float
    diaphragm: float
    combination: str


def combination_factors_2_3_2_4(basis: str | None, kind: str, rho: float = 1.0) -> CombinationFactors:
    """Lateral terms of the load combinations (gravity terms are out of scope and omitted):
    seismic, LRFD §2.3.6 with E = ρ·QE (§12.4.2.1) — ρ on the vertical elements, 1.0 on
    diaphragm forces of §12.10.1.1 (ρ does not apply to them; from memory) — and ASD §2.4.5
    with 0.7E (0.7·Ω0·QE in the overstrength combinations); wind, LRFD 1.0W (§2.3.1) and ASD
    0.6W (§2.4.1). ``basis`` None: unfactored (E and W as given)."""
    if basis is None:
        return CombinationFactors(1.0, 1.0, "unfactored (E and W as given; no [design] basis)")
    if kind == "seismic":
        if basis == "LRFD":
            return CombinationFactors(rho, 1.0, f"LRFD §2.3.6: ρ·QE on walls (ρ = {rho:g}), QE on the diaphragm")
        return CombinationFactors(0.7 * rho, 0.7, f"ASD §2.4.5: 0.7·ρ·QE on walls (ρ = {rho:g}), 0.7·QE on the diaphragm")
    if basis == "LRFD":
        return CombinationFactors(1.0, 1.0, "LRFD §2.3.1: 1.0W")
    return CombinationFactors(0.6, 0.6, "ASD §2.4.1: 0.6W")


#: §12.3.3.4: increase of the §12.10.1.1 design forces of collectors and their connections
#: (and of diaphragm connections to vertical elements and collectors) for SDC D–F with a
#: horizontal irregularity of Type 1a, 1b, 2, 3 or 4; forces that include the overstrength
#: Ω0 (§12.4.3) need not be increased (from memory of ASCE 7-16).
INCREASE_12_3_3_4 = 1.25


def collector_increase_applies_12_3_3_4(overstrength_governs: str) -> bool:
    """Whether the §12.3.3.4 increase applies to a §12.10.2.1 collector force governed by
    ``overstrength_governs`` (CollectorRule.governs): not to forces that include Ω0 (items 1
    and 2); to the basic-combination forces of item 3 and of the Exception 1 cap."""
    return overstrength_governs.startswith(("item 3", "Exception 1", "no overstrength", "Exception 2"))
