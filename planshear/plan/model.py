"""The plan's typed, immutable pieces: what the section readers return and what
:class:`Plan` holds. No reading or checking here.

All lengths are metres, forces newtons, stiffness N/m, area weights N/m² (see
:mod:`planshear.units`). Positions along a grid line (``from``/``to`` of walls and
members) are measured as follows: on a line of ``grid.x`` (parallel to y) the position
is the y coordinate; on a line of ``grid.y`` (parallel to x) it is the x coordinate; on
a skewed line it is the distance from the line's ``start``.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import shapely
from shapely.geometry import LineString, Polygon

from ..code.asce7_16 import ElfDistribution
from ..stiffness import WallStiffness
from ..units import LENGTH_UNITS


@dataclass(frozen=True, eq=False)
class Material:
    """Membrane rigidities per unit width (N/m) and how they were derived."""

    kind: str
    Et_x: float
    Et_y: float
    nu: float
    Gt: float
    description: str


@dataclass(frozen=True, eq=False)
class Zone:
    """Part of the diaphragm with its own material (e.g. heavier boundary nailing)."""

    name: str
    polygon: Polygon  # as written, metres
    region: Polygon | shapely.MultiPolygon  # polygon ∩ diaphragm
    material: Material


@dataclass(frozen=True, eq=False)
class GridLine:
    """A named line: point(t) = origin + t · direction, t in metres."""

    name: str
    family: str  # "x" (parallel to y), "y" (parallel to x) or "skew"
    origin: np.ndarray
    direction: np.ndarray  # unit vector
    t_min: float  # extent of the line over the diaphragm outline
    t_max: float

    def point(self, t: float) -> np.ndarray:
        return self.origin + t * self.direction

    def segment(self, t0: float, t1: float) -> LineString:
        return LineString([self.point(t0), self.point(t1)])

    @property
    def parallel_to(self) -> str | None:
        """Axis the line runs along ("x" or "y"), None when skewed."""
        return {"x": "y", "y": "x"}.get(self.family)


@dataclass(frozen=True, eq=False)
class Wall:
    """A wall: a segment of a grid line that resists force along that line only."""

    id: str
    line: str
    t_from: float
    t_to: float
    start: np.ndarray
    end: np.ndarray
    direction: np.ndarray  # unit vector along the wall
    stiffness: WallStiffness

    @property
    def length(self) -> float:
        return self.t_to - self.t_from

    @property
    def midpoint(self) -> np.ndarray:
        return 0.5 * (self.start + self.end)

    @property
    def k(self) -> float:
        return self.stiffness.value


@dataclass(frozen=True, eq=False)
class Member:
    """A chord or collector bar along part of a grid line."""

    role: str
    line: str
    t_from: float
    t_to: float
    EA: float  # N
    effective_width: float  # m, total width of the membrane strip centred on the line, counted with the bar


@dataclass(frozen=True)
class Transfer:
    """A ``[[transfer]]`` entry: the transfer region for a chord interrupted at grid line
    ``at`` (a notch or offset) spans from ``at`` to grid line ``to`` on the full-depth
    side, across the full depth there. Both lines are parallel to the load it serves."""

    name: str
    at: str
    to: str


@dataclass(frozen=True, eq=False)
class Load:
    """One ``[[load]]`` entry, in SI units (weights N/m², N/m, N; forces N)."""

    name: str
    kind: str  # "seismic" or "edge"
    directions: tuple[str, ...]
    area_weight: float = 0.0
    zone_area_weight: dict[str, float] = field(default_factory=dict)
    line_weights: tuple[tuple[str, float, float, float], ...] = ()  # (line, t0, t1, N/m)
    point_weights: tuple[tuple[float, float, float], ...] = ()  # (x, y, N)
    point_footprints: tuple[Polygon, ...] = ()  # where each point weight acts (m), on the diaphragm
    total: float | None = None
    fpx: tuple[float, float, float] | None = None  # (SDS, Ie, story_force_ratio = ΣFi/Σwi)
    intensity: float = 0.0  # N/m per unit of plan width, edge loads: on the windward faces
    leeward: float = 0.0  # N/m per unit of plan width, edge loads: on the leeward faces
    eccentricity: float = 0.05
    collector_overstrength: float = 1.0
    light_frame: bool = False  # braced entirely by light-frame shear walls (ASCE 7-16 §12.10.2.1 Exception 2)
    fx: float | None = None  # N, story force Fx for the vertical elements (ELF, §12.8.3); None: the case force
    fx_elf: ElfDistribution | None = None  # the §12.8.3 distribution Fx came from, when given by its inputs
    fpx_ratio_from_elf: bool = False  # fpx's story_force_ratio was computed from ``fx_elf``
    rho: float = 1.0  # redundancy factor ρ (ASCE 7-16 §12.3.4) on the vertical elements' seismic load effect
    drift: tuple[float, float, float, float] | None = None  # (Cd, Ie, story height m, allowable Δa/hsx)
    sdc: str | None = None  # Seismic Design Category "A"…"F" (seismic loads), for Table 12.3-1
    # Load axes ("x", "y") each line weight acts in, parallel to line_weights; () = all of them.
    line_weight_axes: tuple[tuple[str, ...], ...] = ()
    # Perimeter weight on outline edges: (start (2,), end (2,), N/m, load axes it acts in).
    edge_weights: tuple[tuple[np.ndarray, np.ndarray, float, tuple[str, ...]], ...] = ()

    def weight_axes(self, index: int) -> tuple[str, ...]:
        """Load axes in which line weight ``index`` acts (both unless ``only_across``)."""
        return self.line_weight_axes[index] if self.line_weight_axes else ("x", "y")

    @property
    def weight_depends_on_direction(self) -> bool:
        """True when some weight acts in one load direction only (``only_across``)."""
        axes = list(self.line_weight_axes) + [e[3] for e in self.edge_weights]
        return any(set(a) != {"x", "y"} for a in axes)


@dataclass(frozen=True)
class MeshSettings:
    size: float  # m
    order: int
    element: str  # "triangle", "quad" (9-node with order 2) or "quad8"


@dataclass(frozen=True)
class ClassificationFlags:
    """The engineer's statement of which idealized code conditions apply."""

    idealized_flexible: bool = False  # ASCE 7-16 §12.3.1.1 conditions met
    idealized_rigid: bool = False  # ASCE 7-16 §12.3.1.2 conditions met
    sensitivity: tuple[float, ...] = ()  # factors on diaphragm stiffness, e.g. (0.5, 2.0)
    # Effective diaphragm stiffness of the adjacent story / this one's (Table 12.3-1 Type 3), if stated.
    adjacent_stiffness_ratio: float | None = None




@dataclass(frozen=True, eq=False)
class Splice:
    """A ``[[splice]]`` entry: a chord or collector splice at point ``at`` whose slip adds
    axial compliance 1/``stiffness`` to the bar through that point. Given as a slip Δc at
    a stated force (stiffness = force / slip) or as a stiffness directly."""

    name: str
    at: np.ndarray  # (2,) m
    stiffness: float  # N/m, force per unit slip
    slip: float | None = None  # m, Δc as written (None when given as a stiffness)
    at_force: float | None = None  # N, the force at which ``slip`` occurs
    on: str = "outline chord"  # "outline chord" or the member it lies on, e.g. 'chord on line "A"'


@dataclass(frozen=True, eq=False)
class Capacities:
    """The engineer's capacities on the plan's design basis (SI; all optional). Unit-shear
    capacities in N/m, forces in N; compression capacities are magnitudes."""

    diaphragm: float | None = None  # [diaphragm] capacity: the diaphragm outside every zone
    zones: dict[str, float] = field(default_factory=dict)  # zone name → [[diaphragm.zone]] capacity
    walls: dict[str, tuple[str, float]] = field(default_factory=dict)  # id → ("force", N) | ("unit_shear", N/m)
    wall_default: tuple[str, float] | None = None  # [capacity] wall | wall_unit_shear
    # ("line", grid line) | ("name", member name) → (tension N | None, compression N | None)
    members: dict[tuple[str, str], tuple[float | None, float | None]] = field(default_factory=dict)
    member_default: tuple[float | None, float | None] = (None, None)  # [capacity] tension, compression

    @property
    def given(self) -> bool:
        """Whether the plan states any capacity (the design checks run only then)."""
        return bool(self.diaphragm is not None or self.zones or self.walls or self.wall_default or self.members
                    or self.member_default != (None, None))


@dataclass(frozen=True, eq=False)
class Plan:
    """A validated plan in SI units. ``region`` is the outline less the openings."""

    name: str
    source: str
    length_unit: str
    outline: np.ndarray  # (n, 2) counter-clockwise, m
    openings: tuple[np.ndarray, ...]
    region: Polygon
    material: Material
    chord_EA: float | None
    zones: tuple[Zone, ...]
    grid_lines: tuple[GridLine, ...]
    walls: tuple[Wall, ...]
    members: tuple[Member, ...]
    loads: tuple[Load, ...]
    mesh: MeshSettings
    classification: ClassificationFlags
    design_envelope: tuple[str, ...] = ()  # [design] envelope: assumptions of an engineer-chosen envelope
    code: str = "ASCE 7-16"  # [plan] code: the edition whose clauses apply (planshear.code)
    design_basis: str | None = None  # [design] basis: "LRFD" or "ASD"; None: unfactored
    collector_EA: float | None = None  # N, [diaphragm] collector_EA as written (None if absent)

    @property
    def implied_collector_EA(self) -> tuple[float | None, str | None]:
        """EA (N) of the implied collectors of the semi-rigid model and where it comes
        from: ``collector_EA`` when given, else ``chord_EA`` (the plan's stated edge
        member, the usual class of a drag strut: top plates, deck edge angles, slab
        reinforcement), else (None, None): no implied collector is formed."""
        if self.collector_EA is not None:
            return self.collector_EA, "collector_EA"
        if self.chord_EA is not None:
            return self.chord_EA, "chord_EA"
        return None, None
    transfers: tuple[Transfer, ...] = ()
    splices: tuple[Splice, ...] = ()
    capacities: Capacities = field(default_factory=Capacities)
    # [plan] job, engineer, checker, date, revision for the report's title block (text; absent keys left out).
    title_block: tuple[tuple[str, str], ...] = ()

    def line(self, name: str) -> GridLine:
        for grid_line in self.grid_lines:
            if grid_line.name == name:
                return grid_line
        raise KeyError(name)

    @property
    def length_scale(self) -> float:
        """Metres per plan length unit."""
        return LENGTH_UNITS[self.length_unit]


def merge_intervals(intervals, gap: float) -> list[tuple[float, float]]:
    """Union of intervals (t0, t1) along a line, in order, joining those closer than
    ``gap`` (same unit as t)."""
    merged: list[list[float]] = []
    for t0, t1 in sorted(intervals):
        if merged and t0 <= merged[-1][1] + gap:
            merged[-1][1] = max(merged[-1][1], t1)
        else:
            merged.append([t0, t1])
    return [(a, b) for a, b in merged]

