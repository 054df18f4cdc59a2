"""Collectors and chords of the semi-rigid model: the bar force read out as EA·ε, and a
collector on every piece of a line of resistance that carries a wall."""

import numpy as np
import pytest

from planshear.fem.elements import bar_axial_force, bar_stiffness, edge_load
from planshear.loads import expand_load_cases
from planshear.semirigid import semirigid_analysis

from conftest import KIP
from test_semirigid import centred_wall_plan


def test_quadratic_bar_picking_up_a_uniform_shear_flow_is_exact():
    """A bar fixed at x = 0 that picks up a uniform shear flow q along its length L has
    N(x) = q·(L − x) (statics: the force collected beyond x) and u(x) = q(Lx − x²/2)/EA,
    a quadratic that 3-node bars reproduce exactly; so EA·ε at every element end equals
    N(x) to round-off. The element's start nodal force is −(N + ΔN/6) instead (ΔN = −q·h
    over an element of length h): the old read-out, which this test keeps out."""
    L, n, EA, q = 12.0, 4, 2.0e8, 3.0e4  # m, elements, N, N/m
    x = np.linspace(0.0, L, 2 * n + 1)
    nodes = np.column_stack([x, np.zeros_like(x)])
    edges = np.column_stack([np.arange(0, 2 * n, 2), np.arange(2, 2 * n + 1, 2), np.arange(1, 2 * n, 2)])
    K_e = bar_stiffness(nodes[edges], np.full(n, EA))
    f_e = edge_load(nodes[edges], np.full(n, q), np.array([1.0, 0.0]))
    dofs = np.stack([2 * edges, 2 * edges + 1], axis=-1).reshape(n, -1)
    K = np.zeros((2 * len(x), 2 * len(x)))
    f = np.zeros(2 * len(x))
    np.add.at(K, (dofs[:, :, None], dofs[:, None, :]), K_e)
    np.add.at(f, dofs, f_e)
    free = np.arange(2, 2 * len(x), 2)  # x DOFs except the fixed node 0 (y DOFs carry nothing)
    u = np.zeros(2 * len(x))
    u[free] = np.linalg.solve(K[np.ix_(free, free)], f[free])
    assert u[0::2] == pytest.approx(q * (L * x - x**2 / 2) / EA, rel=1e-12, abs=1e-15)
    N = bar_axial_force(nodes[edges], np.full(n, EA), u[dofs][:, :, None], np.array([-1.0, 0.0, 1.0]))[..., 0]
    x_at = np.column_stack([x[edges[:, 0]], x[edges[:, 2]], x[edges[:, 1]]])
    assert N == pytest.approx(q * (L - x_at), rel=1e-10, abs=1e-12 * q * L)
    nodal = np.einsum("mij,mj->mi", K_e, u[dofs])[:, 0]  # start node, along x
    h = L / n
    assert -nodal == pytest.approx(q * (L - x_at[:, 0]) - q * h / 6, rel=1e-10)


def test_collector_diagram_is_continuous_and_free_ends_carry_nothing(plan_from):
    """A 20-ft wall centred on a 50-ft line with a collector, 100 kip on a 100 × 50 ft
    plan: beam-analogy peak 1.0 k/ft × 15 ft = 15 k at the wall ends (VALIDATION.md 6.6,
    statics), zero at the free ends of the line. Read out as EA·ε the diagram agrees
    within 1 % (the membrane's own axial stiffness keeps a little of the drag), its free
    ends carry less than 1e-4 of the peak (the natural end condition is met only weakly)
    and the two values at every shared node differ by less than 0.2 % of the peak (strains
    of C0 elements jump at nodes by the discretization error). The element nodal forces
    read before gave 0.39 k at the free ends, jumps of 1 k and a peak 0.9 % low."""
    plan = plan_from(centred_wall_plan("1e4 kip/in", "1e5 kip"))
    case = semirigid_analysis(plan, expand_load_cases(plan)).result.cases["E+y"]
    line = case.lines["1"]
    N = line.collector / KIP
    assert np.all(np.diff(line.stations) >= 0)
    assert abs(line.peak) / KIP == pytest.approx(15.0, rel=0.01)
    assert abs(N[0]) < 1e-4 * 15 and abs(N[-1]) < 1e-4 * 15
    assert np.allclose(line.stations[1:-1:2], line.stations[2::2])
    assert np.max(np.abs(N[2::2] - N[1:-1:2])) < 2e-3 * 15
    for chord in case.chords.values():
        # Chords: the same order of pairs, the same continuity (M/d = 25 k here, VALIDATION.md 6.6).
        assert np.all(np.diff(chord.stations) >= 0)
        assert np.max(np.abs(np.diff(chord.force)[1::2])) < 2e-3 * 25 * KIP
    assert case.chords["edge 3"].peak / KIP == pytest.approx(25.0, rel=0.01)
