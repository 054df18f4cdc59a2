"""Small structured meshes for element and benchmark tests (independent of gmsh)."""

from __future__ import annotations

import numpy as np
import scipy.sparse as sp

from planshear.fem.model import assemble_blocks, membrane_matrices


def mapped_mesh(corners, nx: int, ny: int, kind: str):
    """Mesh of the straight-sided quadrilateral ``corners`` (counter-clockwise) with
    nx × ny cells mapped bilinearly. ``kind``: tri3, tri6 (cells split along one
    diagonal), quad4, quad8 or quad9. Mid-side nodes at true edge midpoints."""
    corners = np.asarray(corners, dtype=float)
    s, t = np.meshgrid(np.linspace(0, 1, nx + 1), np.linspace(0, 1, ny + 1), indexing="ij")
    s, t = s.ravel(), t.ravel()
    vertices = ((1 - s) * (1 - t))[:, None] * corners[0] + (s * (1 - t))[:, None] * corners[1] \
        + (s * t)[:, None] * corners[2] + ((1 - s) * t)[:, None] * corners[3]
    index = np.arange((nx + 1) * (ny + 1)).reshape(nx + 1, ny + 1)
    a, b = index[:-1, :-1].ravel(), index[1:, :-1].ravel()
    c, d = index[1:, 1:].ravel(), index[:-1, 1:].ravel()
    if kind.startswith("tri"):
        linear = np.concatenate([np.column_stack([a, b, c]), np.column_stack([a, c, d])])
    else:
        linear = np.column_stack([a, b, c, d])
    return add_mid_nodes(vertices, linear, kind)


def add_mid_nodes(vertices: np.ndarray, linear: np.ndarray, kind: str):
    """Quadratic elements from corner connectivity: shared mid-side nodes at edge
    midpoints (and the centre for quad9)."""
    pairs = [(0, 1), (1, 2), (2, 0)] if linear.shape[1] == 3 else [(0, 1), (1, 2), (2, 3), (3, 0)]
    if kind in ("tri3", "quad4"):
        return vertices, linear
    nodes = list(vertices)
    mid_of: dict[tuple[int, int], int] = {}
    extra = []
    for element in linear:
        row = []
        for i, j in pairs:
            key = tuple(sorted((int(element[i]), int(element[j]))))
            if key not in mid_of:
                mid_of[key] = len(nodes)
                nodes.append(0.5 * (vertices[key[0]] + vertices[key[1]]))
            row.append(mid_of[key])
        if kind == "quad9":
            row.append(len(nodes))
            nodes.append(vertices[element].mean(axis=0))
        extra.append(row)
    return np.array(nodes), np.column_stack([linear, np.array(extra)])


def solve_membrane(kind, nodes, elements, D, fixed_dofs, fixed_values, loads):
    """Assemble with planshear's element routines, impose displacements, solve."""
    n = 2 * len(nodes)
    K = assemble_blocks(n, [elements], [membrane_matrices(kind, nodes, elements, np.broadcast_to(D, (len(elements), 3, 3)).copy())])
    u = np.zeros(n)
    u[fixed_dofs] = fixed_values
    free = np.setdiff1d(np.arange(n), fixed_dofs)
    rhs = loads[free] - K[free][:, fixed_dofs] @ u[fixed_dofs]
    u[free] = sp.linalg.spsolve(K[free][:, free].tocsc(), rhs)
    return u, K
