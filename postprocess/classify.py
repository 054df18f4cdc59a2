"""Flexibility classification from the semi-rigid solution (ASCE 7-16 §12.3.1).

For each load direction and each span between adjacent lines of resistance:

* support drift Δ of a line = the average drift (force / stiffness) of its walls, along
  the load;
* MDD = the largest displacement of the diaphragm within the span, along the load,
  relative to the straight line between the two supports' drifts;
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

from planshear.fem import Solution
from planshear.plan import Plan

__all__ = ["SpanCheck", "DirectionCheck", "Classification", "classify", "BEHAVIOUR_LIMIT"]

#: Below this MDD/ADVE the diaphragm is labelled "rigid-like" for information only (this
#: is not a code limit; ASCE 7-16 has no calculated-rigid condition).
BEHAVIOUR_LIMIT = 0.5


@dataclass(frozen=True)
class SpanCheck:
    axis: str
    case: str
    left_line: str
    right_line: str
    mdd: float  # m
    mdd_at: tuple[float, float]  # m
    adve: float  # m
    ratio: float

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


def classify(plan: Plan, solution: Solution) -> Classification:
    """MDD/ADVE per span and direction from the semi-rigid solution (see module docs)."""
    from planshear.idealized import lines_of_resistance

    mesh = solution.assembly.mesh
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
        for j, case in base:
            direction = case.direction
            u = solution.node_displacements(j) @ direction
            drift = {name: _line_drift(plan, solution, name, j, direction) for name, _, _ in supports}
            for (left, s0, _), (right, s1, _) in zip(supports[:-1], supports[1:], strict=True):
                inside = (s_nodes >= s0) & (s_nodes <= s1)
                base_line = drift[left] + (drift[right] - drift[left]) * (s_nodes[inside] - s0) / (s1 - s0)
                relative = u[inside] - base_line
                k = int(np.argmax(np.abs(relative)))
                mdd = float(abs(relative[k]))
                adve = 0.5 * (abs(drift[left]) + abs(drift[right]))
                ratio = mdd / adve if adve > 0 else float("inf")
                where = mesh.nodes[np.flatnonzero(inside)[k]]
                spans.append(SpanCheck(axis, case.name, left, right, mdd, (float(where[0]), float(where[1])), adve, ratio))
        directions[axis] = DirectionCheck(axis, tuple(spans), tuple(notes))
    return Classification(directions, plan.classification.idealized_flexible, plan.classification.idealized_rigid)
