"""Accidental torsion in the semi-rigid model: for any weight distribution (one point
weight, a small footprint, a line, an area) it adds exactly the moment T = F·e about z and
no net force, and the wall forces stay finite and in equilibrium.

Source of the moment: ASCE 7-16 §12.8.4.2, the center of mass displaced each way by 5 %
of the plan dimension perpendicular to the load (from memory), i.e. T = ±F·0.05·B.
"""

from __future__ import annotations

import textwrap

import numpy as np
import pytest

from planshear.fem import assemble, load_vectors, solve
from planshear.fem.model import nodal_area, torsion_vector
from planshear.idealized import rigid_analysis
from planshear.loads import expand_load_cases
from planshear.mesh import build_mesh

from conftest import KIP, end_walls, rectangle_plan

POINT_LOAD = textwrap.dedent(
    """
    [[load]]
    name = "E"
    kind = "seismic"
    point_weight = [{ at = [40, 20], weight = "500 kip" }]
    total = "100 kip"
    directions = ["x", "y"]
    """
)


@pytest.fixture(scope="module")
def mesh_and_plan():
    from planshear.plan import parse_plan

    plan = parse_plan(rectangle_plan(walls=end_walls(), load=POINT_LOAD, extra="[mesh]\nsize = 10.0\n"))
    return plan, build_mesh(plan)


def _resultant(forces: np.ndarray, nodes: np.ndarray, about: np.ndarray) -> tuple[np.ndarray, float]:
    f = forces.reshape(-1, 2)
    arm = nodes - about
    return f.sum(axis=0), float(np.sum(arm[:, 0] * f[:, 1] - arm[:, 1] * f[:, 0]))


def _distributions(mesh):
    """Nodal loads along x (n_dofs,) of 100 kip: one node, a few nodes close together (a
    small footprint), nodes on one line, and the whole area."""
    nodes, n = mesh.nodes, mesh.n_nodes
    out = {}
    one = np.zeros((n, 2))
    one[np.argmin(np.hypot(*(nodes - [12.0, 6.0]).T)), 0] = 1.0
    out["point"] = one
    centre = nodes[np.argmin(np.hypot(*(nodes - [12.0, 6.0]).T))]
    near = np.argsort(np.hypot(*(nodes - centre).T))[:4]
    footprint = np.zeros((n, 2))
    footprint[near, 0] = 1.0
    out["footprint"] = footprint
    on_line = np.abs(nodes[:, 1] - nodes[:, 1].max() / 2) < 1e-6
    line = np.zeros((n, 2))
    line[on_line, 0] = 1.0
    out["line"] = line
    area = np.zeros((n, 2))
    area[:, 0] = nodal_area(mesh)
    out["area"] = area
    return {name: (d / d.sum() * 100 * KIP).ravel() for name, d in out.items()}


@pytest.mark.parametrize("shape", ["point", "footprint", "line", "area"])
def test_torsion_adds_exactly_the_moment_and_no_force(mesh_and_plan, shape):
    """T = F·e with F = 100 kip and e = 0.05 × 50 ft: the added nodal forces sum to zero
    and their moment about any point is T, to round-off, whatever the load's shape."""
    _, mesh = mesh_and_plan
    f = _distributions(mesh)[shape]
    torsion = 100 * KIP * 0.05 * 50 * 0.3048
    added, basis = torsion_vector(f, mesh.nodes, np.array([1.0, 0.0]), torsion, nodal_area(mesh))
    assert np.all(np.isfinite(added))
    for about in (np.zeros(2), mesh.nodes.mean(axis=0), np.array([50.0, -20.0])):
        force, moment = _resultant(added, mesh.nodes, about)
        assert np.abs(force).max() <= 1e-12 * 100 * KIP
        assert moment == pytest.approx(torsion, rel=1e-12)
    # A concentrated load cannot carry the moment by itself: it goes to the diaphragm area.
    assert basis == {"point": "area", "footprint": "area", "line": "load", "area": "load"}[shape]
    # No force larger than the direct load of the case (no local blow-up).
    assert np.abs(added).max() <= 100 * KIP


def test_one_point_weight_gives_finite_balanced_wall_forces(mesh_and_plan):
    """One point weight, wood-panel diaphragm: the ±ecc cases divided by a zero polar moment
    before (wall forces of 1e15 kip). Now every case's wall forces balance the applied force
    and its moment about the center of mass plus T (statics), and the torsion cases differ
    from the base case by a pure couple."""
    plan, mesh = mesh_and_plan
    cases = [c for c in expand_load_cases(plan) if "semirigid" in c.assumptions]
    solution = solve(assemble(plan, mesh), plan, cases, load_vectors(plan, mesh, cases))
    for j, case in enumerate(cases):
        forces = np.array([solution.wall_forces[w.id][j] * w.direction for w in plan.walls])
        arms = np.array([w.midpoint for w in plan.walls]) - case.center
        moment = float(np.sum(arms[:, 0] * forces[:, 1] - arms[:, 1] * forces[:, 0]))
        assert np.allclose(forces.sum(axis=0), case.force * case.direction, rtol=0, atol=1e-9 * case.force)
        assert moment == pytest.approx(case.torsion, abs=1e-9 * case.force * 100 * 0.3048)
        assert max(abs(f[j]) for f in solution.wall_forces.values()) < case.force


def test_point_weight_near_rigid_matches_rigid_method_for_ecc_cases(plan_from):
    """With a near-rigid diaphragm (Et = Gt = 1e6 kip/in) the semi-rigid wall forces of the
    ±ecc cases of a one-point-weight load must equal the rigid method's (3×3 statics with
    the moment F·e) within 1 % of the load."""
    material = '{ kind = "custom", Et_x = "1000000 kip/in", Et_y = "1000000 kip/in", Gt = "1000000 kip/in" }'
    text = rectangle_plan(walls=end_walls(k="40 kip/in"), load=POINT_LOAD, material=material,
                          extra="[mesh]\nsize = 10.0\n").replace('chord_EA = "40000 kip"', 'chord_EA = "1e8 kip"')
    plan = plan_from(text)
    cases = expand_load_cases(plan)
    selected = [c for c in cases if "semirigid" in c.assumptions]
    mesh = build_mesh(plan)
    solution = solve(assemble(plan, mesh), plan, selected, load_vectors(plan, mesh, selected))
    rigid = rigid_analysis(plan, cases)
    ecc = [j for j, c in enumerate(selected) if c.eccentricity_sign != 0]
    assert len(ecc) == 4
    for j in ecc:
        case = selected[j]
        for wall_id, force in solution.wall_forces.items():
            assert abs(force[j] - rigid.cases[case.name].wall_forces[wall_id]) <= 0.01 * case.force


def test_wind_edge_load_with_eccentricity_near_rigid_matches_rigid(plan_from):
    """A wind edge load (a line load on the windward edge) with eccentricity 0.15 of the
    plan width (ASCE 7-16 Fig. 27.3-8 load case 2, from memory): the moment follows the
    edge load itself; with a near-rigid diaphragm the ±ecc wall forces equal the rigid
    method's within 1 % of the load."""
    material = '{ kind = "custom", Et_x = "1000000 kip/in", Et_y = "1000000 kip/in", Gt = "1000000 kip/in" }'
    wind = '[[load]]\nname = "W"\nkind = "edge"\nintensity = "0.4 kip/ft"\ndirections = ["x", "y"]\neccentricity = 0.15\n'
    text = rectangle_plan(walls=end_walls(k="40 kip/in"), load=wind, material=material,
                          extra="[mesh]\nsize = 10.0\n").replace('chord_EA = "40000 kip"', 'chord_EA = "1e8 kip"')
    plan = plan_from(text)
    cases = expand_load_cases(plan)
    selected = [c for c in cases if "semirigid" in c.assumptions]
    mesh = build_mesh(plan)
    loads = load_vectors(plan, mesh, selected)
    solution = solve(assemble(plan, mesh), plan, selected, loads)
    rigid = rigid_analysis(plan, cases)
    ecc = [j for j, c in enumerate(selected) if c.eccentricity_sign != 0]
    assert len(ecc) == 8  # W±x, W±y, each ±ecc
    for j in ecc:
        case = selected[j]
        base = loads[:, [c.name for c in selected].index(case.name.rsplit("+ecc", 1)[0].rsplit("-ecc", 1)[0])]
        _, basis = torsion_vector(base, mesh.nodes, case.direction, case.torsion, nodal_area(mesh))
        assert basis == "load"
        for wall_id, force in solution.wall_forces.items():
            assert abs(force[j] - rigid.cases[case.name].wall_forces[wall_id]) <= 0.01 * case.force


def test_the_notes_say_how_the_torsion_was_spread(mesh_and_plan):
    """The reviewer is told when the moment went to the diaphragm area instead of the load."""
    from dataclasses import replace

    from planshear.loads import ForceField
    from planshear.semirigid import semirigid_analysis

    plan, mesh = mesh_and_plan
    # The plan's point weight is carried across the depth along its line of action, a band
    # wide enough for the moment to follow the load itself.
    cases = expand_load_cases(plan)
    result = semirigid_analysis(plan, cases, mesh=mesh).result
    assert set(result.extra["accidental_torsion_spread"].values()) == {"load"}
    # The same force as one concentrated nodal load: the moment goes to the diaphragm area.
    concentrated = [replace(c, field=ForceField(c.direction, (), (), ((12.192, 6.096, c.force),))) for c in cases]
    result = semirigid_analysis(plan, concentrated, mesh=mesh).result
    assert set(result.extra["accidental_torsion_spread"].values()) == {"area"}
    assert any("spread over the diaphragm area" in note for note in result.notes)
