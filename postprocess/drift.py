"""Amplified displacements and story drift (ASCE 7-16 §12.8.6, §12.12.1, Table 12.12-1).

For every seismic load that gives ``drift = { Cd, story_height, allowable }``: each wall's
elastic drift (force / stiffness) under every assumption and case, and in the semi-rigid
model the diaphragm's largest displacement along the load on every grid line parallel to
the load (the walls' drift plus the diaphragm's own deflection there: what elements on that
line must follow, §12.12.2), amplified by Cd/Ie and
compared with the allowable drift ratio × story height. The elastic values come from the
case force scaled to the story force Fx for the walls where the load gives ``fx``; the
diaphragm's displacement on the lines stays at the case force (Fpx or the given total).
Units SI.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from planshear.code.asce7_16 import amplified_displacement_12_8_6, drift_within_limit_12_12_1
from planshear.loads import LoadCase
from planshear.plan import Plan

__all__ = ["DriftCheck", "drift_checks"]


@dataclass(frozen=True)
class DriftCheck:
    kind: str  # "wall" or "line"
    name: str  # wall id or grid line
    assumption: str
    case: str
    elastic: float  # m, δxe
    amplified: float  # m, δx = Cd·δxe/Ie
    story_height: float  # m
    allowable: float  # Δa / hsx

    @property
    def ratio(self) -> float:
        return abs(self.amplified) / self.story_height

    @property
    def ok(self) -> bool:
        return drift_within_limit_12_12_1(self.amplified, self.story_height, self.allowable)


def drift_checks(plan: Plan, methods: dict, cases: tuple[LoadCase, ...] | list[LoadCase], semirigid=None,
                 allowed: dict[str, tuple[str, ...]] | None = None) -> list[DriftCheck]:
    """The governing (largest ratio) check per wall and per line over the cases of the loads
    that give drift inputs and the assumptions ``allowed`` for each case's direction (axis →
    assumption names, as the design envelope uses them; None: every assumption);
    ``semirigid`` is the SemirigidRun (or None)."""
    loads = {ld.name: ld for ld in plan.loads if ld.drift is not None}
    if not loads:
        return []
    by_name = {c.name: c for c in cases}
    found: dict[tuple[str, str], DriftCheck] = {}

    def keep(check: DriftCheck) -> None:
        key = (check.kind, check.name)
        if key not in found or check.ratio > found[key].ratio:
            found[key] = check

    for assumption, method in methods.items():
        for case_name, result in method.cases.items():
            case = by_name[case_name]
            if case.load not in loads:
                continue
            if allowed is not None and assumption not in allowed.get(case.axis, ()):
                continue  # an assumption the code does not allow for this direction
            Cd, Ie, height, allowable = loads[case.load].drift
            for wall_id, drift in ((w, d * case.wall_factor) for w, d in result.wall_drifts.items()):
                keep(DriftCheck("wall", wall_id, assumption, case_name, drift,
                                amplified_displacement_12_8_6(drift, Cd, Ie), height, allowable))
    if semirigid is not None:
        solution, mesh = semirigid.solution, semirigid.mesh
        for j, case in enumerate(solution.cases):
            if case.load not in loads:
                continue
            Cd, Ie, height, allowable = loads[case.load].drift
            along = solution.node_displacements(j) @ case.direction
            for grid_line in plan.grid_lines:
                if grid_line.parallel_to != case.axis:
                    continue
                nodes = mesh.lines[grid_line.name].node_sequence
                if len(nodes) == 0:
                    continue
                k = int(np.argmax(np.abs(along[nodes])))
                keep(DriftCheck("line", grid_line.name, "semirigid", case.name, float(along[nodes][k]),
                                amplified_displacement_12_8_6(float(along[nodes][k]), Cd, Ie), height, allowable))
    return list(found.values())
