"""In-plane stiffness of the vertical elements (walls), in N/m.

Three forms, each returning the stiffness and a sentence saying which formula it used:

* direct — the stiffness given in the plan;
* pier — a concrete or masonry pier with flexural and shear deformation,
  cantilever (top free) Δ = V h³/(3 E I) + 1.2 V h/(A G) or fixed-fixed
  Δ = V h³/(12 E I) + 1.2 V h/(A G), with I = t d³/12, A = t d and G = 0.4 E by default
  (masonry and concrete practice; e.g. Taly, *Design of Reinforced Masonry Structures*,
  2nd ed., 2010, §7.4.2);
* wood — a wood structural panel shear wall from the three-term deflection equation of
  ANSI/AWC SDPWS-2015 Eq. 4.3-1, δ = 8 v h³/(E A b) + v h/(1000 Ga) + h Δa / b, with the
  hold-down elongation Δa = T / k_hd taken proportional to the overturning tension
  T = V h / b so that the wall stays linear. In consistent units this is
  δ = V [2 h³/(3 E A b²) + h/(Ga b) + h²/(k_hd b²)].
"""

from __future__ import annotations

from dataclasses import dataclass, field

__all__ = ["WallStiffness", "pier_stiffness", "wood_wall_stiffness", "direct_stiffness"]


@dataclass(frozen=True)
class WallStiffness:
    """Stiffness of one wall along its own line (N/m) and how it was obtained."""

    value: float
    formula: str
    flexibility_terms: dict[str, float]  # m/N, one entry per deflection term
    inputs: dict[str, float] = field(default_factory=dict)  # SI values the terms were computed from


def direct_stiffness(k: float) -> WallStiffness:
    """Stiffness given directly in the plan (N/m)."""
    return WallStiffness(k, "given stiffness", {"given": 1.0 / k}, {"k": k})


def pier_stiffness(
    E: float, thickness: float, height: float, length: float, top: str = "free", G: float | None = None
) -> WallStiffness:
    """Stiffness (N/m) of a solid pier of length ``length`` (m) along the wall.

    ``E`` and ``G`` in Pa, ``thickness`` and ``height`` in m. ``top`` is "free"
    (cantilever) or "fixed" (fixed against rotation at both ends). Shear factor 1.2
    for a rectangular section; G = 0.4 E when not given.
    """
    if top not in ("free", "fixed"):
        raise ValueError(f'top must be "free" or "fixed", got "{top}"')
    shear_modulus = 0.4 * E if G is None else G
    inertia = thickness * length**3 / 12.0
    area = thickness * length
    flexure = height**3 / ((3.0 if top == "free" else 12.0) * E * inertia)
    shear = 1.2 * height / (area * shear_modulus)
    formula = (
        "pier, cantilever: h³/(3EI) + 1.2h/(AG)" if top == "free" else "pier, fixed-fixed: h³/(12EI) + 1.2h/(AG)"
    )
    if G is None:
        formula += ", G = 0.4E"
    return WallStiffness(1.0 / (flexure + shear), formula, {"flexure": flexure, "shear": shear},
                         {"E": E, "G": shear_modulus, "t": thickness, "h": height, "d": length})


def wood_wall_stiffness(
    Ga: float, height: float, length: float, chord_EA: float, holdown_k: float | None = None
) -> WallStiffness:
    """Stiffness (N/m) of a wood structural panel shear wall of length ``length`` (m).

    ``Ga`` apparent shear stiffness (N/m, i.e. kip/in converted), ``height`` (m),
    ``chord_EA`` end-post axial rigidity (N), ``holdown_k`` hold-down stiffness (N/m);
    without ``holdown_k`` the anchorage term is left out (rigid anchorage).
    SDPWS-2015 Eq. 4.3-1 written for a linear hold-down, see the module docstring.
    """
    b, h = length, height
    bending = 2.0 * h**3 / (3.0 * chord_EA * b**2)
    shear = h / (Ga * b)
    terms = {"bending": bending, "shear": shear}
    formula = "wood shear wall, SDPWS-2015 Eq. 4.3-1: 2h³/(3EAb²) + h/(Ga·b)"
    if holdown_k is not None:
        terms["holdown"] = h**2 / (holdown_k * b**2)
        formula += " + h²/(k_hd·b²)"
    else:
        formula += " (rigid hold-down)"
    inputs = {"Ga": Ga, "h": h, "b": b, "EA": chord_EA} | ({} if holdown_k is None else {"k_hd": holdown_k})
    return WallStiffness(1.0 / sum(terms.values()), formula, terms, inputs)
