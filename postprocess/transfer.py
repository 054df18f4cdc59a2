"""Transfer diaphragms at notches and offsets, for the flexible and rigid methods.

Where a notch or offset interrupts a chord at a grid line, the beam analogy gives the
chord force there (M/d on the reduced depth) and stops. The transfer-diaphragm method
(Malone & Rice, *The Analysis of Irregular Shaped Structures: Diaphragms and Shear
Walls*, McGraw-Hill 2012, ch. 3 and 4) carries it on: a collector extends the offset
chord into a transfer region of the full-depth diaphragm beside the interruption; the
region spans across the load direction between its own boundaries (the chords at the
full side's extremes) like a small simple beam loaded by the offset chord forces. Its
beam shear, divided by the region's length, is the transfer shear; it adds to the main
diaphragm shear (net shear) and the struts at the region's boundaries collect it.

Statics used here (s along the span, t along the load; unit shears are membrane shear
flows with the sign of the beam shear V, so a side delivers +τ along +t to a line on its
left and −τ to a line on its right):

* region s between the interruption s_k and the far grid line s_f, length L, and t
  between t_lo and t_hi (depth H) of the full side at s_k; σ = +1 when s_f < s_k;
* offset chord i at t_i with force F_i (tension +) at s_k: the transfer shear is
  piecewise constant in t, τ(t) = Σ_i σF_i (t_hi − t_i)/(L·H) − Σ_{t_i < t} σF_i/L,
  so that ∫τ dt = 0 (the main section shear is unchanged) and each strut receives F_i;
* strut along t_i: N(s) = σF_i (s − s_f)/L (F_i at s_k, zero at s_f);
* support chords: the one at t_lo receives +τ_first, the one at t_hi −τ_last per
  unit length along +s: added force N(s) = −τ_first (s − s_f) and +τ_last (s − s_f);
* lines parallel to the load at the region's two ends get the transfer shear from the
  region's side (the collector diagram is recomputed with it).

The region defaults to the one between the interruption and the next grid line parallel
to the load on the full-depth side, full depth; a ``[[transfer]]`` entry names another
far line. Nothing is invented: a region needs a grid line along each offset chord and a
far grid line, and must lie on the diaphragm; otherwise a note says why it was skipped.
Units SI.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import shapely

from planshear.fem.collectors import bar_extents
from planshear.loads import ForceField
from planshear.plan import GridLine, Plan

from .beam_analogy import (
    BeamAnalogy,
    LineDiagram,
    WallReaction,
    _axes,
    _line_diagram,
    sections,
    side_intervals,
)

__all__ = ["Strut", "NetShear", "TransferDiaphragm", "transfer_diaphragms", "transfer_peaks",
           "line_collectors_with_transfer", "strut_cautions"]

#: Offset chord forces below this fraction of the largest section shear (N per N) are
#: round-off: no transfer diaphragm is formed for them.
NEGLIGIBLE = 1e-9


@dataclass(frozen=True, eq=False)
class Strut:
    """Force along a member parallel to the span inside a transfer region (N, tension +)."""

    role: str  # "offset chord" (the collector extending it) or "support" (a chord the region spans to)
    line: str | None  # grid line it lies on (None when no grid line is there)
    label: str  # the grid line's name, else its position in the plan's unit
    t: float  # m, position across the span
    stations: np.ndarray  # s, m
    added: np.ndarray  # N, the transfer diaphragm's share
    total: np.ndarray  # N, with the main beam analogy's chord force


@dataclass(frozen=True)
class NetShear:
    """Unit shear on one side of a grid line over one segment (N/m, sign of V)."""

    line: str
    side: str  # "left" (smaller s) or "right"
    t_start: float  # m
    t_end: float  # m
    main: float  # main diaphragm unit shear on that side
    transfer: float  # transfer shear (zero outside the region)
    net: float


@dataclass(frozen=True, eq=False)
class TransferDiaphragm:
    """One transfer region and its forces for one load case."""

    name: str
    axis: str  # load axis
    at_line: str  # grid line where the chord is interrupted
    far_line: str  # grid line closing the region on the full-depth side
    s_range: tuple[float, float]  # m
    t_range: tuple[float, float]  # m, the span of the transfer diaphragm (supports)
    chord_forces: tuple[tuple[str, float, float], ...]  # (offset chord line, t, F N tension +)
    reactions: tuple[float, float]  # N along +s delivered to the supports at t_lo, t_hi
    shears: tuple[tuple[float, float, float], ...]  # (t0, t1, transfer shear N/m)
    net: tuple[NetShear, ...]
    struts: tuple[Strut, ...]
    collectors: dict[str, LineDiagram]  # lines at the region's ends, with the transfer shear


@dataclass(frozen=True)
class _Break:
    """A chord interrupted at s_k: the offset chord at t_c on the reduced side."""

    line: GridLine  # grid line at the interruption
    full_side: int  # −1: full depth at s < s_k, +1: at s > s_k
    t_offset: float  # m
    force: float  # N, chord force on the reduced side at s_k (tension +)
    t_lo: float  # full side's extent at s_k
    t_hi: float


def _interruptions(plan: Plan, analogy: BeamAnalogy, size: float) -> list[_Break]:
    """Chord interruptions on grid lines parallel to the load: where the outline's
    extreme on one face steps from one side of the line to the other."""
    axis = analogy.axis
    s_index, _ = _axes(axis)
    eps = 1e-7 * size
    tol = 1e-6 * size
    outline = shapely.Polygon(plan.outline)

    def steps(near: np.ndarray, far: np.ndarray) -> bool:
        jump = near[0] - near[1]
        return abs(jump) > tol and abs((far[0] - far[1]) - jump) < 0.5 * abs(jump)

    found = []
    for g in plan.grid_lines:
        if g.parallel_to != axis:
            continue
        s_k = float(g.origin[s_index])
        # Extents just beside the line, and 100 times farther: a step (an outline edge on
        # the line) differs the same at both, a sloped edge crossing the line 100 times more.
        _, lo, hi = sections(plan, outline, s_index, np.array([s_k - eps, s_k + eps]))
        _, lo_far, hi_far = sections(plan, outline, s_index, np.array([s_k - 100 * eps, s_k + 100 * eps]))
        depth = hi - lo

        if np.any(depth <= tol):
            continue  # the line is at the plan's end: nothing beyond to transfer into
        moment = float(np.interp(s_k, analogy.stations, analogy.moment))
        if steps(hi, hi_far):  # the top chord (+t face) steps
            full = 0 if hi[0] > hi[1] else 1
            reduced = 1 - full
            found.append(_Break(g, -1 if full == 0 else 1, float(hi[reduced]), moment / depth[reduced],
                                float(lo[full]), float(hi[full])))
        if steps(lo, lo_far):  # the bottom chord (−t face) steps
            full = 0 if lo[0] < lo[1] else 1
            reduced = 1 - full
            found.append(_Break(g, -1 if full == 0 else 1, float(lo[reduced]), -moment / depth[reduced],
                                float(lo[full]), float(hi[full])))
    return found


def transfer_diaphragms(
    plan: Plan,
    analogy: BeamAnalogy,
    field_: ForceField | None,
    reactions: list[WallReaction],
) -> tuple[list[TransferDiaphragm], list[str]]:
    """Transfer diaphragms of one case from its main beam analogy, and notes on
    interruptions that could not be given one."""
    axis = analogy.axis
    s_index, t_index = _axes(axis)
    size = float(np.ptp(plan.outline, axis=0).max())
    tol = 1e-6 * size
    scale, unit = plan.length_scale, plan.length_unit
    parallel = sorted((g for g in plan.grid_lines if g.parallel_to == axis), key=lambda g: g.origin[s_index])
    across = [g for g in plan.grid_lines if g.parallel_to is not None and g.parallel_to != axis]
    notes: list[str] = []
    groups: dict[tuple[str, int], list[_Break]] = {}
    # A chord force below round-off of the span's moments (e.g. M = 0 at a flexible
    # support line) needs no transfer.
    negligible = NEGLIGIBLE * float(np.max(np.abs(analogy.shear), initial=0.0))
    for b in _interruptions(plan, analogy, size):
        if abs(b.force) > negligible:
            groups.setdefault((b.line.name, b.full_side), []).append(b)
    used: set[str] = set()
    results = []
    for (at_name, side), breaks in groups.items():
        at = breaks[0].line
        s_k = float(at.origin[s_index])
        spec = next((t for t in plan.transfers if t.at == at_name
                     and (plan.line(t.to).origin[s_index] - s_k) * side > 0), None)
        if spec is not None:
            far = plan.line(spec.to)
            name = spec.name
            used.add(spec.name)
        else:
            beyond = [g for g in parallel if (g.origin[s_index] - s_k) * side > tol]
            if not beyond:
                notes.append(f"chord interrupted at line {at_name} (load along {axis}): no grid line parallel to the "
                             "load on the full-depth side closes a transfer region; add one (or a [[transfer]] entry) "
                             "to carry the offset chord force into the diaphragm")
                continue
            far = min(beyond, key=lambda g: abs(g.origin[s_index] - s_k))
            name = f"TD {at_name}-{far.name}"
        s_f = float(far.origin[s_index])
        t_lo, t_hi = breaks[0].t_lo, breaks[0].t_hi
        length, depth = abs(s_k - s_f), t_hi - t_lo
        corners = np.zeros((4, 2))
        corners[:, s_index] = [s_f, s_k, s_k, s_f]
        corners[:, t_index] = [t_lo, t_lo, t_hi, t_hi]
        box = shapely.Polygon(corners)
        outside = box.difference(shapely.Polygon(plan.outline)).area
        if outside > tol * size:
            notes.append(f"{name} (load along {axis}): the transfer region between lines {at_name} and {far.name} is "
                         f"not all within the outline ({outside / scale**2:.4g} {unit}² outside); name a region that "
                         "is with a [[transfer]] entry; no transfer diaphragm was formed here")
            continue
        missing = box.difference(plan.region).area
        if missing > tol * size:
            notes.append(f"{name} (load along {axis}): openings take {missing / scale**2:.4g} {unit}² of the transfer "
                         "region; its shears are computed as if it were solid (check the openings' own load path)")
        chords = []
        for b in breaks:
            line = next((g for g in across if abs(g.origin[t_index] - b.t_offset) <= tol), None)
            if line is None:
                notes.append(f"{name} (load along {axis}): no grid line runs along the offset chord at "
                             f"{'xy'[t_index]} = {b.t_offset / scale:.4g} {unit}; add one to grid.{'xy'[t_index]} "
                             "to carry its force into the transfer region; that chord was left out")
                continue
            chords.append((line.name, b.t_offset, b.force))
        if not chords:
            continue
        results.append(_one_region(plan, analogy, field_, reactions, name, at, far, t_lo, t_hi,
                                   length, depth, chords, across, size))
    for spec in plan.transfers:
        if spec.name not in used and plan.line(spec.at).parallel_to == axis:
            notes.append(f"[[transfer]] {spec.name} (load along {axis}): no chord force to transfer at line {spec.at} "
                         f"with the region on the side of line {spec.to} (no notch or offset there, or M = 0 at the line)")
    return results, notes


def _one_region(
    plan: Plan,
    analogy: BeamAnalogy,
    field_: ForceField | None,
    reactions: list[WallReaction],
    name: str,
    at: GridLine,
    far: GridLine,
    t_lo: float,
    t_hi: float,
    length: float,
    depth: float,
    chords: list[tuple[str, float, float]],
    across: list[GridLine],
    size: float,
) -> TransferDiaphragm:
    """The forces of one transfer region between lines ``at`` and ``far`` (m), spanning
    t_lo–t_hi, loaded by ``chords`` (offset chord line, t in m, force N tension +)."""
    axis = analogy.axis
    s_index, t_index = _axes(axis)
    tol = 1e-6 * size
    s_k, s_f = float(at.origin[s_index]), float(far.origin[s_index])
    sigma = 1.0 if s_f < s_k else -1.0
    ordered = sorted(chords, key=lambda c: c[1])
    ts = np.array([c[1] for c in ordered])
    forces = np.array([c[2] for c in ordered])
    # Transfer shear: a simple beam across the depth loaded by σF_i at t_i, divided by L.
    q0 = float(np.sum(sigma * forces * (t_hi - ts)) / (length * depth))
    edges = np.concatenate([[t_lo], ts, [t_hi]])
    q = q0 - np.concatenate([[0.0], np.cumsum(sigma * forces / length)])
    bands = tuple((float(a), float(b), float(v)) for a, b, v in zip(edges[:-1], edges[1:], q, strict=True) if b - a > tol)
    q_first, q_last = float(q[0]), float(q[-1])

    s_lo, s_hi = sorted((s_k, s_f))
    stations = np.linspace(s_lo, s_hi, 25)
    struts = []
    for (line_name, t_c, force) in ordered:
        added = sigma * force * (stations - s_f) / length
        struts.append(Strut("offset chord", line_name, line_name, t_c, stations, added, added))
    # Main chord force on the supports (M/depth on the outline's extremes, as edge_chords).
    chord = analogy.chord
    inside = (chord.stations >= s_lo) & (chord.stations <= s_hi)  # not the stations just outside the region
    s_main = chord.stations[inside]
    for t_support, p, sign in ((t_lo, q_first, -1.0), (t_hi, -q_last, 1.0)):
        extreme = chord.t_high[inside] if sign > 0 else chord.t_low[inside]
        main = np.where(np.abs(extreme - t_support) <= tol, sign * chord.force[inside], 0.0)
        added = -p * (s_main - s_f)
        line = next((g.name for g in across if abs(g.origin[t_index] - t_support) <= tol), None)
        label = line or f"{'xy'[t_index]} = {t_support / plan.length_scale:.4g} {plan.length_unit}"
        struts.append(Strut("support", line, label, t_support, s_main, added, main + added))
    reactions_out = (q_first * length, -q_last * length)

    # Net shears on the lines parallel to the load within the region, and the collectors
    # at its two ends recomputed with the transfer shear delivered from the region's side.
    net, collectors = [], {}
    lines_here = [g for g in plan.grid_lines if g.parallel_to == axis and s_lo - tol <= g.origin[s_index] <= s_hi + tol]
    base = analogy.lines
    for g in sorted(lines_here, key=lambda g: g.origin[s_index]):
        s_g = float(g.origin[s_index])
        d = base[g.name]
        end = abs(s_g - s_lo) <= tol or abs(s_g - s_hi) <= tol
        for side, tau_main, facing in (("left", -d.unit_shear_left, s_g > s_lo + tol),
                                       ("right", d.unit_shear_right, s_g < s_hi - tol)):
            present = d.length_left if side == "left" else d.length_right
            if present <= tol:
                continue
            if facing:
                net += [NetShear(g.name, side, a, b, tau_main, v, tau_main + v) for a, b, v in bands]
            elif end:
                net.append(NetShear(g.name, side, *_present_range(plan, g, s_index, side, size), tau_main, 0.0, tau_main))
        if end:
            # The region delivers +τ along +t to a line at its smaller-s end, −τ at the other.
            sign = 1.0 if abs(s_g - s_lo) <= tol else -1.0
            extra = [(a, b, sign * v * (b - a)) for a, b, v in bands]
            collectors[g.name] = _line_diagram(plan, g, axis, analogy.along, reactions, field_, size, extra)
    return TransferDiaphragm(
        name=name, axis=axis, at_line=at.name, far_line=far.name, s_range=(s_lo, s_hi), t_range=(t_lo, t_hi),
        chord_forces=tuple(ordered), reactions=reactions_out, shears=bands, net=tuple(net), struts=tuple(struts),
        collectors=collectors,
    )


def _present_range(plan: Plan, g: GridLine, s_index: int, side: str, size: float) -> tuple[float, float]:
    """Extent (t0, t1) of the diaphragm just beside line ``g`` on ``side`` (m)."""
    parts = side_intervals(plan, g, s_index, (-1e-7 if side == "left" else 1e-7) * size)
    return (parts[0][0], parts[-1][1]) if parts else (0.0, 0.0)


def transfer_peaks(extra: dict) -> tuple[list[tuple[str, float]], list[tuple[str, float]]]:
    """Peaks (N) of one case's transfer regions for the envelope, from the case's
    ``extra``: collectors (the lines at a region's ends with the transfer shear, and the
    collector extending each offset chord) and chords (the supports, with their added force)."""
    collectors, chords = [], []
    for td in extra.get("transfer", ()):
        for line, d in td.collectors.items():
            collectors.append((f"{line} with {td.name}", d.peak))
        for strut in td.struts:
            if not len(strut.total):
                continue
            peak = float(strut.total[np.argmax(np.abs(strut.total))])
            if strut.role == "offset chord":
                collectors.append((f"{td.name} collector on {strut.label}", peak))
            else:
                chords.append((f"{td.name} chord on {strut.label}", peak))
    return collectors, chords


def line_collectors_with_transfer(extra: dict, lines: dict) -> dict[str, tuple[np.ndarray, np.ndarray, tuple[str, ...]]]:
    """Collector force of the member on each grid line that a transfer region of this case
    acts on, the region's forces included (grid line → (t m, N tension +, names of the
    transfer items included as in :func:`transfer_peaks`)).

    Statics (superposition, same member, same case): the line's own collector diagram
    (``lines``, the case's result.lines, t as in the plan file), plus for each region that
    ends on the line its transfer-shear share (``td.collectors[line]`` is the line's diagram
    recomputed with it; its difference from the line's own diagram is the share, so two
    regions ending on one line both count), plus the strut extending an offset chord along
    the line (zero outside the region). Diagrams are read just left and right of every
    station (± 1e-9 × the stations' extent) so that jumps at repeated stations are kept."""
    tds = extra.get("transfer", ())
    if not tds:
        return {}
    base = {name: (np.asarray(d.stations, dtype=float), np.asarray(d.collector, dtype=float))
            for name, d in lines.items()}
    shares: dict[str, list[tuple[np.ndarray, np.ndarray, bool]]] = {}  # (t, N, is a recomputed line diagram)
    names: dict[str, list[str]] = {}
    for td in tds:
        for line, d in td.collectors.items():
            shares.setdefault(line, []).append((np.asarray(d.stations, dtype=float), np.asarray(d.force), True))
            names.setdefault(line, []).append(f"{line} with {td.name}")
        for strut in td.struts:
            if strut.role == "offset chord" and strut.line is not None and len(strut.stations):
                shares.setdefault(strut.line, []).append((np.asarray(strut.stations), np.asarray(strut.total), False))
                names.setdefault(strut.line, []).append(f"{td.name} collector on {strut.label}")
    out = {}
    for line, parts in shares.items():
        own = base.get(line)
        knots = np.unique(np.concatenate([t for t, _, _ in parts] + ([own[0]] if own is not None else [])))
        delta = 1e-9 * max(float(np.ptp(knots)), 1.0)
        t = np.sort(np.concatenate([knots - delta, knots + delta]))

        own_force = _read(t, *own) if own is not None else np.zeros_like(t)
        total = own_force.copy()
        for stations, force, recomputed in parts:
            total += _read(t, stations, force) - (own_force if recomputed else 0.0)
        out[line] = (t, total, tuple(names[line]))
    return out


def _read(t: np.ndarray, stations: np.ndarray, force: np.ndarray) -> np.ndarray:
    """A diagram at ``t``, zero outside its stations."""
    return np.interp(t, stations, force, left=0.0, right=0.0) if len(stations) else np.zeros_like(t)


def strut_cautions(plan: Plan, methods: dict) -> dict[str, str]:
    """Envelope cautions for the collectors that extend offset chords into transfer
    regions (name as in :func:`transfer_peaks` → text) where the semi-rigid model has no
    bar along that strut (no declared member, outline chord or implied collector over its
    whole length, :func:`planshear.fem.collectors.bar_extents`): the idealized methods rely on it, the finite-element model
    does not contain it, so its force has no semi-rigid value and the notch wing may be
    modelled without its load path."""
    if "semirigid" not in methods:
        return {}
    scale, unit = plan.length_scale, plan.length_unit
    bars = bar_extents(plan)  # declared members, outline chords and implied collectors
    cautions: dict[str, str] = {}
    for assumption in ("flexible", "rigid"):
        for result in getattr(methods.get(assumption), "cases", {}).values():
            for td in result.extra.get("transfer", ()):
                s0, s1 = sorted(td.s_range)
                tol = 1e-6 * max(abs(s1 - s0), 1.0)
                for strut in td.struts:
                    name = f"{td.name} collector on {strut.label}"
                    if strut.role != "offset chord" or name in cautions:
                        continue
                    covered = strut.line is not None and any(
                        a <= s0 + tol and b >= s1 - tol for a, b in bars.get(strut.line, ()))
                    if covered:
                        continue
                    where = f"line {strut.label}" if strut.line else f"the offset chord's line ({strut.label})"
                    cautions[name] = (
                        f"the flexible and rigid methods carry the interrupted chord force into transfer region "
                        f"{td.name} through a collector along {where} from {s0 / scale:g} to {s1 / scale:g} {unit}; the "
                        "semi-rigid model has no bar there (no declared member, outline chord or implied collector "
                        "over that length), so it models neither that load path nor a force for it. "
                        f'Declare a [[member]] with role = "collector" on that line over that length (on a grid line) '
                        "to model and design it")
    return cautions
