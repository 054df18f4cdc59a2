"""The semi-rigid model: assembly, restraint check, one factorization for every case.

Array conventions: global DOF of node n is 2n (x) and 2n+1 (y); load and displacement
arrays are (n_dofs, n_cases); all SI (N, m).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp
import shapely
from scipy.sparse.csgraph import connected_components

from planshear.errors import AnalysisError
from planshear.loads import LoadCase
from planshear.mesh import LineMesh, Mesh
from planshear.plan import Material, Plan

from .collectors import CollectorLayout, collector_layout
from .elements import (
    area_load,
    bar_stiffness,
    edge_load,
    line_spring_stiffness,
    membrane_rigidity,
    membrane_stiffness,
)
from .solver import factorize

__all__ = ["Assembly", "Solution", "FEError", "assemble", "load_vectors", "solve"]

#: Largest relative residual ‖K u − f‖ / ‖f‖ accepted after a solve.
RESIDUAL_LIMIT = 1e-8
#: Elements processed per chunk when forming element matrices (bounds temporary memory).
CHUNK = 50_000


class FEError(AnalysisError):
    """The finite-element model cannot be solved; the message says why in words."""


@dataclass(frozen=True, eq=False)
class BarGroup:
    """Bars along one line (chords or a member)."""

    name: str
    role: str
    edges: np.ndarray
    EA: float
    matrices: np.ndarray  # (m, 2k, 2k)
    implied: bool = False  # an implied collector (see fem/collectors.py), not a declared member


@dataclass(frozen=True, eq=False)
class SpringGroup:
    """The distributed spring of one wall."""

    wall_id: str
    edges: np.ndarray
    direction: np.ndarray
    stiffness: float  # N/m, total
    matrices: np.ndarray  # (m, 2k, 2k)


@dataclass(frozen=True, eq=False)
class Assembly:
    """Global stiffness and the element matrices kept for recovering internal forces."""

    mesh: Mesh
    stiffness: sp.csr_matrix
    rigidity: np.ndarray  # (n_e, 3, 3) N/m
    element_matrices: np.ndarray  # (n_e, n_dof_e, n_dof_e) membrane
    bars: tuple[BarGroup, ...]
    springs: tuple[SpringGroup, ...]
    spring_matrix: sp.csr_matrix
    collectors: CollectorLayout | None = None  # the collector of every wall piece


@dataclass(frozen=True, eq=False)
class Solution:
    """Displacements and wall forces for every case, from one factorization."""

    assembly: Assembly
    cases: tuple[LoadCase, ...]
    loads: np.ndarray  # (n_dofs, n_cases) N
    displacements: np.ndarray  # (n_dofs, n_cases) m
    wall_forces: dict[str, np.ndarray]  # id → (n_cases,) N along the wall
    residual: np.ndarray  # (n_cases,) relative
    backend: str

    def node_displacements(self, case_index: int) -> np.ndarray:
        return self.displacements[:, case_index].reshape(-1, 2)


def element_dofs(connectivity: np.ndarray) -> np.ndarray:
    """Interleaved global DOFs (m, 2k) of elements or edges with nodes (m, k)."""
    return np.stack([2 * connectivity, 2 * connectivity + 1], axis=-1).reshape(len(connectivity), -1)


def element_rigidities(plan: Plan, mesh: Mesh, factor: float = 1.0) -> np.ndarray:
    """Rigidity matrix D (n_e, 3, 3) of every element from its zone's material; ``factor``
    scales the whole membrane (used for the stiffness sensitivity bounds)."""
    materials: list[Material] = [plan.material] + [z.material for z in plan.zones]
    table = np.array([[m.Et_x, m.Et_y, m.nu, m.Gt] for m in materials])
    per_element = table[mesh.element_zone + 1]
    D = membrane_rigidity(per_element[:, 0], per_element[:, 1], per_element[:, 2], per_element[:, 3])
    return D * factor


def _coo_to_csr(blocks: list[tuple[np.ndarray, np.ndarray]], n: int) -> sp.csr_matrix:
    """One COO → CSR assembly of element blocks: each item is (DOFs (m, d), matrices
    (m, d, d)). The COO arrays are allocated once and filled in place (32-bit indices
    where they fit), because copies of these arrays dominate the cost on large meshes."""
    total = sum(b.size for _, b in blocks)
    index_type = np.int32 if n < 2**31 - 1 else np.int64
    rows = np.empty(total, dtype=index_type)
    cols = np.empty(total, dtype=index_type)
    values = np.empty(total)
    start = 0
    for dofs, matrices in blocks:
        m, d = dofs.shape
        stop = start + m * d * d
        rows[start:stop].reshape(m, d, d)[...] = dofs[:, :, None]
        cols[start:stop].reshape(m, d, d)[...] = dofs[:, None, :]
        values[start:stop] = matrices.reshape(-1)
        start = stop
    return sp.coo_matrix((values, (rows, cols)), shape=(n, n)).tocsr()


def membrane_matrices(element_type: str, nodes: np.ndarray, elements: np.ndarray, D: np.ndarray) -> np.ndarray:
    """Membrane element matrices (n_e, d, d) for all elements, formed in chunks of
    :data:`CHUNK` elements to bound temporary memory."""
    return np.concatenate([
        membrane_stiffness(element_type, nodes[elements[i : i + CHUNK]], D[i : i + CHUNK])
        for i in range(0, len(elements), CHUNK)
    ])


def assemble_blocks(n_dofs: int, connectivities: list[np.ndarray], blocks: list[np.ndarray]) -> sp.csr_matrix:
    """One COO → CSR assembly of element blocks (m, d, d) with node connectivities (m, d/2)."""
    return _coo_to_csr([(element_dofs(c), b) for c, b in zip(connectivities, blocks, strict=True)], n_dofs)


def assemble(plan: Plan, mesh: Mesh, stiffness_factor: float = 1.0) -> Assembly:
    """Membrane, chord and collector bars and wall springs in one sparse matrix (N/m)."""
    n = mesh.n_dofs
    D = element_rigidities(plan, mesh, stiffness_factor)
    element_matrices = membrane_matrices(mesh.element_type, mesh.nodes, mesh.elements, D)
    dofs = [element_dofs(mesh.elements)]
    blocks = [element_matrices]

    bars = []
    if plan.chord_EA is not None and len(mesh.outline_edges):
        bars.append(_bar_group("chords", "chord", mesh.outline_edges, plan.chord_EA, mesh))
    for member, line_mesh in zip(plan.members, mesh.members, strict=True):
        if len(line_mesh.edges):
            bars.append(_bar_group(f"{member.role} on {member.line}", member.role, line_mesh.edges, member.EA, mesh))
    # Every piece of a line that carries a wall gets a collector: implied bars where no
    # declared member or outline chord is (fem/collectors.py).
    collectors = collector_layout(plan, mesh)
    for name, edges in collectors.implied_edges.items():
        bars.append(_bar_group(f"implied collector on {name}", "collector", edges, collectors.EA, mesh, implied=True))
    for bar in bars:
        dofs.append(element_dofs(bar.edges))
        blocks.append(bar.matrices)

    springs = []
    for wall in plan.walls:
        line_mesh: LineMesh = mesh.walls[wall.id]
        xy = mesh.nodes[line_mesh.edges]
        direction = np.broadcast_to(wall.direction, (len(line_mesh.edges), 2))
        k_per_length = np.full(len(line_mesh.edges), wall.k / line_mesh.length)
        springs.append(SpringGroup(wall.id, line_mesh.edges, wall.direction,
                                   wall.k, line_spring_stiffness(xy, k_per_length, direction)))
    spring_blocks = [(element_dofs(s.edges), s.matrices) for s in springs]
    spring_matrix = _coo_to_csr(spring_blocks, n)
    # One COO → CSR conversion for membrane, bars and springs together.
    stiffness = _coo_to_csr(list(zip(dofs, blocks, strict=True)) + spring_blocks, n)
    return Assembly(mesh, stiffness, D, element_matrices, tuple(bars), tuple(springs), spring_matrix, collectors)


def _bar_group(name: str, role: str, edges: np.ndarray, EA: float, mesh: Mesh, implied: bool = False) -> BarGroup:
    matrices = bar_stiffness(mesh.nodes[edges], np.full(len(edges), EA))
    return BarGroup(name, role, edges, EA, matrices, implied)


def load_vectors(plan: Plan, mesh: Mesh, cases: list[LoadCase]) -> np.ndarray:
    """Consistent nodal loads (n_dofs, n_cases) in N: area, line and point parts of each
    case's force field, plus the accidental torsion of the ±ecc cases distributed in
    proportion to (nodal load × lever arm from the load's centroid), which adds a pure
    moment F·e without changing the resultant."""
    n = mesh.n_dofs
    corners = 3 if mesh.element_type.startswith("tri") else 4
    centroids = mesh.nodes[mesh.elements[:, :corners]].mean(axis=1)
    dofs = element_dofs(mesh.elements)
    extent = float(np.ptp(mesh.nodes, axis=0).max())
    tol = 1e-7 * extent
    edge_points = shapely.points(mesh.nodes[mesh.edges])
    loads = np.zeros((n, len(cases)))
    cache: dict[int, np.ndarray] = {}
    for j, case in enumerate(cases):
        key = id(case.field)
        if key not in cache:
            cache[key] = _field_vector(case.field, mesh, centroids, dofs, edge_points, tol)
        f = cache[key]
        if case.torsion != 0.0:
            f = f + _torsion_vector(f, mesh, case.direction, case.torsion)
        loads[:, j] = f
    return loads


def _field_vector(field_, mesh: Mesh, centroids, dofs, edge_points, tol) -> np.ndarray:
    n = mesh.n_dofs
    f = np.zeros(n)
    pressure = np.zeros(len(mesh.elements))
    for geometry, p in field_.areas:
        inside = shapely.contains_xy(geometry.buffer(tol), centroids[:, 0], centroids[:, 1])
        pressure += np.where(inside, p, 0.0)
    if np.any(pressure):
        np.add.at(f, dofs.ravel(), area_load(mesh.element_type, mesh.nodes[mesh.elements], pressure, field_.direction).ravel())
    for start, end, q in field_.lines:
        segment = shapely.LineString([start, end])
        on = (shapely.distance(segment, edge_points) <= tol).all(axis=1)
        if not np.any(on):
            raise FEError("a line load does not follow mesh edges (internal meshing error)")
        edges = mesh.edges[on]
        np.add.at(f, element_dofs(edges).ravel(),
                  edge_load(mesh.nodes[edges], np.full(len(edges), q), field_.direction).ravel())
    for x, y, p in field_.points:
        node = mesh.point_nodes.get((x, y))
        if node is None:
            node = int(np.argmin(np.hypot(mesh.nodes[:, 0] - x, mesh.nodes[:, 1] - y)))
        f[2 * node : 2 * node + 2] += p * field_.direction
    return f


def _torsion_vector(f: np.ndarray, mesh: Mesh, direction: np.ndarray, torsion: float) -> np.ndarray:
    weight = f.reshape(-1, 2) @ direction  # signed nodal share of the load
    total = weight.sum()
    center = (weight[:, None] * mesh.nodes).sum(axis=0) / total
    arm = mesh.nodes - center
    polar = float(np.sum(weight * (arm[:, 0] ** 2 + arm[:, 1] ** 2)))
    tangential = np.column_stack([-arm[:, 1], arm[:, 0]])
    return (torsion / polar * weight[:, None] * tangential).ravel()


def check_restraint(assembly: Assembly, plan: Plan) -> None:
    """Raise :class:`FEError` unless the walls hold every connected part of the mesh
    against both translations and rotation (checked on the rigid-body modes)."""
    mesh = assembly.mesh
    n_nodes = mesh.n_nodes
    first = np.repeat(mesh.elements[:, :1], mesh.elements.shape[1], axis=1).ravel()
    adjacency = sp.coo_matrix((np.ones(first.size), (first, mesh.elements.ravel())), shape=(n_nodes, n_nodes))
    n_parts, label = connected_components(adjacency, directed=False)
    extent = float(np.ptp(mesh.nodes, axis=0).max())
    for part in range(n_parts):
        members = label == part
        if not np.any(members):
            continue
        center = mesh.nodes[members].mean(axis=0)
        modes = np.zeros((mesh.n_dofs, 3))
        idx = np.flatnonzero(members)
        modes[2 * idx, 0] = 1.0
        modes[2 * idx + 1, 1] = 1.0
        modes[2 * idx, 2] = -(mesh.nodes[idx, 1] - center[1]) / extent
        modes[2 * idx + 1, 2] = (mesh.nodes[idx, 0] - center[0]) / extent
        restraint = modes.T @ (assembly.spring_matrix @ modes)
        diagonal = np.diag(restraint)
        held = diagonal > 1e-14 * max(diagonal.max(), 1e-300)
        if held.all():
            # Scale each mode to unit stiffness so that very different wall stiffnesses
            # do not hide a dependent set (parallel or concurrent walls).
            normed = restraint / np.sqrt(np.outer(diagonal, diagonal))
            if np.linalg.eigvalsh(normed)[0] > 1e-10:
                continue
        where = f"around ({center[0] / plan.length_scale:.4g}, {center[1] / plan.length_scale:.4g}) {plan.length_unit}"
        missing = [name for name, ok in (("along x", held[0]), ("along y", held[1])) if not ok]
        if not missing:
            missing = ["in rotation (all its walls are parallel or meet at one point, or their "
                       "stiffnesses differ so much that rotation is barely resisted)"]
        raise FEError(
            f"{plan.source}: the part of the diaphragm {where} is not held by walls {', '.join(missing)}; "
            "add walls to that part or connect it to the rest of the diaphragm"
        )


#: Largest accepted ratio between the stiffest and the softest diagonal term of K.
CONDITION_LIMIT = 1e12


def check_conditioning(assembly: Assembly, plan: Plan) -> None:
    """Raise :class:`FEError` when stiffness terms differ by more than
    :data:`CONDITION_LIMIT`, naming the stiffest and softest parts of the model, because
    double precision then loses the softer part of the answer."""
    diagonal = assembly.stiffness.diagonal()
    if np.any(~np.isfinite(diagonal)) or np.any(diagonal <= 0):
        raise FEError(f"{plan.source}: the stiffness matrix has a zero or non-finite diagonal term; "
                      "check for zero or infinite stiffness values")
    extent = float(np.ptp(assembly.mesh.nodes, axis=0).max())
    # Stiffness of each part of the model in N/m: walls, bars over the plan size, membrane.
    parts = {f'wall "{s.wall_id}"': s.stiffness for s in assembly.springs}
    parts.update({f"{b.name}": b.EA / extent for b in assembly.bars})
    parts["diaphragm membrane (shear)"] = float(np.min(assembly.rigidity[:, 2, 2]))
    parts["diaphragm membrane (axial)"] = float(np.min(assembly.rigidity[:, 0, 0]))
    ratio = max(diagonal.max() / diagonal.min(), max(parts.values()) / min(parts.values()))
    if ratio <= CONDITION_LIMIT:
        return
    stiffest = max(parts, key=parts.get)
    softest = min(parts, key=parts.get)
    raise FEError(
        f"{plan.source}: stiffness terms of the model differ by a factor of {ratio:.1e} (more than {CONDITION_LIMIT:.0e}); "
        f"the results would lose accuracy. The stiffest part is {stiffest}, the softest {softest}: "
        "use realistic values (a 'rigid' element 1e3–1e4 times stiffer than its neighbours is enough)"
    )


def solve(assembly: Assembly, plan: Plan, cases: list[LoadCase], loads: np.ndarray) -> Solution:
    """Factor once and solve every case; check the residual of each."""
    check_conditioning(assembly, plan)
    check_restraint(assembly, plan)
    try:
        factor = factorize(assembly.stiffness)
    except (RuntimeError, ValueError, np.linalg.LinAlgError) as exc:
        raise FEError(f"{plan.source}: the stiffness matrix could not be factorized ({exc}); the model is "
                      "singular: some part of the diaphragm can move without resistance") from None
    displacements = factor.solve(loads)
    if not np.all(np.isfinite(displacements)):
        raise FEError("the solve produced non-finite displacements; the stiffness matrix is singular or "
                      "badly conditioned (check for extreme stiffness ratios between walls, members and diaphragm)")
    residual_vectors = assembly.stiffness @ displacements - loads
    norms = np.maximum(np.linalg.norm(loads, axis=0), 1e-300)
    residual = np.linalg.norm(residual_vectors, axis=0) / norms
    if np.any(residual > RESIDUAL_LIMIT):
        worst = cases[int(np.argmax(residual))].name
        raise FEError(
            f"the solution of case {worst} is not accurate (relative residual {residual.max():.1e}); the model is "
            "badly conditioned: check for stiffness ratios beyond about 1e12 between walls, members and diaphragm"
        )
    wall_forces = {}
    for spring in assembly.springs:
        dofs = element_dofs(spring.edges)
        local = np.einsum("mij,mjc->mic", spring.matrices, displacements[dofs])  # (m, 2k, n_cases)
        along = local.reshape(len(spring.edges), -1, 2, displacements.shape[1])
        wall_forces[spring.wall_id] = np.einsum("mkdc,d->c", along, spring.direction)
    return Solution(assembly, tuple(cases), loads, displacements, wall_forces, residual, factor.backend)
