"""Second-order nodes added by planshear.mesh.build.elevate, checked against gmsh's own
order elevation (gmsh.model.mesh.setOrder, the reference library) on the same first-order
mesh: every element's and line's node coordinates, node by node in gmsh's node order."""

import gmsh
import numpy as np
import pytest

from planshear.mesh.build import elevate

#: gmsh element type numbers: first order and the second-order type of each case.
CASES = {"tri6": (2, 9, False), "quad9": (3, 10, False), "quad8": (3, 16, True)}


def _gmsh_mesh(quads: bool):
    """An L-shaped plate with a rectangular hole and an embedded line, meshed first order."""
    occ = gmsh.model.occ
    outline = [(0, 0), (30, 0), (30, 12), (14, 12), (14, 25), (0, 25)]
    pts = [occ.addPoint(x, y, 0) for x, y in outline]
    loop = occ.addCurveLoop([occ.addLine(pts[i], pts[(i + 1) % len(pts)]) for i in range(len(pts))])
    hole = [(4, 4), (9, 4), (9, 8), (4, 8)]
    hp = [occ.addPoint(x, y, 0) for x, y in hole]
    hole_loop = occ.addCurveLoop([occ.addLine(hp[i], hp[(i + 1) % 4]) for i in range(4)])
    surface = occ.addPlaneSurface([loop, hole_loop])
    line = occ.addLine(occ.addPoint(20, 0, 0), occ.addPoint(20, 12, 0))
    occ.fragment([(2, surface)], [(1, line)])
    occ.synchronize()
    gmsh.option.setNumber("Mesh.MeshSizeMax", 1.7)
    if quads:
        gmsh.option.setNumber("Mesh.Algorithm", 8)
        gmsh.option.setNumber("Mesh.RecombineAll", 1)
        gmsh.option.setNumber("Mesh.SubdivisionAlgorithm", 1)
    else:
        gmsh.option.setNumber("Mesh.Algorithm", 6)
    gmsh.model.mesh.generate(2)


def _elements(dim: int, gtype: int):
    tags, nodes = [], []
    for _, tag in gmsh.model.getEntities(dim):
        types, element_tags, conn = gmsh.model.mesh.getElements(dim, tag)
        for t, e, c in zip(types, element_tags, conn, strict=True):
            if t == gtype:
                tags.append(e)
                nodes.append(c.reshape(len(e), -1))
    return np.concatenate(tags), np.concatenate(nodes)


def _coordinates():
    node_tags, coords, _ = gmsh.model.mesh.getNodes()
    xyz = np.zeros((int(node_tags.max()) + 1, 2))
    xyz[node_tags.astype(np.int64)] = coords.reshape(-1, 3)[:, :2]
    return xyz


@pytest.mark.parametrize("element_type", list(CASES))
def test_elevate_matches_gmsh_set_order(element_type):
    first, second, incomplete = CASES[element_type]
    gmsh.initialize([], readConfigFiles=False, interruptible=False)
    try:
        gmsh.option.setNumber("General.Terminal", 0)
        gmsh.model.add("elevation")
        _gmsh_mesh(quads=first == 3)
        xyz = _coordinates()
        element_tags, corners = _elements(2, first)
        line_tags, ends = _elements(1, 1)
        # Ours, on a compact numbering of the first-order mesh.
        used = np.unique(np.concatenate([corners.ravel(), ends.ravel()]))
        index = np.zeros(int(used.max()) + 1, dtype=np.int64)
        index[used] = np.arange(len(used))
        nodes, elements, edges = elevate(xyz[used], index[corners], index[ends], element_type)
        # gmsh's, on the same mesh.
        gmsh.option.setNumber("Mesh.SecondOrderIncomplete", 1 if incomplete else 0)
        gmsh.model.mesh.setOrder(2)
        xyz2 = _coordinates()
        tags2, reference = _elements(2, second)
        line_tags2, reference_lines = _elements(1, 8)
    finally:
        gmsh.finalize()
    assert np.array_equal(np.sort(tags2), np.sort(element_tags)) and elements.shape == reference.shape
    order = np.argsort(element_tags)
    order2 = np.argsort(tags2)
    extent = 30.0
    assert np.abs(nodes[elements[order]] - xyz2[reference[order2]]).max() <= 1e-12 * extent
    line_order, line_order2 = np.argsort(line_tags), np.argsort(line_tags2)
    assert np.abs(nodes[edges[line_order]] - xyz2[reference_lines[line_order2]]).max() <= 1e-12 * extent
    # One node per distinct point: as many nodes as gmsh's second-order mesh has in use.
    assert len(nodes) == len(np.unique(np.concatenate([reference.ravel(), reference_lines.ravel()])))


def test_first_order_is_left_alone():
    nodes = np.array([[0.0, 0.0], [1.0, 0.0], [0.0, 1.0]])
    elements = np.array([[0, 1, 2]])
    edges = np.array([[0, 1]])
    out = elevate(nodes, elements, edges, "tri3")
    assert out[0] is nodes and out[1] is elements and out[2] is edges
