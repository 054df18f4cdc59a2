"""Plan → gmsh geometry → :class:`Mesh`.

The diaphragm is split (with shapely) into the main material and the zones, each a
polygon with holes for the openings. Every grid-line piece over the diaphragm, every
wall, member and line-weight end and every point weight is fragmented into the surfaces
with gmsh's OpenCASCADE kernel, so that they become element edges and nodes. gmsh runs
quietly (no terminal output, no GUI, no files) on one thread, so the same plan gives the
same mesh (with two threads gmsh gave different meshes of one plan from run to run).

gmsh meshes with straight first-order elements; the mid-side (and quad9 centre) nodes of
second-order elements are added here (:func:`elevate`): every edge of a plan is straight,
so they are the edge midpoints, as gmsh would place them, found in one vectorized pass
(gmsh's own order elevation took about a third of the meshing time at 1M DOFs).
"""

from __future__ import annotations

import numpy as np
import shapely
from shapely.geometry import LineString, Point, Polygon

from planshear.plan import Plan

from .model import ELEMENT_NODES, LineMesh, Mesh, MeshError, check_mesh

__all__ = ["build_mesh"]

#: gmsh element type numbers of the first-order elements gmsh makes (line: 2-node).
GMSH_TYPES = {"tri3": 2, "quad4": 3}
GMSH_LINE = 1
#: The first-order element gmsh makes for each element type (elevate() adds the rest).
CORNER_TYPES = {"tri3": "tri3", "tri6": "tri3", "quad4": "quad4", "quad8": "quad4", "quad9": "quad4"}


def build_mesh(plan: Plan, size: float | None = None, order: int | None = None, element: str | None = None) -> Mesh:
    """Mesh the plan's diaphragm. ``size`` (m), ``order`` (1 or 2) and ``element``
    ("triangle", "quad" for 9-node or "quad8") default to the plan's [mesh] settings."""
    import gmsh

    size = plan.mesh.size if size is None else size
    order = plan.mesh.order if order is None else order
    element = plan.mesh.element if element is None else element
    if element == "triangle":
        element_type = "tri6" if order == 2 else "tri3"
    elif element == "quad8":
        element_type = "quad8"
    else:
        element_type = "quad9" if order == 2 else "quad4"
    extent = float(np.ptp(plan.outline, axis=0).max())
    tol = 1e-7 * extent

    surfaces = _surface_pieces(plan)
    segments = _line_pieces(plan, tol)
    points = _embedded_points(plan, tol)

    gmsh.initialize([], readConfigFiles=False, interruptible=False)
    try:
        gmsh.option.setNumber("General.Terminal", 0)
        gmsh.option.setNumber("General.Verbosity", 0)
        gmsh.option.setNumber("General.NumThreads", 1)
        gmsh.model.add("planshear")
        occ = gmsh.model.occ
        surface_tags = [(2, _add_polygon(occ, polygon)) for polygon, _ in surfaces]
        tool_tags = []
        for a, b in segments:
            pa, pb = occ.addPoint(a[0], a[1], 0.0), occ.addPoint(b[0], b[1], 0.0)
            tool_tags.append((1, occ.addLine(pa, pb)))
        for x, y in points:
            tool_tags.append((0, occ.addPoint(x, y, 0.0)))
        if tool_tags:
            occ.fragment(surface_tags, tool_tags)
        occ.synchronize()

        # Which zone each surface belongs to: by a point inside it.
        zone_of_surface = {}
        for dim, tag in gmsh.model.getEntities(2):
            cx, cy, _ = occ.getCenterOfMass(dim, tag)
            probe = Point(cx, cy)
            zone_of_surface[tag] = -1
            for index, zone in enumerate(plan.zones):
                if zone.region.buffer(tol).covers(probe):
                    zone_of_surface[tag] = index
                    break

        gmsh.option.setNumber("Mesh.MeshSizeMax", size)
        gmsh.option.setNumber("Mesh.MeshSizeMin", size / 5.0)
        gmsh.option.setNumber("Mesh.MeshSizeFromPoints", 0)
        gmsh.option.setNumber("Mesh.MeshSizeExtendFromBoundary", 0)
        gmsh.option.setNumber("Mesh.MeshSizeFromCurvature", 0)
        _refine_near(gmsh, plan, size, tol)
        if element_type.startswith("quad"):
            gmsh.option.setNumber("Mesh.Algorithm", 8)
            gmsh.option.setNumber("Mesh.RecombineAll", 1)
            gmsh.option.setNumber("Mesh.RecombinationAlgorithm", 1)
            gmsh.option.setNumber("Mesh.SubdivisionAlgorithm", 1)
        else:
            gmsh.option.setNumber("Mesh.Algorithm", 6)
        gmsh.option.setNumber("Mesh.ElementOrder", 1)  # second order: elevate() below
        gmsh.model.mesh.generate(2)

        node_tags, coords, _ = gmsh.model.mesh.getNodes()
        index_of = np.zeros(int(node_tags.max()) + 1, dtype=np.int64)
        index_of[node_tags.astype(np.int64)] = np.arange(len(node_tags))
        nodes = coords.reshape(-1, 3)[:, :2].copy()
        corner_type = CORNER_TYPES[element_type]
        n_element_nodes = ELEMENT_NODES[corner_type]
        blocks, zones = [], []
        for _, tag in gmsh.model.getEntities(2):
            types, _, conn = gmsh.model.mesh.getElements(2, tag)
            for gtype, nodes_of in zip(types, conn, strict=True):
                if gtype != GMSH_TYPES[corner_type]:
                    raise MeshError(
                        f"gmsh produced element type {gtype} where {element_type} was asked for; "
                        "try element = \"triangle\""
                    )
                block = index_of[nodes_of.astype(np.int64)].reshape(-1, n_element_nodes)
                blocks.append(block)
                zones.append(np.full(len(block), zone_of_surface[tag], dtype=np.int64))
        edge_blocks = []
        for _, tag in gmsh.model.getEntities(1):
            types, _, conn = gmsh.model.mesh.getElements(1, tag)
            for gtype, nodes_of in zip(types, conn, strict=True):
                if gtype == GMSH_LINE:
                    edge_blocks.append(index_of[nodes_of.astype(np.int64)].reshape(-1, 2))
    finally:
        gmsh.finalize()

    if not blocks:
        raise MeshError("gmsh produced no elements; check the outline and mesh.size")
    elements = np.concatenate(blocks)
    element_zone = np.concatenate(zones)
    edges = np.concatenate(edge_blocks) if edge_blocks else np.zeros((0, 2), dtype=np.int64)
    nodes, elements, edges = _drop_unused_nodes(nodes, elements, edges)
    nodes, elements, edges = elevate(nodes, elements, edges, element_type)

    lines = {}
    for grid_line in plan.grid_lines:
        lines[grid_line.name] = _line_mesh(grid_line.name, grid_line.origin, grid_line.direction,
                                           grid_line.t_min, grid_line.t_max, nodes, edges, tol)
    walls = {}
    for wall in plan.walls:
        grid_line = plan.line(wall.line)
        walls[wall.id] = _line_mesh(wall.id, grid_line.origin, grid_line.direction, wall.t_from, wall.t_to,
                                    nodes, edges, tol)
        if abs(walls[wall.id].length - wall.length) > 1e-6 * wall.length:
            raise MeshError(f'wall "{wall.id}" was not captured by the mesh edges')
    members = []
    for i, member in enumerate(plan.members):
        grid_line = plan.line(member.line)
        members.append(_line_mesh(f"member {i + 1}", grid_line.origin, grid_line.direction, member.t_from,
                                  member.t_to, nodes, edges, tol))
    boundary = shapely.Polygon(plan.outline).exterior
    near = shapely.distance(boundary, shapely.points(nodes[edges])) <= tol
    outline_edges = edges[near.all(axis=1)]
    point_nodes = {}
    for x, y in points:
        distance = np.hypot(nodes[:, 0] - x, nodes[:, 1] - y)
        k = int(np.argmin(distance))
        if distance[k] <= tol:
            point_nodes[(x, y)] = k
    mesh = Mesh(nodes, elements, element_type, element_zone, edges, lines, walls, tuple(members),
                outline_edges, point_nodes)
    return check_mesh(mesh, extent)


def _surface_pieces(plan: Plan) -> list[tuple[Polygon, int]]:
    """Non-overlapping polygons (with holes) covering the diaphragm: the zones and the rest."""
    pieces: list[tuple[Polygon, int]] = []
    rest = plan.region
    for index, zone in enumerate(plan.zones):
        for polygon in getattr(zone.region, "geoms", [zone.region]):
            if isinstance(polygon, Polygon) and polygon.area > 0:
                pieces.append((polygon, index))
        rest = rest.difference(zone.polygon)
    for polygon in getattr(rest, "geoms", [rest]):
        if isinstance(polygon, Polygon) and polygon.area > 0:
            pieces.append((polygon, -1))
    return pieces


def _line_pieces(plan: Plan, tol: float) -> list[tuple[np.ndarray, np.ndarray]]:
    """Every grid line over the diaphragm, cut into its pieces inside the region."""
    pieces = []
    for grid_line in plan.grid_lines:
        segment = grid_line.segment(grid_line.t_min, grid_line.t_max)
        inside = segment.intersection(plan.region)
        for part in getattr(inside, "geoms", [inside]):
            if isinstance(part, LineString) and part.length > tol:
                coords = np.asarray(part.coords)
                pieces.append((coords[0], coords[-1]))
    return pieces


def _embedded_points(plan: Plan, tol: float) -> list[tuple[float, float]]:
    """Wall, member and line-weight ends and point weights: they must be mesh nodes."""
    found = []
    for wall in plan.walls:
        found += [tuple(wall.start), tuple(wall.end)]
    for member in plan.members:
        grid_line = plan.line(member.line)
        found += [tuple(grid_line.point(member.t_from)), tuple(grid_line.point(member.t_to))]
    for load in plan.loads:
        for line_name, t0, t1, _ in load.line_weights:
            grid_line = plan.line(line_name)
            found += [tuple(grid_line.point(t0)), tuple(grid_line.point(t1))]
        found += [(x, y) for x, y, _ in load.point_weights]
    unique: list[tuple[float, float]] = []
    for x, y in found:
        if not any(abs(x - u) <= tol and abs(y - v) <= tol for u, v in unique):
            unique.append((float(x), float(y)))
    return unique


def _add_polygon(occ, polygon: Polygon) -> int:
    # Every loop counter-clockwise: OCC's fragment silently drops embedded lines from a
    # face whose loops are oriented otherwise (found by test; see tests/test_mesh.py).
    loops = []
    for ring in [polygon.exterior, *polygon.interiors]:
        coords = np.asarray(ring.coords)[:-1]
        if not shapely.LinearRing(coords).is_ccw:
            coords = coords[::-1]
        point_tags = [occ.addPoint(x, y, 0.0) for x, y in coords]
        curve_tags = [occ.addLine(point_tags[i], point_tags[(i + 1) % len(point_tags)]) for i in range(len(point_tags))]
        loops.append(occ.addCurveLoop(curve_tags))
    return occ.addPlaneSurface(loops)


def _refine_near(gmsh, plan: Plan, size: float, tol: float) -> None:
    """Smaller elements near wall ends, re-entrant corners of the outline and opening corners."""
    targets = [tuple(w.start) for w in plan.walls] + [tuple(w.end) for w in plan.walls]
    outline = plan.outline
    previous, following = np.roll(outline, 1, axis=0), np.roll(outline, -1, axis=0)
    turn = (outline - previous)[:, 0] * (following - outline)[:, 1] - (outline - previous)[:, 1] * (following - outline)[:, 0]
    targets += [tuple(p) for p in outline[turn < 0]]  # counter-clockwise outline: right turns are re-entrant
    for opening in plan.openings:
        targets += [tuple(p) for p in opening]
    point_tags = []
    for dim, tag in gmsh.model.getEntities(0):
        x, y, _ = gmsh.model.getValue(dim, tag, [])
        if any(abs(x - u) <= tol and abs(y - v) <= tol for u, v in targets):
            point_tags.append(tag)
    if not point_tags:
        return
    field = gmsh.model.mesh.field
    distance = field.add("Distance")
    field.setNumbers(distance, "PointsList", point_tags)
    threshold = field.add("Threshold")
    field.setNumber(threshold, "InField", distance)
    field.setNumber(threshold, "SizeMin", size / 3.0)
    field.setNumber(threshold, "SizeMax", size)
    field.setNumber(threshold, "DistMin", size / 2.0)
    field.setNumber(threshold, "DistMax", 4.0 * size)
    field.setAsBackgroundMesh(threshold)


def elevate(nodes: np.ndarray, elements: np.ndarray, edges: np.ndarray,
            element_type: str) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Straight-sided first-order elements (tri3 or quad4 corners, (n_e, 3|4)) and line
    elements ((n_l, 2)) → ``element_type``: one mid-side node per distinct edge at its
    midpoint, and for quad9 a centre node at the mean of the corners (the element's
    parametric centre when it is straight-sided). Node order within an element is gmsh's
    (corners, then the mid-sides of edges 0-1, 1-2, …, then the centre), lines get
    (end, end, middle). New nodes are numbered after the corner nodes in the order of
    their edges' first appearance. Coordinates in the units of ``nodes``."""
    if element_type in ("tri3", "quad4"):
        return nodes, elements, edges
    corners = elements.shape[1]
    sides = np.stack([elements, np.roll(elements, -1, axis=1)], axis=-1).reshape(-1, 2)  # (n_e·k, 2)
    pairs = np.concatenate([sides, edges])
    low, high = pairs.min(axis=1), pairs.max(axis=1)
    key = low * len(nodes) + high
    _, first, inverse = np.unique(key, return_index=True, return_inverse=True)
    # Number the mid-side nodes by first appearance (elements first), not by key.
    by_appearance = np.argsort(first, kind="stable")
    rank = np.empty(len(first), dtype=np.int64)
    rank[by_appearance] = np.arange(len(first))
    middle = rank[inverse.reshape(-1)]
    at = first[by_appearance]  # the first pair of each new node, in new-node order
    middle_xy = 0.5 * (nodes[low[at]] + nodes[high[at]])
    new_nodes = [nodes, middle_xy]
    new_elements = [elements, len(nodes) + middle[: sides.shape[0]].reshape(len(elements), corners)]
    if element_type == "quad9":
        new_nodes.append(nodes[elements].mean(axis=1))
        new_elements.append((len(nodes) + len(middle_xy) + np.arange(len(elements)))[:, None])
    new_edges = np.column_stack([edges, len(nodes) + middle[sides.shape[0]:]])
    return np.concatenate(new_nodes), np.concatenate(new_elements, axis=1), new_edges


def _drop_unused_nodes(nodes, elements, edges):
    used = np.zeros(len(nodes), dtype=bool)
    used[elements.ravel()] = True
    used[edges.ravel()] = True
    if used.all():
        return nodes, elements, edges
    new_index = np.cumsum(used) - 1
    return nodes[used], new_index[elements], new_index[edges]


def _line_mesh(name, origin, direction, t0, t1, nodes, edges, tol) -> LineMesh:
    """Edges lying on the segment [t0, t1] of a line, ordered and oriented along it."""
    if len(edges) == 0:
        return LineMesh(name, edges, np.zeros((0, 2)))
    rel = nodes[edges] - origin  # (m, k, 2)
    across = np.abs(rel[..., 0] * direction[1] - rel[..., 1] * direction[0])
    along = rel @ direction
    on = np.all(across <= tol, axis=1) & np.all((along >= t0 - tol) & (along <= t1 + tol), axis=1)
    selected = edges[on].copy()
    t = along[on][:, :2].copy()
    flip = t[:, 0] > t[:, 1]
    selected[flip, 0], selected[flip, 1] = edges[on][flip, 1], edges[on][flip, 0]
    t[flip] = t[flip][:, ::-1]
    order = np.argsort(t[:, 0], kind="stable")
    return LineMesh(name, selected[order], t[order])
