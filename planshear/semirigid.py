"""The semi-rigid assumption: mesh → assemble → one factorization → every case.

Returns the same :class:`MethodResult` type as the idealized methods, plus the
:class:`Solution` kept for line cuts and mesh export.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from .fem import Solution, assemble, load_vectors, solve
from .fem.model import torsion_bases
from .loads import LoadCase
from .mesh import Mesh, build_mesh
from .plan import Plan
from .postprocess.chord_restraint import walls_along_chords
from .postprocess.line_cuts import collector_notes, line_results_all_cases, membrane_forces
from .results import CaseResult, MethodResult

__all__ = ["SemirigidRun", "semirigid_analysis"]


@dataclass(frozen=True, eq=False)
class SemirigidRun:
    """The semi-rigid result and what produced it."""

    result: MethodResult
    mesh: Mesh
    solution: Solution
    membrane: np.ndarray  # (n_e, 3, n_cases) N/m: Nx, Ny, Nxy at element centroids


def semirigid_analysis(
    plan: Plan,
    cases: list[LoadCase],
    mesh: Mesh | None = None,
    stiffness_factor: float = 1.0,
    progress: Callable[[str], None] | None = None,
) -> SemirigidRun:
    """Finite-element analysis of the diaphragm on wall springs for every case that the
    semi-rigid assumption uses. ``stiffness_factor`` scales the membrane rigidities
    (sensitivity bounds); ``mesh`` may be passed to reuse one mesh."""
    report = progress or (lambda stage: None)
    selected = [c for c in cases if "semirigid" in c.assumptions]
    if mesh is None:
        report("meshing")
        mesh = build_mesh(plan)
    report(f"assembling {mesh.n_dofs} degrees of freedom")
    assembly = assemble(plan, mesh, stiffness_factor)
    loads = load_vectors(plan, mesh, selected)
    report(f"factorizing and solving {len(selected)} cases")
    solution = solve(assembly, plan, selected, loads)
    report("line cuts")
    results = {}
    membrane = membrane_forces(solution)
    per_case = line_results_all_cases(plan, solution, membrane)
    restraint = walls_along_chords(plan, solution, selected, [chords for _, chords, *_ in per_case])
    for j, case in enumerate(selected):
        forces = {wall_id: float(f[j]) for wall_id, f in solution.wall_forces.items()}
        total = sum(forces[w.id] * w.direction for w in plan.walls)
        applied = case.force * case.direction
        residual = float(np.max(np.abs(total - applied))) / case.force
        u = solution.node_displacements(j)
        lines, chords, unit_shear, by_zone = per_case[j]
        results[case.name] = CaseResult(
            case=case.name,
            axis=case.axis,
            applied_force=case.force,
            wall_forces=forces,
            wall_drifts={w.id: forces[w.id] / w.k for w in plan.walls},
            lines=lines,
            chords=chords,
            max_unit_shear=unit_shear[0],
            max_unit_shear_at=unit_shear[1],
            max_displacement=float(np.max(np.hypot(u[:, 0], u[:, 1]))),
            equilibrium_residual=max(residual, float(solution.residual[j])),
            extra={"solver_residual": float(f"{solution.residual[j]:.3e}"), "unit_shear_by_zone": by_zone,
                   "walls_along_chords": restraint[j]},
        )
    notes = [
        f"finite-element model: {len(mesh.elements)} {mesh.element_type} elements, {mesh.n_dofs} degrees of "
        f"freedom, factorized once ({solution.backend}) for {len(selected)} cases",
    ]
    bases = torsion_bases(plan, mesh, selected)
    spread = sorted({c.load for c in selected if bases.get(c.name) == "area"})
    if spread:
        notes.append(
            f"accidental torsion of load {', '.join(spread)} is spread over the diaphragm area: its weight is too "
            "concentrated to carry the moment F·e by itself (the moment added is F·e either way)"
        )
    piece_notes, piece_extra = collector_notes(plan, assembly.collectors)
    notes += piece_notes
    extra = {"mesh": {"elements": int(len(mesh.elements)), "element_type": mesh.element_type,
                      "nodes": int(mesh.n_nodes), "dofs": int(mesh.n_dofs), "solver": solution.backend},
             **piece_extra, "accidental_torsion_spread": bases}
    if stiffness_factor != 1.0:
        extra["stiffness_factor"] = stiffness_factor
    return SemirigidRun(MethodResult("semirigid", results, tuple(notes), extra), mesh, solution, membrane)
