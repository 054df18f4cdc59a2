"""Load cases: seismic weight, center of mass, Fpx, wind edge loads, case expansion.

Every ``[[load]]`` expands into one case per direction. Seismic loads (and edge loads
with a non-zero ``eccentricity``) also get ``+ecc`` and ``-ecc`` cases for the rigid and
semi-rigid assumptions: the center of mass is moved by ± eccentricity × the plan
dimension perpendicular to the load (ASCE 7-16 §12.8.4.2). The flexible method has no
eccentricity cases (that clause applies "where diaphragms are not flexible").

A case's applied force is a :class:`ForceField` — area, line and point loads, all
acting in the case direction — that every method integrates in its own way, plus the
accidental torsional moment.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import shapely
from shapely.geometry import LineString, Polygon

from .code.asce7_16 import (
    CollectorRule,
    CombinationFactors,
    collector_rule_12_10_2_1,
    combination_factors_2_3_2_4,
    fpx_12_10_1_1,
)
from .plan import Load, Plan

__all__ = [
    "SeismicWeight",
    "ForceField",
    "LoadCase",
    "seismic_weight",
    "fpx_force",
    "windward_segments",
    "spread_across_depth",
    "torsion_areas",
    "expand_load_cases",
]

AXES = {"x": np.array([1.0, 0.0]), "y": np.array([0.0, 1.0])}


@dataclass(frozen=True, eq=False)
class ForceField:
    """Distributed force in one direction.

    ``areas``: (region, pressure N/m²); ``lines``: (start, end, N/m along the segment);
    ``points``: (x, y, N). All act along the unit vector ``direction``.
    """

    direction: np.ndarray
    areas: tuple[tuple[Polygon | shapely.MultiPolygon, float], ...]
    lines: tuple[tuple[np.ndarray, np.ndarray, float], ...]
    points: tuple[tuple[float, float, float], ...]

    def total(self) -> float:
        """Magnitude of the resultant force (N)."""
        return sum(g.area * p for g, p in self.areas) + sum(
            float(np.hypot(*(b - a))) * q for a, b, q in self.lines
        ) + sum(p for _, _, p in self.points)

    def first_moment(self) -> np.ndarray:
        """Σ force × position (N·m), shape (2,)."""
        moment = np.zeros(2)
        for geometry, pressure in self.areas:
            if geometry.area > 0:
                moment += pressure * geometry.area * np.asarray(geometry.centroid.coords[0])
        for a, b, q in self.lines:
            moment += q * float(np.hypot(*(b - a))) * 0.5 * (a + b)
        for x, y, p in self.points:
            moment += p * np.array([x, y])
        return moment

    def centroid(self) -> np.ndarray:
        """Point of application of the resultant (m)."""
        return self.first_moment() / self.total()

    def scaled(self, factor: float) -> ForceField:
        return ForceField(
            self.direction,
            tuple((g, p * factor) for g, p in self.areas),
            tuple((a, b, q * factor) for a, b, q in self.lines),
            tuple((x, y, p * factor) for x, y, p in self.points),
        )


@dataclass(frozen=True)
class SeismicWeight:
    """Seismic weight of the level (N) and its center of mass (m)."""

    total: float
    center: np.ndarray
    field: ForceField  # the weight itself as a field (direction unused)


@dataclass(frozen=True, eq=False)
class LoadCase:
    """One analysis case, e.g. ``E+x+ecc``."""

    name: str
    load: str
    kind: str
    axis: str  # "x" or "y"
    sign: int  # +1 or -1: the load acts along sign · axis
    eccentricity_sign: int  # 0, +1 or -1
    force: float  # N, total force along ``direction``
    field: ForceField  # distribution of that force
    center: np.ndarray  # point of application of the resultant before eccentricity (m)
    eccentricity: float  # m, accidental eccentricity magnitude (0 for none)
    torsion: float  # N·m about z from the accidental eccentricity (counter-clockwise +)
    collector_overstrength: float
    assumptions: tuple[str, ...]  # which methods use the case
    #: ASCE 7-16 §12.10.2.1: design collector force = rule.factor × force at this case's force.
    collector_rule: CollectorRule = CollectorRule(1.0, 1.0, None, "wind: no overstrength")
    #: Story force Fx for the vertical elements (N) when it differs from ``force`` (the
    #: diaphragm force Fpx or the given total): wall forces and drifts scale by Fx/force.
    story_force: float | None = None
    #: Load-combination factors of the plan's design basis (ASCE 7-16 §2.3 / §2.4) on this case.
    combination: CombinationFactors = CombinationFactors(1.0, 1.0, "unfactored (E and W as given; no [design] basis)")

    @property
    def wall_factor(self) -> float:
        """Factor from the analyzed (diaphragm) force to the vertical elements' force Fx."""
        return 1.0 if self.story_force is None else self.story_force / self.force

    @property
    def direction(self) -> np.ndarray:
        return self.sign * AXES[self.axis]


def _weight_parts(plan: Plan, load: Load, axis: str | None = None):
    """Area weights (region, N/m²), line weights (start, end, N/m; grid-line weights, then
    perimeter weights) and point weights (x, y, N, footprint) of a seismic load; with
    ``axis``, only the weights that act in a load along it (``only_across``)."""
    areas = []
    remainder = plan.region
    for zone in plan.zones:
        if zone.name in load.zone_area_weight:
            areas.append((zone.region, load.zone_area_weight[zone.name]))
            remainder = remainder.difference(zone.polygon)
    if load.area_weight:
        areas.append((remainder, load.area_weight))
    lines = []
    for index, (line_name, t0, t1, q) in enumerate(load.line_weights):
        if axis is None or axis in load.weight_axes(index):
            grid_line = plan.line(line_name)
            lines.append((grid_line.point(t0), grid_line.point(t1), q))
    lines += [(a, b, q) for a, b, q, axes in load.edge_weights if axis is None or axis in axes]
    points = [(x, y, p, footprint) for (x, y, p), footprint in zip(load.point_weights, load.point_footprints, strict=True)
              if p]
    return areas, lines, points


def seismic_weight(plan: Plan, load: Load, axis: str | None = None) -> SeismicWeight:
    """Seismic weight (N) and center of mass (m) of ``load``: area weight over the
    outline less openings (zone overrides replace it inside their zone) + line and
    perimeter weights + point weights, each over its footprint. With ``axis`` ("x" or
    "y"), the weight of a load along that axis: weights marked ``only_across`` count only
    in the direction across their line or edge."""
    areas, lines, points = _weight_parts(plan, load, axis)
    areas += [(footprint, p / footprint.area) for _, _, p, footprint in points]
    field = ForceField(np.zeros(2), tuple(areas), tuple(lines), ())
    total = field.total()
    return SeismicWeight(total, field.centroid() if total > 0 else np.zeros(2), field)


def _band(s_index: int, s0: float, s1: float, t0: float, t1: float) -> Polygon:
    """The rectangle s0 ≤ s ≤ s1, t0 ≤ t ≤ t1 (m), s being x when ``s_index`` is 0, else y."""
    return shapely.box(s0, t0, s1, t1) if s_index == 0 else shapely.box(t0, s0, t1, s1)


def spread_across_depth(plan: Plan, start: np.ndarray, end: np.ndarray, force: float, axis: str):
    """A force ``force`` (N) along ``axis``, uniform along the segment start–end, carried
    across the depth of the diaphragm along its line of action: at each station s of the
    segment's extent across the load, its share is spread uniformly over the part of the
    section that the segment belongs to (the piece of diaphragm between openings or notches
    that it touches). This is how framing and the sheathing in bearing deliver an edge load,
    a wall weight or a piece of equipment to the diaphragm, and what the beam analogy
    assumes; it keeps a membrane that is soft across the depth (Et = 0.1·Gt) from being
    crushed at the line. Returns ((polygon, pressure N/m²), …), exact for pieces whose
    section length is constant between the plan's vertices (the pressure is constant in each
    band between vertex stations), or None when the segment runs along the load (a
    tangential line load, which stays a line load)."""
    s_index = 0 if axis == "y" else 1
    t_index = 1 - s_index
    size = float(np.ptp(plan.outline, axis=0).max())
    s0, s1 = sorted((float(start[s_index]), float(end[s_index])))
    if s1 - s0 <= 1e-7 * size:
        return None
    coords = shapely.get_coordinates(plan.region)
    knots = np.unique(np.concatenate([[s0, s1], coords[:, s_index]]))
    knots = knots[(knots >= s0) & (knots <= s1)]
    lo, hi = coords[:, t_index].min() - 1.0, coords[:, t_index].max() + 1.0
    segment = LineString([start, end])
    pieces = []
    for a, b in zip(knots[:-1], knots[1:], strict=True):
        if b - a <= 1e-9 * size:
            continue
        band = _band(s_index, a, b, lo, hi)
        cut = plan.region.intersection(band)
        parts = [g for g in getattr(cut, "geoms", [cut]) if isinstance(g, Polygon) and g.area > 0]
        if not parts:
            continue
        here = segment.intersection(band)
        touching = [g for g in parts if g.distance(here) <= 1e-7 * size] or [min(parts, key=lambda g: g.distance(here))]
        pieces += _uniform_per_station(touching, force * (b - a) / (s1 - s0), a, b, s_index, lo, hi)
    return tuple(pieces)


def _uniform_per_station(parts: list[Polygon], force: float, a: float, b: float, s_index: int,
                         lo: float, hi: float) -> list[tuple]:
    """(geometry, pressure) pieces that put ``force`` (N) on ``parts`` (the diaphragm
    between stations a and b) with its resultant at the band's middle (a + b)/2, as a load
    uniform per unit of s has. One pressure is exact where the section length is constant;
    where it varies (a sloped edge) the band is split in two halves whose pressures are
    chosen to give both the total and the first moment exactly."""
    merged = shapely.union_all(parts)
    middle = 0.5 * (a + b)
    quarter, three_quarters = (sum(_cut_length(g, a + f * (b - a), s_index) for g in parts) for f in (0.25, 0.75))
    if abs(quarter - three_quarters) <= 1e-9 * max(quarter, three_quarters):
        return [(merged, force / merged.area)]
    halves = []
    for c0, c1 in ((a, middle), (middle, b)):
        halves.append(merged.intersection(_band(s_index, c0, c1, lo, hi)))
    centres = [h.centroid.coords[0][s_index] for h in halves]
    first = force * (centres[1] - middle) / (centres[1] - centres[0])
    return [(halves[0], first / halves[0].area), (halves[1], (force - first) / halves[1].area)]


def _cut_length(geometry, s: float, s_index: int) -> float:
    bounds = geometry.bounds
    t0, t1 = bounds[1 - s_index] - 1.0, bounds[3 - s_index] + 1.0
    ends = [(s, t0), (s, t1)] if s_index == 0 else [(t0, s), (t1, s)]
    return geometry.intersection(LineString(ends)).length


#: Strips across the span used to spread the accidental torsion in the beam analogy.
TORSION_STRIPS = 24


def torsion_areas(plan: Plan, axis: str, direction: np.ndarray, torsion: float) -> tuple[tuple, ...]:
    """The accidental torsional moment ``torsion`` (N·m about z, counter-clockwise +) as
    area loads along ``direction`` (a load along ``axis``) for the beam analogy: the
    diaphragm is cut into strips across the span, each loaded in proportion to its area
    times the lever arm of its centroid from the diaphragm's centroid, so the net force is
    zero and the moment exactly ``torsion`` (the area pattern that the semi-rigid model also
    uses when the load is too concentrated to carry the moment itself). Returns
    ((polygon, pressure N/m²), …)."""
    s_index = 0 if axis == "y" else 1
    lo, hi = plan.region.bounds[s_index], plan.region.bounds[s_index + 2]
    t_lo, t_hi = plan.region.bounds[1 - s_index] - 1.0, plan.region.bounds[3 - s_index] + 1.0
    edges = np.linspace(lo, hi, TORSION_STRIPS + 1)
    strips = []
    for a, b in zip(edges[:-1], edges[1:], strict=True):
        band = _band(s_index, a, b, t_lo, t_hi)
        strip = plan.region.intersection(band)
        if strip.area > 0:
            strips.append((strip, strip.area, strip.centroid.coords[0][s_index]))
    area = np.array([a for _, a, _ in strips])
    lever = np.array([c for _, _, c in strips])
    lever = lever - (area @ lever) / area.sum()
    # Moment of a force f along the direction at lever s: f·s·d_y (loads along y) or −f·s·d_x (along x).
    arm = direction[1] if axis == "y" else -direction[0]
    k = torsion / (arm * float(area @ lever**2))
    return tuple((strip, k * c) for (strip, _, _), c in zip(strips, lever, strict=True))


def _spread_lines(plan: Plan, lines, axis: str):
    """Line loads (start, end, N/m) along ``axis``: those across the load as spread areas,
    those along it kept as lines. Returns (areas, lines)."""
    areas, kept = [], []
    for a, b, q in lines:
        spread = spread_across_depth(plan, a, b, q * float(np.hypot(*(b - a))), axis)
        if spread is None:
            kept.append((a, b, q))
        else:
            areas += spread
    return areas, kept


def _seismic_field(plan: Plan, load: Load, axis: str) -> ForceField:
    """The seismic weight as a force field along +axis (N per unit weight), with line
    weights across the load and point weights spread across the depth along their line of
    action (see :func:`spread_across_depth`)."""
    areas, lines, points = _weight_parts(plan, load, axis)
    spread, kept = _spread_lines(plan, lines, axis)
    s_index = 0 if axis == "y" else 1
    for x, y, p, footprint in points:
        at = np.array([x, y])
        lo, hi = footprint.bounds[s_index], footprint.bounds[s_index + 2]
        a, b = at.copy(), at.copy()
        a[s_index], b[s_index] = lo, hi
        spread += spread_across_depth(plan, a, b, p, axis)
    return ForceField(AXES[axis], tuple(areas + spread), tuple(kept), ())


def fpx_force(wpx: float, SDS: float, Ie: float, ratio: float) -> tuple[float, str]:
    """Diaphragm force Fpx (N) of ASCE 7-16 §12.10.1.1 (see
    :func:`planshear.code.asce7_16.fpx_12_10_1_1`) and the equation that governs."""
    values = fpx_12_10_1_1(wpx, SDS, Ie, ratio)
    label = {"12.10-1": "ASCE 7-16 Eq. 12.10-1", "12.10-2": "lower bound, ASCE 7-16 Eq. 12.10-2",
             "12.10-3": "upper bound, ASCE 7-16 Eq. 12.10-3"}[values.governing]
    return values.value, label


def windward_segments(plan: Plan, axis: str, sign: int = 1) -> list[tuple[np.ndarray, np.ndarray, float]]:
    """Parts of the outline that face a wind blowing along ``sign``·axis and are not
    shielded by another part of the outline: (start, end, projected fraction) per piece.

    The projected fraction is |projection of the piece on the axis normal| / length, so
    that an intensity w per unit of plan width becomes w × fraction per unit of edge.
    """
    normal_axis = 1 - (0 if axis == "x" else 1)  # coordinate measured across the wind
    outline = plan.outline
    # Breakpoints across the wind: every outline vertex.
    across = np.unique(np.round(outline[:, normal_axis], 12))
    segments = []
    ring = Polygon(outline)
    lo_along = outline[:, 1 - normal_axis].min() - 1.0
    hi_along = outline[:, 1 - normal_axis].max() + 1.0
    for c0, c1 in zip(across[:-1], across[1:], strict=True):
        mid = 0.5 * (c0 + c1)
        ray = _axis_line(axis, mid, lo_along, hi_along)
        hit = ray.intersection(ring)
        if hit.is_empty:
            continue
        along = [p[1 - normal_axis] for g in getattr(hit, "geoms", [hit]) for p in g.coords]
        first = min(along) if sign > 0 else max(along)
        # The windward edge under this band: the outline edge crossing the ray at `first`.
        for a, b in zip(outline, np.roll(outline, -1, axis=0), strict=True):
            ca, cb = a[normal_axis], b[normal_axis]
            if min(ca, cb) <= mid <= max(ca, cb) and ca != cb:
                s = (mid - ca) / (cb - ca)
                hit_along = a[1 - normal_axis] + s * (b[1 - normal_axis] - a[1 - normal_axis])
                if abs(hit_along - first) <= 1e-9 * (hi_along - lo_along):
                    # Clip the edge to the band [c0, c1].
                    s0, s1 = (c0 - ca) / (cb - ca), (c1 - ca) / (cb - ca)
                    p0, p1 = a + s0 * (b - a), a + s1 * (b - a)
                    length = float(np.hypot(*(p1 - p0)))
                    segments.append((p0, p1, (c1 - c0) / length))
                    break
    return segments


def _axis_line(axis: str, across: float, lo: float, hi: float) -> LineString:
    if axis == "x":
        return LineString([(lo, across), (hi, across)])
    return LineString([(across, lo), (across, hi)])


def plan_dimension_across(plan: Plan, axis: str) -> float:
    """Plan dimension perpendicular to a load along ``axis`` (m): outline extent."""
    other = 1 if axis == "x" else 0
    return float(np.ptp(plan.outline[:, other]))


def expand_load_cases(plan: Plan, amplification: dict[tuple[str, str], float] | None = None) -> list[LoadCase]:
    """All load cases of the plan, in file order: per load, per direction, then
    the ±eccentricity cases (rigid and semi-rigid only). ``amplification`` maps (load,
    axis) to the torsional amplification Ax of ASCE 7-16 §12.8.4.3 that multiplies the
    accidental eccentricity of those cases."""
    cases: list[LoadCase] = []
    for load in plan.loads:
        story_force = load.fx if load.kind == "seismic" else None
        rule = CollectorRule(1.0, 1.0, None, "wind: no overstrength")
        combination = combination_factors_2_3_2_4(plan.design_basis, load.kind, load.rho)
        for axis in load.directions:
            if load.kind == "seismic":
                # Weight, Fpx and collector rule per direction: weights marked only_across
                # count only in the direction across their line (the same as two loads).
                weight = seismic_weight(plan, load, axis)
                fpx = fpx_12_10_1_1(weight.total, *load.fpx) if load.fpx is not None else None
                force = fpx.value if fpx is not None else float(load.total)
                rule = collector_rule_12_10_2_1(load.collector_overstrength, force, fpx, load.light_frame, load.fx,
                                                load.sdc)
                base_total, center = weight.total, weight.center
                # A seismic field reverses exactly, so only +axis is analyzed.
                fields = [(+1, _seismic_field(plan, load, axis).scaled(force / base_total), force, center)]
            else:
                # Wind from either side loads different faces of an irregular plan: windward
                # faces push, leeward faces pull, both along the wind, each spread across
                # the depth of the piece of diaphragm the face belongs to.
                fields = []
                for sign in (+1, -1):
                    lines = [(a, b, load.intensity * f) for a, b, f in windward_segments(plan, axis, sign)
                             if load.intensity] + [
                        (a, b, load.leeward * f) for a, b, f in windward_segments(plan, axis, -sign) if load.leeward]
                    areas, kept = _spread_lines(plan, lines, axis)
                    edge_field = ForceField(sign * AXES[axis], tuple(areas), tuple(kept), ())
                    fields.append((sign, edge_field, edge_field.total(), edge_field.centroid()))
            eccentricity = load.eccentricity * plan_dimension_across(plan, axis) * (amplification or {}).get(
                (load.name, axis), 1.0)
            for sign, field, case_force, case_center in fields:
                direction = sign * AXES[axis]
                label = f"{load.name}{'+' if sign > 0 else '-'}{axis}"
                cases.append(
                    LoadCase(label, load.name, load.kind, axis, sign, 0, case_force, field, case_center,
                             0.0, 0.0, load.collector_overstrength, ("flexible", "rigid", "semirigid"), rule,
                             story_force, combination)
                )
                if eccentricity <= 0:
                    continue
                for ecc_sign in (+1, -1):
                    # Shift of the center of mass by ±e perpendicular to the load:
                    # for a load along x the shift is along y, for y along x.
                    shift = ecc_sign * eccentricity * (np.array([0.0, 1.0]) if axis == "x" else np.array([1.0, 0.0]))
                    torsion = float(shift[0] * direction[1] - shift[1] * direction[0]) * case_force
                    cases.append(
                        LoadCase(f"{label}{'+' if ecc_sign > 0 else '-'}ecc", load.name, load.kind, axis, sign,
                                 ecc_sign, case_force, field, case_center, eccentricity, torsion,
                                 load.collector_overstrength, ("rigid", "semirigid"), rule, story_force, combination)
                    )
    return cases
