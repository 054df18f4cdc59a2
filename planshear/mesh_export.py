"""Mesh files for independent review: mesh.vtu, mesh.xdmf and mesh.msh (via meshio).

Fields (SI units, one named field per load case):

* point data ``u[<case>]``: displacement (m), 3 components (z = 0) so viewers show vectors;
* cell data on the membrane elements ``N[<case>]``: membrane forces Nx, Ny, Nxy (N/m),
  ``N_principal[<case>]``: principal membrane forces N1 ≥ N2 (N/m),
  ``unit_shear[<case>]``: |Nxy| (N/m); ``zone``: −1 main material, else zone index;
* in mesh.vtu only, the line elements (outline, grid lines, walls, members) form a
  second block: ``zone`` −2, ``bar_force[<case>]`` axial force of bars (N, 0 where no bar),
  ``wall_force[<case>]`` force the wall spring takes on that edge (N, along the wall; the
  edges of a wall add up to the wall force) and ``wall_id`` (index into the plan's walls,
  −1 where no wall).

mesh.xdmf (with its data in mesh.h5) holds the membrane elements only (readers handle one cell type per grid best);
mesh.msh holds the geometry with the zone as physical tag (zone + 2).
"""

from __future__ import annotations

from pathlib import Path

import meshio
import numpy as np

from .fem import Solution
from .fem.model import element_dofs
from .mesh.model import MESHIO_CELLS, MESHIO_LINES
from .plan import Plan

__all__ = ["write_mesh_files"]


def _edge_index(mesh, edges: np.ndarray) -> np.ndarray:
    """Row of each of ``edges`` in mesh.edges (matched by end nodes), −1 if absent."""
    n = mesh.n_nodes

    def keys(e):
        lo, hi = np.minimum(e[:, 0], e[:, 1]), np.maximum(e[:, 0], e[:, 1])
        return lo.astype(np.int64) * n + hi

    all_keys = keys(mesh.edges)
    order = np.argsort(all_keys)
    wanted = keys(edges)
    pos = np.clip(np.searchsorted(all_keys[order], wanted), 0, len(order) - 1)
    found = all_keys[order][pos] == wanted
    return np.where(found, order[pos], -1)


def _edge_fields(plan: Plan, solution: Solution) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Per mesh edge and case: bar axial force (N, mean of the two ends, bars on the same
    edge added), the wall spring's force along its wall (N), and the wall index."""
    mesh = solution.assembly.mesh
    n_cases = solution.displacements.shape[1]
    force = np.zeros((len(mesh.edges), n_cases))
    for bar in solution.assembly.bars:
        f = np.einsum("mij,mjc->mic", bar.matrices, solution.displacements[element_dofs(bar.edges)])
        f = f.reshape(len(bar.edges), -1, 2, n_cases)
        xy = mesh.nodes[bar.edges]
        tangent = xy[:, 1] - xy[:, 0]
        tangent /= np.linalg.norm(tangent, axis=1)[:, None]
        axial = 0.5 * (np.einsum("mdc,md->mc", f[:, 1], tangent) - np.einsum("mdc,md->mc", f[:, 0], tangent))
        index = _edge_index(mesh, bar.edges)
        np.add.at(force, index[index >= 0], axial[index >= 0])
    wall_index = np.full(len(mesh.edges), -1)
    spring_force = np.zeros((len(mesh.edges), n_cases))
    ids = {w.id: i for i, w in enumerate(plan.walls)}
    for spring in solution.assembly.springs:
        f = np.einsum("mij,mjc->mic", spring.matrices, solution.displacements[element_dofs(spring.edges)])
        along = np.einsum("mndc,d->mc", f.reshape(len(spring.edges), -1, 2, n_cases), spring.direction)
        index = _edge_index(mesh, spring.edges)
        wall_index[index[index >= 0]] = ids[spring.wall_id]
        spring_force[index[index >= 0]] = along[index >= 0]
    return force, wall_index, spring_force


def write_mesh_files(folder: Path, plan: Plan, solution: Solution, membrane: np.ndarray) -> list[str]:
    """Write mesh.vtu, mesh.xdmf and mesh.msh into ``folder``; returns the file names.
    ``membrane`` holds the membrane forces (n_e, 3, n_cases) in N/m."""
    mesh = solution.assembly.mesh
    names = [c.name for c in solution.cases]
    points = np.column_stack([mesh.nodes, np.zeros(mesh.n_nodes)])
    point_data = {}
    for j, name in enumerate(names):
        u = solution.node_displacements(j)
        point_data[f"u[{name}]"] = np.column_stack([u, np.zeros(mesh.n_nodes)])
    mean = 0.5 * (membrane[:, 0] + membrane[:, 1])
    radius = np.sqrt((0.5 * (membrane[:, 0] - membrane[:, 1])) ** 2 + membrane[:, 2] ** 2)
    element_fields = {"zone": mesh.element_zone.astype(float)}
    for j, name in enumerate(names):
        element_fields[f"N[{name}]"] = membrane[:, :, j]
        element_fields[f"N_principal[{name}]"] = np.column_stack([mean[:, j] + radius[:, j], mean[:, j] - radius[:, j]])
        element_fields[f"unit_shear[{name}]"] = np.abs(membrane[:, 2, j])
    edge_force, wall_index, spring_force = _edge_fields(plan, solution)
    edge_fields = {"zone": np.full(len(mesh.edges), -2.0)}
    for j, name in enumerate(names):
        edge_fields[f"bar_force[{name}]"] = edge_force[:, j]
        edge_fields[f"wall_force[{name}]"] = spring_force[:, j]

    element_block = (MESHIO_CELLS[mesh.element_type], mesh.elements)
    edge_block = (MESHIO_LINES[mesh.edges.shape[1]], mesh.edges)
    cell_data = {}
    for key, value in element_fields.items():
        edge_value = edge_fields.get(key)
        if edge_value is None:
            edge_value = np.zeros((len(mesh.edges),) + value.shape[1:])
        cell_data[key] = [value, edge_value]
    for key, value in edge_fields.items():
        if key not in cell_data:
            cell_data[key] = [np.zeros((len(mesh.elements),) + value.shape[1:]), value]
    cell_data["wall_id"] = [np.full(len(mesh.elements), -1.0), wall_index.astype(float)]
    meshio.vtu.write(
        folder / "mesh.vtu",
        meshio.Mesh(points, [element_block, edge_block], point_data=point_data, cell_data=cell_data),
        binary=True,
        compression=None,  # zlib costs more time than the disk space it saves
    )
    meshio.write(
        folder / "mesh.xdmf",
        meshio.Mesh(points, [element_block], point_data=point_data,
                    cell_data={k: [v] for k, v in element_fields.items()}),
        data_format="HDF",  # binary heavy data in mesh.h5 beside mesh.xdmf; XML text is slow and large
        compression=None,
    )
    physical = [mesh.element_zone + 2, np.zeros(len(mesh.edges), dtype=int)]
    meshio.write(
        folder / "mesh.msh",
        meshio.Mesh(points, [element_block, edge_block],
                    cell_data={"gmsh:physical": physical, "gmsh:geometrical": [p.copy() for p in physical]}),
        file_format="gmsh22",
        binary=True,
    )
    return ["mesh.vtu", "mesh.xdmf", "mesh.h5", "mesh.msh"]
