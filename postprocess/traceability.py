"""Numbers a reviewer can follow back to the plan: the seismic weight item by item, Fpx
with its three equations, every wall's stiffness with its terms, and one worked span per
direction of the flexible method as a hand calculation, checked against the program.

The worked span is computed here from the load per unit span with simple-beam statics
(reactions from the resultant, shear and moment by numerical integration on a fine
grid), not with the flexible method's closed-form code, so that its agreement with the
flexible results is a check and not a repetition. All values SI (N, m).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from shapely.geometry import LineString, Polygon

from planshear.code.asce7_16 import FpxValues, fpx_12_10_1_1
from planshear.loads import LoadCase, _weight_parts, seismic_weight
from planshear.plan import Plan
from planshear.results import MethodResult

from .beam_analogy import load_along_span

__all__ = ["WeightItem", "WeightBreakdown", "WallTrace", "WorkedSpan", "Traceability", "build_traceability",
           "weight_breakdown", "traced_section"]

#: Stations per span for the numerical integration of M = ∫V in the worked span; the
#: trapezoid rule on V (quadratic between breakpoints) then errs by about 1e-8 of M.
GRID = 4001


@dataclass(frozen=True)
class WeightItem:
    """One line of the seismic weight: an area, a line weight or a point weight."""

    kind: str  # "area", "line" or "point"
    label: str
    gross: float | None  # m² (area) or m (line); None for points
    deductions: tuple[tuple[str, float], ...]  # (opening, m²) taken off the gross area
    quantity: float | None  # net m² or m
    intensity: float | None  # N/m² or N/m
    weight: float  # N


@dataclass(frozen=True)
class WeightBreakdown:
    load: str
    items: tuple[WeightItem, ...]
    total: float  # N, Σ items
    used: float  # N, the seismic weight the analysis used
    fpx: FpxValues | None
    fpx_inputs: tuple[float, float, float] | None  # SDS, Ie, ΣFi/Σwi


@dataclass(frozen=True)
class WallTrace:
    id: str
    line: str
    formula: str
    inputs: dict[str, float]  # SI
    terms: dict[str, float]  # m/N
    k: float  # N/m


@dataclass(frozen=True)
class WorkedSpan:
    """One simple span of the flexible method by hand (SI)."""

    axis: str  # load direction
    case: str
    left: str
    right: str
    s_left: float  # m, position of the left line across the load
    s_right: float
    force_ratio: float | None  # case force / seismic weight (seismic loads)
    pieces: np.ndarray  # (k, 5): s0, s1, ℓ (diaphragm length across), w0, w1 (m, m, m, N/m, N/m)
    points: np.ndarray  # (p, 2): s, P (N) inside the span
    on_lines: tuple[float, float]  # N applied exactly on the left / right line (go straight to it)
    uniform: float | None  # N/m when w is one constant over the whole span
    total: float  # W, N (inside the span)
    centroid: float  # m, resultant's position
    reaction_left: float  # N
    reaction_right: float  # N
    v_max: float  # N, largest |V| in the span
    v_max_at: float  # m
    m_max: float  # N·m, largest |M|
    m_max_at: float  # m
    b_left: float  # m, diaphragm depth beside the left line (unit shear)
    b_right: float
    depth_at_m: float  # m, outline depth at m_max_at (chord)
    unit_shear_left: float  # N/m, V/b at the left line
    unit_shear_right: float
    chord: float  # N, M/depth
    program: dict[str, float]  # the flexible method's values of the same quantities (SI)
    line_check: dict[str, tuple[float, float]]  # line → (hand Σ reactions, program line force), N


@dataclass(frozen=True)
class Traceability:
    weights: tuple[WeightBreakdown, ...]
    walls: tuple[WallTrace, ...]
    spans: tuple[WorkedSpan, ...]
    notes: tuple[str, ...]


def weight_breakdown(plan: Plan, load) -> WeightBreakdown:
    """Seismic weight of ``load`` item by item (the same parts as planshear.loads uses),
    each area with its gross area and the openings taken off it."""
    areas, lines, points = _weight_parts(plan, load)
    outline = Polygon(plan.outline)
    replaced = [z for z in plan.zones if z.name in load.zone_area_weight]
    items = []
    for geometry, pressure in areas:
        zone = next((z for z in replaced if z.region is geometry), None)
        if zone is not None:
            gross_geometry, label = outline.intersection(zone.polygon), f"zone {zone.name}"
        else:
            gross_geometry = outline
            for z in replaced:
                gross_geometry = gross_geometry.difference(z.polygon)
            label = "diaphragm" + (" outside the zones with their own weight" if replaced else "")
        deductions = tuple((f"opening {i + 1}", float(Polygon(o).intersection(gross_geometry).area))
                           for i, o in enumerate(plan.openings) if Polygon(o).intersection(gross_geometry).area > 0)
        items.append(WeightItem("area", label, float(gross_geometry.area), deductions, float(geometry.area),
                                pressure, pressure * float(geometry.area)))
    scale, unit = plan.length_scale, plan.length_unit
    labels = [f"line {name}" for name, _, _, _ in load.line_weights]
    labels += [f"perimeter edge ({a[0] / scale:.4g}, {a[1] / scale:.4g})–({b[0] / scale:.4g}, {b[1] / scale:.4g}) {unit}"
               for a, b, _, _ in load.edge_weights]
    axes = [load.weight_axes(i) for i in range(len(load.line_weights))] + [ax for *_, ax in load.edge_weights]
    for label, along, (a, b, q) in zip(labels, axes, lines, strict=True):
        length = float(np.hypot(*(b - a)))
        if tuple(along) != ("x", "y"):
            label += f" (acts only in loads along {', '.join(along)})"
        items.append(WeightItem("line", label, length, (), length, q, q * length))
    for x, y, p, _ in points:
        items.append(WeightItem("point", f"point at ({x / plan.length_scale:g}, {y / plan.length_scale:g})",
                                None, (), None, None, p))
    used = seismic_weight(plan, load).total
    fpx = fpx_12_10_1_1(used, *load.fpx) if load.fpx is not None else None
    return WeightBreakdown(load.name, tuple(items), float(sum(i.weight for i in items)), used, fpx, load.fpx)


def _cut(geometry, s: float, s_index: int) -> float:
    """Length (m) of ``geometry`` on the line s = const."""
    lo, hi = -1e9, 1e9
    ends = [(s, lo), (s, hi)] if s_index == 0 else [(lo, s), (hi, s)]
    return float(geometry.intersection(LineString(ends)).length)


def _span_pieces(applied, s0: float, s1: float, tol: float) -> np.ndarray:
    """Total load per unit span inside [s0, s1] as merged linear pieces (s0, s1, w0, w1)."""
    p = applied.pieces
    knots = np.unique(np.clip(np.concatenate([[s0, s1], p[:, 0], p[:, 1]]), s0, s1))
    a, b = knots[:-1], knots[1:]
    keep = b - a > tol
    a, b = a[keep], b[keep]

    def w_at(s: np.ndarray, right: bool) -> np.ndarray:
        # Σ of the linear pieces that cover s (from the right of a knot or from its left).
        inside = (p[None, :, 0] <= s[:, None]) & (s[:, None] < p[None, :, 1]) if right else \
            (p[None, :, 0] < s[:, None]) & (s[:, None] <= p[None, :, 1])
        length = np.where(p[:, 1] > p[:, 0], p[:, 1] - p[:, 0], 1.0)
        value = p[:, 2] + (p[:, 3] - p[:, 2]) * (s[:, None] - p[:, 0]) / length
        return np.where(inside, value, 0.0).sum(axis=1)

    pieces = np.column_stack([a, b, w_at(a, True), w_at(b, False)])
    merged: list[np.ndarray] = []
    for row in pieces:
        if merged:
            last = merged[-1]
            scale = max(abs(last[2]), abs(last[3]), abs(row[2]), abs(row[3]), 1e-300)
            same = max(abs(last[2] - last[3]), abs(row[2] - row[3]), abs(last[3] - row[2])) <= 1e-9 * scale
            if same:  # constant and continuous: one piece
                last[1] = row[1]
                continue
        merged.append(row.copy())
    return np.array(merged).reshape(-1, 4)


def _worked_span(plan: Plan, case: LoadCase, flexible: MethodResult, supports, i: int, applied,
                 force_ratio: float | None) -> WorkedSpan:
    s_index = 0 if case.axis == "y" else 1
    size = float(np.ptp(plan.outline, axis=0).max())
    tol = 1e-9 * size
    (left, s_l, _), (right, s_r, _) = supports[i], supports[i + 1]
    L = s_r - s_l
    sign = float(case.direction @ np.eye(2)[1 - s_index])  # loads are stored along ±t
    pieces = _span_pieces(applied, s_l, s_r, tol)
    pieces[:, 2:] *= sign
    pts = applied.points.copy()
    pts[:, 1] *= sign
    inside = pts[(pts[:, 0] > s_l + tol) & (pts[:, 0] < s_r - tol)]
    on_lines = (float(pts[np.abs(pts[:, 0] - s_l) <= tol, 1].sum()), float(pts[np.abs(pts[:, 0] - s_r) <= tol, 1].sum()))
    length = np.array([_cut(plan.region, 0.5 * (a + b), s_index) for a, b in pieces[:, :2]])
    a, b, w0, w1 = pieces.T
    W_k = 0.5 * (w0 + w1) * (b - a)
    with np.errstate(divide="ignore", invalid="ignore"):
        x_k = np.where(np.abs(w0 + w1) > 0, a + (b - a) * (w0 + 2 * w1) / (3 * (w0 + w1)), 0.5 * (a + b))
    W = float(W_k.sum() + inside[:, 1].sum())
    moment_right = float(np.sum(W_k * (s_r - x_k)) + np.sum(inside[:, 1] * (s_r - inside[:, 0])))
    R_l = moment_right / L
    R_r = W - R_l
    centroid = s_r - moment_right / W if W else 0.5 * (s_l + s_r)
    # V = R_l − ∫w − ΣP exactly at the stations of a fine grid, M = ∫V by the trapezoid rule.
    # Each point load's station twice, just before and just after its jump in V.
    base = np.unique(np.concatenate([np.linspace(s_l, s_r, GRID), a, b, inside[:, 0]]))
    s = np.concatenate([base, inside[:, 0]])
    after = np.concatenate([np.zeros(len(base), bool), np.ones(len(inside), bool)])
    order = np.lexsort((after, s))
    s, after = s[order], after[order]
    # Load to the left of each station, piece by piece (w linear on a piece: exact).
    h = np.clip(s[:, None] - a[None, :], 0.0, (b - a)[None, :])
    load_left = (w0 * h + 0.5 * (w1 - w0) / (b - a) * h**2).sum(axis=1)
    passed = (inside[None, :, 0] < s[:, None]) | ((inside[None, :, 0] == s[:, None]) & after[:, None])
    points_left = (inside[None, :, 1] * passed).sum(axis=1)
    V = R_l - load_left - points_left
    M = np.concatenate([[0.0], np.cumsum(0.5 * (V[1:] + V[:-1]) * np.diff(s))])
    kv, km = int(np.argmax(np.abs(V))), int(np.argmax(np.abs(M)))
    uniform = None
    if len(pieces) == 1 and abs(w0[0] - w1[0]) <= 1e-9 * abs(w0[0]) and not len(inside):
        uniform = float(w0[0])
    # b just beside each line (1e-7 of the plan size, as the beam analogy reads it).
    b_left = _cut(plan.region, s_l + 1e-7 * size, s_index)
    b_right = _cut(plan.region, s_r - 1e-7 * size, s_index)
    depth = _cut(Polygon(plan.outline), float(s[km]), s_index)
    result = flexible.cases[case.name]
    chord_at, chord = _program_chord(plan, result, float(s[km]), s_l, s_r, s_index)
    program = {
        "unit_shear_left": abs(result.lines[left].unit_shear_right),
        "unit_shear_right": abs(result.lines[right].unit_shear_left),
        "chord_at": chord_at,
        "chord": chord,
        # The hand M/d at the program's station (M interpolated on the fine grid).
        "hand_chord_at": _per(abs(float(np.interp(chord_at, s, M))), _cut(Polygon(plan.outline), chord_at, s_index), tol),
    }
    hand_lines = _hand_line_forces(plan, case, supports, applied)
    program_lines = result.extra.get("line_forces", {})
    return WorkedSpan(
        case.axis, case.name, left, right, s_l, s_r, force_ratio, np.column_stack([a, b, length, w0, w1]), inside,
        on_lines, uniform, W, centroid, R_l, R_r, float(abs(V[kv])), float(s[kv]), float(abs(M[km])), float(s[km]),
        b_left, b_right, depth, _per(abs(R_l), b_left, tol), _per(abs(R_r), b_right, tol),
        _per(float(abs(M[km])), depth, tol), program,
        {name: (hand_lines[name], float(program_lines[name])) for name in (left, right) if name in program_lines},
    )


def _per(value: float, length: float, tol: float) -> float:
    """value / length, 0 where there is no length (no diaphragm there): never inf in the JSON."""
    return value / length if length > tol else 0.0


def _hand_line_forces(plan: Plan, case: LoadCase, supports, applied) -> dict[str, float]:
    """Each line's force as the sum of the simple-span reactions beside it (plus any load
    beyond the end lines), by the same hand statics as the worked span."""
    s_index = 0 if case.axis == "y" else 1
    size = float(np.ptp(plan.outline, axis=0).max())
    tol = 1e-9 * size
    p, pts = applied.pieces, applied.points
    lo, hi = plan.outline[:, s_index].min(), plan.outline[:, s_index].max()
    positions = [s for _, s, _ in supports]
    forces = dict.fromkeys((name for name, _, _ in supports), 0.0)
    bounds = [lo - 1.0] + positions + [hi + 1.0]
    for j in range(len(bounds) - 1):
        s0, s1 = bounds[j], bounds[j + 1]
        # Clip every linear piece to [s0, s1]: force and resultant position.
        a, b = np.clip(p[:, 0], s0, s1), np.clip(p[:, 1], s0, s1)
        length = np.where(p[:, 1] > p[:, 0], p[:, 1] - p[:, 0], 1.0)
        wa = p[:, 2] + (p[:, 3] - p[:, 2]) * (a - p[:, 0]) / length
        wb = p[:, 2] + (p[:, 3] - p[:, 2]) * (b - p[:, 0]) / length
        F = 0.5 * (wa + wb) * (b - a)
        with np.errstate(divide="ignore", invalid="ignore"):
            x = np.where(np.abs(wa + wb) > 0, a + (b - a) * (wa + 2 * wb) / (3 * (wa + wb)), 0.5 * (a + b))
        # Point loads: those on a line go to that line, the rest to the span they lie in.
        here = (pts[:, 0] >= s0 - tol) & (pts[:, 0] < s1 - tol) if j else (pts[:, 0] < s1 - tol)
        F = np.concatenate([F, pts[here, 1]])
        x = np.concatenate([x, pts[here, 0]])
        if j == 0:
            forces[supports[0][0]] += float(F.sum())  # beyond the first line
        elif j == len(bounds) - 2:
            forces[supports[-1][0]] += float(F.sum())  # on and beyond the last line
        else:
            span = s1 - s0
            right_share = float(np.sum(F * (x - s0)) / span)
            forces[supports[j - 1][0]] += float(F.sum()) - right_share
            forces[supports[j][0]] += right_share
    return forces  # signed as the program's line forces: ``applied`` carries the case's sign


def _program_chord(plan: Plan, result, s: float, s_lo: float, s_hi: float, s_index: int) -> tuple[float, float]:
    """The flexible method's chord force on the outline edges at its own station nearest
    to s within [s_lo, s_hi]: (station m, largest |force| there N). Its own station, so that
    the comparison is not blurred by interpolating the sampled diagram."""
    outline = plan.outline
    found = []
    for name, chord in result.chords.items():
        i = int(name.split()[1]) - 1
        a, b = outline[i], outline[(i + 1) % len(outline)]
        direction = np.sign(b[s_index] - a[s_index]) or 1.0
        stations = a[s_index] + chord.stations * direction
        keep = (stations >= s_lo) & (stations <= s_hi) & (chord.force != 0)
        if np.any(keep):
            k = int(np.argmin(np.abs(stations[keep] - s)))
            found.append((float(stations[keep][k]), abs(float(chord.force[keep][k]))))
    if not found:
        return s, 0.0
    near = min(abs(f[0] - s) for f in found)
    return max((f for f in found if abs(f[0] - s) <= near + 1e-12), key=lambda f: f[1])


def build_traceability(plan: Plan, cases, flexible: MethodResult | None) -> Traceability:
    """Weight breakdown per seismic load, wall stiffness terms, and per load direction the
    governing simple span of the flexible method (largest unit shear V/b at its ends over
    the flexible cases along that direction) worked by hand."""
    from planshear.idealized import lines_of_resistance  # idealized imports postprocess

    weights = tuple(weight_breakdown(plan, load) for load in plan.loads if load.kind == "seismic")
    walls = tuple(WallTrace(w.id, w.line, w.stiffness.formula, dict(w.stiffness.inputs),
                            dict(w.stiffness.flexibility_terms), w.k) for w in plan.walls)
    spans, notes = [], []
    weight_of = {b.load: b.used for b in weights}
    for axis in ("x", "y"):
        if flexible is None:
            notes.append(f"loads along {axis}: no worked span (the flexible method did not run)")
            continue
        supports = lines_of_resistance(plan, axis)
        best = None
        for case in cases:
            if case.axis != axis or case.name not in flexible.cases or len(supports) < 2:
                continue
            applied = load_along_span(plan, case.field, axis)
            ratio = case.force / weight_of[case.load] if case.load in weight_of else None
            for i in range(len(supports) - 1):
                span = _worked_span(plan, case, flexible, supports, i, applied, ratio)
                key = max(span.unit_shear_left, span.unit_shear_right)
                if best is None or key > best[0] * (1 + 1e-9):
                    best = (key, span)
        if best is not None:
            spans.append(best[1])
    return Traceability(weights, walls, tuple(spans), tuple(notes))



def traced_section(doc: dict) -> dict:
    """The report section "Loads and stiffness, traced" as plain data, from results.json:
    {"title", "blocks": [{"heading", "text": [...], "headers": [...], "rows": [[...]]}]}.
    Every number is already in the output units named in the headers."""
    trace = doc.get("traceability") or {}
    units = doc["units"]
    F = units["force"]
    blocks = []
    for load, weight in trace.get("seismic_weight", {}).items():
        rows = [[item["label"], item["calculation"], item["weight"]] for item in weight["items"]]
        rows.append(["total", "Σ of the items above", weight["total"]])
        rows.append(["used in the analysis", f"difference {weight['difference']:.3g} {F}", weight["used_in_analysis"]])
        blocks.append({"heading": f"Seismic weight, load {load}",
                       "text": ["Area weight over each area less the openings, line weights × their length, point "
                                "weights as given."],
                       "headers": ["item", "calculation", f"weight ({F})"], "rows": rows})
        fpx = weight.get("fpx")
        if fpx:
            rows = [[f"Eq. {eq}", e["formula"], e["numbers"], e["value"]] for eq, e in fpx["equations"].items()]
            blocks.append({"heading": f"Diaphragm force Fpx, load {load} ({fpx['clause']})",
                           "text": [f"Fpx = {fpx['Fpx']:.6g} {F}: Eq. {fpx['governing']} governs (12.10-1 bounded "
                                    "below by 12.10-2 and above by 12.10-3)."],
                           "headers": ["equation", "formula", "numbers", f"value ({F})"], "rows": rows})
    walls = trace.get("wall_stiffness", {})
    if walls:
        rows = []
        for wall_id, wall in walls.items():
            unit = wall["flexibility_unit"]
            for term, value in wall["terms"].items():
                rows.append([wall_id, term, value["calculation"], value["value"], ""])
            rows.append([wall_id, "total", f"k = 1/Σ = 1/{wall['flexibility_total']:.6g} {unit}",
                         wall["flexibility_total"], wall["k"]])
        first = next(iter(walls.values()))
        blocks.append({"heading": "Wall stiffness, term by term",
                       "text": ["Deflection per unit force of each term (the plan's inputs in one consistent set of "
                                "units), their sum and k = 1/Σ; formulas in the wall stiffness table."],
                       "headers": ["wall", "term", "calculation", f"flexibility ({first['flexibility_unit']})",
                                   f"k ({first['k_unit']})"], "rows": rows})
    for span in trace.get("worked_spans", []):
        u = span["units"]
        head = f"Worked span {span['span']} ({span['from']:g}–{span['to']:g} {u['length']}), case {span['case']}"
        text = [f"Flexible method, {span['why']}. {span['load']['how']}. {span['load']['note']}."]
        pieces = [[p["from"], p["to"], p["diaphragm_length"], p["w_start"], p["w_end"]] for p in span["load"]["pieces"]]
        pieces += [[p["at"], p["at"], "point load", p["P"], ""] for p in span["load"]["points_in_span"]]
        blocks.append({"heading": head + ": load on the span", "text": text,
                       "headers": [f"from ({u['length']})", f"to ({u['length']})", f"l, across ({u['length']})",
                                   f"w start ({u['line_load']})", f"w end ({u['line_load']})"], "rows": pieces})
        blocks.append({"heading": head + ": hand calculation", "text": [],
                       "headers": ["quantity", "formula", "numbers", "value", "unit"],
                       "rows": [[s["quantity"], s["formula"], s["numbers"], s["value"], s["unit"]]
                                for s in span["steps"]]})
        blocks.append({"heading": head + ": check against the flexible results", "text": [],
                       "headers": ["quantity", "hand", "program", "difference", "relative", "unit"],
                       "rows": [[c["quantity"], c["hand"], c["program"], c["difference"], c["relative_difference"],
                                 c["unit"]] for c in span["check_against_flexible"]]})
    for note in trace.get("notes", []):
        blocks.append({"heading": "Note", "text": [note], "headers": [], "rows": []})
    return {"title": "Loads and stiffness, traced", "blocks": blocks}
