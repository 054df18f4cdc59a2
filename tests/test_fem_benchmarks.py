"""Membrane solution against published benchmarks and an independent FE library."""

import numpy as np
import pytest

from planshear.fem.elements import edge_load, membrane_rigidity

from fe_meshes import mapped_mesh, solve_membrane

COOK_CORNERS = [[0, 0], [48, 44], [48, 60], [0, 44]]


def _edge_traction(nodes, kind, selected, along, q, direction):
    """Consistent loads of a uniform traction q on the straight edge through `selected` nodes."""
    order = selected[np.argsort(along[selected])]
    f = np.zeros(2 * len(nodes))
    step = 2 if kind in ("tri6", "quad8", "quad9") else 1
    for i in range(0, len(order) - 1, step):
        idx = [order[i], order[i + step]] + ([order[i + 1]] if step == 2 else [])
        fe = edge_load(nodes[idx][None], np.array([q]), np.asarray(direction, float))[0]
        for a, node in enumerate(idx):
            f[2 * node : 2 * node + 2] += fe[2 * a : 2 * a + 2]
    return f


def cook_tip(kind, n):
    """Cook's membrane: E = 1, ν = 1/3, t = 1, left edge clamped, shear 1/16 per length on
    the right edge; returns v at the mid-point (48, 52) of the loaded edge."""
    E, nu = 1.0, 1 / 3
    D = membrane_rigidity(E, E, nu, E / (2 * (1 + nu)))
    nodes, elements = mapped_mesh(COOK_CORNERS, n, n, kind)
    x, y = nodes[:, 0], nodes[:, 1]
    left = np.flatnonzero(np.isclose(x, 0))
    fixed = np.sort(np.concatenate([2 * left, 2 * left + 1]))
    f = _edge_traction(nodes, kind, np.flatnonzero(np.isclose(x, 48)), y, 1 / 16, [0.0, 1.0])
    u, _ = solve_membrane(kind, nodes, elements, D, fixed, np.zeros(len(fixed)), f)
    k = np.flatnonzero(np.isclose(x, 48) & np.isclose(y, 52))[0]
    return u[2 * k + 1], nodes, elements, u


def test_cook_membrane_converges_to_reference():
    """Cook (1974), J. Struct. Div. ASCE 100(ST9); reference 23.96 at the loaded edge's
    mid-point (48, 52), as used in the FEniCS/dolfinx static-condensation demo and the
    FinEtools Cook tutorial (VALIDATION.md 5.1). Quadratic triangles within 1 % at 16 × 16;
    the observed rate from 8, 16, 32 lies between 1 and 3 (a corner singularity keeps it
    below the smooth-solution rate of 3 for displacements)."""
    v8, v16, v32 = (cook_tip("tri6", n)[0] for n in (8, 16, 32))
    assert v16 == pytest.approx(23.96, rel=0.01)
    assert v8 < v16 < v32 < 23.98  # monotone from below (stiff side), as displacement methods are
    rate = np.log2((v16 - v8) / (v32 - v16))
    assert 1.0 < rate < 3.0
    extrapolated = v32 + (v32 - v16) / (2**rate - 1)
    assert extrapolated == pytest.approx(23.96, rel=2e-3)


def test_cook_membrane_bilinear_matches_tabulated_values():
    """Bilinear Q4 (2×2 Gauss) at (48, 52) on n × n meshes: 11.85, 18.30, 22.08, 23.43
    (VALIDATION.md 5.1, the usual tabulation for Cook's membrane)."""
    values = [cook_tip("quad4", n)[0] for n in (2, 4, 8, 16)]
    assert values == pytest.approx([11.85, 18.30, 22.08, 23.43], abs=0.006)


@pytest.mark.parametrize(
    ("kind", "shape"),
    [("tri6", "rectangular"), ("quad9", "rectangular"), ("quad8", "rectangular"), ("quad9", "trapezoidal")],
)
def test_macneal_harder_cantilever_in_plane_shear(kind, shape):
    """MacNeal & Harder (1985), Finite Elements in Analysis and Design 1(1):3–20: straight
    cantilever L = 6, depth 0.2, t = 0.1, E = 1e7, ν = 0.3, 6 × 1 elements, unit in-plane
    shear at the tip: reference tip deflection 0.1081 (VALIDATION.md 5.2). Within 2 % on
    the regular (rectangular) mesh. On the trapezoidal mesh (interior edges tilted ±45°)
    only the 9-node quadrilateral stays within 2 %; 6-node triangles and 8-node
    quadrilaterals are about 10 % stiff there, which is why meshes are refined near walls."""
    L, h, t, E, nu = 6.0, 0.2, 0.1, 1.0e7, 0.3
    D = membrane_rigidity(E * t, E * t, nu, E * t / (2 * (1 + nu)))
    nodes, elements = mapped_mesh([[0, 0], [L, 0], [L, h], [0, h]], 6, 1, kind)
    if shape == "trapezoidal":
        # Interior vertical lines at x = 1..5 lean alternately by ±h/2 at top and bottom.
        x, y = nodes[:, 0], nodes[:, 1]
        column = np.rint(x).astype(int)
        interior = (np.abs(x - column) < 1e-9) & (column > 0) & (column < 6)
        lean = np.where(column % 2 == 0, 1.0, -1.0) * (y - h / 2) * 1.0
        nodes = nodes.copy()
        nodes[interior, 0] += lean[interior]
        # Mid-side nodes follow their (straight) edges.
        from fe_meshes import add_mid_nodes

        corner_count = 14
        linear = elements[:, : (3 if kind.startswith("tri") else 4)]
        nodes, elements = add_mid_nodes(nodes[:corner_count], linear, kind)
    x, y = nodes[:, 0], nodes[:, 1]
    root = np.flatnonzero(np.isclose(x, 0))
    fixed = np.sort(np.concatenate([2 * root, 2 * root + 1]))
    tip = np.flatnonzero(np.isclose(x, L))
    f = _edge_traction(nodes, kind, tip, y, 1.0 / h, [0.0, 1.0])
    u, _ = solve_membrane(kind, nodes, elements, D, fixed, np.zeros(len(fixed)), f)
    tip_deflection = u[2 * tip + 1].mean()
    assert tip_deflection == pytest.approx(0.1081, rel=0.02)


def test_same_mesh_as_scikit_fem():
    """scikit-fem (independent assembly) with P2 plane-stress elasticity on the very same
    Cook's-membrane triangulation: nodal displacements agree to 1e-8 relative."""
    skfem = pytest.importorskip("skfem")
    from skfem import (
        Basis,
        ElementTriP2,
        ElementVector,
        FacetBasis,
        LinearForm,
        MeshTri,
        asm,
        condense,
        solve,
    )
    from skfem.models.elasticity import linear_elasticity

    n = 8
    _, nodes, elements, u_ours = cook_tip("tri6", n)
    vertices = nodes[: (n + 1) ** 2]
    mesh = MeshTri(vertices.T.copy(), elements[:, :3].T.copy())
    element = ElementVector(ElementTriP2())
    basis = Basis(mesh, element, intorder=4)
    E, nu = 1.0, 1 / 3
    lam, mu = E * nu / (1 - nu**2), E / (2 * (1 + nu))  # plane-stress Lamé pair
    K = asm(linear_elasticity(lam, mu), basis)
    right = mesh.facets_satisfying(lambda x: np.isclose(x[0], 48.0))
    facet_basis = FacetBasis(mesh, element, facets=right, intorder=4)

    @LinearForm
    def traction(v, w):
        return v[1] / 16.0

    f = asm(traction, facet_basis)
    clamped = basis.get_dofs(lambda x: np.isclose(x[0], 0.0)).all()
    u_ref = solve(*condense(K, f, D=clamped))
    locations = basis.doflocs.T
    components = np.empty(basis.N, dtype=int)
    for c, idx in enumerate(basis.split_indices()):
        components[idx] = c
    # Match every scikit-fem DOF to our node at the same place.
    from scipy.spatial import cKDTree

    distance, node = cKDTree(nodes).query(locations)
    assert distance.max() < 1e-9
    ours = u_ours[2 * node + components]
    assert np.max(np.abs(ours - u_ref)) <= 1e-8 * np.max(np.abs(u_ref))
    del skfem
