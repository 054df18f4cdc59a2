"""Flexibility classification from the semi-rigid solution (ASCE 7-16 §12.3.1).

For each load direction and each span between adjacent lines of resistance:

* support drift Δ of a line = the average drift (force / stiffness) of its walls, along
  the load;
* at each station s of the span, the diaphragm's displacement along the load averaged
  across its depth (the section through the real plan, openings and notches excluded;
  :mod:`planshear.postprocess.sections`), relative to the straight line between the two
  supports' drifts; MDD = the largest of these, at its station. The largest nodal value
  (at a wall end, an opening corner or under a concentrated load) is kept as
  ``mdd_local`` for information and never classified on;
* ADVE = (Δ_left + Δ_right) / 2;
* the span may be idealized as flexible when MDD / ADVE > 2 (§12.3.1.3).

A direction is flexible when every span in every base case (no accidental eccentricity;
seismic cases only when the plan has any, since §12.3.1 is a seismic provision) is; the
governing span is the one with the smallest ratio. The engineer's statements that
the prescriptive conditions of §12.3.1.1 (flexible) or §12.3.1.2 (rigid) hold are taken
from the plan's [classification] table; they are not checked here.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import shapely

from planshear.fem import Solution
from planshear.fem.model import element_polygons
from planshear.plan import Plan

from .beam_analogy import sections
from .sections import section_average

__all__ = ["SpanCheck", "DirectionCheck", "Classification", "classify", "BEHAVIOUR_LIMIT"]

#: Below this MDD/ADVE the diaphragm is labelled "rigid-like" for information only (this
#: is not a code limit; ASCE 7-16 has no calculated-rigid condition).
BEHAVIOUR_LIMIT = 0.5


#: Stations per span at which the depth-averaged deflection is evaluated (then refined
#: around the largest one).
STATIONS_PER_SPAN = 80


@dataclass(frozen=True, eq=False)
class SpanCheck:
    axis: str
    case: str
    left_line: str
    right_line: str
    mdd: float  # m, largest depth-averaged deflection relative to the supports' drift line
    mdd_at: tuple[float, float]  # m, station on the span's axis; across it, the middle of the section's longest piece
    adve: float  # m
    ratio: float
    mdd_local: float = 0.0  # m, largest nodal deflection relative to the same line (information)
    mdd_local_at: tuple[float, float] = (0.0, 0.0)  # m
    stations: np.ndarray | None = None  # (n,) m along the span axis
    deflection: np.ndarray | None = None  # (n,) m, depth-averaged, relative to the drift line

    @property
    def flexible(self) -> bool:
        return self.ratio > 2.0

    @property
    def behaviour(self) -> str:
        if self.ratio > 2.0:
            return "flexible"
        return "rigid-like" if self.ratio < BEHAVIOUR_LIMIT else "semi-rigid"


@dataclass(frozen=True)
class DirectionCheck:
    axis: str
    spans: tuple[SpanCheck, ...]
    notes: tuple[str, ...]

    @property
    def governing(self) -> SpanCheck | None:
        return min(self.spans, key=lambda s: s.ratio) if self.spans else None

    @property
    def calculated_flexible(self) -> bool:
        return bool(self.spans) and all(s.flexible for s in self.spans)


@dataclass(frozen=True)
class Classification:
    directions: dict[str, DirectionCheck]
    idealized_flexible: bool  # engineer's statement, §12.3.1.1
    idealized_rigid: bool  # engineer's statement, §12.3.1.2

    def flexible_allowed(self, axis: str) -> bool:
        check = self.directions.get(axis)
        return self.idealized_flexible or (check is not None and check.calculated_flexible)

    @property
    def rigid_allowed(self) -> bool:
        return self.idealized_rigid

    def verdict(self, axis: str) -> str:
        check = self.directions.get(axis)
        if self.idealized_flexible:
            return "flexible (prescriptive conditions of ASCE 7-16 §12.3.1.1 stated by the engineer)"
        if check is not None and check.calculated_flexible:
            return "flexible (ASCE 7-16 §12.3.1.3: MDD/ADVE > 2 in every span)"
        if self.idealized_rigid:
            return "rigid (conditions of ASCE 7-16 §12.3.1.2 stated by the engineer)"
        return "semi-rigid: model the diaphragm stiffness (ASCE 7-16 §12.3.1)"


def _line_drift(plan: Plan, solution: Solution, line: str, j: int, direction: np.ndarray) -> float:
    drifts = [solution.wall_forces[w.id][j] / w.k * float(w.direction @ direction) for w in plan.walls if w.line == line]
    return float(np.mean(drifts))


def _point_on_section(plan: Plan, s_index: int, s: float) -> np.ndarray:
    """A point on the diaphragm at station s (m): the middle of the longest piece of the
    section there (the middle of the whole section could fall in an opening)."""
    t_index = 1 - s_index
    bounds = np.asarray(plan.region.bounds)
    ends = np.zeros((2, 2))
    ends[:, s_index] = s
    ends[:, t_index] = bounds[t_index] - 1.0, bounds[t_index + 2] + 1.0
    cut = plan.region.intersection(shapely.LineString(ends))
    longest = max(getattr(cut, "geoms", [cut]), key=lambda g: g.length)
    return np.asarray(longest.interpolate(0.5, normalized=True).coords[0])


def _relative(mesh, cells, plan: Plan, along: np.ndarray, s_index: int, stations: np.ndarray, s0: float,
              s1: float, drift_left: np.ndarray, drift_right: np.ndarray) -> np.ndarray:
    """Depth-averaged displacement along the load at each station (n_s, n_cases), less the
    straight line between the support drifts (m)."""
    # Stations exactly on the span ends are nudged inside: the section there may run along
    # an outline edge, which would be cut ambiguously.
    eps = 1e-7 * (s1 - s0)
    probe = np.clip(stations, s0 + eps, s1 - eps)
    average, _ = section_average(mesh, along, plan, s_index, probe, cells=cells)
    line = drift_left[None, :] + (drift_right - drift_left)[None, :] * ((stations - s0) / (s1 - s0))[:, None]
    return average - line


def classify(plan: Plan, solution: Solution) -> Classification:
    """MDD/ADVE per span and direction from the semi-rigid solution (see module docs)."""
    from planshear.idealized import lines_of_resistance

    mesh = solution.assembly.mesh
    cells = element_polygons(mesh)  # one R-tree for every section of every span
    directions = {}
    for axis in ("x", "y"):
        base = [(j, c) for j, c in enumerate(solution.cases) if c.axis == axis and c.eccentricity_sign == 0]
        if any(c.kind == "seismic" for _, c in base):
            base = [(j, c) for j, c in base if c.kind == "seismic"]  # §12.3.1 is a seismic provision
        if not base:
            continue
        s_index = 0 if axis == "y" else 1
        supports = lines_of_resistance(plan, axis)
        notes = []
        spans = []
        if len(supports) < 2:
            notes.append(f"fewer than two lines of resistance along {axis}: no span to check")
        s_nodes = mesh.nodes[:, s_index]
        lo, hi = plan.outline[:, s_index].min(), plan.outline[:, s_index].max()
        if supports and (supports[0][1] > lo + 1e-9 or supports[-1][1] < hi - 1e-9):
            notes.append("parts of the diaphragm beyond the end lines (cantilevers) are not classified")
        partial = {}  # lines whose walls cover less than half the diaphragm on the line
        for name, s_line, walls in supports:
            present = float(sections(plan, plan.region, s_index, np.array([s_line]))[0][0])
            walled = sum(w.length for w in walls)
            if walled < 0.5 * present:
                partial[name] = (s_line, walled, present)
        columns = [j for j, _ in base]
        directions_of = np.array([c.direction for _, c in base])  # (n_base, 2)
        along = np.einsum("ndc,cd->nc", solution.displacements.reshape(-1, 2, len(solution.cases))[:, :, columns],
                          directions_of)  # (n_nodes, n_base) displacement along each case's load
        drift = {name: np.array([_line_drift(plan, solution, name, j, c.direction) for j, c in base])
                 for name, _, _ in supports}
        for (left, s0, _), (right, s1, _) in zip(supports[:-1], supports[1:], strict=True):
            stations = np.linspace(s0, s1, STATIONS_PER_SPAN + 1)
            relative = _relative(mesh, cells, plan, along, s_index, stations, s0, s1, drift[left], drift[right])
            # Refine around the largest value of each case (the curve is smooth there).
            step = (s1 - s0) / STATIONS_PER_SPAN
            peaks = stations[np.argmax(np.abs(relative), axis=0)]
            fine = np.unique(np.clip(np.concatenate([p + np.linspace(-step, step, 21) for p in peaks]), s0, s1))
            stations = np.unique(np.concatenate([stations, fine]))
            relative = _relative(mesh, cells, plan, along, s_index, stations, s0, s1, drift[left], drift[right])
            inside = (s_nodes >= s0) & (s_nodes <= s1)
            for column, (_, case) in enumerate(base):
                k = int(np.argmax(np.abs(relative[:, column])))
                mdd = float(abs(relative[k, column]))
                adve = float(0.5 * (abs(drift[left][column]) + abs(drift[right][column])))
                ratio = mdd / adve if adve > 0 else float("inf")
                where = _point_on_section(plan, s_index, float(np.clip(stations[k], s0 + 1e-7 * (s1 - s0),
                                                                       s1 - 1e-7 * (s1 - s0))))
                # The largest nodal value, for information (a local peak, not the code's MDD).
                nodes = np.flatnonzero(inside)
                line = drift[left][column] + (drift[right][column] - drift[left][column]) * (s_nodes[nodes] - s0) / (s1 - s0)
                local = along[nodes, column] - line
                n = int(np.argmax(np.abs(local)))
                spans.append(SpanCheck(
                    axis, case.name, left, right, mdd, (float(where[0]), float(where[1])), adve, ratio,
                    float(abs(local[n])), tuple(float(c) for c in mesh.nodes[nodes[n]]),
                    stations, relative[:, column].copy(),
                ))
        scale, unit = plan.length_scale, plan.length_unit
        for name, (s_line, walled, present) in partial.items():
            near = [sp for sp in spans if name in (sp.left_line, sp.right_line)
                    and abs(sp.mdd_at[s_index] - s_line) <= 0.1 * abs(sp.stations[-1] - sp.stations[0])]
            if near:
                notes.append(
                    f"line {name}: MDD lies near this line, whose walls cover {walled / scale:.4g} of the "
                    f"{present / scale:.4g} {unit} of diaphragm on it: the diaphragm away from the walls deflects "
                    "relative to their drift (a wing or an unsupported part of the line), and that is what the MDD "
                    "measures here")
        directions[axis] = DirectionCheck(axis, tuple(spans), tuple(notes))
    return Classification(directions, plan.classification.idealized_flexible, plan.classification.idealized_rigid)
