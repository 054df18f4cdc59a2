"""Diaphragm deflection of the flexible method's simple spans, without the finite-element
model, so that MDD/ADVE can be read from the idealized results (ASCE 7-16 §12.3.1.3).

Each span between adjacent lines of resistance is a simple beam under its share of the
load. Its deflection relative to the supports follows from the unit-load (virtual work)
method for a beam with chords and a shear web:

    δ(a) = ∫ M·m / EI ds + ∫ V·v / (G·t·ℓ) ds

with M, V the span's moment and shear, m, v those of a unit load at a, EI = chord EA ·
d(s)²/2 (two chords at the section's extremes, d the outline depth at s) plus the
membrane's own Et·d³/12 in proportion to the length present, and G·t·ℓ the shear
rigidity summed over the section's length present (zones with their own Gt, openings
excluded). For a rectangle under a uniform load this is exactly the bending and shear
terms of SDPWS-2015 Eq. 4.2-1 (5vL³/(8EAW) + 0.25vL/(1000Ga)) and of the steel-deck
deflection by G′ (wL²/(8bG′) + 5wL⁴/(384EI)). Nail slip enters through the apparent G·t
of wood panels given by Gt and eₙ (planshear.plan). Chord-splice slip adds, for each
``[[splice]]`` in one of the span's two extreme chords,

    δ_splice(a) = m_a(x) · M(x) / (d(x)² · k)

the unit-load chord force m_a/d times the splice's slip M/(d·k) under the real chord force:
at midspan of a uniformly loaded rectangle this is x·Δc/(2W), the slip term of SDPWS-2015
Eq. 4.2-1. Splices in members inside the outline (chords at openings) are not in these
beams; the finite-element model carries them. Units SI.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import shapely

from planshear.plan import Plan

from .beam_analogy import sections
from .distribution import SpanLoad

__all__ = ["SpanDeflection", "span_deflections"]

#: Integration intervals per span (trapezoid rule on a smooth integrand) and load
#: positions tried for the largest deflection.
SAMPLES = 400
POSITIONS = 41


@dataclass(frozen=True)
class SpanDeflection:
    left_line: str
    right_line: str
    mdd: float  # m, largest deflection relative to the supports
    at: float  # m, station of the largest deflection along the span axis
    bending: float  # m, flexural part at that station
    shear: float  # m, shear part at that station
    splice_slip: float  # m, chord-splice slip part at that station (0 without splices)
    adve: float  # m, mean of the two supports' drifts
    ratio: float  # mdd / adve


def _section_rigidities(plan: Plan, s_index: int, s: np.ndarray, span_axis: str) -> tuple[np.ndarray, np.ndarray]:
    """EI (N·m²) and G·t·ℓ (N) of the sections at stations s."""
    present, _, _ = sections(plan, plan.region, s_index, s)
    _, lo, hi = sections(plan, shapely.Polygon(plan.outline), s_index, s)
    depth = hi - lo
    main = plan.material
    zone_lengths = [(z.material, sections(plan, z.region, s_index, s)[0]) for z in plan.zones]
    rest = present - sum((length for _, length in zone_lengths), np.zeros_like(present))
    shear = main.Gt * rest + sum((m.Gt * length for m, length in zone_lengths), np.zeros_like(present))
    Et = main.Et_x if span_axis == "x" else main.Et_y
    bending = Et * depth**3 / 12.0 * np.divide(present, depth, out=np.zeros_like(present), where=depth > 0)
    if plan.chord_EA is not None:
        bending = bending + plan.chord_EA * depth**2 / 2.0
    return bending, shear


def _span_splices(plan: Plan, s_index: int, s0: float, s1: float) -> list[tuple[float, float, float]]:
    """(station m, depth m, k N/m) of each splice on an extreme chord of the outline within
    the span (s0, s1): the outline section's top or bottom at the splice's station."""
    found = []
    tolerance = 1e-5 * float(np.ptp(plan.outline, axis=0).max())
    for splice in plan.splices:
        station, across = float(splice.at[s_index]), float(splice.at[1 - s_index])
        if not s0 < station < s1:
            continue
        _, lo, hi = sections(plan, shapely.Polygon(plan.outline), s_index, np.array([station]))
        if min(abs(across - lo[0]), abs(across - hi[0])) <= tolerance and hi[0] > lo[0]:
            found.append((station, float(hi[0] - lo[0]), splice.stiffness))
    return found


def span_deflections(plan: Plan, axis: str, applied: SpanLoad, supports: list[tuple[str, float]],
                     drifts: dict[str, float]) -> list[SpanDeflection]:
    """Deflection of every simple span between adjacent ``supports`` (name, s in m) under
    the load per unit span ``applied`` (N/m along the load ``axis``), with MDD/ADVE from the
    supports' ``drifts`` (m)."""
    s_index = 0 if axis == "y" else 1
    span_axis = "x" if axis == "y" else "y"
    out = []
    for (left, s0), (right, s1) in zip(supports[:-1], supports[1:], strict=True):
        length = s1 - s0
        s = np.linspace(s0, s1, SAMPLES + 1)
        force, moment = applied.cumulative(s)
        f0, m0 = applied.cumulative(np.array([s0]))
        # Loads within the span only: force and moment about s of what lies between s0 and s.
        in_span = force - f0[0]
        about_s = moment - m0[0] - f0[0] * (s - s0)
        reaction = about_s[-1] / length  # simple beam: the left support's share
        V = reaction - in_span
        M = reaction * (s - s0) - about_s
        EI, GtL = _section_rigidities(plan, s_index, s, span_axis)
        splices = _span_splices(plan, s_index, s0, s1)
        # Real chord-splice slip M(x)/(d·k) at each splice, times the unit load's m(x)/d below.
        slip_terms = [(x, np.interp(x, s, M) / (d * d * k)) for x, d, k in splices]
        best = None
        for a in np.linspace(s0, s1, POSITIONS)[1:-1]:
            xi = (a - s0) / length
            v = np.where(s < a, 1.0 - xi, -xi)
            m = np.where(s < a, (1.0 - xi) * (s - s0), xi * (s1 - s))
            bending = float(np.trapezoid(np.divide(M * m, EI, out=np.zeros_like(s), where=EI > 0), s))
            shear = float(np.trapezoid(np.divide(V * v, GtL, out=np.zeros_like(s), where=GtL > 0), s))
            slip = sum(float((1.0 - xi) * (x - s0) if x < a else xi * (s1 - x)) * term for x, term in slip_terms)
            if best is None or abs(bending + shear + slip) > abs(sum(best[1:])):
                best = (a, bending, shear, slip)
        a, bending, shear, slip = best
        adve = 0.5 * (abs(drifts[left]) + abs(drifts[right]))
        mdd = abs(bending + shear + slip)
        out.append(SpanDeflection(left, right, mdd, float(a), bending, shear, slip, adve,
                                  mdd / adve if adve > 0 else float("inf")))
    return out
