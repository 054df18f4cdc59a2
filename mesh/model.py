"""The finite-element mesh of a plan, its checks and its export.

Array conventions (all SI, metres):

* ``nodes``: (n_nodes, 2) float, x and y;
* ``elements``: (n_elements, n_element_nodes) int, gmsh node order (corners counter-
  clockwise, then mid-side nodes, then the centre node of a 9-node quadrilateral);
* ``edges``: (n_edges, 2 or 3) int, every line element of the mesh (outline, openings,
  embedded grid lines, walls and members): the two end nodes, then the mid node;
* a :class:`LineMesh` lists the edges along one named line ordered from its start to
  its end, each edge oriented the same way, with the line coordinate t of its ends.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from planshear.errors import AnalysisError

__all__ = ["ELEMENT_NODES", "LineMesh", "Mesh", "MeshError", "check_mesh"]

#: Nodes per element and per edge for each element kind.
ELEMENT_NODES = {"tri3": 3, "tri6": 6, "quad4": 4, "quad8": 8, "quad9": 9}
EDGE_NODES = {"tri3": 2, "quad4": 2, "tri6": 3, "quad8": 3, "quad9": 3}
#: meshio cell names for export.
MESHIO_CELLS = {"tri3": "triangle", "tri6": "triangle6", "quad4": "quad", "quad8": "quad8", "quad9": "quad9"}
MESHIO_LINES = {2: "line", 3: "line3"}


class MeshError(AnalysisError):
    """The mesh could not be made or failed a check; the message says why."""


@dataclass(frozen=True, eq=False)
class LineMesh:
    """Edges along a named line, ordered from start to end."""

    name: str
    edges: np.ndarray  # (m, 2|3) node ids: start, end[, mid]
    t: np.ndarray  # (m, 2) line coordinate of each edge's start and end (m)

    @property
    def node_sequence(self) -> np.ndarray:
        """All distinct nodes on the line's edges (mid nodes included) in line order, (k,)."""
        return self._ordered()[0]

    @property
    def node_t(self) -> np.ndarray:
        """Line coordinate (m) of :attr:`node_sequence`."""
        return self._ordered()[1]

    def _ordered(self) -> tuple[np.ndarray, np.ndarray]:
        if len(self.edges) == 0:
            return np.zeros(0, dtype=int), np.zeros(0)
        t_nodes = [self.t[:, 0], self.t[:, 1]]
        if self.edges.shape[1] == 3:
            t_nodes.append(self.t.mean(axis=1))  # straight edges: the mid node is halfway
        nodes = self.edges.T.ravel()
        t_all = np.concatenate(t_nodes)
        unique, first = np.unique(nodes, return_index=True)
        order = np.argsort(t_all[first], kind="stable")
        return unique[order], t_all[first][order]

    def tributary(self) -> np.ndarray:
        """Length (m) each node of :attr:`node_sequence` carries of a uniform line load
        (consistent loads: L/6, L/6, 2L/3 on quadratic edges; L/2, L/2 on linear)."""
        nodes = self.node_sequence
        position = {int(n): i for i, n in enumerate(nodes)}
        lengths = self.t[:, 1] - self.t[:, 0]
        shares = [1 / 6, 1 / 6, 2 / 3] if self.edges.shape[1] == 3 else [1 / 2, 1 / 2]
        result = np.zeros(len(nodes))
        for column, share in enumerate(shares):
            idx = np.array([position[int(n)] for n in self.edges[:, column]], dtype=int)
            np.add.at(result, idx, share * lengths)
        return result

    @property
    def length(self) -> float:
        return float(np.sum(self.t[:, 1] - self.t[:, 0]))


@dataclass(frozen=True, eq=False)
class Mesh:
    """A conforming mesh of the diaphragm with every named line embedded."""

    nodes: np.ndarray
    elements: np.ndarray
    element_type: str
    element_zone: np.ndarray  # (n_elements,) −1 for the main material, else zone index
    edges: np.ndarray
    lines: dict[str, LineMesh]  # grid lines (the part over the diaphragm)
    walls: dict[str, LineMesh]  # wall id → edges under the wall
    members: tuple[LineMesh, ...]  # aligned with plan.members
    outline_edges: np.ndarray  # (m, 2|3) edges on the outline (chords)
    point_nodes: dict[tuple[float, float], int] = field(default_factory=dict)

    @property
    def n_nodes(self) -> int:
        return len(self.nodes)

    @property
    def n_dofs(self) -> int:
        return 2 * len(self.nodes)

    @property
    def order(self) -> int:
        return 1 if self.element_type in ("tri3", "quad4") else 2

    def to_meshio(self, point_data: dict | None = None, cell_data: dict | None = None):
        """A meshio.Mesh with the membrane elements and all line elements as two blocks."""
        import meshio

        cells = [(MESHIO_CELLS[self.element_type], self.elements)]
        if len(self.edges):
            edges = self.edges if self.edges.shape[1] == 2 else self.edges[:, [0, 1, 2]]
            cells.append((MESHIO_LINES[edges.shape[1]], edges))
        points = np.column_stack([self.nodes, np.zeros(len(self.nodes))])
        zone = [self.element_zone, np.full(len(self.edges), -2)] if len(self.edges) else [self.element_zone]
        data = {"zone": zone}
        if cell_data:
            data.update(cell_data)
        return meshio.Mesh(points, cells, point_data=point_data or {}, cell_data=data)


def _signed_area(nodes: np.ndarray, elements: np.ndarray, corners: int) -> np.ndarray:
    xy = nodes[elements[:, :corners]]
    x, y = xy[..., 0], xy[..., 1]
    return 0.5 * np.sum(x * np.roll(y, -1, axis=1) - np.roll(x, -1, axis=1) * y, axis=1)


def check_mesh(mesh: Mesh, size: float) -> Mesh:
    """Cheap checks run on every mesh: counter-clockwise corners (clockwise elements are
    reordered), no zero-area element, no duplicate node, no unused node. Returns the
    (possibly reordered) mesh; raises :class:`MeshError` on a defect that cannot be fixed."""
    corners = 3 if mesh.element_type.startswith("tri") else 4
    area = _signed_area(mesh.nodes, mesh.elements, corners)
    tiny = 1e-12 * size**2
    if np.any(np.abs(area) <= tiny):
        bad = int(np.argmin(np.abs(area)))
        xy = mesh.nodes[mesh.elements[bad, :corners]].mean(axis=0)
        raise MeshError(f"the mesh has an element of zero area near ({xy[0]:.4g}, {xy[1]:.4g}) m")
    elements = mesh.elements
    if np.any(area < 0):
        elements = elements.copy()
        flip = area < 0
        elements[flip] = elements[flip][:, _reverse_order(mesh.element_type)]
    used = np.zeros(len(mesh.nodes), dtype=bool)
    used[elements.ravel()] = True
    if not used.all():
        # A line node outside every element means an embedded line did not conform.
        raise MeshError(
            f"the mesh has {int((~used).sum())} nodes that belong to no element "
            f"(first at {mesh.nodes[np.argmin(used)].round(4).tolist()} m): an embedded line did not conform"
        )
    rounded = np.round(mesh.nodes / (1e-9 * size))
    unique = np.unique(rounded, axis=0)
    if len(unique) != len(rounded):
        raise MeshError(f"the mesh has {len(rounded) - len(unique)} duplicate nodes")
    if elements is mesh.elements:
        return mesh
    return Mesh(
        mesh.nodes, elements, mesh.element_type, mesh.element_zone, mesh.edges, mesh.lines, mesh.walls,
        mesh.members, mesh.outline_edges, mesh.point_nodes,
    )


def _reverse_order(element_type: str) -> list[int]:
    """Node permutation that turns an element clockwise ↔ counter-clockwise."""
    return {
        "tri3": [0, 2, 1],
        "tri6": [0, 2, 1, 5, 4, 3],
        "quad4": [0, 3, 2, 1],
        "quad8": [0, 3, 2, 1, 7, 6, 5, 4],
        "quad9": [0, 3, 2, 1, 7, 6, 5, 4, 8],
    }[element_type]
