"""Element-level tests: rigid-body modes, symmetry, definiteness, orientation, patch test."""

import numpy as np
import pytest

from planshear.fem.elements import (
    bar_stiffness,
    edge_load,
    line_spring_stiffness,
    membrane_rigidity,
    membrane_stiffness,
    shape_functions,
)
from planshear.mesh.model import Mesh, check_mesh

from fe_meshes import add_mid_nodes, solve_membrane

KINDS = ["tri3", "tri6", "quad4", "quad8", "quad9"]
E, NU, T = 1.0e6, 0.25, 0.001
ISOTROPIC = membrane_rigidity(E * T, E * T, NU, E * T / (2 * (1 + NU)))


def single_element(kind):
    corners = np.array([[0.1, 0.0], [1.3, 0.2], [1.0, 1.1]]) if kind.startswith("tri") else \
        np.array([[0.0, 0.0], [1.2, 0.1], [1.4, 1.0], [-0.1, 0.9]])
    linear = np.arange(len(corners))[None, :]
    return add_mid_nodes(corners, linear, kind)


@pytest.mark.parametrize("kind", KINDS)
def test_shape_functions_partition_of_unity(kind):
    points = np.array([[0.2, 0.3], [0.1, 0.05]]) if kind.startswith("tri") else np.array([[0.3, -0.7], [0.9, 0.2]])
    N, dN = shape_functions(kind, points)
    assert np.allclose(N.sum(axis=1), 1.0)
    assert np.allclose(dN.sum(axis=1), 0.0)


@pytest.mark.parametrize("kind", KINDS)
def test_rigid_body_modes_and_definiteness(kind):
    nodes, elements = single_element(kind)
    K = membrane_stiffness(kind, nodes[elements], ISOTROPIC)[0]
    assert np.allclose(K, K.T, rtol=0, atol=1e-9 * np.abs(K).max())
    x, y = nodes[elements[0], 0], nodes[elements[0], 1]
    modes = np.zeros((2 * len(x), 3))
    modes[0::2, 0] = 1.0
    modes[1::2, 1] = 1.0
    modes[0::2, 2], modes[1::2, 2] = -y, x
    assert np.abs(K @ modes).max() <= 1e-9 * np.abs(K).max()
    eigen = np.linalg.eigvalsh(K)
    assert eigen[0] >= -1e-9 * eigen[-1]
    assert np.sum(eigen <= 1e-9 * eigen[-1]) == 3  # exactly the three rigid-body modes


@pytest.mark.parametrize("kind", ["tri6", "quad9"])
def test_clockwise_elements_are_reordered(kind):
    nodes, elements = single_element(kind)
    from planshear.mesh.model import _reverse_order

    clockwise = elements[:, _reverse_order(kind)]
    with pytest.raises(ValueError):
        membrane_stiffness(kind, nodes[clockwise], ISOTROPIC)
    mesh = Mesh(nodes, clockwise, kind, np.array([-1]), np.zeros((0, 3), dtype=int), {}, {}, (), np.zeros((0, 3), dtype=int))
    fixed = check_mesh(mesh, 1.0)
    K_fixed = membrane_stiffness(kind, nodes[fixed.elements], ISOTROPIC)[0]
    K_ccw = membrane_stiffness(kind, nodes[elements], ISOTROPIC)[0]
    assert np.allclose(sorted(np.linalg.eigvalsh(K_fixed)), sorted(np.linalg.eigvalsh(K_ccw)))


# MacNeal & Harder (1985) membrane patch test (VALIDATION.md 5.4): rectangle 0.24 × 0.12,
# interior nodes (0.04,0.02), (0.18,0.03), (0.16,0.08), (0.08,0.08); E = 1e6, ν = 0.25,
# t = 0.001; u = 1e-3 (x + y/2), v = 1e-3 (y + x/2) → σx = σy = 1333.33, τxy = 400.
PATCH_VERTICES = np.array([[0, 0], [0.24, 0], [0.24, 0.12], [0, 0.12],
                           [0.04, 0.02], [0.18, 0.03], [0.16, 0.08], [0.08, 0.08]])
PATCH_QUADS = np.array([[0, 1, 5, 4], [1, 2, 6, 5], [2, 3, 7, 6], [3, 0, 4, 7], [4, 5, 6, 7]])


@pytest.mark.parametrize("kind", KINDS)
def test_membrane_patch_test(kind):
    linear = PATCH_QUADS if kind.startswith("quad") else \
        np.concatenate([PATCH_QUADS[:, [0, 1, 2]], PATCH_QUADS[:, [0, 2, 3]]])
    nodes, elements = add_mid_nodes(PATCH_VERTICES.astype(float), linear, kind)
    x, y = nodes[:, 0], nodes[:, 1]
    exact = np.column_stack([1e-3 * (x + y / 2), 1e-3 * (y + x / 2)]).ravel()
    boundary = np.flatnonzero(np.isclose(x, 0) | np.isclose(x, 0.24) | np.isclose(y, 0) | np.isclose(y, 0.12))
    fixed = np.sort(np.concatenate([2 * boundary, 2 * boundary + 1]))
    u, K = solve_membrane(kind, nodes, elements, ISOTROPIC, fixed, exact[fixed], np.zeros(2 * len(nodes)))
    assert np.allclose(u, exact, rtol=0, atol=1e-13)
    # Stresses from the element strain–displacement matrices at every quadrature point.
    from planshear.fem.elements import _geometry, membrane_strain_matrix, quadrature

    points, _ = quadrature(kind)
    _, dN_xy, _ = _geometry(kind, nodes[elements], points)
    B = membrane_strain_matrix(dN_xy)
    dofs = np.stack([2 * elements, 2 * elements + 1], axis=-1).reshape(len(elements), -1)
    strain = np.einsum("eqkd,ed->eqk", B, u[dofs])
    stress = np.einsum("kl,eql->eqk", ISOTROPIC[0], strain) / T
    assert np.allclose(stress[..., 0], 1333.3333333, rtol=1e-9)
    assert np.allclose(stress[..., 1], 1333.3333333, rtol=1e-9)
    assert np.allclose(stress[..., 2], 400.0, rtol=1e-9)


@pytest.mark.parametrize("n_nodes", [2, 3])
def test_bar_axial_stiffness(n_nodes):
    """A straight bar of length L under end forces: stiffness EA/L along its axis only."""
    xy = np.array([[[0.0, 0.0], [3.0, 4.0], [1.5, 2.0]]])[:, :n_nodes]
    K = bar_stiffness(xy, np.array([2.0e6]))[0]
    tangent = np.array([0.6, 0.8])
    stretch = np.concatenate([np.zeros(2), tangent] + ([0.5 * tangent] if n_nodes == 3 else []))
    forces = (K @ stretch).reshape(-1, 2)
    assert forces[1] @ tangent == pytest.approx(2.0e6 / 5.0)
    normal = np.array([-0.8, 0.6])
    sideways = np.concatenate([np.zeros(2), normal] + ([0.5 * normal] if n_nodes == 3 else []))
    assert np.allclose(K @ sideways, 0.0, atol=1e-6)


def test_line_spring_total_equals_wall_stiffness():
    """Two quadratic edges under a wall of stiffness k: a translation δ along the wall
    gives a total force k·δ; a translation across it gives none."""
    xy = np.array([[[0.0, 0.0], [0.0, 2.0], [0.0, 1.0]], [[0.0, 2.0], [0.0, 5.0], [0.0, 3.5]]])
    k_total, length = 7.0e6, 5.0
    K = line_spring_stiffness(xy, np.full(2, k_total / length), np.tile([0.0, 1.0], (2, 1)))
    along = np.tile([0.0, 1.0], 3)
    across = np.tile([1.0, 0.0], 3)
    total = sum((K[i] @ along).reshape(-1, 2)[:, 1].sum() for i in range(2))
    assert total == pytest.approx(k_total)
    assert np.allclose(K @ across, 0.0)


def test_edge_load_is_consistent():
    xy = np.array([[[0.0, 0.0], [4.0, 0.0], [2.0, 0.0]]])
    f = edge_load(xy, np.array([3.0]), np.array([0.0, 1.0]))[0].reshape(-1, 2)
    assert f[:, 1] == pytest.approx([2.0, 2.0, 8.0])  # qL/6, qL/6, 2qL/3
