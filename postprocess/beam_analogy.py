"""Diaphragm forces by the beam analogy, one code path for the flexible and rigid methods.

For a load along axis d, the diaphragm is a beam spanning along the other axis s.
Given the applied load and the forces that the walls exert on the diaphragm, this
module gives:

* the shear V(s) and moment M(s) diagrams (exact integrals of the real plan's load);
* the unit shear V/ℓ(s) where ℓ(s) is the diaphragm length actually present at s
  (openings and notches reduce it) and its maximum over the plan;
* on every grid line parallel to d, the unit shear delivered from each side over the
  length of diaphragm present on that side (a notch, an offset or a courtyard leaves one
  side shorter), and the collector diagram N(t) as the running sum of (delivered shear +
  loads on the line − wall reactions) along the line, tension positive, with its peak and
  position; the line is split into pieces at gaps (outside the outline, inside an
  opening), each piece summed from zero, and the force left at the end of each piece is
  reported (it would have to cross a gap, which no member does);
* the chord force M/depth along the span, depth being the outline's extent at s.

Walls at an angle to the load contribute their component along d as reactions and their
component along s as axial forces at their depth, which enter the moment about the
section's mid-depth, so the moment closes at the end of the plan whenever the forces are
in equilibrium (e.g. the torsional couples of the rigid method).

Coordinates: s and t are the plan coordinates across and along the load (for a load
along y: s = x, t = y; for a load along x: s = y, t = x). Units SI.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import shapely
from shapely.geometry import LineString

from planshear.loads import ForceField
from planshear.plan import GridLine, Plan, merge_intervals

from .distribution import SpanLoad

__all__ = [
    "WallReaction",
    "LinePiece",
    "LineDiagram",
    "ChordDiagram",
    "BeamAnalogy",
    "beam_analogy",
    "load_along_span",
    "edge_chords",
]

SAMPLES_PER_INTERVAL = 24


@dataclass(frozen=True, eq=False)
class WallReaction:
    """Force (N, vector) that a wall takes from the diaphragm, with the wall's ends."""

    wall_id: str
    line: str
    start: np.ndarray
    end: np.ndarray
    force: np.ndarray  # (2,) force on the wall; the diaphragm receives −force


@dataclass(frozen=True)
class LinePiece:
    """One continuous piece of a grid line over the diaphragm (between gaps)."""

    t_start: float  # m
    t_end: float  # m
    peak: float  # N, largest-magnitude collector force on the piece
    peak_at: float  # m
    residual: float  # N, force left at the piece's end: it would have to cross a gap


@dataclass(frozen=True, eq=False)
class LineDiagram:
    """Collector diagram along one grid line (t measured as in the plan file)."""

    name: str
    reaction: float  # N, sum of wall forces along the line direction
    delivered: float  # N, shear delivered by the diaphragm from both sides
    length_available: float  # m of diaphragm present along the line
    unit_shear_left: float  # N/m delivered from the smaller-coordinate side, along the line
    unit_shear_right: float  # N/m delivered from the larger-coordinate side
    length_left: float  # m of diaphragm present just beside the line on the smaller-s side
    length_right: float  # m present on the larger-s side
    stations: np.ndarray  # (n,) t in m; repeated where a concentrated force makes a jump
    force: np.ndarray  # (n,) axial force N, tension positive, piece after piece
    residual: float  # N, sum of the pieces' end forces (zero in exact equilibrium)
    pieces: tuple[LinePiece, ...] = ()

    @property
    def peak_index(self) -> int:
        return int(np.argmax(np.abs(self.force))) if len(self.force) else 0

    @property
    def peak(self) -> float:
        return float(self.force[self.peak_index]) if len(self.force) else 0.0

    @property
    def peak_position(self) -> float:
        return float(self.stations[self.peak_index]) if len(self.stations) else 0.0


@dataclass(frozen=True, eq=False)
class ChordDiagram:
    """Chord force along the span: T = M / depth (N), tension in the chord on the +d
    edge for positive values (compression on the −d edge)."""

    axis: str  # axis the chords run along
    stations: np.ndarray  # s, m
    force: np.ndarray  # N
    depth: np.ndarray  # m
    t_low: np.ndarray  # m, outline extent at each station
    t_high: np.ndarray

    @property
    def peak_index(self) -> int:
        return int(np.argmax(np.abs(self.force))) if len(self.force) else 0


@dataclass(frozen=True, eq=False)
class BeamAnalogy:
    """Everything the beam analogy gives for one load axis."""

    axis: str  # load axis d
    stations: np.ndarray  # s, m
    shear: np.ndarray  # V(s), N
    moment: np.ndarray  # M(s), N·m
    length_available: np.ndarray  # ℓ(s), m
    lines: dict[str, LineDiagram]
    chord: ChordDiagram | None
    max_unit_shear: float  # N/m (absolute)
    max_unit_shear_at: np.ndarray  # (x, y) m
    closure_shear: float  # V at the far end (N), zero in equilibrium
    closure_moment: float  # M at the far end (N·m)
    notes: list[str] = field(default_factory=list)
    along: SpanLoad | None = None  # forces along the load per unit span: applied + wall reactions


def _axes(axis: str) -> tuple[int, int]:
    """(index of s, index of t) in plan coordinates for a load along ``axis``."""
    return (0, 1) if axis == "y" else (1, 0)


def _cut_lines(plan: Plan, s_index: int, s_values: np.ndarray) -> np.ndarray:
    lo = plan.outline[:, 1 - s_index].min() - 1.0
    hi = plan.outline[:, 1 - s_index].max() + 1.0
    coords = np.zeros((len(s_values), 2, 2))
    coords[:, :, s_index] = s_values[:, None]
    coords[:, 0, 1 - s_index] = lo
    coords[:, 1, 1 - s_index] = hi
    return shapely.linestrings(coords)


def sections(plan: Plan, geometry, s_index: int, s_values: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Length of ``geometry`` cut at each s (m), and the t-range (min, max) of the cut."""
    cuts = shapely.intersection(geometry, _cut_lines(plan, s_index, s_values))
    lengths = shapely.length(cuts)
    bounds = np.nan_to_num(shapely.bounds(cuts))  # empty cuts give NaN bounds
    t_index = 1 - s_index
    return lengths, bounds[:, t_index], bounds[:, t_index + 2]


def _vertex_s(geometry, s_index: int) -> np.ndarray:
    coords = shapely.get_coordinates(geometry)
    return np.unique(coords[:, s_index])


def load_along_span(plan: Plan, field_: ForceField, axis: str) -> SpanLoad:
    """The applied force per unit of span s (exact for polygons: the cut length is
    linear between vertices, so it is sampled at quarter points of each interval)."""
    s_index, t_index = _axes(axis)
    sign = float(field_.direction @ np.eye(2)[t_index])  # ±1: the field acts along ±t
    loads = []
    for geometry, pressure in field_.areas:
        if geometry.is_empty or pressure == 0:
            continue
        s_nodes = _vertex_s(geometry, s_index)
        a, b = s_nodes[:-1], s_nodes[1:]
        keep = b - a > 0
        a, b = a[keep], b[keep]
        q1, _, _ = sections(plan, geometry, s_index, a + 0.25 * (b - a))
        q3, _, _ = sections(plan, geometry, s_index, a + 0.75 * (b - a))
        w0 = q1 - 0.5 * (q3 - q1)
        w1 = q3 + 0.5 * (q3 - q1)
        loads.append(SpanLoad(np.column_stack([a, b, sign * pressure * w0, sign * pressure * w1]), np.zeros((0, 2))))
    for start, end, q in field_.lines:
        loads.append(_segment_load(start, end, sign * q * float(np.hypot(*(end - start))), s_index, plan))
    for x, y, p in field_.points:
        loads.append(SpanLoad(np.zeros((0, 4)), np.array([[(x, y)[s_index], sign * p]])))
    return SpanLoad.concat(loads)


def _segment_load(start: np.ndarray, end: np.ndarray, total: float, s_index: int, plan: Plan) -> SpanLoad:
    """A force ``total`` spread uniformly along a segment, as a load per unit s."""
    s0, s1 = sorted((start[s_index], end[s_index]))
    size = float(np.ptp(plan.outline, axis=0).max())
    if s1 - s0 <= 1e-9 * size:
        return SpanLoad(np.zeros((0, 4)), np.array([[0.5 * (s0 + s1), total]]))
    w = total / (s1 - s0)
    return SpanLoad(np.array([[s0, s1, w, w]]), np.zeros((0, 2)))


def beam_analogy(
    plan: Plan,
    axis: str,
    field_: ForceField | None,
    reactions: list[WallReaction],
    with_chords: bool = True,
    applied: SpanLoad | None = None,
) -> BeamAnalogy:
    """Beam-analogy diagrams for forces along ``axis`` ("x" or "y").

    ``field_`` is the applied load along +axis (None for the transverse pass of the
    rigid method, which carries only wall forces). ``reactions`` are the wall forces.
    ``applied`` is ``load_along_span(plan, field_, axis)`` when the caller already has it.
    """
    s_index, t_index = _axes(axis)
    e_t = np.eye(2)[t_index]
    e_s = np.eye(2)[s_index]
    size = float(np.ptp(plan.outline, axis=0).max())
    tol = 1e-9 * size

    if applied is None:
        applied = load_along_span(plan, field_, axis) if field_ is not None else SpanLoad.empty()
    # Forces on the diaphragm from the walls: along t (reactions) and along s (axial).
    t_parts, s_parts, st_parts = [], [], []
    for r in reactions:
        f_on_diaphragm = -r.force
        ft = float(f_on_diaphragm @ e_t)
        fs = float(f_on_diaphragm @ e_s)
        if ft != 0.0:
            t_parts.append(_segment_load(r.start, r.end, ft, s_index, plan))
        if fs != 0.0:
            t_mid = 0.5 * (r.start[t_index] + r.end[t_index])
            s_parts.append(_segment_load(r.start, r.end, fs, s_index, plan))
            st_parts.append(_segment_load(r.start, r.end, fs * t_mid, s_index, plan))
    along = SpanLoad.concat([applied, *t_parts])
    axial = SpanLoad.concat(s_parts)
    axial_moment = SpanLoad.concat(st_parts)

    s_min = plan.outline[:, s_index].min()
    s_max = plan.outline[:, s_index].max()
    line_s = {
        g.name: float(g.origin[s_index])
        for g in plan.grid_lines
        if g.parallel_to == axis
    }
    knots = np.unique(np.concatenate([
        [s_min, s_max], _vertex_s(plan.region, s_index), along.breakpoints(), axial.breakpoints(),
        np.fromiter(line_s.values(), float, len(line_s)),
    ]))
    knots = knots[(knots >= s_min - tol) & (knots <= s_max + tol)]
    fractions = np.linspace(0.0, 1.0, SAMPLES_PER_INTERVAL + 1)
    stations = np.concatenate([
        a + fractions * (b - a) for a, b in zip(knots[:-1], knots[1:], strict=True) if b - a > tol
    ] + [knots[-1:]])
    # Evaluate on both sides of every knot so that jumps show.
    stations = np.unique(np.concatenate([stations, knots - 1e-7 * size, knots + 1e-7 * size]))
    stations = stations[(stations >= s_min) & (stations <= s_max)]

    force_t, moment_t = along.cumulative(stations)
    force_s, _ = axial.cumulative(stations)
    tmoment_s, _ = axial_moment.cumulative(stations)
    length_available, _, _ = sections(plan, plan.region, s_index, stations)
    _, t_lo, t_hi = sections(plan, shapely.Polygon(plan.outline), s_index, stations)
    t_ref = 0.5 * (t_lo + t_hi)
    depth = t_hi - t_lo
    shear = -force_t
    moment = -moment_t - tmoment_s + t_ref * force_s

    with np.errstate(divide="ignore", invalid="ignore"):
        unit = np.where(length_available > tol, np.abs(shear) / length_available, 0.0)
    k = int(np.argmax(unit))
    at = np.zeros(2)
    at[s_index] = stations[k]
    _, lo_k, hi_k = sections(plan, plan.region, s_index, stations[k : k + 1])
    at[t_index] = 0.5 * (lo_k[0] + hi_k[0])

    f_end, m_end = along.cumulative(np.array([s_max]), inclusive=True)
    fs_end, _ = axial.cumulative(np.array([s_max]), inclusive=True)
    ts_end, _ = axial_moment.cumulative(np.array([s_max]), inclusive=True)
    closure_moment = float(-m_end[0] - ts_end[0] + t_ref[-1] * fs_end[0])

    lines = {}
    for grid_line in plan.grid_lines:
        if grid_line.parallel_to != axis:
            continue
        lines[grid_line.name] = _line_diagram(plan, grid_line, axis, along, reactions, field_, size)

    chord = None
    if with_chords:
        with np.errstate(divide="ignore", invalid="ignore"):
            chord_force = np.where(depth > tol, moment / depth, 0.0)
        chord = ChordDiagram("x" if axis == "y" else "y", stations, chord_force, depth, t_lo, t_hi)

    return BeamAnalogy(
        axis=axis,
        stations=stations,
        shear=shear,
        moment=moment,
        length_available=length_available,
        lines=lines,
        chord=chord,
        max_unit_shear=float(unit[k]),
        max_unit_shear_at=at,
        closure_shear=float(-f_end[0]),
        closure_moment=closure_moment,
        along=along,
    )


def side_intervals(plan: Plan, grid_line: GridLine, s_index: int, offset: float) -> list[tuple[float, float]]:
    """Intervals (t0, t1) of the grid line, in its own t (m), over which the diaphragm is
    present at a distance ``offset`` (m, signed, along s) beside the line."""
    shift = np.zeros(2)
    shift[s_index] = offset
    a = grid_line.point(grid_line.t_min) + shift
    b = grid_line.point(grid_line.t_max) + shift
    cut = LineString([a, b]).intersection(plan.region)
    out = []
    for g in getattr(cut, "geoms", [cut]):
        if isinstance(g, LineString) and not g.is_empty:
            ts = (np.asarray(g.coords) - shift - grid_line.origin) @ grid_line.direction
            if ts.max() - ts.min() > 0:
                out.append((float(ts.min()), float(ts.max())))
    return sorted(out)


def line_sides(plan: Plan, grid_line: GridLine, s_index: int, size: float
               ) -> tuple[list[tuple[float, float]], list[tuple[float, float]], list[tuple[float, float]]]:
    """Intervals (t0, t1, m) of a grid line with diaphragm just beside it on the side of
    smaller s, on the side of larger s, and the line's pieces (both sides and the line
    itself, merged); ``size`` is the plan's extent (m)."""
    eps = 1e-7 * size  # offset that reads the diaphragm on each side of the line
    left = side_intervals(plan, grid_line, s_index, -eps)
    right = side_intervals(plan, grid_line, s_index, eps)
    return left, right, merge_intervals(left + right + side_intervals(plan, grid_line, s_index, 0.0), 10 * eps)


def _line_diagram(
    plan: Plan,
    grid_line: GridLine,
    axis: str,
    along: SpanLoad,
    reactions: list[WallReaction],
    field_: ForceField | None,
    size: float,
    extra_spans: list[tuple[float, float, float]] | None = None,
) -> LineDiagram:
    """Collector diagram on a grid line parallel to the load axis.

    Each side delivers its shear over the length of diaphragm present on that side: the
    side of smaller s delivers −V(s⁻) spread uniformly over the part of the line with
    diaphragm just beside it on that side, the side of larger s delivers V(s⁺) likewise.
    The line is split into pieces at gaps (outside the outline or inside an opening);
    each piece has its own running sum from zero, and what is left at the end of a piece
    is reported as that piece's residual, never carried across the gap.
    ``extra_spans`` (t0, t1, total force along +t, N) are added forces on the line (the
    transfer-diaphragm shears of :mod:`.transfer`).
    """
    s_index, t_index = _axes(axis)
    e_t = np.eye(2)[t_index]
    s_line = float(grid_line.origin[s_index])
    tol = 1e-9 * size
    eps = 1e-7 * size  # the offset line_sides reads each side at; pieces are matched within 10 eps
    # Shear just before/after the line, without the forces that act on the line itself.
    before, _ = along.cumulative(np.array([s_line]), inclusive=False)
    after, _ = along.cumulative(np.array([s_line]), inclusive=True)
    v_before, v_after = -before[0], -after[0]

    left, right, pieces_t = line_sides(plan, grid_line, s_index, size)
    length_left = float(sum(b - a for a, b in left))
    length_right = float(sum(b - a for a, b in right))
    available = float(sum(b - a for a, b in pieces_t))

    # Distributed forces along t on the line (N per segment), and concentrated ones.
    spans: list[tuple[float, float, float]] = list(extra_spans or [])
    points: list[tuple[float, float]] = []

    def t_of(p) -> float:
        return float((np.asarray(p) - grid_line.origin) @ grid_line.direction)

    # Loads that lie on the line go along it with their own distribution.
    if field_ is not None:
        field_sign = float(field_.direction @ e_t)
        for start, end, q in field_.lines:
            if abs(start[s_index] - s_line) <= tol and abs(end[s_index] - s_line) <= tol:
                total = field_sign * q * float(np.hypot(*(end - start)))
                spans.append((*sorted((t_of(start), t_of(end))), total))
        for x, y, p in field_.points:
            if abs((x, y)[s_index] - s_line) <= tol:
                points.append((t_of((x, y)), field_sign * p))
    # Walls on the line.
    reaction = 0.0
    for r in reactions:
        if r.line == grid_line.name:
            f_on_line = -float(r.force @ e_t)
            spans.append((*sorted((t_of(r.start), t_of(r.end))), f_on_line))
            reaction += float(r.force @ grid_line.direction)
    # Equilibrium of the strip along the line: loads on it + wall forces on it + what the
    # diaphragm delivers from both sides = 0. Each side delivers its own shear over the
    # length present on that side (along +t: −V(before) from the left, V(after) from the right).
    delivered_to_line = v_after - v_before
    unit_left = -v_before / length_left if length_left > tol else 0.0
    unit_right = v_after / length_right if length_right > tol else 0.0
    spans += [(a, b, unit_left * (b - a)) for a, b in left]
    spans += [(a, b, unit_right * (b - a)) for a, b in right]
    # Direction sign: forces are along e_t; the line's own direction may be ±e_t.
    sign = float(grid_line.direction @ e_t)
    pieces, all_stations, all_forces = [], [], []
    assigned = np.zeros(len(spans), dtype=bool)
    point_assigned = np.zeros(len(points), dtype=bool)
    for t0, t1 in pieces_t:
        in_piece = [i for i, (a, b, _) in enumerate(spans) if a >= t0 - 10 * eps and b <= t1 + 10 * eps]
        p_in = [i for i, (t, _) in enumerate(points) if t0 - 10 * eps <= t <= t1 + 10 * eps]
        assigned[in_piece] = True
        point_assigned[p_in] = True
        stations, force = running_axial_force(
            [spans[i] for i in in_piece], [points[i] for i in p_in], t0, t1, sign
        )
        k = int(np.argmax(np.abs(force)))
        pieces.append(LinePiece(t0, t1, float(force[k]), float(stations[k]), float(force[-1])))
        all_stations.append(stations)
        all_forces.append(force)
    unplaced = float(sum(s[2] for s, ok in zip(spans, assigned, strict=True) if not ok))
    unplaced += float(sum(p[1] for p, ok in zip(points, point_assigned, strict=True) if not ok))
    stations = np.concatenate(all_stations) if all_stations else np.zeros(0)
    force = np.concatenate(all_forces) if all_forces else np.zeros(0)
    return LineDiagram(
        name=grid_line.name,
        reaction=reaction,
        delivered=delivered_to_line,
        length_available=available,
        unit_shear_left=unit_left,
        unit_shear_right=unit_right,
        length_left=length_left,
        length_right=length_right,
        stations=stations,
        force=force,
        # Overall closure: the sum of the piece residuals and of any force on the line that
        # lies on no piece (zero in exact equilibrium).
        residual=float(sum(p.residual for p in pieces)) - sign * unplaced,
        pieces=tuple(pieces),
    )


def running_axial_force(
    spans: list[tuple[float, float, float]],
    points: list[tuple[float, float]],
    t_start: float,
    t_end: float,
    sign: float,
) -> tuple[np.ndarray, np.ndarray]:
    """Axial force N(t) (tension +) in a member along t from t_start carrying uniform
    forces ``spans`` (t0, t1, total force along +t) and concentrated ``points``:
    N(t) = −(sum of forces applied between t_start and t), in the line's direction."""
    knots = sorted({t_start, t_end, *(a for a, _, _ in spans), *(b for _, b, _ in spans), *(t for t, _ in points)})
    knots = np.array([k for k in knots if t_start - 1e-12 <= k <= t_end + 1e-12])
    spans_arr = np.array(spans, dtype=float).reshape(-1, 3)
    a, b, total = spans_arr[:, 0], spans_arr[:, 1], spans_arr[:, 2]
    length = b - a
    density = np.divide(total, length, out=np.zeros_like(total), where=length > 0)
    concentrated_spans = length <= 0

    def applied_up_to(t: np.ndarray, inclusive: bool) -> np.ndarray:
        covered = np.clip(t[:, None], a, b) - a
        result = (density * covered).sum(axis=1)
        if np.any(concentrated_spans):
            hit = (a <= t[:, None]) if inclusive else (a < t[:, None])
            result += np.where(hit & concentrated_spans, total, 0.0).sum(axis=1)
        for tp, p in points:
            result += np.where((tp <= t) if inclusive else (tp < t), p, 0.0)
        return result

    jump_at = {t for t, _ in points} | {float(x) for x in a[concentrated_spans]}
    stations, forces = [], []
    for k in knots:
        if k in jump_at:
            stations += [k, k]
            forces += [applied_up_to(np.array([k]), False)[0], applied_up_to(np.array([k]), True)[0]]
        else:
            stations.append(k)
            forces.append(applied_up_to(np.array([k]), True)[0])
    return np.array(stations), -sign * np.array(forces)


def edge_chords(plan: Plan, chord: ChordDiagram) -> dict[str, tuple[np.ndarray, np.ndarray]]:
    """Chord force of the beam analogy on each outline edge parallel to the span:
    +M/depth on an edge that is the outline's +t extreme at a station, −M/depth on the
    −t extreme, zero where the edge is not an extreme (e.g. the inner face of a notch).
    Returns name ("edge i", from outline corner i to i+1) → (position along the edge
    from its first corner (m), force (N))."""
    s_index = 0 if chord.axis == "x" else 1
    t_index = 1 - s_index
    size = float(np.ptp(plan.outline, axis=0).max())
    tol = 1e-7 * size
    result = {}
    outline = plan.outline
    for i in range(len(outline)):
        a, b = outline[i], outline[(i + 1) % len(outline)]
        if abs(a[t_index] - b[t_index]) > tol:
            continue  # not parallel to the span
        lo, hi = sorted((a[s_index], b[s_index]))
        inside = (chord.stations >= lo - tol) & (chord.stations <= hi + tol)
        if not np.any(inside):
            continue
        s_here = chord.stations[inside]
        t_edge = a[t_index]
        top = np.abs(chord.t_high[inside] - t_edge) <= tol
        bottom = np.abs(chord.t_low[inside] - t_edge) <= tol
        force = np.where(top, chord.force[inside], np.where(bottom, -chord.force[inside], 0.0))
        along = np.abs(s_here - a[s_index])
        order = np.argsort(along, kind="stable")
        result[f"edge {i + 1}"] = (along[order], force[order])
    return result
