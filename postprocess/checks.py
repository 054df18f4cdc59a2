"""Design checks: demand against the engineer's capacities (``[diaphragm] capacity``,
``[[wall]] capacity`` …, see the README), on the plan's design basis.

Every demand is a design value of the envelope (:mod:`planshear.postprocess.envelope`):
the assumptions the code allows for the case's direction, every case, the load-combination
factor of the design basis applied.

- **Diaphragm zones** (the main diaphragm outside every zone, and each zone): the largest
  unit shear over the zone. Flexible and rigid: the span unit-shear diagram V(s)/ℓ(s) of
  the beam analogy, which is uniform across each section, at every station whose section
  crosses the zone. Semi-rigid: the finite-element shear N_xy averaged along the part of
  each section that lies in the zone (never a nodal or element peak: peaks at re-entrant
  corners and wall ends are singular), at stations every mesh size across the zone.
  Where a transfer region (flexible, rigid; :mod:`planshear.postprocess.transfer`) lies in
  the zone, the net unit shear there (span V/ℓ + the region's transfer shear) counts too;
  the check's note says where the governing value is.
- **Walls**: the design force, or its unit shear force / length, against the capacity.
- **Chords and collectors** (members by grid line and bay): the member's design tension and
  compression, each the larger of the chord role and the collector role with ASCE 7-16
  §12.10.2.1 (Ω0 where the case requires it). Transfer regions on the member's grid line
  are part of it (:attr:`Envelope.transfer_parts`; the note names them).
- **Splices**: the force at a declared chord splice from the same diagrams
  (:func:`splice_forces`).

A ratio above 1 fails. Items without a capacity are listed with the status "no capacity".
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import shapely

from planshear.errors import PlanError
from planshear.fem.model import element_polygons
from planshear.loads import LoadCase
from planshear.plan import Plan
from planshear.results import MethodResult, unit_shear_along

from .envelope import Envelope, Governing, member_envelopes
from .sections import _locate

__all__ = ["Check", "DesignChecks", "design_checks", "zone_regions", "zone_unit_shear", "splice_forces", "Splice"]

#: A ratio above 1 by more than round-off fails.
RATIO_TOLERANCE = 1e-9
#: Sample points along the part of a section inside a zone (midpoint rule, as
#: :data:`planshear.postprocess.sections.SAMPLES_PER_SECTION` along a whole section).
SAMPLES_IN_ZONE = 40
#: Name of the diaphragm outside every zone (as the semi-rigid ``unit_shear_by_zone``).
MAIN = "main"


@dataclass(frozen=True)
class Check:
    """One demand against one capacity (SI: N or N/m). ``capacity`` None: not given."""

    kind: str  # "zone" | "wall" | "member"
    item: str  # "zone west strip", "wall W1", "line A, 1–4"
    quantity: str  # "unit shear" | "force" | "tension" | "compression"
    demand: float  # magnitude
    capacity: float | None
    governing: Governing | None  # assumption, case and combination factor of the demand
    note: str = ""

    @property
    def ratio(self) -> float | None:
        return None if self.capacity is None else self.demand / self.capacity

    @property
    def status(self) -> str:
        if self.capacity is None:
            return "no capacity"
        return "fails" if self.ratio > 1 + RATIO_TOLERANCE else "ok"


@dataclass(frozen=True)
class DesignChecks:
    """All checks, failures first (then by ratio, largest first), and where they sit on the plan."""

    checks: tuple[Check, ...]
    basis: str | None  # the plan's [design] basis
    places: dict[str, object]  # item → shapely geometry (m) for the D/C map

    @property
    def failures(self) -> tuple[Check, ...]:
        return tuple(c for c in self.checks if c.status == "fails")


def zone_regions(plan: Plan) -> dict[str, object]:
    """Zone name → its diaphragm region (m); :data:`MAIN` is the diaphragm outside every zone."""
    regions = {z.name: z.region for z in plan.zones}
    rest = plan.region
    if plan.zones:
        rest = rest.difference(shapely.union_all([z.region for z in plan.zones]))
    if rest.area > 1e-9 * plan.region.area:
        regions = {MAIN: rest, **regions}
    return regions


def _s_intervals(region, s_index: int) -> list[tuple[float, float]]:
    """The span coordinate's ranges covered by a region (one per polygon part: a connected
    part projects to one interval)."""
    parts = getattr(region, "geoms", [region])
    return [(float(p.bounds[s_index]), float(p.bounds[s_index + 2])) for p in parts if p.area > 0]


def _idealized_zone_shear(result, region) -> tuple[float, float]:
    """(largest |V/ℓ| (N/m) at stations whose section crosses the region, its station). The
    diagram is also read at the region's own ends (interpolated just inside them: the
    stations of the analogy need not fall on a zone boundary)."""
    best, at = 0.0, float("nan")
    for axis, stations, shear, length in result.extra.get("span_shear", ()):
        v = unit_shear_along(shear, length)
        s_index = 1 if axis == "x" else 0
        # Just inside an end: past the ±1e-7·size stations that show a jump at a support.
        inset = 2e-7 * float(np.ptp(stations))
        for lo, hi in _s_intervals(region, s_index):
            inside = (stations > lo) & (stations < hi)
            ends = np.array([lo + inset, hi - inset])
            s_all = np.concatenate([stations[inside], ends])
            v_all = np.concatenate([v[inside], np.interp(ends, stations, v)])
            k = int(np.argmax(np.abs(v_all)))
            if abs(v_all[k]) > best:
                best, at = float(abs(v_all[k])), float(s_all[k])
    return best, at


def _position(s: float, ends: tuple[float, float] = (np.nan, np.nan)) -> float:
    """A station read just inside a range end (m) shown as that end (the inset is 2e-7 of the span)."""
    lo, hi = ends
    width = max(abs(hi - lo), 1e-9) if np.isfinite(lo) else 0.0
    for end in (lo, hi):
        if np.isfinite(end) and abs(s - end) <= 1e-6 * width:
            return float(end)
    return float(s)


def _transfer_zone_shear(result, region, plan: Plan) -> tuple[float, str]:
    """(largest |net unit shear| (N/m) where a transfer region of ``result`` lies in
    ``region``, where it is). The net shear is the main span unit shear V(s)/ℓ(s) plus the
    transfer shear of each band across the span (see :mod:`planshear.postprocess.transfer`;
    both with the sign of V); where regions of the case overlap (notches facing each other
    across one bay) their transfer shears add (superposition). Read over the span range of
    each cell of constant transfer shear inside the zone: at the analogy's stations and just
    inside both ends, as :func:`_idealized_zone_shear`."""
    best, where = 0.0, ""
    spans = {axis: (stations, unit_shear_along(shear, length))
             for axis, stations, shear, length in result.extra.get("span_shear", ())}
    scale, unit = plan.length_scale, plan.length_unit
    tds = [td for td in result.extra.get("transfer", ()) if td.axis in spans]
    for axis in sorted({td.axis for td in tds}):
        stations, v = spans[axis]
        s_index = 1 if axis == "x" else 0
        t_index = 1 - s_index
        inset = 2e-7 * float(np.ptp(stations))
        bands = [(td.name, *sorted(td.s_range), t0, t1, tau) for td in tds if td.axis == axis
                 for t0, t1, tau in td.shears]
        s_edges = np.unique([b[k] for b in bands for k in (1, 2)])
        t_edges = np.unique([b[k] for b in bands for k in (3, 4)])
        for s0, s1 in zip(s_edges[:-1], s_edges[1:], strict=True):
            for t0, t1 in zip(t_edges[:-1], t_edges[1:], strict=True):
                sm, tm = 0.5 * (s0 + s1), 0.5 * (t0 + t1)
                here = [b for b in bands if b[1] <= sm <= b[2] and b[3] <= tm <= b[4]]
                if not here:
                    continue
                tau = sum(b[5] for b in here)
                corners = np.zeros((4, 2))
                corners[:, s_index] = [s0, s1, s1, s0]
                corners[:, t_index] = [t0, t0, t1, t1]
                part = shapely.Polygon(corners).intersection(region)
                for lo, hi in _s_intervals(part, s_index):
                    inside = (stations > lo) & (stations < hi)
                    ends = np.array([lo + inset, hi - inset])
                    s_all = np.concatenate([stations[inside], ends])
                    net = np.concatenate([v[inside], np.interp(ends, stations, v)]) + tau
                    k = int(np.argmax(np.abs(net)))
                    if abs(net[k]) > best:
                        best = float(abs(net[k]))
                        names = " + ".join(dict.fromkeys(b[0] for b in here))
                        where = (f"net unit shear (span V/ℓ + transfer shear) in transfer region"
                                 f"{'s' if len(here) > 1 else ''} {names}, "
                                 f"{'xy'[t_index]} = {t0 / scale:.4g}–{t1 / scale:.4g} {unit}, at "
                                 f"{'xy'[s_index]} = {_position(s_all[k], (lo, hi)) / scale:.4g} {unit}")
    return best, where


def zone_unit_shear(plan: Plan, mesh, membrane: np.ndarray, axes: list[str], region, spacing: float,
                    cells: tuple | None = None) -> np.ndarray:
    """Finite-element unit shear N_xy (N/m) averaged along the part of each section that lies
    in ``region``, the largest magnitude over the stations, per case: (n_cases,).

    ``membrane`` (n_e, 3, n_cases) are the element-centroid membrane forces; ``axes`` the load
    axis of each case (sections across the span: y = s for load along x, x = s for load along y);
    stations every half ``spacing`` (m) and just inside both ends of the region's span range
    (a section along a zone boundary itself is not counted)."""
    cells = cells if cells is not None else element_polygons(mesh)
    out = np.zeros(membrane.shape[2])
    fractions = (np.arange(SAMPLES_IN_ZONE) + 0.5) / SAMPLES_IN_ZONE
    for axis in sorted(set(axes)):
        s_index = 1 if axis == "x" else 0
        columns = np.flatnonzero(np.asarray(axes) == axis)
        # Every half mesh size, and just inside each end: the elements along a support are
        # where the unit shear of a span is largest.
        stations = np.concatenate([
            np.concatenate([[lo + 1e-6 * (hi - lo)],
                            np.linspace(lo, hi, int(np.ceil(2 * (hi - lo) / spacing)) + 1)[1:-1],
                            [hi - 1e-6 * (hi - lo)]])
            for lo, hi in _s_intervals(region, s_index)
        ])
        x0, y0, x1, y1 = region.bounds
        if s_index == 1:
            cuts = shapely.linestrings([[[x0 - 1, s], [x1 + 1, s]] for s in stations])
        else:
            cuts = shapely.linestrings([[[s, y0 - 1], [s, y1 + 1]] for s in stations])
        pieces = shapely.intersection(region, cuts)
        lengths = shapely.length(pieces)
        keep = lengths > 1e-9 * max(x1 - x0, y1 - y0)
        if not np.any(keep):
            continue
        points = shapely.line_interpolate_point(pieces[keep][:, None], fractions[None, :], normalized=True)
        xy = np.stack([shapely.get_x(points), shapely.get_y(points)], axis=-1).reshape(-1, 2)
        element = _locate(cells, xy)
        values = np.where((element >= 0)[:, None], membrane[np.maximum(element, 0), 2][:, columns], np.nan)
        average = np.nanmean(values.reshape(int(keep.sum()), SAMPLES_IN_ZONE, len(columns)), axis=1)
        out[columns] = np.nanmax(np.abs(average), axis=0)
    return out


def _largest(current: tuple[Governing, str] | None, value: float, assumption: str, case: LoadCase,
             where: str = "") -> tuple[Governing, str] | None:
    """(governing demand, where it is) after seeing ``value`` (N/m, before the combination factor)."""
    value = abs(value) * case.combination.diaphragm
    if current is None or value > current[0].value:
        return Governing(value, assumption, case.name, case.combination.diaphragm), where
    return current


def _zone_demands(plan: Plan, methods: dict[str, MethodResult], cases: tuple[LoadCase, ...], envelope: Envelope,
                  semirigid) -> dict[str, tuple[Governing, str] | None]:
    """Zone → (largest design unit shear, where it is). Flexible and rigid: the span's V/ℓ,
    and where a transfer region lies in the zone the net unit shear there (main + transfer,
    :func:`_transfer_zone_shear`), the larger governs; semi-rigid: N_xy along sections."""
    regions = zone_regions(plan)
    by_name = {c.name: c for c in cases}
    demands: dict[str, tuple[Governing, str] | None] = dict.fromkeys(regions)
    for assumption, method in methods.items():
        if assumption.startswith("semirigid"):
            continue  # below, from the finite-element membrane forces
        for case_name, result in method.cases.items():
            case = by_name[case_name]
            if assumption not in envelope.allowed[case.axis]:
                continue
            for zone, region in regions.items():
                value, at = _idealized_zone_shear(result, region)
                s_name = "y" if case.axis == "x" else "x"
                span = result.extra.get("span_shear", ())
                ends = [(float(st[0]), float(st[-1])) for _, st, _, _ in span if len(st)]
                demands[zone] = _largest(demands[zone], value, assumption, case,
                                         f"span V/ℓ at {s_name} = {_position(at, *ends[:1]) / plan.length_scale:.4g} "
                                         f"{plan.length_unit}")
                net, where = _transfer_zone_shear(result, region, plan)
                demands[zone] = _largest(demands[zone], net, assumption, case, where)
    if semirigid is not None and "semirigid" in methods:
        names = list(methods["semirigid"].cases)
        axes = [by_name[n].axis for n in names]
        allowed = np.array(["semirigid" in envelope.allowed[a] for a in axes])
        cells = element_polygons(semirigid.mesh)
        for zone, region in regions.items():
            values = zone_unit_shear(plan, semirigid.mesh, semirigid.membrane, axes, region, plan.mesh.size, cells)
            for j in np.flatnonzero(allowed):
                demands[zone] = _largest(demands[zone], float(values[j]), "semirigid", by_name[names[j]],
                                         "N_xy averaged along a section in the zone")
    return demands


def design_checks(plan: Plan, methods: dict[str, MethodResult], cases: tuple[LoadCase, ...] | list[LoadCase],
                  envelope: Envelope, semirigid=None) -> DesignChecks | None:
    """Demand/capacity of every zone, wall and member (see the module docstring); None when
    the plan states no capacity. ``semirigid`` is the :class:`planshear.semirigid.SemirigidRun`
    (its mesh and membrane forces), or None.

    Raises :class:`PlanError` when a ``[[capacity.member]] name`` names no member."""
    caps = plan.capacities
    if not caps.given:
        return None
    cases = tuple(cases)
    checks: list[Check] = []
    places: dict[str, object] = {}
    regions = zone_regions(plan)
    zone_caps = {**({MAIN: caps.diaphragm} if caps.diaphragm is not None else {}), **caps.zones}
    for zone, found in _zone_demands(plan, methods, cases, envelope, semirigid).items():
        item = "diaphragm outside the zones" if zone == MAIN else f"zone {zone}"
        governing, where = found if found is not None else (None, "")
        checks.append(Check("zone", item, "unit shear", 0.0 if governing is None else governing.value,
                            zone_caps.get(zone), governing,
                            "flexible/rigid: V / cut length along the span, and the net unit shear (main + transfer) "
                            "in transfer regions; semi-rigid: N_xy averaged along each section in the zone"
                            + (f"; governs: {where}" if where else "")))
        places[item] = regions[zone]
    by_id = {w.id: w for w in plan.walls}
    for wall_id, slots in envelope.walls.items():
        governing = slots.get("design")
        if governing is None or wall_id not in by_id:
            continue
        wall = by_id[wall_id]
        kind, capacity = caps.walls.get(wall_id, caps.wall_default or (None, None))
        demand = abs(governing.value)
        if kind == "unit_shear":
            checks.append(Check("wall", f"wall {wall_id}", "unit shear", demand / wall.length, capacity, governing,
                                f"design force / wall length {wall.length / plan.length_scale:.6g} {plan.length_unit}"))
        else:
            checks.append(Check("wall", f"wall {wall_id}", "force", demand, capacity, governing))
        places[f"wall {wall_id}"] = shapely.LineString([wall.start, wall.end])
    members = member_envelopes(envelope)
    lines = {m.member.line: name for name, m in members.items() if m.member.line is not None}
    unknown = [key[1] for key in caps.members if key[0] == "name" and key[1] not in members]
    if unknown:
        raise PlanError([f'capacity.member name "{n}": no member has this name; use a name as the results list '
                         f'them ({", ".join(sorted(members))}) or give line = "<grid line>"' for n in unknown])
    for name, m in members.items():
        tension_cap, compression_cap = caps.member_default
        own = caps.members.get(("name", name)) or (caps.members.get(("line", m.member.line))
                                                  if m.member.line is not None and lines.get(m.member.line) == name
                                                  else None)
        if own is not None:
            tension_cap = own[0] if own[0] is not None else tension_cap
            compression_cap = own[1] if own[1] is not None else compression_cap
        for quantity, (governing, role), capacity in (("tension", m.tension, tension_cap),
                                                      ("compression", m.compression, compression_cap)):
            if governing is None:
                continue
            omega = role == "collector" and governing in (m.collector_tension_omega, m.collector_compression_omega)
            checks.append(Check("member", name, quantity, abs(governing.value), capacity, governing,
                                f"{role} role" + (" with ASCE 7-16 §12.10.2.1" if omega else "")
                                + _transfer_note(envelope, m.member.line, role)))
        if np.isfinite(m.member.start[0]):
            places[name] = shapely.LineString([m.member.start, m.member.end])
    order = {"fails": 0, "ok": 1, "no capacity": 2}
    checks.sort(key=lambda c: (order[c.status], -(c.ratio or 0.0)))
    return DesignChecks(tuple(checks), plan.design_basis, places)


def _transfer_note(envelope: Envelope, line: str | None, role: str) -> str:
    """What a member's role includes from transfer regions on its grid line (see
    :attr:`planshear.postprocess.envelope.Envelope.transfer_parts`), for the check's note."""
    parts = envelope.transfer_parts.get(line, {}) if line is not None else {}
    if role == "collector" and parts.get("collector"):
        return ("; includes " + ", ".join(parts["collector"]) + " (transfer forces added to the line's collector "
                "force station by station, same case)")
    if role == "chord" and parts.get("chord"):
        return ("; enveloped with " + ", ".join(parts["chord"]) + " (each the total chord force in its transfer "
                "region, main chord + transfer share, not added again)")
    return ""


@dataclass(frozen=True)
class Splice:
    """Force at one chord or collector splice (N): largest tension and compression over the
    design cases, the chord role as it is and the collector role × the case's §12.10.2.1
    factor (``None``: no force of that sign)."""

    name: str
    at: tuple[float, float]  # m
    member: str | None  # the member it sits in (grid line and bay), None off every member
    tension: Governing | None
    compression: Governing | None


def splice_forces(plan: Plan, methods: dict[str, MethodResult], cases, envelope: Envelope,
                  splices: list[tuple[str, np.ndarray]]) -> list[Splice]:
    """The member force at each splice (name, point (x, y) in m), from the diagrams the
    envelope uses, over the design cases: on a grid line its collector diagram (flexible,
    rigid; with the transfer regions on the line, :func:`line_collectors_with_transfer`) or
    bar force (semi-rigid; the collector role in the cases along the line, the chord role
    across it), and the chord diagram of every outline edge through the point (in the
    semi-rigid model only across the edge where the edge lies on a grid line, whose bar force
    that is). Fed from the plan's ``[[splice]]`` entries (``Plan.splices``) when present."""
    layout = envelope.layout
    by_name = {c.name: c for c in cases}
    size = float(np.ptp(plan.outline, axis=0).max())
    tol = 1e-6 * size
    members = {} if layout is None else {m.line: m.name for m in layout.members if m.line is not None}
    out = []
    for name, point in splices:
        point = np.asarray(point, dtype=float)
        grid_line = next((g for g in plan.grid_lines
                          if abs(_cross(point - g.origin, g.direction)) <= tol), None)
        t = None if grid_line is None else float((point - grid_line.origin) @ grid_line.direction)
        edges = []  # (chord key, station from the edge's first corner, on a grid line, axis along)
        for i in range(len(plan.outline)):
            a, b = plan.outline[i], plan.outline[(i + 1) % len(plan.outline)]
            length = float(np.hypot(*(b - a)))
            e = (b - a) / length
            s = float((point - a) @ e)
            if abs(_cross(point - a, e)) <= tol and -tol <= s <= length + tol:
                key = f"edge {i + 1}"
                edges.append((key, s, layout is not None and layout.chord_line.get(key) is not None,
                               None if layout is None else layout.chord_axis.get(key)))
        member = members.get(grid_line.name) if grid_line is not None else None
        if member is None and edges and layout is not None:
            member = next((m.name for m in layout.members if edges[0][0] in m.chords), None)
        tension = compression = None
        for assumption, method in methods.items():
            semi = assumption.startswith("semirigid")
            for case_name, result in method.cases.items():
                case = by_name[case_name]
                if assumption not in envelope.allowed[case.axis]:
                    continue
                values = []
                line = None if grid_line is None else result.lines.get(grid_line.name)
                stations, collector = (None, None) if line is None else (line.stations, line.collector)
                if grid_line is not None and not semi:  # transfer regions on the line are part of its member
                    stations, collector, _ = result.extra.get("collectors_with_transfer", {}).get(
                        grid_line.name, (stations, collector, ()))
                if stations is not None and len(stations) and stations[0] - tol <= t <= stations[-1] + tol:
                    along = not semi or grid_line.parallel_to in (None, case.axis)
                    factor = case.collector_rule.factor if along else 1.0
                    values.append(factor * float(np.interp(t, stations, collector)))
                for key, s, on_line, axis in edges:
                    chord = result.chords.get(key)
                    if chord is None or not len(chord.stations) or (semi and on_line and axis == case.axis):
                        continue
                    if semi and on_line and line is not None:
                        continue  # the same bar as the line's, already read above
                    values.append(float(np.interp(s, chord.stations, chord.force)))
                fd = case.combination.diaphragm
                for v in values:
                    # A seismic case reverses (only +axis is analyzed): both senses count.
                    for c in ((v, -v) if case.kind == "seismic" else (v,)):
                        if c > 0 and (tension is None or fd * c > tension.value):
                            tension = Governing(fd * c, assumption, case_name, fd)
                        if c < 0 and (compression is None or fd * c < compression.value):
                            compression = Governing(fd * c, assumption, case_name, fd)
        out.append(Splice(name, (float(point[0]), float(point[1])), member, tension, compression))
    return out


def _cross(a: np.ndarray, b: np.ndarray) -> float:
    return float(a[0] * b[1] - a[1] * b[0])
