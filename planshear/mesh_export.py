"""Mesh files for independent review: mesh.vtu, mesh.xdmf (+ mesh.h5) and mesh.msh (via meshio).

Every field name carries its unit in parentheses, e.g. ``u[E+x] (m)`` or, with plan units
on a plan in feet, ``u[E+x] (in)``; unitless fields (``zone``, ``wall_id``, ``nu_xy``,
``wall_direction``) have none. Two unit sets (:class:`MeshUnits`):

* ``si`` (default): one consistent set, coordinates and displacements in m, forces in N,
  membrane forces and rigidities in N/m, springs in N/m and N/m² — what a general
  finite-element program expects, so the model can be re-solved without conversion;
* ``plan``: the units of results.json (coordinates in ft or m, displacements in in or mm,
  forces in kip or kN, membrane forces in kip/ft or kN/m, rigidities and springs in kip/in
  or kN/mm) — what an engineer reads; not a consistent set.

Contents (one named field per load case where the name has ``[<case>]``):

* points: ``u[<case>]`` displacement (3 components, z = 0, so viewers show vectors);
  ``F[<case>]`` applied nodal load (3 components; the consistent nodal forces of the case's
  area, line and point loads and, for ±ecc cases, the accidental torsion);
  ``wall_spring`` the wall springs lumped to the nodes as a symmetric tensor
  [kxx, kyy, kxy] (row sums of the consistent spring matrix; for programs with nodal
  springs only — the consistent springs are on the line elements);
* membrane elements: ``zone`` (−1 main material, else zone index), ``Et_x``, ``Et_y``,
  ``nu_xy`` (ν_xy, strain in y from stress in x; ν_yx = ν_xy·Et_y/Et_x) and ``Gt`` the
  plane-stress rigidities per unit width (thickness included: a program asking for E and t
  takes E = Et/t with any t); ``N[<case>]`` membrane forces Nx, Ny, Nxy at the centroid,
  ``N_principal[<case>]`` N1 ≥ N2, ``unit_shear[<case>]`` |Nxy|;
* line elements (mesh.vtu; a second block): ``zone`` −2; ``EA`` axial
  rigidity of the chord and collector bars on the edge (0 where no bar; bars sharing an edge
  added); ``wall_id`` (index into the plan's walls, −1 where none), ``wall_k_per_length``
  the wall's distributed spring (stiffness per unit length, its edges add up to the wall
  stiffness), acting only along ``wall_direction`` (unit vector), with the consistent
  matrix k'·∫NᵢNⱼ ds ⊗ d dᵀ; ``bar_force[<case>]`` bar axial force (mean of the ends) and
  ``wall_force[<case>]`` the force the wall spring takes on that edge (its edges add up to
  the wall force).

K = membrane + bars + wall springs is the whole stiffness: no other supports or
constraints, so K u = F reproduces ``u`` for every case (re-solve from mesh.vtu).
mesh.xdmf holds the membrane elements only (readers handle one cell type per grid best):
no bars, springs only lumped at the nodes. mesh.msh holds the membrane and line elements
with named physical groups (zone + 2 = membrane of that zone, 1 = main material; the last
tag = line elements) and the point data only (see :func:`write_mesh_files`).
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import meshio
import numpy as np

from .errors import PlanError
from .fem import Solution
from .fem.model import element_dofs
from .mesh.model import MESHIO_CELLS, MESHIO_LINES
from .plan import Plan
from .units import OutputUnits

__all__ = ["MESH_UNIT_CHOICES", "MeshUnits", "write_mesh_files"]

MESH_UNIT_CHOICES = ("si", "plan")


@dataclass(frozen=True)
class MeshUnits:
    """Units of the mesh files: a label and the SI value of one unit for each quantity."""

    system: str  # "si" or "plan"
    length: str  # coordinates
    length_factor: float  # m per unit
    displacement: str
    displacement_factor: float  # m per unit
    force: str
    force_factor: float  # N per unit

    @classmethod
    def for_plan(cls, plan: Plan, system: str = "si") -> MeshUnits:
        if system == "si":
            return cls("si", "m", 1.0, "m", 1.0, "N", 1.0)
        if system == "plan":
            out = OutputUnits.for_plan(plan.length_unit)
            return cls("plan", out.length, out.length_factor, out.displacement, out.displacement_factor,
                       out.force, out.force_factor)
        raise PlanError([f'mesh units "{system}" are not known; use one of {", ".join(MESH_UNIT_CHOICES)} '
                         "(--mesh-units)"])

    @property
    def line_force(self) -> str:  # membrane forces, N/m in SI
        return "N/m" if self.system == "si" else f"{self.force}/{self.length}"

    @property
    def line_force_factor(self) -> float:
        return self.force_factor / self.length_factor

    @property
    def rigidity(self) -> str:  # Et, Gt and springs, N/m in SI
        return "N/m" if self.system == "si" else f"{self.force}/{self.displacement}"

    @property
    def rigidity_factor(self) -> float:
        return self.force_factor / self.displacement_factor

    @property
    def spring_per_length(self) -> str:  # wall springs per unit length, N/m² in SI
        return "N/m²" if self.system == "si" else f"{self.force}/{self.displacement}/{self.length}"

    @property
    def spring_per_length_factor(self) -> float:
        return self.force_factor / self.displacement_factor / self.length_factor


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


@dataclass(frozen=True, eq=False)
class _EdgeFields:
    """Per mesh edge (SI): bars' EA and axial force, the wall spring, and per node the
    lumped spring tensor."""

    EA: np.ndarray  # (m,) N
    bar_force: np.ndarray  # (m, n_cases) N
    wall_index: np.ndarray  # (m,) −1 where no wall
    k_per_length: np.ndarray  # (m,) N/m²
    direction: np.ndarray  # (m, 2)
    spring_force: np.ndarray  # (m, n_cases) N
    nodal_spring: np.ndarray  # (n_nodes, 3) N/m: kxx, kyy, kxy


def _edge_fields(plan: Plan, solution: Solution) -> _EdgeFields:
    mesh = solution.assembly.mesh
    n_cases = solution.displacements.shape[1]
    m = len(mesh.edges)
    EA = np.zeros(m)
    force = np.zeros((m, n_cases))
    for bar in solution.assembly.bars:
        f = np.einsum("mij,mjc->mic", bar.matrices, solution.displacements[element_dofs(bar.edges)])
        f = f.reshape(len(bar.edges), -1, 2, n_cases)
        xy = mesh.nodes[bar.edges]
        tangent = xy[:, 1] - xy[:, 0]
        tangent /= np.linalg.norm(tangent, axis=1)[:, None]
        axial = 0.5 * (np.einsum("mdc,md->mc", f[:, 1], tangent) - np.einsum("mdc,md->mc", f[:, 0], tangent))
        index = _edge_index(mesh, bar.edges)
        np.add.at(force, index[index >= 0], axial[index >= 0])
        np.add.at(EA, index[index >= 0], bar.EA)
    wall_index = np.full(m, -1)
    k_per_length = np.zeros(m)
    direction = np.zeros((m, 2))
    spring_force = np.zeros((m, n_cases))
    nodal = np.zeros((mesh.n_nodes, 2, 2))
    ids = {w.id: i for i, w in enumerate(plan.walls)}
    for spring in solution.assembly.springs:
        f = np.einsum("mij,mjc->mic", spring.matrices, solution.displacements[element_dofs(spring.edges)])
        along = np.einsum("mndc,d->mc", f.reshape(len(spring.edges), -1, 2, n_cases), spring.direction)
        index = _edge_index(mesh, spring.edges)
        keep = index >= 0
        xy = mesh.nodes[spring.edges[:, :2]]
        wall_length = float(np.linalg.norm(xy[:, 1] - xy[:, 0], axis=1).sum())
        wall_index[index[keep]] = ids[spring.wall_id]
        k_per_length[index[keep]] = spring.stiffness / wall_length
        direction[index[keep]] = spring.direction
        spring_force[index[keep]] = along[keep]
        # Row sums of each node's 2×2 blocks: the consistent spring lumped to its nodes.
        k = spring.edges.shape[1]
        blocks = spring.matrices.reshape(len(spring.edges), k, 2, k, 2).sum(axis=3)
        np.add.at(nodal, spring.edges.reshape(-1), blocks.reshape(-1, 2, 2))
    nodal_spring = np.column_stack([nodal[:, 0, 0], nodal[:, 1, 1], nodal[:, 0, 1]])
    return _EdgeFields(EA, force, wall_index, k_per_length, direction, spring_force, nodal_spring)


def _material_fields(plan: Plan, mesh) -> dict[str, np.ndarray]:
    """Et_x, Et_y, ν_xy, Gt (N/m, ν unitless) per element from its zone's material."""
    materials = [plan.material] + [z.material for z in plan.zones]
    table = np.array([[m.Et_x, m.Et_y, m.nu, m.Gt] for m in materials])[mesh.element_zone + 1]
    return {"Et_x": table[:, 0], "Et_y": table[:, 1], "nu_xy": table[:, 2], "Gt": table[:, 3]}


def _xyz(vectors: np.ndarray) -> np.ndarray:
    return np.column_stack([vectors, np.zeros(len(vectors))])


def write_mesh_files(folder: Path, plan: Plan, solution: Solution, membrane: np.ndarray,
                     units: str = "si") -> list[str]:
    """Write mesh.vtu, mesh.xdmf (+ mesh.h5) and mesh.msh into ``folder``; returns the file
    names. ``membrane`` holds the membrane forces (n_e, 3, n_cases) in N/m; ``units`` is
    "si" or "plan" (see the module docstring)."""
    u_ = MeshUnits.for_plan(plan, units)
    mesh = solution.assembly.mesh
    names = [c.name for c in solution.cases]
    points = _xyz(mesh.nodes / u_.length_factor)
    edges = _edge_fields(plan, solution)
    point_data = {}
    for j, name in enumerate(names):
        point_data[f"u[{name}] ({u_.displacement})"] = _xyz(solution.node_displacements(j) / u_.displacement_factor)
    for j, name in enumerate(names):
        point_data[f"F[{name}] ({u_.force})"] = _xyz(solution.loads[:, j].reshape(-1, 2) / u_.force_factor)
    point_data[f"wall_spring ({u_.rigidity})"] = edges.nodal_spring / u_.rigidity_factor

    mean = 0.5 * (membrane[:, 0] + membrane[:, 1])
    radius = np.sqrt((0.5 * (membrane[:, 0] - membrane[:, 1])) ** 2 + membrane[:, 2] ** 2)
    q = u_.line_force_factor
    element_fields = {"zone": mesh.element_zone.astype(float)}
    for key, value in _material_fields(plan, mesh).items():
        element_fields[key if key == "nu_xy" else f"{key} ({u_.rigidity})"] = (
            value if key == "nu_xy" else value / u_.rigidity_factor)
    for j, name in enumerate(names):
        element_fields[f"N[{name}] ({u_.line_force})"] = membrane[:, :, j] / q
        element_fields[f"N_principal[{name}] ({u_.line_force})"] = np.column_stack(
            [mean[:, j] + radius[:, j], mean[:, j] - radius[:, j]]) / q
        element_fields[f"unit_shear[{name}] ({u_.line_force})"] = np.abs(membrane[:, 2, j]) / q
    edge_fields = {
        "zone": np.full(len(mesh.edges), -2.0),
        f"EA ({u_.force})": edges.EA / u_.force_factor,
        "wall_id": edges.wall_index.astype(float),
        f"wall_k_per_length ({u_.spring_per_length})": edges.k_per_length / u_.spring_per_length_factor,
        "wall_direction": _xyz(edges.direction),
    }
    for j, name in enumerate(names):
        edge_fields[f"bar_force[{name}] ({u_.force})"] = edges.bar_force[:, j] / u_.force_factor
        edge_fields[f"wall_force[{name}] ({u_.force})"] = edges.spring_force[:, j] / u_.force_factor

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
            filler = -1.0 if key == "wall_id" else 0.0
            cell_data[key] = [np.full((len(mesh.elements),) + value.shape[1:], filler), value]
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
    # Physical groups: zone + 2 = membrane of that zone (1 = main material), then the line
    # elements; their names ($PhysicalNames) say what they are, the field names the units.
    line_tag = len(plan.zones) + 2
    physical = [mesh.element_zone + 2, np.full(len(mesh.edges), line_tag)]
    zone_names = ["main material"] + [f"zone {z.name}" for z in plan.zones]
    field_data = {f"membrane, {n}": np.array([i + 1, 2]) for i, n in enumerate(zone_names)}
    field_data["line elements (outline, grid lines, walls, members)"] = np.array([line_tag, 1])
    # Point data only: meshio 5.3 cannot read back $ElementData of a gmsh 2.2 file with more
    # than one element type (it splits the data by the wrong lengths), so element data
    # would make the file unreadable for the most common Python reader.
    msh_cells = {}
    msh_cells |= {"gmsh:physical": physical, "gmsh:geometrical": [p.copy() for p in physical]}
    meshio.write(
        folder / "mesh.msh",
        meshio.Mesh(points, [element_block, edge_block], point_data=point_data,
                    cell_data=msh_cells, field_data=field_data),
        file_format="gmsh22",
        binary=True,
    )
    return ["mesh.vtu", "mesh.xdmf", "mesh.h5", "mesh.msh"]
