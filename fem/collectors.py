"""Which bar is the collector of every piece of a line of resistance that carries a wall.

A *piece* of a grid line is a part of it over the diaphragm, split at gaps (outside the
outline or inside an opening); a *wall piece* is a piece that carries at least one wall.
Every edge of a wall piece gets a collector in the finite-element model, in this order:

* ``declared``: a ``[[member]]`` (collector or chord) of the plan covers the edge;
* ``chord``: the edge lies on the outline and the outline chord bar (``chord_EA``) is
  already there; it is read as the collector of that piece (no second bar is added);
* ``implied``: otherwise a bar of EA = ``[diaphragm] collector_EA`` (default ``chord_EA``;
  see :attr:`planshear.plan.Plan.implied_collector_EA`) is added on the edge;
* ``none``: neither ``collector_EA`` nor ``chord_EA`` is given, so no EA can be assumed;
  the piece keeps no bar and is flagged.

The implied collector runs over the whole wall piece, from one end of the diaphragm
along the line to the other, not only over the walls: a drag strut collects the
diaphragm's shear along the full length of the line where the diaphragm is continuous
and delivers it to the walls, which is what the beam-analogy collector diagram assumes
(running sum from the free end of the piece). A shorter bar would leave the sheathing to
drag the rest, and the model would read a smaller, unconservative collector force. Where
a declared member covers only part of a wall piece, implied bars fill the uncovered rest
(a declared member with a shorter extent is taken as the engineer's statement about
that part only).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import shapely

from planshear.mesh import Mesh
from planshear.plan import Plan, merge_intervals

__all__ = ["CollectorSegment", "WallPiece", "CollectorLayout", "collector_layout", "bar_extents"]

KINDS = ("none", "implied", "chord", "declared")


@dataclass(frozen=True)
class CollectorSegment:
    """A run of a wall piece with one kind of collector and one EA."""

    kind: str  # "declared", "chord", "implied" or "none"
    t_from: float  # m along the grid line
    t_to: float  # m
    EA: float  # N, total EA of the bars on the run (0 for "none")


@dataclass(frozen=True)
class WallPiece:
    """A piece of a grid line that carries walls, and its collector segments."""

    line: str
    t_from: float  # m along the grid line
    t_to: float  # m
    walls: tuple[str, ...]
    segments: tuple[CollectorSegment, ...]

    @property
    def kind(self) -> str:
        """The kinds of collector on the piece, e.g. "implied" or "declared+implied"."""
        return "+".join(dict.fromkeys(s.kind for s in self.segments))


@dataclass(frozen=True, eq=False)
class CollectorLayout:
    """Collectors of every wall piece, and the edges that get an implied bar."""

    pieces: tuple[WallPiece, ...]
    implied_edges: dict[str, np.ndarray]  # grid line → (m, 2|3) edges with an implied bar
    EA: float | None  # N, EA of the implied collectors
    EA_source: str | None  # "collector_EA", "chord_EA" or None

    def on_line(self, name: str) -> tuple[WallPiece, ...]:
        return tuple(p for p in self.pieces if p.line == name)


def _edge_keys(edges: np.ndarray, n_nodes: int) -> np.ndarray:
    """Orientation-free integer key of each edge from its two end nodes."""
    lo = np.minimum(edges[:, 0], edges[:, 1]).astype(np.int64)
    hi = np.maximum(edges[:, 0], edges[:, 1]).astype(np.int64)
    return lo * n_nodes + hi


def collector_layout(plan: Plan, mesh: Mesh) -> CollectorLayout:
    """The collector of every edge of every wall piece (see the module docstring)."""
    EA, source = plan.implied_collector_EA
    extent = float(np.ptp(mesh.nodes, axis=0).max())
    tol = 1e-7 * extent
    chord_keys = (_edge_keys(mesh.outline_edges, mesh.n_nodes)
                  if plan.chord_EA is not None and len(mesh.outline_edges) else np.zeros(0, dtype=np.int64))
    pieces: list[WallPiece] = []
    implied: dict[str, np.ndarray] = {}
    for grid_line in plan.grid_lines:
        walls = [w for w in plan.walls if w.line == grid_line.name]
        line = mesh.lines[grid_line.name]
        if not walls or len(line.edges) == 0:
            continue
        t0, t1 = line.t[:, 0], line.t[:, 1]
        piece_of = np.concatenate([[0], np.cumsum(t0[1:] > t1[:-1] + tol)])
        declared_EA = np.zeros(len(t0))
        for member in plan.members:
            if member.line == grid_line.name:
                covered = (t0 >= member.t_from - tol) & (t1 <= member.t_to + tol)
                declared_EA += np.where(covered, member.EA, 0.0)
        on_chord = np.isin(_edge_keys(line.edges, mesh.n_nodes), chord_keys)
        code = np.where(declared_EA > 0, 3, np.where(on_chord, 2, 1 if EA is not None else 0))
        total_EA = declared_EA + np.where(on_chord, plan.chord_EA or 0.0, 0.0) + np.where(code == 1, EA or 0.0, 0.0)
        carries = np.zeros(len(t0), dtype=bool)
        for piece in np.unique(piece_of):
            sel = np.flatnonzero(piece_of == piece)
            start, end = t0[sel[0]], t1[sel[-1]]
            held = tuple(w.id for w in walls if w.t_from >= start - tol and w.t_to <= end + tol)
            if not held:
                continue
            carries[sel] = True
            # Runs of one kind and one EA along the piece.
            change = np.flatnonzero((np.diff(code[sel]) != 0) | (np.diff(total_EA[sel]) != 0)) + 1
            bounds = np.concatenate([[0], change, [len(sel)]])
            segments = tuple(
                CollectorSegment(KINDS[code[sel[a]]], float(t0[sel[a]]), float(t1[sel[b - 1]]), float(total_EA[sel[a]]))
                for a, b in zip(bounds[:-1], bounds[1:], strict=True)
            )
            pieces.append(WallPiece(grid_line.name, float(start), float(end), held, segments))
        mask = carries & (code == 1)
        if np.any(mask):
            implied[grid_line.name] = line.edges[mask]
    return CollectorLayout(tuple(pieces), implied, EA, source)


def bar_extents(plan: Plan) -> dict[str, tuple[tuple[float, float], ...]]:
    """Where along each grid line (t0, t1 in m, merged) the semi-rigid model will have a
    bar, from the plan alone, by the rule of :func:`collector_layout` (module docstring):
    every declared ``[[member]]``; every outline edge on the line when ``chord_EA`` is
    given (the outline chord bar); and every wall piece (the line over the diaphragm, split
    at gaps outside the outline or in an opening) that carries a wall, when an implied
    collector EA exists (``collector_EA``, else ``chord_EA``). For stages before the mesh
    (the idealized methods' cautions), so that they state what the model will contain."""
    extent = float(np.ptp(plan.outline, axis=0).max())
    tol = 1e-7 * extent
    implied, _ = plan.implied_collector_EA
    outline = np.asarray(plan.outline)
    corners = np.vstack([outline, outline[:1]])
    out: dict[str, tuple[tuple[float, float], ...]] = {}
    for g in plan.grid_lines:
        spans = [(min(m.t_from, m.t_to), max(m.t_from, m.t_to)) for m in plan.members if m.line == g.name]
        # Outline edges with both ends on the line: distance of the corners from it, t along it.
        normal = np.array([-g.direction[1], g.direction[0]])
        off = np.abs((corners - g.origin) @ normal) <= tol
        t = (corners - g.origin) @ g.direction
        if plan.chord_EA is not None:
            spans += [(min(t[i], t[i + 1]), max(t[i], t[i + 1])) for i in np.flatnonzero(off[:-1] & off[1:])]
        walls = [w for w in plan.walls if w.line == g.name]
        if implied is not None and walls and g.t_max > g.t_min:
            cut = shapely.intersection(plan.region, g.segment(g.t_min, g.t_max))
            parts = [p for p in getattr(cut, "geoms", [cut]) if p.geom_type == "LineString" and p.length > tol]
            pieces = merge_intervals([tuple(sorted(((np.asarray(p.coords) - g.origin) @ g.direction)[[0, -1]]))
                                      for p in parts], tol)
            spans += [(a, b) for a, b in pieces if any(w.t_from >= a - tol and w.t_to <= b + tol for w in walls)]
        if spans:
            out[g.name] = tuple(merge_intervals(spans, tol))
    return out
