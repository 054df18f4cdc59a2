"""Walls along chord lines: how much of the chord force they take in the semi-rigid model.

A wall on a line across the load (parallel to the chords) is a spring along that line.
When the diaphragm bends, the chord line stretches (tension side) or shortens; a wall
under it resists that change of length and takes a self-equilibrating set of forces
(one end pulled, the other pushed) that the rigid and flexible methods never give it.
The effect is physical in an elastic model (the wall's top is tied to the chord), but it
takes force out of the chord and puts it into the walls, so both must be reported.

Measures, per case, with every quantity signed along the line's direction:

* **Walls across the load, per grid line** (lines perpendicular to the load that carry
  walls). Any rigid-body motion of the diaphragm moves every point of a straight line by
  the same amount along it, so the part of the walls' nodal forces that equilibrium of
  the applied force and torsion needs is R·s_k, where R is the line's net wall force and
  s_k the share of node k in the walls' response to a uniform translation along the line
  (K_spring·1). The rest, f_k − R·s_k, is self-equilibrating and comes only from the
  line changing length, i.e. from chord elongation or shortening. Its running sum along
  the line, W(t) = −Σ_{t_k ≤ t}(f_k − R·s_k), is the axial force the walls have taken
  over at t (force on the diaphragm along +t from the walls before t; it adds to the
  chord's own tension, so it is signed like a chord force). Reported: its largest
  magnitude and where, the net force R, and per wall the self-equilibrating part of its
  force, F_w − R·k_w/Σk (what one panel of a row of tilt-up panels takes).

* **Chords, per outline edge** parallel to the span, base cases only (without accidental
  torsion, whose added moment the beam analogy does not carry). M/d is the beam analogy's
  chord force computed from the *same case's finite-element wall forces* and load
  (:func:`beam_analogy`, as the idealized methods do), with the walls across the load
  reduced to the share R·k_w/Σk of their line's net force that equilibrium needs (their
  self-equilibrating part would otherwise enter M as a couple and hide the effect), i.e.
  what the chord would carry if the walls did not restrain its elongation. At the station of the largest |M/d| on
  the edge: the finite-element chord force N, the share of M/d the chord lost,
  1 − N/(M/d), and the walls' force W on that edge with its share W/(M/d). N + W ≈ M/d;
  the difference is what the membrane's own axial rigidity carries (a few per cent for
  wood panels and steel deck, most of it for a concrete slab without chord bars, where
  "share lost" is not caused by walls). Interior chord members are not compared: the
  beam analogy gives no M/d for them.

The comparison with the rigid method's wall forces was not chosen as the measure: it mixes
the chord effect with the legitimate redistribution of torsion in a flexible diaphragm.
"""

from __future__ import annotations

import numpy as np

from planshear.fem.model import Solution, SpringGroup, element_dofs
from planshear.loads import LoadCase
from planshear.plan import Plan
from planshear.results import ChordResult

from .beam_analogy import WallReaction, beam_analogy, edge_chords

__all__ = ["restraint_profile", "walls_along_chords"]


def _cross(a: np.ndarray, b: np.ndarray) -> float:
    return float(a[0] * b[1] - a[1] * b[0])


def restraint_profile(springs: list[SpringGroup], solution: Solution, origin: np.ndarray,
                      direction: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """For the wall springs of one straight line: node positions t (k,) in m along
    ``direction`` from ``origin``, the walls' self-equilibrating running force W(t) (k, c)
    in N (see the module docstring) and the net wall force R (c,) in N along the line."""
    mesh = solution.assembly.mesh
    n_cases = solution.displacements.shape[1]
    nodes, forces, shares = [], [], []
    for spring in springs:
        m, n = spring.edges.shape
        f = np.einsum("mij,mjc->mic", spring.matrices, solution.displacements[element_dofs(spring.edges)])
        unit = spring.matrices @ np.tile(direction, n)  # response to a unit translation along the line
        nodes.append(spring.edges.ravel())
        forces.append(np.einsum("mndc,d->mnc", f.reshape(m, n, 2, n_cases), direction).reshape(-1, n_cases))
        shares.append((unit.reshape(m, n, 2) @ direction).ravel())
    ids, inverse = np.unique(np.concatenate(nodes), return_inverse=True)
    f_nodes = np.zeros((len(ids), n_cases))
    share = np.zeros(len(ids))
    np.add.at(f_nodes, inverse, np.concatenate(forces))
    np.add.at(share, inverse, np.concatenate(shares))
    t = (mesh.nodes[ids] - origin) @ direction
    order = np.argsort(t, kind="stable")
    net = f_nodes.sum(axis=0)
    self_equilibrating = f_nodes - np.outer(share / share.sum(), net)
    return t[order], -np.cumsum(self_equilibrating[order], axis=0), net


def walls_along_chords(plan: Plan, solution: Solution, cases: list[LoadCase],
                       fe_chords: list[dict[str, ChordResult]]) -> list[dict]:
    """Per case (same order as ``cases``), SI: ``{"lines": {line: {"walls", "net_force",
    "restraint_force", "at", "self_equilibrating": {wall: N}}}, "chords": {edge: {"at",
    "M_over_d", "chord_force", "share_lost", "walls_force", "walls_share"}}}``.
    ``fe_chords`` are the finite-element chord diagrams of each case."""
    springs = {s.wall_id: s for s in solution.assembly.springs}
    extent = float(np.ptp(plan.outline, axis=0).max())
    tol = 1e-7 * extent
    # Running wall forces of every line with walls and of every outline edge, all cases at once.
    line_profiles = {}
    for grid_line in plan.grid_lines:
        walls = [w for w in plan.walls if w.line == grid_line.name]
        if walls:
            line_profiles[grid_line.name] = (grid_line, walls, *restraint_profile(
                [springs[w.id] for w in walls], solution, grid_line.origin, grid_line.direction))
    edge_profiles = {}
    for i, a in enumerate(plan.outline):
        b = plan.outline[(i + 1) % len(plan.outline)]
        e = (b - a) / np.linalg.norm(b - a)
        on_edge = [springs[w.id] for w in plan.walls
                   if max(abs(_cross(e, w.start - a)), abs(_cross(e, w.end - a))) <= tol]
        if on_edge:
            edge_profiles[f"edge {i + 1}"] = restraint_profile(on_edge, solution, a, e)[:2]
    results = []
    for j, case in enumerate(cases):
        lines = {}
        # Wall forces for the beam analogy: walls across the load keep only the share that
        # equilibrium needs (their self-equilibrating part would enter M as a couple).
        needed = {w.id: float(solution.wall_forces[w.id][j]) * w.direction for w in plan.walls}
        for name, (grid_line, walls, t, running, net) in line_profiles.items():
            if abs(float(grid_line.direction @ case.direction)) > 1e-9:
                continue  # not across the load
            k = int(np.argmax(np.abs(running[:, j])))
            k_total = sum(w.k for w in walls)
            forces = {w.id: float(solution.wall_forces[w.id][j] * (w.direction @ grid_line.direction)) for w in walls}
            lines[name] = {
                "walls": tuple(w.id for w in walls),
                "net_force": float(net[j]),
                "restraint_force": float(running[k, j]),
                "at": float(t[k]),
                "self_equilibrating": {w.id: forces[w.id] - float(net[j]) * w.k / k_total for w in walls},
            }
            needed.update({w.id: float(net[j]) * w.k / k_total * grid_line.direction for w in walls})
        chords = {}
        if case.eccentricity_sign == 0:
            reactions = [WallReaction(w.id, w.line, w.start, w.end, needed[w.id]) for w in plan.walls]
            analogy = beam_analogy(plan, case.axis, case.field, reactions)
            for name, (stations, m_over_d) in edge_chords(plan, analogy.chord).items():
                if name not in fe_chords[j] or not np.any(m_over_d):
                    continue
                k = int(np.argmax(np.abs(m_over_d)))
                at, reference = float(stations[k]), float(m_over_d[k])
                fe = fe_chords[j][name]
                chord_force = float(np.interp(at, fe.stations, fe.force))
                walls_force = 0.0
                if name in edge_profiles:
                    t, running = edge_profiles[name]
                    # W is a step function: constant between nodes, changing at each node.
                    before = int(np.searchsorted(t, at + tol, side="right")) - 1
                    walls_force = float(running[before, j]) if before >= 0 else 0.0
                chords[name] = {
                    "at": at,
                    "M_over_d": reference,
                    "chord_force": chord_force,
                    "share_lost": 1.0 - chord_force / reference,
                    "walls_force": walls_force,
                    "walls_share": walls_force / reference,
                }
        results.append({"lines": lines, "chords": chords})
    return results
