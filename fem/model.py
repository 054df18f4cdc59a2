"""The semi-rigid model: assembly, restraint check, one factorization for every case.

Array conventions: global DOF of node n is 2n (x) and 2n+1 (y); load and displacement
arrays are (n_dofs, n_cases); all SI (N, m).
"""

from __future__ import annotations

import dataclasses
import weakref
from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp
import shapely
from scipy.sparse.csgraph import connected_components

from planshear.errors import AnalysisError, EquilibriumError
from planshear.loads import LoadCase
from planshear.mesh import LineMesh, Mesh
from planshear.plan import Material, Plan

from .collectors import CollectorLayout, collector_layout
from .elements import (
    area_weights,
    bar_stiffness,
    edge_shape,
    line_spring_stiffness,
    membrane_rigidity,
    membrane_stiffness,
    natural_coordinates,
    shape_functions,
)
from .solver import factorize

__all__ = ["Assembly", "Solution", "FEError", "assemble", "load_vectors", "solve"]

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
    edge_EA: np.ndarray | None = None  # (m,) N, per bar; differs from EA where a splice adds slip

    @property
    def axial_rigidity(self) -> np.ndarray:
        """EA (N) of every bar of the group, splices included."""
        return np.full(len(self.edges), self.EA) if self.edge_EA is None else self.edge_EA


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
    residual: np.ndarray  # (n_cases,) ‖f − K u‖₂ / ‖f‖₂ (structural_residual)
    backend: str
    backward_error: np.ndarray | None = None  # (n_cases,) ‖K u − f‖∞ / (‖K‖∞‖u‖∞ + ‖f‖∞)
    equilibrium: np.ndarray | None = None  # (n_cases,) wall reactions vs. load, relative (wall_equilibrium)

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
    bars = _with_splices(bars, plan, mesh)
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


def _with_splices(bars: list[BarGroup], plan: Plan, mesh: Mesh) -> list[BarGroup]:
    """Bar groups with each ``[[splice]]`` as a series spring in the bar through its point:
    EA_eff = ℓ / (ℓ/EA + 1/k), so the bar's compliance gains the splice's 1/k (k the splice's
    force per unit slip) and its force stays EA_eff·ε."""
    if not plan.splices:
        return bars
    out = list(bars)
    taken: set[str] = set()
    tolerance = 1e-5 * float(np.ptp(plan.outline, axis=0).max())  # the plan reader checked 1e-6 of the size
    # Declared members first: a splice on a member that is also on the outline sits in the member.
    for index in sorted(range(len(bars)), key=lambda i: bars[i].name == "chords"):
        bar = bars[index]
        xy = mesh.nodes[bar.edges[:, :2]]
        a, b = xy[:, 0], xy[:, 1]
        length = np.linalg.norm(b - a, axis=1)
        EA = bar.axial_rigidity.copy()
        for splice in plan.splices:
            if splice.name in taken:
                continue
            t = np.clip(np.einsum("mi,mi->m", splice.at - a, b - a) / length**2, 0.0, 1.0)
            gap = np.linalg.norm(a + t[:, None] * (b - a) - splice.at, axis=1)
            i = int(np.argmin(gap))
            if gap[i] <= tolerance:
                EA[i] = length[i] / (length[i] / EA[i] + 1.0 / splice.stiffness)
                taken.add(splice.name)
        if not np.array_equal(EA, bar.axial_rigidity):
            out[index] = BarGroup(bar.name, bar.role, bar.edges, bar.EA,
                                  bar_stiffness(mesh.nodes[bar.edges], EA), bar.implied, EA)
    missed = [s.name for s in plan.splices if s.name not in taken]
    if missed:
        raise FEError(f"{plan.source}: splice {', '.join(missed)} found no chord or collector bar at its point in the "
                      "mesh; put the splice on a chord line or declared member")
    return out


def _bar_group(name: str, role: str, edges: np.ndarray, EA: float, mesh: Mesh, implied: bool = False) -> BarGroup:
    matrices = bar_stiffness(mesh.nodes[edges], np.full(len(edges), EA))
    return BarGroup(name, role, edges, EA, matrices, implied)


def load_vectors(plan: Plan, mesh: Mesh, cases: list[LoadCase]) -> np.ndarray:
    """Consistent nodal loads (n_dofs, n_cases) in N: area, line and point parts of each
    case's force field, plus the accidental torsion of the ±ecc cases as a pure moment
    F·e about z (no net force; see :func:`torsion_vector` for how it is spread)."""
    n = mesh.n_dofs
    corners = 3 if mesh.element_type.startswith("tri") else 4
    centroids = mesh.nodes[mesh.elements[:, :corners]].mean(axis=1)
    dofs = element_dofs(mesh.elements)
    extent = float(np.ptp(mesh.nodes, axis=0).max())
    tol = 1e-7 * extent
    loads = np.zeros((n, len(cases)))
    cache: dict[int, np.ndarray] = {}
    area_share = None
    # Built at most once for every field: element polygons with their R-tree, and each
    # node's share of each element's area (the nodal load of a unit pressure).
    once: dict[str, object] = {}

    def cells():
        if "cells" not in once:
            once["cells"] = element_polygons(mesh)
        return once["cells"]

    def weights():
        if "weights" not in once:
            once["weights"] = area_weights(mesh.element_type, mesh.nodes[mesh.elements])
        return once["weights"]

    for j, case in enumerate(cases):
        key = id(case.field)
        if key not in cache:
            cache[key] = _field_vector(case.field, mesh, centroids, dofs, tol, cells, weights)
        f = cache[key]
        if case.torsion != 0.0:
            if area_share is None:
                area_share = nodal_area(mesh, weights())
            f = f + torsion_vector(f, mesh.nodes, case.direction, case.torsion, area_share)[0]
        loads[:, j] = f
    return loads


def torsion_bases(plan: Plan, mesh: Mesh, cases: list[LoadCase]) -> dict[str, str]:
    """For each case with accidental torsion, how :func:`torsion_vector` spreads it:
    "load" (the case's own load) or "area" (the diaphragm area). For the notes."""
    torsional = [c for c in cases if c.torsion != 0.0]
    if not torsional:
        return {}
    loads = load_vectors(plan, mesh, [dataclasses.replace(c, torsion=0.0) for c in torsional])
    area_share = nodal_area(mesh)
    return {c.name: torsion_vector(loads[:, j], mesh.nodes, c.direction, c.torsion, area_share)[1]
            for j, c in enumerate(torsional)}


def nodal_area(mesh: Mesh, weights: np.ndarray | None = None) -> np.ndarray:
    """Each node's share (n_nodes,) of the diaphragm area in m²: the consistent nodal load
    of a unit pressure over every element (sums to the meshed area). ``weights``: the
    elements' :func:`area_weights` when already formed."""
    if weights is None:
        weights = area_weights(mesh.element_type, mesh.nodes[mesh.elements])
    return np.bincount(mesh.elements.ravel(), weights.ravel(), minlength=mesh.n_nodes)


#: The accidental torsion follows the load's own distribution only while, at every loaded
#: node, the added torsional force stays below the node's direct load (see torsion_vector).
TORSION_SPREAD_LIMIT = 1.0


def _moment_spread(weight: np.ndarray, nodes: np.ndarray, torsion: float) -> tuple[np.ndarray, float] | None:
    """Nodal forces (n_nodes, 2) that add the moment ``torsion`` (N·m) about z and no net
    force, in proportion to ``weight`` × lever arm about the weight's own centroid
    (the inertial forces of a rotation); with the largest ratio of added force to a node's
    own weight. None when the weight has no centroid or no polar moment."""
    total = float(weight.sum())
    if not np.isfinite(total) or total <= 0.0:
        return None
    center = (weight[:, None] * nodes).sum(axis=0) / total
    arm = nodes - center
    radius2 = arm[:, 0] ** 2 + arm[:, 1] ** 2
    polar = float(np.sum(weight * radius2))
    if not np.isfinite(polar) or polar <= 0.0:
        return None
    loaded = weight != 0.0
    ratio = abs(torsion) * float(np.sqrt(radius2[loaded].max())) / polar
    tangential = np.column_stack([-arm[:, 1], arm[:, 0]])
    return torsion / polar * weight[:, None] * tangential, ratio


def torsion_vector(
    f: np.ndarray, nodes: np.ndarray, direction: np.ndarray, torsion: float, area_share: np.ndarray
) -> tuple[np.ndarray, str]:
    """Nodal forces (n_dofs,) in N that add the accidental torsion ``torsion`` (N·m, about
    z) to the load ``f`` with no net force, and the basis used ("load" or "area").

    The moment is spread as the inertial forces of a small rotation, force ∝ weight ×
    lever arm: by the case's own load (weight) about its centroid when that load is spread
    widely enough that the added force nowhere exceeds the node's direct load
    (|T|·r_max / J_load ≤ :data:`TORSION_SPREAD_LIMIT`, i.e. e·r_max ≤ r_gyration², which
    keeps the load's direction everywhere); otherwise (one point weight, a small footprint,
    a short line: J_load → 0 would blow the forces up) by the diaphragm area about the
    area's centroid. Either way the forces sum to zero and their moment is exactly T,
    because the centroid and polar moment are those of the same nodal distribution."""
    weight = f.reshape(-1, 2) @ direction  # signed nodal share of the load, N
    spread = _moment_spread(weight, nodes, torsion)
    basis = "load"
    if spread is None or spread[1] > TORSION_SPREAD_LIMIT:
        spread = _moment_spread(area_share, nodes, torsion)
        basis = "area"
        if spread is None:
            raise FEError("the accidental torsion cannot be applied: the mesh has no area (internal meshing error)")
    return spread[0].ravel(), basis


def _line_load(mesh: Mesh, start: np.ndarray, end: np.ndarray, q: float, direction: np.ndarray,
               tol: float) -> tuple[np.ndarray, np.ndarray]:
    """Mesh edges (m, k) under a uniform line load q (N/m) on the segment start → end and
    their consistent nodal forces (m, 2k), integrating over the covered part of each edge
    only: a segment may begin or end inside an edge (a wind band's limit is not always a
    mesh node), and such an edge must carry its share, not all of it or none."""
    length = float(np.hypot(*(end - start)))
    tangent = (end - start) / length
    normal = np.array([-tangent[1], tangent[0]])
    rel = mesh.nodes[mesh.edges] - start  # (n_edges, k, 2)
    s = rel @ tangent  # position along the segment, m
    on_line = (np.abs(rel @ normal) <= tol).all(axis=1)
    lo = np.maximum(np.minimum(s[:, 0], s[:, 1]), 0.0)
    hi = np.minimum(np.maximum(s[:, 0], s[:, 1]), length)
    covered = on_line & (hi - lo > tol)
    if not np.any(covered) or abs(float(np.sum(hi[covered] - lo[covered])) - length) > 1e3 * tol:
        raise FEError("a line load does not follow mesh edges (internal meshing error)")
    edges, s, lo, hi = mesh.edges[covered], s[covered], lo[covered], hi[covered]
    g, w = _GAUSS3
    half = (hi - lo) / 2.0
    sigma = (lo + hi)[:, None] / 2.0 + half[:, None] * g[None, :]  # (m, 3) Gauss points, m
    xi = -1.0 + 2.0 * (sigma - s[:, :1]) / (s[:, 1:2] - s[:, :1])  # edge coordinate of each point
    N, _ = edge_shape(edges.shape[1], xi.ravel())
    N = N.reshape(len(edges), len(g), -1)  # (m, 3, k)
    scalar = np.einsum("mgk,g,m->mk", N, w, half * q)
    return edges, (scalar[:, :, None] * direction[None, None, :]).reshape(len(edges), -1)


#: Three-point Gauss–Legendre rule on [−1, 1] (exact for the quadratic edge shapes).
_GAUSS3 = (np.array([-np.sqrt(0.6), 0.0, np.sqrt(0.6)]), np.array([5.0, 8.0, 5.0]) / 9.0)


def _field_vector(field_, mesh: Mesh, centroids, dofs, tol, cells_of=None, weights_of=None) -> np.ndarray:
    n = mesh.n_dofs
    f = np.zeros(n)
    pressure = np.zeros(len(mesh.elements))
    cells = (cells_of() if cells_of else element_polygons(mesh)) if field_.areas else None
    for geometry, p in field_.areas:
        inside, crossed, area, centroid = area_overlap(cells, geometry, centroids, tol)
        pressure += p * inside
        if len(crossed):
            # The part of a crossed element under the load, as its resultant at its centroid:
            # exact force and first moment whatever the mesh.
            corners = mesh.nodes[mesh.elements[crossed, : cells[2]]]
            N, _ = shape_functions(mesh.element_type, natural_coordinates(mesh.element_type, corners, centroid))
            nodal = (p * area)[:, None, None] * N[:, :, None] * field_.direction[None, None, :]
            np.add.at(f, dofs[crossed].ravel(), nodal.reshape(len(crossed), -1).ravel())
    if np.any(pressure):
        unit = weights_of() if weights_of else area_weights(mesh.element_type, mesh.nodes[mesh.elements])
        # Nodal totals by bincount (np.add.at is many times slower on a million entries).
        nodal = np.bincount(mesh.elements.ravel(), (unit * pressure[:, None]).ravel(), minlength=mesh.n_nodes)
        f[0::2] += nodal * field_.direction[0]
        f[1::2] += nodal * field_.direction[1]
    for start, end, q in field_.lines:
        edges, forces = _line_load(mesh, np.asarray(start, float), np.asarray(end, float), q, field_.direction, tol)
        np.add.at(f, element_dofs(edges).ravel(), forces.ravel())
    for x, y, p in field_.points:
        node = mesh.point_nodes.get((x, y))
        if node is None:
            node = int(np.argmin(np.hypot(mesh.nodes[:, 0] - x, mesh.nodes[:, 1] - y)))
        f[2 * node : 2 * node + 2] += p * field_.direction
    return f


#: element_polygons of each live mesh (a mesh is immutable): loads, torsion bases and
#: sections of one run share one set of polygons and one R-tree.
_POLYGONS: weakref.WeakKeyDictionary = weakref.WeakKeyDictionary()


def element_polygons(mesh: Mesh) -> tuple[np.ndarray, shapely.STRtree, int]:
    """Corner polygons of all elements (straight-sided), an R-tree over them and the
    number of corners; formed once per mesh."""
    cached = _POLYGONS.get(mesh)
    if cached is None:
        corners = 3 if mesh.element_type.startswith("tri") else 4
        polygons = shapely.polygons(mesh.nodes[mesh.elements[:, :corners]])
        cached = _POLYGONS[mesh] = (polygons, shapely.STRtree(polygons), corners)
    return cached


def area_overlap(cells: tuple, geometry, centroids: np.ndarray, tol: float):
    """How the elements (``cells`` from :func:`element_polygons`) lie in ``geometry``:
    ``inside`` (n_e,) 1 for elements inside it and not crossed by its boundary (zones and
    the outline follow element edges), 0 otherwise; for the elements its boundary crosses
    (loads spread across the depth and footprints need not follow the mesh), their indices,
    the area (m²) and the centroid (m) of their part inside."""
    polygons, tree, _ = cells
    inside = shapely.contains_xy(geometry.buffer(tol), centroids[:, 0], centroids[:, 1]).astype(float)
    # Candidates by the envelopes of the boundary's single segments (the envelope of the
    # whole boundary would hold every element inside it), then the exact test on those only.
    boundary = geometry.boundary
    coords = [shapely.get_coordinates(ring) for ring in shapely.get_parts(boundary)]
    pairs = [np.stack([c[:-1], c[1:]], axis=1) for c in coords if len(c) > 1]
    segments = shapely.linestrings(np.concatenate(pairs)) if pairs else np.empty(0, dtype=object)
    candidates = np.unique(tree.query(segments)[1]) if len(segments) else np.zeros(0, dtype=np.intp)
    crossed = candidates[shapely.crosses(boundary, polygons[candidates])]
    inside[crossed] = 0.0
    parts = shapely.intersection(polygons[crossed], geometry)
    area = shapely.area(parts)
    keep = area > 0
    crossed, parts, area = crossed[keep], parts[keep], area[keep]
    centroid = shapely.get_coordinates(shapely.centroid(parts)).reshape(-1, 2)
    return inside, crossed, area, centroid


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


#: Largest accepted ratio between the stiffest and the softest diagonal term of K (and
#: between the stiffest and softest part). Beyond it double precision (16 digits) keeps
#: fewer than about 4 correct digits of the softer part's share of the answer.
CONDITION_LIMIT = 1e12


def _stiffness_parts(assembly: Assembly) -> dict[str, float]:
    """Stiffness of each part of the model in N/m: walls, bars (EA over the plan size),
    membrane shear and axial rigidity (largest and smallest over the elements)."""
    extent = float(np.ptp(assembly.mesh.nodes, axis=0).max())
    parts = {f'wall "{s.wall_id}"': s.stiffness for s in assembly.springs}
    parts.update({f"{b.name}": float(b.axial_rigidity.max()) / extent for b in assembly.bars})
    parts["diaphragm membrane (shear)"] = float(np.min(assembly.rigidity[:, 2, 2]))
    parts["diaphragm membrane (axial)"] = float(np.min(assembly.rigidity[:, 0, 0]))
    parts["diaphragm membrane (stiffest shear)"] = float(np.max(assembly.rigidity[:, 2, 2]))
    return parts


def check_conditioning(assembly: Assembly, plan: Plan) -> None:
    """Raise :class:`FEError` when stiffness terms differ by more than
    :data:`CONDITION_LIMIT`, naming the stiffest and softest parts of the model, because
    double precision then loses the softer part of the answer."""
    diagonal = assembly.stiffness.diagonal()
    if np.any(~np.isfinite(diagonal)) or np.any(diagonal <= 0):
        raise FEError(f"{plan.source}: the stiffness matrix has a zero or non-finite diagonal term; "
                      "check for zero or infinite stiffness values")
    parts = _stiffness_parts(assembly)
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


def backward_error(stiffness: sp.csr_matrix, norm_K: float, u: np.ndarray, f: np.ndarray) -> np.ndarray:
    """Normwise backward error per case (n_cases,): ‖f − K u‖∞ / (‖K‖∞ ‖u‖∞ + ‖f‖∞), the
    smallest relative change of K and f for which u is the exact solution (Rigal and
    Gaches, 1967; Higham, *Accuracy and Stability of Numerical Algorithms*, 2nd ed.,
    Thm. 7.1). Unlike ‖r‖/‖f‖ it does not grow with the stiffness ratio of the model."""
    residual = f - stiffness @ u
    scale = norm_K * np.abs(u).max(axis=0) + np.abs(f).max(axis=0)
    return np.abs(residual).max(axis=0) / np.maximum(scale, 1e-300)


def wall_equilibrium(assembly: Assembly, displacements: np.ndarray, loads: np.ndarray) -> np.ndarray:
    """Imbalance per case (n_cases,) between the wall springs' reactions and the applied
    nodal loads: force along x and y and moment about z, the largest of |ΔFx|, |ΔFy| and
    |ΔMz| / plan size, relative to Σ|f| (the membrane and bars carry no net force)."""
    nodes = assembly.mesh.nodes
    reactions = (assembly.spring_matrix @ displacements).reshape(-1, 2, displacements.shape[1])
    applied = loads.reshape(-1, 2, loads.shape[1])
    size = max(float(np.ptp(nodes, axis=0).max()), 1e-300)
    center = nodes.mean(axis=0)
    arm = nodes - center

    def resultant(forces: np.ndarray) -> np.ndarray:  # (3, n_cases): Fx, Fy, Mz / size
        moment = arm[:, 0:1] * forces[:, 1] - arm[:, 1:2] * forces[:, 0]
        return np.vstack([forces[:, 0].sum(axis=0), forces[:, 1].sum(axis=0), moment.sum(axis=0) / size])

    scale = np.maximum(np.abs(loads).sum(axis=0), 1e-300)
    return np.abs(resultant(reactions) - resultant(applied)).max(axis=0) / scale


def rigid_body_modes(nodes: np.ndarray) -> np.ndarray:
    """Orthonormal rigid-body modes (n_dofs, 3) of the plan: the two translations and the
    small rotation about the nodes' centroid."""
    arm = nodes - nodes.mean(axis=0)
    modes = np.zeros((2 * len(nodes), 3))
    modes[0::2, 0] = 1.0
    modes[1::2, 1] = 1.0
    modes[0::2, 2] = -arm[:, 1]
    modes[1::2, 2] = arm[:, 0]
    return np.linalg.qr(modes)[0]


def structural_residual(assembly: Assembly, modes: np.ndarray, u: np.ndarray, f: np.ndarray) -> np.ndarray:
    """f − K u (n_dofs, n_cases) computed so that rounding does not grow with the
    diaphragm-to-wall stiffness ratio: u is split into its rigid-body part u₀ and the rest,
    and K u₀ is taken as K_walls u₀, because membrane and bars strain nothing under a
    rigid-body motion (exactly, for isoparametric elements). Computed directly, K u₀ of a
    near-rigid diaphragm carries rounding of about 1e-16 × (diaphragm stiffness /
    wall stiffness) of the load, which no refinement could remove."""
    rigid = modes @ (modes.T @ u)
    return f - assembly.spring_matrix @ rigid - assembly.stiffness @ (u - rigid)


#: Largest normwise backward error accepted after refinement (a backward-stable solve
#: gives about 1e-16 times a small multiple of the matrix size).
BACKWARD_ERROR_LIMIT = 1e-10
#: Largest imbalance of wall reactions against the applied load, relative to the load.
EQUILIBRIUM_LIMIT = 1e-6
#: Iterative refinement steps at most (each is one solve with the existing factor).
REFINEMENT_STEPS = 4
#: Refinement runs only for cases whose backward error or wall-reaction imbalance exceeds
#: these (far below the acceptance limits; most models meet them without a second solve).
REFINE_BACKWARD_ERROR = 1e-13
REFINE_EQUILIBRIUM = 1e-10


def solve(assembly: Assembly, plan: Plan, cases: list[LoadCase], loads: np.ndarray) -> Solution:
    """Factor once and solve every case; where the backward error or the wall-reaction
    imbalance is above :data:`REFINE_BACKWARD_ERROR` / :data:`REFINE_EQUILIBRIUM`, improve
    the solution by iterative refinement from the same factor (r = f − K u from
    :func:`structural_residual`, u += K⁻¹ r, while it halves them); accept it
    only when its backward error is at most :data:`BACKWARD_ERROR_LIMIT` and the wall
    reactions balance the applied load (force and moment) to :data:`EQUILIBRIUM_LIMIT`."""
    check_conditioning(assembly, plan)
    check_restraint(assembly, plan)
    K = assembly.stiffness
    try:
        factor = factorize(K)
    except (RuntimeError, ValueError, np.linalg.LinAlgError) as exc:
        raise FEError(f"{plan.source}: the stiffness matrix could not be factorized ({exc}); the model is "
                      "singular: some part of the diaphragm can move without resistance") from None
    displacements = np.asarray(factor.solve(loads)).reshape(loads.shape)
    if not np.all(np.isfinite(displacements)):
        raise FEError(f"{plan.source}: the solve produced non-finite displacements; the stiffness matrix is singular "
                      f"or nearly so ({_stiffness_spread(assembly)})")
    norm_K = float(abs(K).sum(axis=1).max())
    modes = rigid_body_modes(assembly.mesh.nodes)
    error = backward_error(K, norm_K, displacements, loads)
    imbalance = wall_equilibrium(assembly, displacements, loads)
    merit = np.maximum(error / REFINE_BACKWARD_ERROR, imbalance / REFINE_EQUILIBRIUM)
    for _ in range(REFINEMENT_STEPS):
        if not np.any(merit > 1.0):  # accurate already: no extra solve
            break
        residual = structural_residual(assembly, modes, displacements, loads)
        trial = displacements + np.asarray(factor.solve(residual)).reshape(loads.shape)
        trial_error = backward_error(K, norm_K, trial, loads)
        trial_imbalance = wall_equilibrium(assembly, trial, loads)
        trial_merit = np.maximum(trial_error / REFINE_BACKWARD_ERROR, trial_imbalance / REFINE_EQUILIBRIUM)
        better = np.isfinite(trial_merit) & (trial_merit < merit)  # keep a step only where it helps
        halved = better & (trial_merit < 0.5 * merit) & (trial_merit > 1.0)
        displacements[:, better] = trial[:, better]
        error = np.where(better, trial_error, error)
        imbalance = np.where(better, trial_imbalance, imbalance)
        merit = np.where(better, trial_merit, merit)
        if not np.any(halved):
            break
    if np.any(error > BACKWARD_ERROR_LIMIT):
        worst = int(np.argmax(error))
        raise FEError(
            f"{plan.source}: the solution of case {cases[worst].name} is not accurate: backward error "
            f"{error[worst]:.1e} after iterative refinement (limit {BACKWARD_ERROR_LIMIT:.0e}); "
            f"{_stiffness_spread(assembly)}. Check for stiffness values far outside the usual range"
        )
    if np.any(imbalance > EQUILIBRIUM_LIMIT):
        worst = int(np.argmax(imbalance))
        raise EquilibriumError(
            f"{plan.source}: the wall reactions of case {cases[worst].name} do not balance the applied load "
            f"(imbalance {imbalance[worst]:.1e} of the load, limit {EQUILIBRIUM_LIMIT:.0e}) although the solve "
            f"is accurate (backward error {error[worst]:.1e}); {_stiffness_spread(assembly)}. These results are "
            "wrong and nothing was written; please report this with the plan file"
        )
    residual = structural_residual(assembly, modes, displacements, loads)
    relative = np.linalg.norm(residual, axis=0) / np.maximum(np.linalg.norm(loads, axis=0), 1e-300)
    wall_forces = {}
    for spring in assembly.springs:
        dofs = element_dofs(spring.edges)
        local = np.einsum("mij,mjc->mic", spring.matrices, displacements[dofs])  # (m, 2k, n_cases)
        along = local.reshape(len(spring.edges), -1, 2, displacements.shape[1])
        wall_forces[spring.wall_id] = np.einsum("mkdc,d->c", along, spring.direction)
    return Solution(assembly, tuple(cases), loads, displacements, wall_forces, relative, factor.backend,
                    error, imbalance)


def _stiffness_spread(assembly: Assembly) -> str:
    """Words for the spread of stiffness in the model (stiffest / softest part)."""
    parts = _stiffness_parts(assembly)
    stiffest = max(parts, key=parts.get)
    softest = min(parts, key=parts.get)
    return (f"the stiffest part of the model ({stiffest}) is {parts[stiffest] / parts[softest]:.1e} times "
            f"the softest ({softest})")
