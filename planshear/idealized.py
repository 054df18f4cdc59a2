"""The two idealized methods: flexible (simple spans between lines of resistance) and
rigid (three rigid-body degrees of freedom). Both return a :class:`MethodResult` whose
diaphragm forces come from the one beam-analogy code path in
:mod:`planshear.postprocess.beam_analogy`.
"""

from __future__ import annotations

import numpy as np

from .errors import AnalysisError
from .loads import ForceField, LoadCase, torsion_areas
from .plan import Plan, Wall, rigid_stiffness_rows
from .postprocess.beam_analogy import (
    BeamAnalogy,
    WallReaction,
    beam_analogy,
    edge_chords,
    load_along_span,
)
from .postprocess.deflection import span_deflections
from .postprocess.transfer import line_collectors_with_transfer, transfer_diaphragms
from .results import CaseResult, ChordResult, LineResult, MethodResult

#: Force left at the end of a line piece, relative to the case's force, above which a
#: note says that it would have to cross a gap (round-off stays far below).
GAP_TOLERANCE = 1e-9

__all__ = ["flexible_analysis", "rigid_analysis", "lines_of_resistance", "center_of_rigidity"]


def lines_of_resistance(plan: Plan, axis: str) -> list[tuple[str, float, list[Wall]]]:
    """Grid lines parallel to ``axis`` that carry walls: (name, position across, walls),
    sorted by position (m)."""
    s_index = 0 if axis == "y" else 1
    found = []
    for grid_line in plan.grid_lines:
        if grid_line.parallel_to != axis:
            continue
        walls = [w for w in plan.walls if w.line == grid_line.name]
        if walls:
            found.append((grid_line.name, float(grid_line.origin[s_index]), walls))
    return sorted(found, key=lambda item: item[1])


def _wall_reactions(plan: Plan, forces: dict[str, float]) -> list[WallReaction]:
    return [WallReaction(w.id, w.line, w.start, w.end, forces[w.id] * w.direction) for w in plan.walls]


def _case_from_analogy(
    plan: Plan,
    case: LoadCase,
    forces: dict[str, float],
    main: BeamAnalogy,
    transverse: BeamAnalogy | None,
    max_displacement: float,
    residual: float,
    extra: dict | None = None,
    field_=None,
    reactions: list[WallReaction] | None = None,
) -> CaseResult:
    """Collect one case's beam-analogy results; the transfer diaphragms at chord
    interruptions are formed from the main analogy (``field_`` and ``reactions`` given)."""
    lines = {}
    notes: list[str] = []
    transfers = []
    if reactions is not None and main.chord is not None:
        transfers, transfer_notes = transfer_diaphragms(plan, main, field_, reactions)
        notes += transfer_notes
    for analogy in (main, transverse):
        if analogy is None:
            continue
        for name, d in analogy.lines.items():
            pieces = np.array([[p.t_start, p.t_end, p.peak, p.peak_at, p.residual] for p in d.pieces]).reshape(-1, 5)
            lines[name] = LineResult(
                name, d.reaction, d.delivered, d.unit_shear_left, d.unit_shear_right, d.stations, d.force, d.residual,
                pieces=pieces,
            )
            stranded = [p for p in d.pieces if abs(p.residual) > GAP_TOLERANCE * case.force]
            if len(d.pieces) > 1 and stranded:
                scale = plan.length_scale
                where = ", ".join(
                    f"{p.t_start / scale:.4g}–{p.t_end / scale:.4g} {plan.length_unit} "
                    f"({100 * p.residual / case.force:+.3g} % of the case force)"
                    for p in stranded
                )
                notes.append(
                    f"line {name}: the diaphragm splits this line into {len(d.pieces)} pieces at openings or outside "
                    f"the outline; force left at the end of the piece(s) {where} would have to cross a gap, where "
                    "no collector exists: the beam analogy has no load path for it there (see the semi-rigid results, "
                    "or add walls on that piece)"
                )
    chords = {}
    if main.chord is not None:
        for name, (stations, force) in edge_chords(plan, main.chord).items():
            chords[name] = ChordResult(name, stations, force)
    max_v, max_at = main.max_unit_shear, main.max_unit_shear_at
    if transverse is not None and transverse.max_unit_shear > max_v:
        max_v, max_at = transverse.max_unit_shear, transverse.max_unit_shear_at
    collector_residual = max((abs(d.residual) for d in lines.values()), default=0.0)
    return CaseResult(
        case=case.name,
        axis=case.axis,
        applied_force=case.force,
        wall_forces=forces,
        wall_drifts={w.id: forces[w.id] / w.k for w in plan.walls},
        lines=lines,
        chords=chords,
        max_unit_shear=max_v,
        max_unit_shear_at=max_at,
        max_displacement=max_displacement,
        equilibrium_residual=max(residual, collector_residual / case.force),
        extra={**(extra or {}), **({"transfer": transfers} if transfers else {}), **({"notes": notes} if notes else {}),
               # The member on each line a transfer region acts on: its whole collector force (own diagram,
               # the region's share and strut), for the envelope, the checks and the report alike.
               **({"collectors_with_transfer": line_collectors_with_transfer({"transfer": transfers}, lines)}
                  if transfers else {}),
               # (axis, s m, V N, ℓ m) along each span direction, the main one first: the unit-shear
               # diagram V/ℓ of the report (main) and of the zones' design checks (both).
               "span_shear": tuple((a.axis, a.stations, a.shear, a.length_available) for a in (main, transverse)
                                   if a is not None)},
    )


def flexible_analysis(plan: Plan, cases: list[LoadCase]) -> MethodResult:
    """Flexible diaphragm: for each case the diaphragm spans as simple beams between
    adjacent lines of resistance (grid lines parallel to the load that carry walls);
    parts beyond the end lines cantilever to them. Each line's force is shared by its
    walls in proportion to stiffness. Walls on lines at an angle to the load get none.

    Raises :class:`AnalysisError` when a loaded direction has fewer than two lines of
    resistance (a flexible diaphragm on one line cannot resist the torsion).
    """
    results: dict[str, CaseResult] = {}
    notes = []
    skewed = sorted({w.line for w in plan.walls if plan.line(w.line).family == "skew"})
    if skewed:
        notes.append(
            "walls on skewed lines (" + ", ".join(skewed) + ") take no force under the flexible method; "
            "see the rigid and semi-rigid results for them"
        )
    for case in cases:
        if "flexible" not in case.assumptions:
            continue
        supports = lines_of_resistance(plan, case.axis)
        if len(supports) < 2:
            raise AnalysisError(
                f"{plan.source}: the flexible method needs at least two lines of resistance for loads along "
                f"{case.axis}; found {len(supports)} ({', '.join(s[0] for s in supports) or 'none'}). "
                "A flexible diaphragm on one line cannot resist torsion: use the rigid or semi-rigid results"
            )
        applied = load_along_span(plan, case.field, case.axis)
        positions = np.array([s for _, s, _ in supports])
        force, first = applied.cumulative(positions)
        total = applied.total()
        line_force = np.zeros(len(supports))
        for i in range(len(supports) - 1):
            span = positions[i + 1] - positions[i]
            in_span = force[i + 1] - force[i]
            # ∫ w (s_{i+1} − σ) over the span, from the closed-form cumulative moments.
            lever = first[i + 1] - first[i] - span * force[i]
            line_force[i] += lever / span
            line_force[i + 1] += in_span - lever / span
        line_force[0] += force[0]  # cantilever beyond the first line
        line_force[-1] += total - force[-1]  # cantilever beyond the last line (incl. loads on it)
        forces = {w.id: 0.0 for w in plan.walls}
        axis_vector = np.eye(2)[0 if case.axis == "x" else 1]
        sign = {w.id: float(w.direction @ axis_vector) for w in plan.walls}
        line_stiffness = {}
        for (name, _, walls), f in zip(supports, line_force, strict=True):
            k_line = sum(w.k for w in walls)
            line_stiffness[name] = k_line
            for w in walls:
                forces[w.id] = f * w.k / k_line * sign[w.id]
        reactions = _wall_reactions(plan, forces)
        main = beam_analogy(plan, case.axis, case.field, reactions, applied=applied)
        drifts = [abs(f) / line_stiffness[name] for (name, _, _), f in zip(supports, line_force, strict=True)]
        applied_sum = sum(forces[w.id] * float(w.direction @ case.direction) for w in plan.walls)
        residual = abs(applied_sum - case.force) / case.force
        spans = span_deflections(plan, case.axis, applied, [(name, s) for name, s, _ in supports],
                                 {name: d for (name, _, _), d in zip(supports, drifts, strict=True)})
        results[case.name] = _case_from_analogy(
            plan, case, forces, main, None, max(drifts), residual,
            {"line_forces": {name: float(f) for (name, _, _), f in zip(supports, line_force, strict=True)},
             "span_deflections": spans},
            case.field, reactions,
        )
    return MethodResult("flexible", results, tuple(notes + [
        "max_displacement is the largest drift of a line of resistance; span_deflections gives each simple "
        "span's own deflection by beam theory (chord bending + shear of the sheathing over the length present; "
        "SDPWS-2015 Eq. 4.2-1 terms 1 and 2 for a rectangle), with MDD/ADVE for reading ASCE 7-16 §12.3.1.3 "
        "without the finite-element model",
    ]))


def _cross(a: np.ndarray, b: np.ndarray) -> float:
    """z-component of a × b for plane vectors."""
    return float(a[0] * b[1] - a[1] * b[0])


def _rigid_system(plan: Plan) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Reference point (m), wall rows a_i, wall stiffnesses k_i (N/m) and the 3×3
    rigid-body stiffness Σ k_i a_i a_iᵀ about the reference."""
    reference = np.asarray(plan.region.centroid.coords[0])
    rows, k = rigid_stiffness_rows(plan.walls, reference)
    return reference, rows, k, (rows * k[:, None]).T @ rows


def center_of_rigidity(plan: Plan) -> np.ndarray:
    """Center of rigidity (m): the point where a horizontal force in either direction
    causes no rotation, from the full 3×3 rigid-body stiffness (skewed walls included)."""
    reference, _, _, stiffness = _rigid_system(plan)
    return _center_from(reference, stiffness)


def _center_from(reference: np.ndarray, stiffness: np.ndarray) -> np.ndarray:
    flexibility = np.linalg.inv(stiffness)
    # Force Fy at x0 + ex gives rotation flexibility[2,1] + flexibility[2,2]·ex = 0.
    ex = -flexibility[2, 1] / flexibility[2, 2]
    # Force Fx at y0 + ey: moment −Fx·ey, rotation flexibility[2,0] − flexibility[2,2]·ey = 0.
    ey = flexibility[2, 0] / flexibility[2, 2]
    return reference + np.array([ex, ey])


def rigid_analysis(plan: Plan, cases: list[LoadCase]) -> MethodResult:
    """Rigid diaphragm: solve the 3×3 rigid-body system (u, v, θ) for every case at once;
    wall force = k × displacement along the wall. The ±ecc cases add the accidental
    torsion F·e (ASCE 7-16 §12.8.4.2). Diaphragm forces by the beam analogy along the
    load and, for the torsional wall forces, across it."""
    results: dict[str, CaseResult] = {}
    selected = [c for c in cases if "rigid" in c.assumptions]
    if not selected:
        return MethodResult("rigid", {}, ())
    reference, rows, k, stiffness = _rigid_system(plan)
    center_rigidity = _center_from(reference, stiffness)
    loads = np.zeros((3, len(selected)))
    for j, case in enumerate(selected):
        arm = case.center - reference
        loads[:2, j] = case.force * case.direction
        loads[2, j] = arm[0] * loads[1, j] - arm[1] * loads[0, j] + case.torsion
    motion = np.linalg.solve(stiffness, loads)  # one solve for every case
    wall_forces = (rows @ motion) * k[:, None]
    size = float(np.ptp(plan.outline, axis=0).max())
    for j, case in enumerate(selected):
        forces = {w.id: float(wall_forces[i, j]) for i, w in enumerate(plan.walls)}
        reactions = _wall_reactions(plan, forces)
        # The accidental torsion acts on the diaphragm too, so that V and M close.
        field_ = case.field
        if case.torsion:
            field_ = ForceField(case.field.direction,
                                case.field.areas + torsion_areas(plan, case.axis, case.direction, case.torsion),
                                case.field.lines, case.field.points)
        main = beam_analogy(plan, case.axis, field_, reactions)
        other = "x" if case.axis == "y" else "y"
        transverse = beam_analogy(plan, other, None, reactions, with_chords=False)
        u, v, theta = motion[:, j]
        arms = plan.outline - reference
        corner = np.column_stack([u - theta * arms[:, 1], v + theta * arms[:, 0]])
        max_disp = float(np.max(np.hypot(corner[:, 0], corner[:, 1])))
        # Equilibrium: force in both directions and moment, relative to F and F·size.
        total = np.array([sum(forces[w.id] * w.direction[i] for w in plan.walls) for i in (0, 1)])
        moment = sum(
            forces[w.id] * _cross(w.midpoint - reference, w.direction) for w in plan.walls
        )
        residual = max(
            float(np.max(np.abs(total - loads[:2, j]))) / case.force,
            abs(moment - loads[2, j]) / (case.force * size),
        )
        # Torsional irregularity measure: displacement along the load at the two
        # extreme edges of the plan (ASCE 7-16 Table 12.3-1 uses δmax/δavg).
        along = corner @ case.direction
        s_index = 0 if case.axis == "y" else 1
        s_coord = plan.outline[:, s_index]
        ends = np.array([along[s_coord <= s_coord.min() + 1e-9 * size].mean(), along[s_coord >= s_coord.max() - 1e-9 * size].mean()])
        # Algebraic mean (ends moving apart mean rotation dominates; see postprocess/irregularity.py).
        ratio = round(float(np.max(np.abs(ends)) / np.mean(ends)), 4) if np.mean(ends) > 0 else None
        extra = {
            "rigid_body_motion": {"u": float(u), "v": float(v), "rotation": float(theta)},
            "torsional_ratio": ratio,  # None: δavg ≤ 0, unbounded
        }
        results[case.name] = _case_from_analogy(plan, case, forces, main, transverse, max_disp, residual, extra,
                                                field_, reactions)
    return MethodResult(
        "rigid",
        results,
        (),
        {"center_of_rigidity": center_rigidity},
    )
