"""Line cuts of the semi-rigid solution: forces along grid lines from nodal internal forces.

For every grid line, the line's nodes form a strip of zero width. Each node is in exact
equilibrium between

* the nodal forces of the membrane elements on either side of the line (the shear that
  the diaphragm delivers from that side; elements are assigned to a side by their
  centroid),
* the applied load at the node,
* the springs of the walls on this line (the wall reactions),
* bars and springs that belong to other lines but share the node (crossing members),
* the bars lying on this line (collector or chord).

The collector diagram is the bar's axial force N(t) = EA·ε (tension positive) at both
ends of every bar element, ε being the derivative of the bar's quadratic (or linear)
displacement, plus the membrane force along the line within the member's effective
strip width. Diagrams are [[t, N], …] with t increasing; at a node shared by two
elements both values are kept (end of the element before, then start of the one after).

The element's end nodal forces are not its axial force: a 3-node bar that picks up a
uniform shear flow has a linear N(s), and its start nodal force is −(N_start + ΔN/6)
(ΔN = N_end − N_start), so nodal forces give a sawtooth with jumps of ΔN/3 between
elements, a free end that seems to carry ΔN/6, and peaks read slightly low.

The residual is the equilibrium check of the cut, made on nodal forces because only they
are in exact equilibrium at the nodes: the running sum of everything but the bars on the
line, node by node from the start, must equal minus the start nodal force of the bar
element that begins at that node (at every element boundary) and zero at the far end;
the largest difference is the reported residual. It checks the solve and the book-keeping
of the cut (walls, crossing members, loads, both sides); EA·ε differs from those nodal
forces by the ΔN/6 above, which is the shear flow picked up by the element's own half
rather than an error, so the residual does not (and cannot) measure it.

Per-unit-length values divide each nodal force by the node's tributary length for a
uniform distribution on the line's edges (L/6 at ends and 2L/3 at the mid node of a
quadratic edge, L/2 for linear edges), which recovers a uniform shear flow exactly.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp

from planshear.fem.collectors import CollectorLayout, WallPiece
from planshear.fem.elements import _geometry, bar_axial_force, membrane_strain_matrix
from planshear.fem.model import Solution, element_dofs
from planshear.plan import GridLine, Plan
from planshear.results import ChordResult, LineResult
from planshear.units import OutputUnits

__all__ = ["LineCut", "collector_notes", "cut_line", "line_results_all_cases", "membrane_forces", "outline_edge_chords"]


@dataclass(frozen=True, eq=False)
class LineCut:
    """Line-cut quantities for one line, all cases (last axis = case)."""

    name: str
    t: np.ndarray  # (k,) line coordinate of each node in order (m)
    tributary: np.ndarray  # (k,) m
    from_left: np.ndarray  # (k, c) N delivered by the membrane on the left/smaller side, along the line
    from_right: np.ndarray  # (k, c)
    applied: np.ndarray  # (k, c) N, loads and crossing members at the nodes
    wall: np.ndarray  # (k, c) N, force taken by the walls of this line (on the wall, along the line)
    stations: np.ndarray  # (m,) t of the collector diagram (m)
    bar_force: np.ndarray  # (m, c) N, tension positive
    strip_force: np.ndarray  # (m, c) N, membrane force within the effective width
    running: np.ndarray  # (m, c) N, −(running sum of non-bar forces) at the same stations
    residual: np.ndarray  # (c,) N
    has_bar: bool = False  # a chord or collector bar lies on (part of) the line


def _side_sign(grid_line: GridLine) -> float:
    """+1 if 'left' (smaller coordinate side) is the left of the line direction."""
    if grid_line.family == "x":  # direction +y: the west (smaller x) side is on the left
        return 1.0
    if grid_line.family == "y":  # direction +x: the south (smaller y) side is on the right
        return -1.0
    return 1.0


def membrane_forces(solution: Solution, points: str = "centroid") -> np.ndarray:
    """Membrane forces (N_x, N_y, N_xy) in N/m for every element and case at the element
    centroid: array (n_e, 3, n_cases)."""
    mesh = solution.assembly.mesh
    kind = mesh.element_type
    ref = np.array([[1 / 3, 1 / 3]]) if kind.startswith("tri") else np.array([[0.0, 0.0]])
    _, dN_xy, _ = _geometry(kind, mesh.nodes[mesh.elements], ref)
    B = membrane_strain_matrix(dN_xy)[:, 0]  # (n_e, 3, d)
    u_e = solution.displacements[element_dofs(mesh.elements)]  # (n_e, d, c)
    strain = np.einsum("ekd,edc->ekc", B, u_e)
    return np.einsum("ekl,elc->ekc", solution.assembly.rigidity, strain)


def cut_line(plan: Plan, solution: Solution, grid_line: GridLine, incidence: sp.csr_matrix,
             centroids: np.ndarray, membrane: np.ndarray | None) -> LineCut:
    """Line cut along ``grid_line`` for every case (see the module docstring)."""
    assembly = solution.assembly
    mesh = assembly.mesh
    line = mesh.lines[grid_line.name]
    e = grid_line.direction
    n_cases = solution.displacements.shape[1]
    seq = line.node_sequence
    k = len(seq)
    tributary = line.tributary()
    if k == 0:
        empty = np.zeros((0, n_cases))
        return LineCut(grid_line.name, np.zeros(0), np.zeros(0), empty, empty, empty, empty,
                       np.zeros(0), empty, empty, empty, np.zeros(n_cases))
    t = (mesh.nodes[seq] - grid_line.origin) @ e
    position = np.full(mesh.n_nodes, -1)
    position[seq] = np.arange(k)

    # Membrane elements touching the line, by side.
    elements = np.unique(incidence[seq].indices)
    rel = centroids[elements] - grid_line.origin
    left_of_direction = (e[0] * rel[:, 1] - e[1] * rel[:, 0]) > 0
    is_left = left_of_direction if _side_sign(grid_line) > 0 else ~left_of_direction
    dofs = element_dofs(mesh.elements[elements])
    forces = np.einsum("mij,mjc->mic", assembly.element_matrices[elements], solution.displacements[dofs])
    along = np.einsum("mndc,d->mnc", forces.reshape(len(elements), -1, 2, n_cases), e)  # (m, nodes, c)
    local_pos = position[mesh.elements[elements]]  # (m, nodes)
    from_left = np.zeros((k, n_cases))
    from_right = np.zeros((k, n_cases))
    on = local_pos >= 0
    for target, mask in ((from_left, is_left), (from_right, ~is_left)):
        sel = on & mask[:, None]
        np.add.at(target, local_pos[sel], -along[sel])

    # Bars on this line, walls on this line, and everything else at the line's nodes.
    def edge_forces(edges: np.ndarray, matrices: np.ndarray) -> np.ndarray:
        f = np.einsum("mij,mjc->mic", matrices, solution.displacements[element_dofs(edges)])
        return f.reshape(len(edges), -1, 2, n_cases)

    # Bars lying on the line (bars sharing an edge, e.g. chord and collector, add up):
    # their nodal forces for the equilibrium check, their axial force EA·ε for the diagram.
    keys, nodal_parts, axial_parts = [], [], []
    other = np.zeros((k, n_cases))
    ends = np.array([-1.0, 1.0])
    for bar in assembly.bars:
        f_e = np.einsum("mndc,d->mnc", edge_forces(bar.edges, bar.matrices), e)
        pos = position[bar.edges]
        mine = np.all(pos >= 0, axis=1)
        if np.any(mine):
            a, b = pos[mine, 0], pos[mine, 1]
            forward = (a < b)[:, None, None]
            axial = bar_axial_force(mesh.nodes[bar.edges[mine]], bar.axial_rigidity[mine],
                                    solution.displacements[element_dofs(bar.edges[mine])], ends)
            # Both in line order: the end of smaller t first.
            axial_parts.append(np.where(forward, axial, axial[:, ::-1]))
            nodal_parts.append(np.where(forward, f_e[mine][:, [0, 1]], f_e[mine][:, [1, 0]]))
            keys.append(np.minimum(a, b) * k + np.maximum(a, b))
        touching = ~mine & np.any(pos >= 0, axis=1)
        if np.any(touching):
            p = pos[touching]
            sel = p >= 0
            np.add.at(other, p[sel], -f_e[touching][sel])
    wall = np.zeros((k, n_cases))
    for spring in assembly.springs:
        f = edge_forces(spring.edges, spring.matrices)
        pos = position[spring.edges]
        f_e = np.einsum("mndc,d->mnc", f, e)
        wall_on_line = next(w for w in plan.walls if w.id == spring.wall_id).line == grid_line.name
        if wall_on_line:
            sel = pos >= 0
            np.add.at(wall, pos[sel], f_e[sel])
        else:
            sel = pos >= 0
            np.add.at(other, pos[sel], -f_e[sel])
    loads = solution.loads[2 * seq] * e[0] + solution.loads[2 * seq + 1] * e[1]
    applied = loads + other

    # Running sum of non-bar forces equals the on-line bar nodal forces, node by node.
    nonbar = from_left + from_right + applied - wall
    running_nodes = -np.cumsum(nonbar, axis=0)

    if keys:
        edge_keys, inverse = np.unique(np.concatenate(keys), return_inverse=True)
        nodal = np.zeros((len(edge_keys), 2, n_cases))
        axial = np.zeros((len(edge_keys), 2, n_cases))
        np.add.at(nodal, inverse, np.concatenate(nodal_parts))
        np.add.at(axial, inverse, np.concatenate(axial_parts))
        start_nodes, end_nodes = edge_keys // k, edge_keys % k
        stations = np.column_stack([t[start_nodes], t[end_nodes]]).ravel()
        values = axial.reshape(-1, n_cases)
        running = np.repeat(running_nodes[start_nodes], 2, axis=0)
        # Equilibrium of the cut, node by node: the running sum through an element's start
        # node equals minus that element's start nodal force (not its EA·ε; see above).
        residual_nodes = np.abs(running_nodes[start_nodes] + nodal[:, 0]).max(axis=0)
    else:
        stations = np.array([t[0], t[-1]])
        values = np.zeros((2, n_cases))
        running = running_nodes[[0, -1]]
        residual_nodes = np.abs(running_nodes).max(axis=0)
    residual = np.maximum(residual_nodes, np.abs(running_nodes[-1]))

    strip = np.zeros_like(values)
    width = max((m.effective_width for m in plan.members if m.line == grid_line.name), default=0.0)
    if width > 0 and membrane is not None:
        strip = _strip_force(mesh, membrane, e, width, centroids, grid_line, stations)
    return LineCut(grid_line.name, t, tributary, from_left, from_right, applied, wall, stations,
                   values, strip, running, residual, bool(keys))


def _strip_force(mesh, membrane, e, width, centroids, grid_line, stations) -> np.ndarray:
    """Membrane force along the line within a strip of total ``width`` centred on it (N):
    ∫ e·N·e across the strip, from the elements whose centroid lies in the strip near each
    station (area-weighted mean of e·N·e times the strip width present; at the outline only
    the half on the diaphragm exists)."""
    corners = 3 if mesh.element_type.startswith("tri") else 4
    xy = mesh.nodes[mesh.elements[:, :corners]]
    area = 0.5 * np.abs(np.sum(xy[..., 0] * np.roll(xy[..., 1], -1, axis=1)
                               - np.roll(xy[..., 0], -1, axis=1) * xy[..., 1], axis=1))
    normal = np.array([-e[1], e[0]])
    rel = centroids - grid_line.origin
    across = rel @ normal
    band = np.flatnonzero(np.abs(across) <= 0.5 * width)
    if len(band) == 0:
        return np.zeros((len(stations), membrane.shape[2]))
    n_b = membrane[band]  # (m, 3, c)
    axial = n_b[:, 0] * e[0] ** 2 + n_b[:, 1] * e[1] ** 2 + 2 * n_b[:, 2] * e[0] * e[1]
    along = rel[band] @ e
    window = 1.5 * np.sqrt(2.0 * np.median(area[band]))  # about one and a half elements
    result = np.zeros((len(stations), axial.shape[1]))
    for i, s in enumerate(stations):
        near = np.abs(along - s) <= window
        if not np.any(near):
            continue
        weights = area[band][near]
        sides = 0.5 * width * (np.any(across[band][near] > 0) + np.any(across[band][near] < 0))
        result[i] = (weights @ axial[near]) / weights.sum() * sides
    return result


def _incidence(mesh) -> sp.csr_matrix:
    n_e, n_n = mesh.elements.shape
    rows = mesh.elements.ravel()
    cols = np.repeat(np.arange(n_e), n_n)
    return sp.csr_matrix((np.ones(rows.size), (rows, cols)), shape=(mesh.n_nodes, n_e))


def outline_edge_chords(plan: Plan, solution: Solution) -> dict[str, tuple[np.ndarray, np.ndarray]]:
    """Chord bar force along each outline edge: name → (t from the edge start (m),
    N (m, c) tension positive)."""
    assembly = solution.assembly
    chords = [b for b in assembly.bars if b.role == "chord" and b.name == "chords"]
    result = {}
    if not chords:
        return result
    bar = chords[0]
    mesh = assembly.mesh
    n_cases = solution.displacements.shape[1]
    xy = mesh.nodes[bar.edges]
    axial = bar_axial_force(xy, bar.axial_rigidity,
                            solution.displacements[element_dofs(bar.edges)], np.array([-1.0, 1.0]))
    outline = plan.outline
    for i in range(len(outline)):
        a, b = outline[i], outline[(i + 1) % len(outline)]
        length = float(np.hypot(*(b - a)))
        e = (b - a) / length
        rel = xy - a
        across = np.abs(rel[..., 0] * e[1] - rel[..., 1] * e[0])
        along = rel @ e
        on = np.all(across <= 1e-7 * length, axis=1) & np.all((along >= -1e-7 * length) & (along <= length * (1 + 1e-7)), axis=1)
        if not np.any(on):
            continue
        ta, tb = along[on][:, 0], along[on][:, 1]
        # Each element's pair in increasing t, elements in increasing t: at a shared node
        # the end of the element before comes first, then the start of the one after.
        pairs = np.where((ta < tb)[:, None, None], axial[on], axial[on][:, ::-1])
        t0, t1 = np.minimum(ta, tb), np.maximum(ta, tb)
        order = np.argsort(t0, kind="stable")
        stations = np.column_stack([t0, t1])[order].ravel()
        result[f"edge {i + 1}"] = (stations, pairs[order].reshape(-1, n_cases))
    return result


def line_results_all_cases(plan: Plan, solution: Solution, membrane: np.ndarray) -> list[tuple]:
    """For every case of the solution: LineResults by grid line, ChordResults by outline
    edge, the largest element-average unit shear |N_xy| (N/m) with its location, and the
    same per zone ("main" for the diaphragm's own material). ``membrane`` is
    :func:`membrane_forces` of the solution."""
    mesh = solution.assembly.mesh
    corners = 3 if mesh.element_type.startswith("tri") else 4
    centroids = mesh.nodes[mesh.elements[:, :corners]].mean(axis=1)
    incidence = _incidence(mesh)
    cuts = {g.name: cut_line(plan, solution, g, incidence, centroids, membrane) for g in plan.grid_lines}
    chords = outline_edge_chords(plan, solution)
    layout = solution.assembly.collectors
    segments = {}
    if layout is not None:
        for piece in layout.pieces:
            segments.setdefault(piece.line, ())
            segments[piece.line] += tuple((s.kind, s.t_from, s.t_to, s.EA) for s in piece.segments)
    per_case = []
    for j in range(solution.displacements.shape[1]):
        lines = {}
        for name, cut in cuts.items():
            if len(cut.t) == 0:
                continue
            q_left = cut.from_left[:, j] / cut.tributary
            q_right = cut.from_right[:, j] / cut.tributary
            lines[name] = LineResult(
                name=name,
                reaction=float(cut.wall[:, j].sum()),
                delivered=float((cut.from_left[:, j] + cut.from_right[:, j]).sum()),
                unit_shear_left=float(q_left[np.argmax(np.abs(q_left))]),
                unit_shear_right=float(q_right[np.argmax(np.abs(q_right))]),
                stations=cut.stations,
                collector=cut.bar_force[:, j] + cut.strip_force[:, j],
                residual=float(cut.residual[j]),
                side_shear=np.column_stack([cut.t, q_left, q_right]),
                has_member=cut.has_bar,
                collector_segments=segments.get(name, ()),
            )
        chord_results = {name: ChordResult(name, st, val[:, j]) for name, (st, val) in chords.items()}
        for member in plan.members:
            if member.role != "chord" or member.line not in cuts:
                continue
            cut = cuts[member.line]
            inside = (cut.stations >= member.t_from - 1e-9) & (cut.stations <= member.t_to + 1e-9)
            name = f"chord on {member.line}"
            chord_results[name] = ChordResult(name, cut.stations[inside] - member.t_from, cut.bar_force[inside, j])
        shear = np.abs(membrane[:, 2, j])
        k = int(np.argmax(shear))
        by_zone = {}
        for zone in np.unique(mesh.element_zone):
            members = np.flatnonzero(mesh.element_zone == zone)
            best = members[int(np.argmax(shear[members]))]
            name = "main" if zone < 0 else plan.zones[zone].name
            by_zone[name] = (float(shear[best]), centroids[best])
        per_case.append((lines, chord_results, (float(shear[k]), centroids[k]), by_zone))
    return per_case


def collector_notes(plan: Plan, layout: CollectorLayout | None) -> tuple[list[str], dict]:
    """Notes and result entries on the collector of every wall piece (SI): which pieces
    carry a declared member, the outline chord, an implied collector (and its assumed EA)
    or nothing. Returns (notes, extra) with extra keys ``wall_pieces``,
    ``wall_pieces_without_member`` (read by the envelope's caution) and
    ``implied_collector_EA``."""
    if layout is None:
        return [], {}
    units = OutputUnits.for_plan(plan.length_unit)

    def where(piece: WallPiece, kind: str | None = None) -> str:
        """The piece, or only its segments of ``kind``, with its walls."""
        spans = [(piece.t_from, piece.t_to)] if kind is None else [(g.t_from, g.t_to) for g in piece.segments
                                                                    if g.kind == kind]
        extent = ", ".join(f"{units.length_out(a):.4g}–{units.length_out(b):.4g}" for a, b in spans)
        return f"{piece.line} ({extent} {units.length}, walls {', '.join(piece.walls)})"

    pieces = [{"line": p.line, "from": p.t_from, "to": p.t_to, "walls": p.walls, "collector": p.kind,
               "segments": [(s.kind, s.t_from, s.t_to, s.EA) for s in p.segments]} for p in layout.pieces]
    bare = [p for p in layout.pieces if any(s.kind == "none" for s in p.segments)]
    implied = [p for p in layout.pieces if any(s.kind == "implied" for s in p.segments)]
    chord = [p for p in layout.pieces if any(s.kind == "chord" for s in p.segments)]
    notes = []
    if implied:
        source = ("[diaphragm] collector_EA" if layout.EA_source == "collector_EA"
                  else "chord_EA, the default of [diaphragm] collector_EA")
        notes.append(
            "implied collectors on the wall pieces of lines " + "; ".join(where(p, "implied") for p in implied)
            + f": no declared member or outline chord covers them, so the model gives them the collector a drag strut "
            f"would be, a bar of EA = {units.force_out(layout.EA):.6g} {units.force} (from {source}) over the rest of "
            "the piece; "
            "their semi-rigid collector forces depend on this assumed EA"
        )
    if chord:
        notes.append("the outline chord bar is read as the collector of the wall pieces of lines "
                     + "; ".join(where(p, "chord") for p in chord))
    if bare:
        notes.append(
            "wall pieces without a collector: " + "; ".join(where(p) for p in bare)
            + ": no declared member and neither [diaphragm] collector_EA nor chord_EA to imply one, so their "
            "semi-rigid collector force is zero (the sheathing itself drags the load to the walls). Give "
            "[diaphragm] collector_EA or a collector [[member]] to read the force a collector would carry"
        )
    extra = {
        "wall_pieces": pieces,
        "wall_pieces_without_member": [{"line": p.line, "from": p.t_from, "to": p.t_to, "walls": p.walls} for p in bare],
        "implied_collector_EA": None if layout.EA is None else {"value": layout.EA, "source": layout.EA_source},
    }
    return notes, extra
