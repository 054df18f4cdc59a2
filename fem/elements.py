"""Element matrices for all elements at once.

Array conventions (SI units):

* coordinates ``xy``: (n_elements, n_element_nodes, 2), gmsh node order;
* element DOFs are interleaved per node: [u0, v0, u1, v1, …];
* stiffness blocks: (n_elements, n_dof, n_dof); load blocks: (n_elements, n_dof);
* quadrature points are an array axis q; no loop runs over elements.

Membrane: orthotropic plane stress with per-unit-width rigidities, membrane forces
N = D ε with D = [[Et_x, ν_yx·Et_x, 0], [ν_xy·Et_y, Et_y, 0], [0, 0, Gt]] / (1 − ν_xy ν_yx)
(off-diagonal ν_xy·Et_y = ν_yx·Et_x, ν_xy = ν). Bars and line springs use the 2- or
3-node line shape functions of the element edges.
"""

from __future__ import annotations

import numpy as np

__all__ = [
    "shape_functions",
    "natural_coordinates",
    "quadrature",
    "membrane_rigidity",
    "membrane_stiffness",
    "membrane_strain_matrix",
    "area_load",
    "area_weights",
    "edge_shape",
    "bar_stiffness",
    "bar_axial_force",
    "line_spring_stiffness",
    "edge_load",
]

_G3 = np.sqrt(3.0 / 5.0)
_GAUSS = {
    2: (np.array([-1.0, 1.0]) / np.sqrt(3.0), np.array([1.0, 1.0])),
    3: (np.array([-_G3, 0.0, _G3]), np.array([5.0, 8.0, 5.0]) / 9.0),
}
# Quadrilateral node positions (ξ, η) in gmsh order.
_QUAD_NODES = np.array([[-1, -1], [1, -1], [1, 1], [-1, 1], [0, -1], [1, 0], [0, 1], [-1, 0], [0, 0]], dtype=float)


def quadrature(element_type: str) -> tuple[np.ndarray, np.ndarray]:
    """Points (n_q, 2) and weights (n_q,) that integrate the element stiffness exactly
    on straight-sided elements (triangles: the 3-point degree-2 rule; quadrilaterals:
    2×2 or 3×3 Gauss)."""
    if element_type.startswith("tri"):
        points = np.array([[1 / 6, 1 / 6], [2 / 3, 1 / 6], [1 / 6, 2 / 3]])
        return points, np.full(3, 1 / 6)
    n = 2 if element_type == "quad4" else 3
    g, w = _GAUSS[n]
    xi, eta = np.meshgrid(g, g, indexing="ij")
    return np.column_stack([xi.ravel(), eta.ravel()]), np.outer(w, w).ravel()


def shape_functions(element_type: str, points: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Shape functions N (n_q, n_nodes) and reference derivatives dN (n_q, n_nodes, 2)."""
    xi, eta = points[:, 0], points[:, 1]
    one = np.ones_like(xi)
    zero = np.zeros_like(xi)
    if element_type == "tri3":
        N = np.column_stack([1 - xi - eta, xi, eta])
        dN = np.stack([np.column_stack([-one, one, zero]), np.column_stack([-one, zero, one])], axis=-1)
        return N, dN
    if element_type == "tri6":
        L1, L2, L3 = 1 - xi - eta, xi, eta
        N = np.column_stack([L1 * (2 * L1 - 1), L2 * (2 * L2 - 1), L3 * (2 * L3 - 1), 4 * L1 * L2, 4 * L2 * L3, 4 * L3 * L1])
        # dL1 = (−1, −1), dL2 = (1, 0), dL3 = (0, 1)
        dxi = np.column_stack([-(4 * L1 - 1), 4 * L2 - 1, zero, 4 * (L1 - L2), 4 * L3, -4 * L3])
        deta = np.column_stack([-(4 * L1 - 1), zero, 4 * L3 - 1, -4 * L2, 4 * L2, 4 * (L1 - L3)])
        return N, np.stack([dxi, deta], axis=-1)
    if element_type == "quad4":
        s, t = _QUAD_NODES[:4, 0], _QUAD_NODES[:4, 1]
        N = 0.25 * (1 + xi[:, None] * s) * (1 + eta[:, None] * t)
        dxi = 0.25 * s * (1 + eta[:, None] * t)
        deta = 0.25 * t * (1 + xi[:, None] * s)
        return N, np.stack([dxi, deta], axis=-1)
    if element_type == "quad9":
        lx, dlx = _lagrange3(xi)
        ly, dly = _lagrange3(eta)
        ia = (_QUAD_NODES[:, 0] + 1).astype(int)
        ib = (_QUAD_NODES[:, 1] + 1).astype(int)
        N = lx[:, ia] * ly[:, ib]
        return N, np.stack([dlx[:, ia] * ly[:, ib], lx[:, ia] * dly[:, ib]], axis=-1)
    if element_type == "quad8":
        s, t = _QUAD_NODES[:8, 0], _QUAD_NODES[:8, 1]
        X, E = xi[:, None], eta[:, None]
        corner = np.arange(8) < 4
        N = np.where(
            corner,
            0.25 * (1 + X * s) * (1 + E * t) * (X * s + E * t - 1),
            np.where(s == 0, 0.5 * (1 - X**2) * (1 + E * t), 0.5 * (1 + X * s) * (1 - E**2)),
        )
        dxi = np.where(
            corner,
            0.25 * s * (1 + E * t) * (2 * X * s + E * t),
            np.where(s == 0, -X * (1 + E * t), 0.5 * s * (1 - E**2)),
        )
        deta = np.where(
            corner,
            0.25 * t * (1 + X * s) * (X * s + 2 * E * t),
            np.where(s == 0, 0.5 * t * (1 - X**2), -E * (1 + X * s)),
        )
        return N, np.stack([dxi, deta], axis=-1)
    raise ValueError(f"unknown element type {element_type}")


def natural_coordinates(element_type: str, corners: np.ndarray, points: np.ndarray) -> np.ndarray:
    """Reference coordinates (n, 2) of points (n, 2) in straight-sided elements with corner
    coordinates ``corners`` (n, 3 or 4, 2): barycentric (ξ, η) for triangles, Newton on the
    bilinear corner map for quadrilaterals (their mid-side nodes lie at mid-side, so the map
    of every quadrilateral kind is that bilinear map)."""
    if element_type.startswith("tri"):
        a = np.stack([corners[:, 1] - corners[:, 0], corners[:, 2] - corners[:, 0]], axis=-1)  # (n, 2, 2)
        return np.linalg.solve(a, (points - corners[:, 0])[..., None])[..., 0]
    ref = np.zeros((len(points), 2))
    for _ in range(12):
        N, dN = shape_functions("quad4", ref)  # one row per point: each has its own coordinates
        mapped = np.einsum("pn,pnd->pd", N, corners)
        jacobian = np.einsum("pnr,pnd->pdr", dN, corners)
        step = np.linalg.solve(jacobian, (points - mapped)[..., None])[..., 0]
        ref += step
        if np.max(np.abs(step), initial=0.0) < 1e-12:
            break
    return ref


def _lagrange3(s: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """1-D quadratic Lagrange basis on nodes −1, 0, 1 and its derivative, (n, 3)."""
    values = np.column_stack([0.5 * s * (s - 1), 1 - s**2, 0.5 * s * (s + 1)])
    slopes = np.column_stack([s - 0.5, -2 * s, s + 0.5])
    return values, slopes


def membrane_rigidity(Et_x: np.ndarray, Et_y: np.ndarray, nu: np.ndarray, Gt: np.ndarray) -> np.ndarray:
    """Plane-stress rigidity matrices D (n, 3, 3) in N/m from per-unit-width rigidities;
    ``nu`` is ν_xy (strain in y from stress in x), ν_yx = ν_xy·Et_y/Et_x."""
    Et_x, Et_y, nu, Gt = (np.atleast_1d(np.asarray(a, dtype=float)) for a in (Et_x, Et_y, nu, Gt))
    nu_yx = nu * Et_y / Et_x
    factor = 1.0 / (1.0 - nu * nu_yx)
    D = np.zeros((len(Et_x), 3, 3))
    D[:, 0, 0] = factor * Et_x
    D[:, 1, 1] = factor * Et_y
    D[:, 0, 1] = D[:, 1, 0] = factor * nu * Et_y
    D[:, 2, 2] = Gt
    return D


def _geometry(element_type: str, xy: np.ndarray, points: np.ndarray):
    """Shape functions, physical derivatives (n_e, n_q, n_nodes, 2) and det J (n_e, n_q)."""
    N, dN = shape_functions(element_type, points)
    jac = np.einsum("qai,eaj->eqij", dN, xy)
    det = jac[..., 0, 0] * jac[..., 1, 1] - jac[..., 0, 1] * jac[..., 1, 0]
    inv = np.empty_like(jac)
    inv[..., 0, 0] = jac[..., 1, 1] / det
    inv[..., 1, 1] = jac[..., 0, 0] / det
    inv[..., 0, 1] = -jac[..., 0, 1] / det
    inv[..., 1, 0] = -jac[..., 1, 0] / det
    dN_xy = np.einsum("eqji,qai->eqaj", inv, dN)
    return N, dN_xy, det


def membrane_strain_matrix(dN_xy: np.ndarray) -> np.ndarray:
    """B (n_e, n_q, 3, 2·n_nodes) with strains (ε_x, ε_y, γ_xy) = B u_e."""
    n_e, n_q, n_nodes, _ = dN_xy.shape
    B = np.zeros((n_e, n_q, 3, 2 * n_nodes))
    B[:, :, 0, 0::2] = dN_xy[..., 0]
    B[:, :, 1, 1::2] = dN_xy[..., 1]
    B[:, :, 2, 0::2] = dN_xy[..., 1]
    B[:, :, 2, 1::2] = dN_xy[..., 0]
    return B


def membrane_stiffness(element_type: str, xy: np.ndarray, D: np.ndarray) -> np.ndarray:
    """Membrane stiffness (n_e, 2·n_nodes, 2·n_nodes) in N/m; ``D`` (n_e, 3, 3)."""
    points, weights = quadrature(element_type)
    _, dN_xy, det = _geometry(element_type, xy, points)
    if np.any(det <= 0):
        raise ValueError("an element has a non-positive Jacobian (inverted or degenerate element)")
    B = membrane_strain_matrix(dN_xy)  # (n_e, n_q, 3, d)
    n_e, n_q, _, d = B.shape
    # Σ_q Bᵀ D B w det J as one batched matrix product over (quadrature point, strain):
    # about twice as fast as the equivalent three-operand einsum.
    DB = np.matmul(D[:, None], B) * (det * weights)[:, :, None, None]
    return np.matmul(B.reshape(n_e, n_q * 3, d).transpose(0, 2, 1), DB.reshape(n_e, n_q * 3, d))


def area_weights(element_type: str, xy: np.ndarray) -> np.ndarray:
    """∫ N_a dA (n_e, n_nodes) in m²: each node's share of each element's area, i.e. the
    consistent nodal load of a unit pressure (formed once, scaled per load)."""
    points, weights = quadrature(element_type)
    N, dN = shape_functions(element_type, points)
    jac = np.einsum("qai,eaj->eqij", dN, xy)  # only det J is needed here
    det = jac[..., 0, 0] * jac[..., 1, 1] - jac[..., 0, 1] * jac[..., 1, 0]
    return (det * weights) @ N


def area_load(element_type: str, xy: np.ndarray, pressure: np.ndarray, direction: np.ndarray) -> np.ndarray:
    """Consistent nodal forces (n_e, 2·n_nodes) of a uniform load ``pressure`` (N/m², per
    element) acting along the unit vector ``direction``."""
    points, weights = quadrature(element_type)
    N, _, det = _geometry(element_type, xy, points)
    scalar = np.einsum("qa,eq->ea", N, det * weights) * pressure[:, None]
    return (scalar[:, :, None] * direction[None, None, :]).reshape(len(xy), -1)


def edge_shape(n_nodes: int, s: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Line shape functions on s ∈ [−1, 1] in edge order (start, end[, mid]) and their
    s-derivatives, each (n_s, n_nodes)."""
    if n_nodes == 2:
        return np.column_stack([(1 - s) / 2, (1 + s) / 2]), np.column_stack([-0.5 + 0 * s, 0.5 + 0 * s])
    values, slopes = _lagrange3(s)
    return values[:, [0, 2, 1]], slopes[:, [0, 2, 1]]


def _edge_frame(xy: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Length (m,) and unit tangent (m, 2) of straight edges with nodes (start, end[, mid])."""
    vector = xy[:, 1] - xy[:, 0]
    length = np.hypot(vector[:, 0], vector[:, 1])
    return length, vector / length[:, None]


def _line_matrix(kind: str, n_nodes: int, length: np.ndarray) -> np.ndarray:
    """∫ N_i' N_j' dx ("stiffness") or ∫ N_i N_j dx ("mass") on straight edges, (m, n, n)."""
    g, w = _GAUSS[3]
    N, dN = edge_shape(n_nodes, g)
    if kind == "mass":
        ref = np.einsum("qi,qj,q->ij", N, N, w)
        return ref[None] * (length / 2.0)[:, None, None]
    ref = np.einsum("qi,qj,q->ij", dN, dN, w)
    return ref[None] * (2.0 / length)[:, None, None]


def _expand(scalar: np.ndarray, direction: np.ndarray) -> np.ndarray:
    """(m, n, n) scalar matrices ⊗ direction·directionᵀ → (m, 2n, 2n), interleaved DOFs."""
    m, n, _ = scalar.shape
    outer = np.einsum("mi,mj->mij", direction, direction)
    return np.einsum("mab,mij->maibj", scalar, outer).reshape(m, 2 * n, 2 * n)


def bar_stiffness(xy: np.ndarray, EA: np.ndarray) -> np.ndarray:
    """Axial bar stiffness (m, 2n, 2n) in N/m along straight edges; ``EA`` (m,) in N."""
    length, tangent = _edge_frame(xy)
    scalar = _line_matrix("stiffness", xy.shape[1], length) * EA[:, None, None]
    return _expand(scalar, tangent)


def bar_axial_force(xy: np.ndarray, EA: np.ndarray, u_e: np.ndarray, s: np.ndarray) -> np.ndarray:
    """Axial force N = EA·ε (N, tension positive) of straight bars at the points ``s``
    (n_s,) of [−1, 1] (−1: the edge's start node, +1: its end node): (m, n_s, c).

    ``xy`` (m, n, 2) nodes in edge order (start, end[, mid]), ``EA`` (m,) in N, ``u_e``
    (m, 2n, c) element displacements (interleaved, m) for c cases. ε is the derivative
    of the displacement along the bar, du/dx = (2/L)·Σ N_i'(s)·u_i; for a 3-node bar it
    is linear in s, so it represents exactly the linear N(s) of a bar that picks up a
    uniform shear flow. The element's nodal forces differ from it: the start nodal
    force is −(N_start + ΔN/6) for such a bar (ΔN = N_end − N_start)."""
    length, tangent = _edge_frame(xy)
    m, n, _ = xy.shape
    along = np.einsum("mndc,md->mnc", u_e.reshape(m, n, 2, -1), tangent)
    _, dN = edge_shape(n, np.asarray(s, dtype=float))
    strain = np.einsum("qn,mnc->mqc", dN, along) * (2.0 / length)[:, None, None]
    return strain * np.asarray(EA, dtype=float)[:, None, None]


def line_spring_stiffness(xy: np.ndarray, k_per_length: np.ndarray, direction: np.ndarray) -> np.ndarray:
    """Distributed spring (m, 2n, 2n) acting only along ``direction`` (m, 2), stiffness
    per unit length ``k_per_length`` (N/m²), distributed consistently (∫ N_i N_j ds)."""
    length, _ = _edge_frame(xy)
    scalar = _line_matrix("mass", xy.shape[1], length) * k_per_length[:, None, None]
    return _expand(scalar, direction)


def edge_load(xy: np.ndarray, q: np.ndarray, direction: np.ndarray) -> np.ndarray:
    """Consistent nodal forces (m, 2n) of a uniform line load ``q`` (N/m) along
    ``direction`` (2,) on straight edges."""
    length, _ = _edge_frame(xy)
    g, w = _GAUSS[3]
    N, _ = edge_shape(xy.shape[1], g)
    scalar = (N.T @ w)[None, :] * (length / 2.0 * q)[:, None]
    return (scalar[:, :, None] * direction[None, None, :]).reshape(len(xy), -1)
