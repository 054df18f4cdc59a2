"""The plan model: a TOML plan file read into typed, immutable objects.

All lengths are metres, forces newtons, stiffness N/m, area weights N/m² (see
:mod:`planshear.units`). Positions along a grid line (``from``/``to`` of walls and
members) are measured as follows: on a line of ``grid.x`` (parallel to y) the position
is the y coordinate; on a line of ``grid.y`` (parallel to x) it is the x coordinate; on
a skewed line it is the distance from the line's ``start``.

:func:`load_plan` reads and validates a file; every problem found is collected and
raised together as one :class:`~planshear.errors.PlanError`.
"""

from __future__ import annotations

import difflib
import math
import os
import tomllib
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import shapely
from shapely.geometry import LineString, Point, Polygon

from ..code import DEFAULT_EDITION, EDITIONS
from ..code.asce7_16 import SDCS, ElfDistribution, elf_distribution_12_8_3
from ..errors import PlanError, UnstablePlanError
from ..schema import placeholder_problems, schema_problems
from ..stiffness import WallStiffness, direct_stiffness, pier_stiffness, wood_wall_stiffness
from ..units import (
    AREA_LOAD,
    FORCE,
    LENGTH,
    LENGTH_UNITS,
    LINE_LOAD,
    PRESSURE,
    STIFFNESS,
    Dimension,
    QuantityError,
    parse_quantity,
)

__all__ = [
    "Plan",
    "Material",
    "Zone",
    "GridLine",
    "Wall",
    "Member",
    "Transfer",
    "Load",
    "MeshSettings",
    "ClassificationFlags",
    "Capacities",
    "load_plan",
    "parse_plan",
    "Stability",
    "assess_stability",
    "check_stability",
]

MATERIAL_KINDS = ("wood-panel", "steel-deck", "concrete", "custom")
LOAD_KINDS = ("seismic", "edge")
MEMBER_ROLES = ("chord", "collector")

#: Default ratio of the sheathing's axial rigidity Et to its shear rigidity Gt for the
#: wood-panel and steel-deck presets. Kept small on purpose: the chords carry the
#: diaphragm's flexure (as the SDPWS deflection equation assumes), while a non-zero
#: axial rigidity keeps the membrane from having zero-energy stretching modes.
DEFAULT_AXIAL_RATIO = 0.1
#: Default side of the square over which a point weight acts (m, about 4 ft): a point
#: force on a membrane has unbounded displacement under it, while real equipment and
#: framing deliver the force over a curb or a framing bay.
DEFAULT_FOOTPRINT = 1.2
#: Default cracked-section factor for concrete diaphragms (0.25 of gross for
#: nonprestressed slabs; see VALIDATION.md 7.3, an ASCE-published effective-stiffness table).
DEFAULT_CRACKED = 0.25
#: Largest plan coordinate accepted, in the plan's length unit.
MAX_COORDINATE = 1e6
#: Relative tolerance for zero areas (fraction of the plan size).
GEOMETRY_TOLERANCE = 1e-9


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


TITLE_BLOCK_KEYS = ("job", "engineer", "checker", "date", "revision")


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


# --------------------------------------------------------------------------------------
# Loading
# --------------------------------------------------------------------------------------


def load_plan(path: str | Path) -> Plan:
    """Read and validate a plan file. Raises :class:`PlanError` listing every problem."""
    path = Path(path)
    label = path.name
    try:
        text = path.read_text(encoding="utf-8-sig")  # tolerate a byte-order mark
    except FileNotFoundError:
        raise PlanError([f"{path}: file not found; check the path"]) from None
    except IsADirectoryError:
        raise PlanError([f"{path}: is a folder; give the plan file (.toml) itself"]) from None
    except UnicodeDecodeError:
        raise PlanError([f"{label}: is not UTF-8 text; save the plan file as UTF-8"]) from None
    except OSError as exc:
        raise PlanError([f"{path}: cannot be read ({exc.strerror})"]) from None
    return parse_plan(text, label)


def parse_plan(text: str, label: str = "plan.toml") -> Plan:
    """Validate the TOML ``text`` of a plan; ``label`` names the file in messages."""
    try:
        document = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise PlanError([f"{label}: TOML syntax error: {exc}; fix the line it names"]) from None
    problems = placeholder_problems(document, label)
    if problems:
        raise PlanError(problems)
    document, problems = expand_wall_types(document, label)
    problems += schema_problems(document, label)
    if problems:
        raise PlanError(problems)
    builder = _PlanBuilder(document, label)
    return builder.build()


class _PlanBuilder:
    """Turns a schema-valid document into a Plan, collecting every problem."""

    def __init__(self, document: dict, label: str):
        self.doc = document
        self.label = label
        self.problems: list[str] = []
        self.unit = "ft"
        self.scale = 1.0
        self.tol = 0.0  # geometric tolerance (m), set from the outline's size
        self.region_area = 0.0  # m², set once the openings are known

    # -- helpers ------------------------------------------------------------------------

    def problem(self, where: str, message: str) -> None:
        self.problems.append(f"{self.label}: {where}: {message}")

    def quantity(self, value: object, dimension: Dimension, where: str, positive: bool = True) -> float | None:
        try:
            magnitude = parse_quantity(value, dimension, self.unit)
        except QuantityError as exc:
            self.problem(where, str(exc))
            return None
        if positive and magnitude <= 0:
            self.problem(where, f'must be positive, got "{value}"')
            return None
        if not positive and magnitude < 0:
            self.problem(where, f'must not be negative, got "{value}"')
            return None
        return magnitude

    def number(self, value: float, where: str, positive: bool = False, allow_zero: bool = True) -> float | None:
        if not math.isfinite(value):
            self.problem(where, f"must be a finite number, got {value}")
            return None
        if positive and (value < 0 or (value == 0 and not allow_zero)):
            self.problem(where, f"must be {'positive' if not allow_zero else 'zero or positive'}, got {value}")
            return None
        return float(value)

    def footprint(self, raw: object, where: str) -> tuple[float, float] | None:
        """Sides (m) of the rectangle a point weight acts over: a number (a square) or
        [along x, along y] in the plan's length unit; default :data:`DEFAULT_FOOTPRINT`."""
        if raw is None:
            return DEFAULT_FOOTPRINT, DEFAULT_FOOTPRINT
        sides = [raw, raw] if isinstance(raw, (int, float)) else list(raw)
        if len(sides) != 2 or not all(isinstance(v, (int, float)) and math.isfinite(v) and v > 0 for v in sides):
            self.problem(where, f"must be a positive side length in {self.unit} (a square) or [side along x, side along y], got {raw}")
            return None
        return float(sides[0]) * self.scale, float(sides[1]) * self.scale

    def points(self, raw: list, where: str) -> np.ndarray | None:
        array = np.asarray(raw, dtype=float)
        if not np.all(np.isfinite(array)):
            self.problem(where, "has a coordinate that is not a finite number; fix the point")
            return None
        if np.any(np.abs(array) > MAX_COORDINATE):
            self.problem(where, f"has a coordinate beyond ±{MAX_COORDINATE:g} {self.unit}; check the number and length_unit")
            return None
        return array * self.scale

    def polygon(self, raw: list, where: str) -> Polygon | None:
        array = self.points(raw, where)
        if array is None:
            return None
        if len(array) > 3 and np.allclose(array[0], array[-1]):
            array = array[:-1]
        if len(array) < 3:
            self.problem(where, "needs at least three distinct corners")
            return None
        ring = shapely.LinearRing(array)
        if not ring.is_simple:
            self.problem(where, "edges cross each other (not a simple polygon); list the corners in order around the boundary")
            return None
        polygon = Polygon(array)
        if polygon.area <= (GEOMETRY_TOLERANCE * max(np.ptp(array, axis=0).max(), 1e-30)) ** 2 or polygon.area == 0:
            self.problem(where, "has zero area; check the corner coordinates")
            return None
        if not polygon.is_valid:
            self.problem(where, f"is not a valid polygon ({shapely.is_valid_reason(polygon)})")
            return None
        return shapely.geometry.polygon.orient(polygon, 1.0)

    # -- sections ------------------------------------------------------------------------

    def title_block(self, table: dict) -> tuple[tuple[str, str], ...]:
        """[plan] job, engineer, checker, date and revision as text; the date may be a TOML
        date (date = 2026-12-02) or text."""
        import datetime

        out = []
        for key in TITLE_BLOCK_KEYS:
            if key not in table:
                continue
            value = table[key]
            if key == "date" and isinstance(value, datetime.date):
                value = value.isoformat()[:10]
            if not isinstance(value, str):
                self.problem(f"plan.{key}", f"must be text or a date, got {value!r}; write e.g. {key} = \"2026-12-02\"")
                continue
            out.append((key, value.strip()))
        return tuple(out)

    def build(self) -> Plan:
        doc = self.doc
        plan_table = doc["plan"]
        unit = plan_table["length_unit"]
        if unit not in LENGTH_UNITS:
            close = difflib.get_close_matches(unit, list(LENGTH_UNITS), n=1)
            self.problem("plan.length_unit", f'"{unit}" is not supported; use "ft" or "m"' + (f' (did you mean "{close[0]}"?)' if close else ""))
            raise PlanError(self.problems)
        self.unit = unit
        self.scale = LENGTH_UNITS[unit]
        name = plan_table.get("name", Path(self.label).stem)
        code = plan_table.get("code", DEFAULT_EDITION)
        title_block = self.title_block(plan_table)
        if code not in EDITIONS:
            self.problem("plan.code", f'"{code}" is not available; planshear implements {", ".join(EDITIONS)} '
                         "(ASCE 7-22 only where its clauses can be confirmed from the standard's text: not yet). "
                         f'Remove the key or write code = "{DEFAULT_EDITION}"')

        dia = doc["diaphragm"]
        outline = self.polygon(dia["outline"], "diaphragm.outline")
        if outline is None:
            raise PlanError(self.problems)
        size = max(np.ptp(np.asarray(outline.exterior.coords), axis=0))
        self.tol = 1e-6 * size

        openings = []
        for i, raw in enumerate(dia.get("openings", [])):
            where = f"diaphragm.openings #{i + 1}"
            opening = self.polygon(raw, where)
            if opening is None:
                continue
            if not opening.within(outline) or opening.boundary.distance(outline.boundary) <= self.tol:
                self.problem(where, "is not strictly inside the outline; an opening that reaches the edge is a notch: draw it as part of the outline instead")
                continue
            for j, other in enumerate(openings):
                if opening.distance(other) <= self.tol:
                    self.problem(where, f"overlaps or touches opening #{j + 1}; merge them into one opening")
                    break
            else:
                openings.append(opening)
        region = outline
        for opening in openings:
            region = region.difference(opening)
        if isinstance(region, shapely.MultiPolygon) or region.geom_type != "Polygon":
            pieces = len(getattr(region, "geoms", [region]))
            self.problem("diaphragm.openings", f"the openings split the diaphragm into {pieces} separate pieces; analyze each piece as its own plan")
            raise PlanError(self.problems)

        material = self.material(dia["material"], "diaphragm.material")
        chord_EA = None
        if "chord_EA" in dia:
            chord_EA = self.quantity(dia["chord_EA"], FORCE, "diaphragm.chord_EA")
        collector_EA = None
        if "collector_EA" in dia:
            collector_EA = self.quantity(dia["collector_EA"], FORCE, "diaphragm.collector_EA")

        zones = []
        for i, raw in enumerate(dia.get("zone", [])):
            zone_name = raw.get("name", f"zone {i + 1}")
            where = f'diaphragm.zone "{zone_name}"'
            polygon = self.polygon(raw["polygon"], where + ".polygon")
            zone_material = self.material(raw["material"], where + ".material")
            if any(z.name == zone_name for z in zones):
                self.problem(where, "duplicate zone name; give each zone its own name")
                continue
            if polygon is None or zone_material is None:
                continue
            outside = polygon.difference(outline).area
            if outside > self.tol * size:
                self.problem(where, f"lies partly outside the outline ({outside / self.scale**2:.4g} {unit}² outside); keep zones within the diaphragm")
                continue
            overlapping = [z.name for z in zones if z.polygon.intersection(polygon).area > self.tol * size]
            if overlapping:
                self.problem(where, f'overlaps zone "{overlapping[0]}"; zones must not overlap')
                continue
            zone_region = polygon.intersection(region)
            if zone_region.area <= self.tol * size:
                self.problem(where, "lies entirely inside an opening, so it covers no diaphragm; move or remove it")
                continue
            zones.append(Zone(zone_name, polygon, zone_region, zone_material))

        self.region_area = region.area
        grid_lines = self.grid(doc["grid"], outline)
        lines_by_name = {g.name: g for g in grid_lines}
        walls = self.walls(doc["wall"], lines_by_name, region)
        members = self.members(doc.get("member", []), lines_by_name, region)
        loads = self.loads(doc.get("load", []), lines_by_name, zones, region)
        transfers = self.transfers(doc.get("transfer", []), lines_by_name)
        splices = self.splices(doc.get("splice", []), outline, chord_EA, members, lines_by_name)
        mesh = self.mesh_settings(doc.get("mesh", {}), size)
        classification = self.classification(doc.get("classification", {}))
        chosen = self.design_envelope(doc.get("design", {}))
        basis = self.design_basis(doc.get("design", {}))
        capacities = self.capacities(doc, zones, walls, lines_by_name)
        if self.problems:
            raise PlanError(self.problems)
        outline_xy = np.asarray(outline.exterior.coords)[:-1]
        plan = Plan(
            name=name,
            source=self.label,
            length_unit=unit,
            outline=outline_xy,
            openings=tuple(np.asarray(o.exterior.coords)[:-1] for o in openings),
            region=region,
            material=material,
            chord_EA=chord_EA,
            zones=tuple(zones),
            grid_lines=tuple(grid_lines),
            walls=tuple(walls),
            members=tuple(members),
            loads=tuple(loads),
            mesh=mesh,
            classification=classification,
            collector_EA=collector_EA,
            title_block=title_block,
            transfers=tuple(transfers),
            splices=tuple(splices),
            design_envelope=chosen,
            code=code,
            design_basis=basis,
            capacities=capacities,
        )
        check_stability(plan)
        return plan

    def material(self, raw: dict, where: str) -> Material | None:
        kind = raw["kind"]
        allowed = {
            "wood-panel": (set(), {"Ga", "Gt", "en", "at_unit_shear", "axial_ratio"}),
            "steel-deck": ({"G_prime"}, {"axial_ratio"}),
            "concrete": ({"E", "thickness"}, {"nu", "cracked"}),
            "custom": ({"Et_x", "Et_y", "Gt"}, {"nu"}),
        }
        if kind not in allowed:
            close = difflib.get_close_matches(kind, MATERIAL_KINDS, n=1)
            self.problem(where, f'unknown material kind "{kind}"; use one of {", ".join(MATERIAL_KINDS)}' + (f' (did you mean "{close[0]}"?)' if close else ""))
            return None
        required, optional = allowed[kind]
        ok = True
        for key in sorted(required - set(raw)):
            self.problem(where, f'a {kind} material needs "{key}"; add it')
            ok = False
        for key in sorted(set(raw) - required - optional - {"kind"}):
            self.problem(where, f'"{key}" does not apply to a {kind} material; remove it (fields: {", ".join(sorted(required | optional))})')
            ok = False
        if not ok:
            return None
        nu = float(raw.get("nu", 0.2 if kind == "concrete" else 0.0))
        if not (-1.0 < nu < 0.5):
            self.problem(where + ".nu", f"Poisson's ratio must lie between -1 and 0.5, got {nu}")
            return None
        slip = ""
        if kind == "wood-panel" and "Ga" not in raw:
            given = sorted({"Gt", "en", "at_unit_shear"} & set(raw))
            if len(given) != 3:
                self.problem(where, 'a wood-panel material needs "Ga" (SDPWS apparent shear stiffness, kip/in), or "Gt", '
                             '"en" and "at_unit_shear" (panel shear rigidity, nail slip and the unit shear it is taken '
                             f'at) to derive it; got {", ".join(given) or "none of them"}')
                return None
        elif kind == "wood-panel" and {"Gt", "en", "at_unit_shear"} & set(raw):
            self.problem(where, 'give either "Ga" or "Gt", "en" and "at_unit_shear", not both')
            return None
        if kind in ("wood-panel", "steel-deck"):
            key = "Ga" if kind == "wood-panel" else "G_prime"
            if key in raw:
                gt = self.quantity(raw[key], STIFFNESS, f"{where}.{key}")
            else:
                panel = self.quantity(raw["Gt"], STIFFNESS, where + ".Gt")
                en = self.quantity(raw["en"], LENGTH, where + ".en", positive=False)
                v = self.quantity(raw["at_unit_shear"], LINE_LOAD, where + ".at_unit_shear")
                gt = None if None in (panel, en, v) else apparent_shear_stiffness(panel, en, v)
                if gt is not None:
                    slip = (f" (from Gt = {raw['Gt']}, en = {raw['en']} at {raw['at_unit_shear']}: "
                            "1/(1/Gt + 4·0.188/ft·en/v), IBC Eq. 23-1 shear and slip terms)")
            ratio = float(raw.get("axial_ratio", DEFAULT_AXIAL_RATIO))
            if not (math.isfinite(ratio) and ratio > 0):
                self.problem(where + ".axial_ratio", f"must be a positive number, got {ratio}")
                return None
            if gt is None:
                return None
            source = "SDPWS apparent shear stiffness, G·t = 1000·Ga lb/in for Ga in kip/in" if kind == "wood-panel" else "AISI S310 / SDI shear stiffness G′ (G·t = G′)"
            return Material(kind, ratio * gt, ratio * gt, 0.0, gt, f"{kind}: Gt = {key} ({source}){slip}; Et = {ratio:g}·Gt in both directions so that the chords carry the flexure")
        if kind == "concrete":
            E = self.quantity(raw["E"], PRESSURE, where + ".E")
            t = self.quantity(raw["thickness"], LENGTH, where + ".thickness")
            cracked = float(raw.get("cracked", DEFAULT_CRACKED))
            if not (math.isfinite(cracked) and 0 < cracked <= 1):
                self.problem(where + ".cracked", f"cracked-section factor must lie in (0, 1], got {cracked}")
                return None
            if E is None or t is None:
                return None
            Et = cracked * E * t
            return Material(kind, Et, Et, nu, Et / (2 * (1 + nu)), f"concrete: Et = {cracked:g}·E·t, Gt = Et/(2(1+ν)), ν = {nu:g}")
        values = [self.quantity(raw[k], STIFFNESS, f"{where}.{k}") for k in ("Et_x", "Et_y", "Gt")]
        if any(v is None for v in values):
            return None
        Et_x, Et_y, Gt = values
        if nu**2 * Et_y / Et_x >= 1.0:
            self.problem(where + ".nu", "with these Et_x and Et_y the material is not positive definite; reduce nu")
            return None
        return Material(kind, Et_x, Et_y, nu, Gt, f"custom rigidities, ν = {nu:g}")

    def grid(self, raw: dict, outline: Polygon) -> list[GridLine]:
        minx, miny, maxx, maxy = outline.bounds
        pad = 1.0 + (maxx - minx) + (maxy - miny)
        lines: list[GridLine] = []
        seen: set[str] = set()
        specs = []
        for family in ("x", "y"):
            for line_name, value in raw.get(family, {}).items():
                specs.append((line_name, family, value))
        for entry in raw.get("line", []):
            specs.append((entry["name"], "skew", entry))
        if not specs:
            self.problem("grid", "has no grid lines; add [grid] x = {...} and y = {...}")
        for line_name, family, value in specs:
            where = f'grid line "{line_name}"'
            if line_name in seen:
                self.problem(where, "the name is used twice; every grid line needs its own name")
                continue
            seen.add(line_name)
            if family == "skew":
                start = self.points(value["start"], where + ".start")
                end = self.points(value["end"], where + ".end")
                if start is None or end is None:
                    continue
                length = float(np.hypot(*(end - start)))
                if length <= self.tol:
                    self.problem(where, "start and end are the same point; give two different points")
                    continue
                origin, direction, t_lo, t_hi = start, (end - start) / length, 0.0, length
            else:
                if not math.isfinite(value) or abs(value) > MAX_COORDINATE:
                    self.problem(where, f"position must be a finite number within ±{MAX_COORDINATE:g}, got {value}")
                    continue
                c = value * self.scale
                twin = next((g for g in lines if g.family == family and abs(g.origin[0 if family == "x" else 1] - c) <= self.tol), None)
                if twin is not None:
                    self.problem(where, f'lies on grid line "{twin.name}" (both at {family} = {value:g}); give each position one name')
                    continue
                if family == "x":
                    origin, direction, t_lo, t_hi = np.array([c, 0.0]), np.array([0.0, 1.0]), miny - pad, maxy + pad
                else:
                    origin, direction, t_lo, t_hi = np.array([0.0, c]), np.array([1.0, 0.0]), minx - pad, maxx + pad
            probe = LineString([origin + t_lo * direction, origin + t_hi * direction])
            hit = probe.intersection(outline)
            if hit.is_empty or hit.length <= self.tol:
                self.problem(where, "does not cross the diaphragm outline; check its position or remove it")
                continue
            coords = np.asarray([c for g in getattr(hit, "geoms", [hit]) for c in g.coords])
            ts = (coords - origin) @ direction
            lines.append(GridLine(line_name, family, origin, direction, float(ts.min()), float(ts.max())))
        return lines

    def _line_segment(self, entry: dict, where: str, lines: dict[str, GridLine], need_extent: bool = True):
        line_name = entry["line"]
        if line_name not in lines:
            names = ", ".join(lines) or "none"
            close = difflib.get_close_matches(line_name, list(lines), n=1)
            hint = f' (did you mean "{close[0]}"?)' if close else ""
            self.problem(where, f'line "{line_name}" is not a grid line (grid lines: {names}){hint}')
            return None
        line = lines[line_name]
        if "from" in entry or "to" in entry or need_extent:
            if "from" not in entry or "to" not in entry:
                self.problem(where, 'give both "from" and "to" along the line')
                return None
            t0 = self.number(entry["from"], where + ".from")
            t1 = self.number(entry["to"], where + ".to")
            if t0 is None or t1 is None:
                return None
            t0, t1 = t0 * self.scale, t1 * self.scale
            if t1 < t0:
                t0, t1 = t1, t0
            if t1 - t0 <= self.tol:
                self.problem(where, f'has zero length (from = to = {entry["from"]}); give the two ends of the segment')
                return None
            if t0 < line.t_min - self.tol or t1 > line.t_max + self.tol:
                lo, hi = line.t_min / self.scale, line.t_max / self.scale
                self.problem(where, f'runs from {t0 / self.scale:g} to {t1 / self.scale:g} but line "{line_name}" crosses the diaphragm only from {lo:g} to {hi:g} {self.unit}; keep from/to within that range')
                return None
        else:
            t0, t1 = line.t_min, line.t_max
        return line, t0, t1

    def walls(self, raw: list, lines: dict[str, GridLine], region: Polygon) -> list[Wall]:
        walls: list[Wall] = []
        ids: set[str] = set()
        covered = region.buffer(self.tol)
        for entry in raw:
            wall_id = entry["id"]
            where = f'wall "{wall_id}"'
            if wall_id in ids:
                self.problem(where, "the id is used twice; give every wall its own id")
                continue
            ids.add(wall_id)
            forms = [k for k in ("stiffness", "pier", "wood") if k in entry]
            if len(forms) != 1:
                self.problem(where, 'give exactly one of "stiffness", "pier" or "wood"' + (f" (found {', '.join(forms)})" if forms else ""))
                continue
            located = self._line_segment(entry, where, lines)
            if located is None:
                continue
            line, t0, t1 = located
            segment = line.segment(t0, t1)
            if not covered.covers(segment):
                outside = segment.difference(region.buffer(self.tol)).length / self.scale
                self.problem(where, f"is not on the diaphragm ({outside:.4g} {self.unit} of it lies outside the outline or inside an opening); move it onto the diaphragm")
                continue
            clash = next((w for w in walls if w.line == line.name and min(w.t_to, t1) - max(w.t_from, t0) > self.tol), None)
            if clash is not None:
                lo, hi = max(clash.t_from, t0) / self.scale, min(clash.t_to, t1) / self.scale
                self.problem(where, f'overlaps wall "{clash.id}" on line "{line.name}" between {lo:g} and {hi:g} {self.unit}; '
                                    "walls on one line must not overlap (give one wall the combined stiffness)")
                continue
            stiffness = self.wall_stiffness(entry, forms[0], where, t1 - t0)
            if stiffness is None:
                continue
            walls.append(Wall(wall_id, line.name, t0, t1, line.point(t0), line.point(t1), line.direction.copy(), stiffness))
        return walls

    def wall_stiffness(self, entry: dict, form: str, where: str, length: float) -> WallStiffness | None:
        if form == "stiffness":
            k = self.quantity(entry["stiffness"], STIFFNESS, where + ".stiffness")
            return None if k is None else direct_stiffness(k)
        if form == "pier":
            pier = entry["pier"]
            E = self.quantity(pier["E"], PRESSURE, where + ".pier.E")
            t = self.quantity(pier["thickness"], LENGTH, where + ".pier.thickness")
            h = self.quantity(pier["height"], LENGTH, where + ".pier.height")
            G = self.quantity(pier["G"], PRESSURE, where + ".pier.G") if "G" in pier else None
            top = pier.get("top", "free")
            if top not in ("free", "fixed"):
                self.problem(where + ".pier.top", f'must be "free" (cantilever) or "fixed", got "{top}"')
                return None
            if None in (E, t, h) or ("G" in pier and G is None):
                return None
            return pier_stiffness(E, t, h, length, top, G)
        wood = entry["wood"]
        Ga = self.quantity(wood["Ga"], STIFFNESS, where + ".wood.Ga")
        h = self.quantity(wood["height"], LENGTH, where + ".wood.height")
        EA = self.quantity(wood["chord_EA"], FORCE, where + ".wood.chord_EA")
        k_hd = self.quantity(wood["holdown_k"], STIFFNESS, where + ".wood.holdown_k") if "holdown_k" in wood else None
        if None in (Ga, h, EA) or ("holdown_k" in wood and k_hd is None):
            return None
        return wood_wall_stiffness(Ga, h, length, EA, k_hd)

    def members(self, raw: list, lines: dict[str, GridLine], region: Polygon) -> list[Member]:
        members: list[Member] = []
        covered = region.buffer(self.tol)
        for i, entry in enumerate(raw):
            where = f'member #{i + 1} (line "{entry["line"]}")'
            role = entry["role"]
            if role not in MEMBER_ROLES:
                self.problem(where, f'role "{role}" is unknown; use "chord" or "collector"')
                continue
            EA = self.quantity(entry["EA"], FORCE, where + ".EA")
            located = self._line_segment(entry, where, lines, need_extent=False)
            width = self.number(float(entry.get("effective_width", 0.0)), where + ".effective_width", positive=True)
            if EA is None or located is None or width is None:
                continue
            line, t0, t1 = located
            if "from" in entry and not covered.covers(line.segment(t0, t1)):
                self.problem(where, "is not on the diaphragm; members must lie on the diaphragm (members may not span an opening)")
                continue
            members.append(Member(role, line.name, t0, t1, EA, width * self.scale))
        return members

    def splices(self, raw: list, outline: Polygon, chord_EA: float | None, members: list[Member],
                lines: dict[str, GridLine]) -> list[Splice]:
        """``[[splice]]`` entries: a point on an outline chord (needs ``chord_EA``) or on a
        declared member, with ``slip`` and ``at_force`` or with ``stiffness``."""
        found: list[Splice] = []
        for i, entry in enumerate(raw):
            name = entry.get("name", f"S{i + 1}")
            where = f'splice "{name}"' if "name" in entry else f"splice #{i + 1}"
            if any(s.name == name for s in found):
                self.problem(where, "the name is used twice; give every splice its own name")
                continue
            given = {k for k in ("slip", "at_force", "stiffness") if k in entry}
            if given not in ({"slip", "at_force"}, {"stiffness"}):
                self.problem(where, 'give either slip and at_force (the slip Δc at that chord force, e.g. slip = '
                                    '"0.03 in", at_force = "8 kip") or stiffness (e.g. "250 kip/in"), not '
                                    + (", ".join(sorted(given)) or "neither"))
                continue
            at = self.points(entry["at"], where + ".at")
            if at is None:
                continue
            if given == {"stiffness"}:
                k = self.quantity(entry["stiffness"], STIFFNESS, where + ".stiffness")
                slip = force = None
            else:
                slip = self.quantity(entry["slip"], LENGTH, where + ".slip")
                force = self.quantity(entry["at_force"], FORCE, where + ".at_force")
                k = None if slip is None or force is None else force / slip
            if k is None:
                continue
            point = Point(at)
            on = None
            for member in members:
                if lines[member.line].segment(member.t_from, member.t_to).distance(point) <= self.tol:
                    on = f'{member.role} on line "{member.line}"'
                    break
            if on is None and outline.exterior.distance(point) <= self.tol:
                if chord_EA is None:
                    self.problem(where, "lies on the outline, which has no chord bar; give diaphragm.chord_EA (or a "
                                        "[[member]] chord on that line) so the splice has a chord to sit in")
                    continue
                on = "outline chord"
            if on is None:
                self.problem(where, f"at ({entry['at'][0]}, {entry['at'][1]}) is neither on the outline chord nor on a "
                                    "[[member]]; a splice sits in a chord or collector: move it onto one")
                continue
            found.append(Splice(name, np.asarray(at, dtype=float), k, slip, force, on))
        return found

    def transfers(self, raw: list, lines: dict[str, GridLine]) -> list[Transfer]:
        """``[[transfer]]`` entries: two distinct parallel grid lines of grid.x or grid.y."""
        found: list[Transfer] = []
        for i, entry in enumerate(raw):
            name = entry.get("name", f'TD {entry["at"]}-{entry["to"]}')
            where = f'transfer "{name}"' if "name" in entry else f"transfer #{i + 1}"
            ends = []
            for key in ("at", "to"):
                line_name = entry[key]
                if line_name not in lines:
                    close = difflib.get_close_matches(line_name, list(lines), n=1)
                    hint = f' (did you mean "{close[0]}"?)' if close else ""
                    self.problem(where + "." + key, f'"{line_name}" is not a grid line (grid lines: {", ".join(lines)}){hint}')
                    continue
                ends.append(lines[line_name])
            if len(ends) != 2:
                continue
            at, to = ends
            if at.family == "skew" or to.family != at.family:
                self.problem(where, f'"at" and "to" must both be lines of grid.x or both of grid.y (parallel to the load '
                                    f'they serve); "{at.name}" and "{to.name}" are not')
                continue
            k = 0 if at.family == "x" else 1
            if abs(at.origin[k] - to.origin[k]) <= self.tol:
                self.problem(where, '"at" and "to" are the same position; "to" is the grid line that closes the '
                                    "transfer region on the full-depth side")
                continue
            if any(t.name == name for t in found):
                self.problem(where, "the name is used twice; give every transfer region its own name")
                continue
            if any(t.at == at.name and (to.origin[k] - at.origin[k]) * (lines[t.to].origin[k] - at.origin[k]) > 0
                   for t in found):
                self.problem(where, f'a transfer region from line "{at.name}" on that side is already given; keep one')
                continue
            found.append(Transfer(name, at.name, to.name))
        return found

    def loads(self, raw: list, lines: dict[str, GridLine], zones: list[Zone], region: Polygon) -> list[Load]:
        loads: list[Load] = []
        names: set[str] = set()
        zone_names = {z.name for z in zones}
        for entry in raw:
            load_name = entry["name"]
            where = f'load "{load_name}"'
            if load_name in names:
                self.problem(where, "the name is used twice; give every load its own name")
                continue
            names.add(load_name)
            if not load_name or any(ch in load_name for ch in "+-/ "):
                self.problem(where, 'names may not be empty or contain "+", "-", "/" or spaces (they are used in case names such as E+x)')
                continue
            kind = entry["kind"]
            if kind not in LOAD_KINDS:
                self.problem(where, f'kind "{kind}" is unknown; use "seismic" (weight-based body force) or "edge" (wind line load)')
                continue
            directions = tuple(entry["directions"])
            bad = [d for d in directions if d not in ("x", "y")]
            if bad or len(set(directions)) != len(directions):
                self.problem(where + ".directions", f'must list "x" and/or "y" once each, got {list(directions)}')
                continue
            ecc = self.number(float(entry.get("eccentricity", 0.05 if kind == "seismic" else 0.0)), where + ".eccentricity", positive=True)
            omega = self.number(float(entry.get("collector_overstrength", 1.0)), where + ".collector_overstrength")
            if omega is not None and omega < 1.0:
                self.problem(where + ".collector_overstrength", f"must be at least 1.0 (it multiplies collector forces), got {omega}")
                omega = None
            if ecc is not None and ecc > 0.5:
                self.problem(where + ".eccentricity", f"is a fraction of the plan dimension; {ecc} is more than half the plan; use e.g. 0.05")
                ecc = None
            seismic_keys = {"area_weight", "zone_area_weight", "line_weight", "point_weight", "perimeter_weight", "total",
                            "fpx", "light_frame",
                            "drift", "sdc", "fx", "rho"}
            if kind == "edge":
                misplaced = sorted(seismic_keys & set(entry))
                if misplaced:
                    self.problem(where, f'{", ".join(misplaced)} apply to seismic loads only; an edge load takes "intensity"')
                    continue
                given = [k for k in ("intensity", "windward", "leeward") if k in entry]
                if "intensity" in entry and len(given) > 1:
                    self.problem(where, 'give either "intensity" (all on the windward faces) or "windward" and "leeward" '
                                 '(each per unit of plan width), not both')
                    continue
                if not given:
                    self.problem(where, 'an edge load needs "intensity" (force per unit of plan width, applied on the faces '
                                 'the wind reaches first), e.g. "0.3 kip/ft", or "windward" and "leeward" to split it')
                    continue
                if given == ["leeward"]:
                    self.problem(where, 'gives "leeward" without "windward"; give both (e.g. windward = "0.18 kip/ft", '
                                 'leeward = "0.12 kip/ft"), or "intensity" for the whole load on the windward faces')
                    continue
                windward_key = "intensity" if "intensity" in entry else "windward"
                intensity = (self.quantity(entry[windward_key], LINE_LOAD, f"{where}.{windward_key}", positive=windward_key == "intensity")
                             if windward_key in entry else 0.0)
                leeward = self.quantity(entry["leeward"], LINE_LOAD, where + ".leeward", positive=False) if "leeward" in entry else 0.0
                if intensity is None or leeward is None or ecc is None or omega is None:
                    continue
                if intensity + leeward <= 0:
                    self.problem(where, "the edge load is zero; give a positive intensity")
                    continue
                loads.append(Load(load_name, kind, directions, intensity=intensity, leeward=leeward, eccentricity=ecc,
                                  collector_overstrength=omega))
                continue
            if {"intensity", "windward", "leeward"} & set(entry):
                self.problem(where, '"intensity", "windward" and "leeward" apply to edge loads only; a seismic load takes weights')
                continue
            area_weight = self.quantity(entry["area_weight"], AREA_LOAD, where + ".area_weight", positive=False) if "area_weight" in entry else 0.0
            zone_weights = {}
            for zone_name, value in entry.get("zone_area_weight", {}).items():
                if zone_name not in zone_names:
                    self.problem(where + ".zone_area_weight", f'"{zone_name}" is not a zone (zones: {", ".join(sorted(zone_names)) or "none"})')
                    continue
                q = self.quantity(value, AREA_LOAD, f"{where}.zone_area_weight.{zone_name}", positive=False)
                if q is not None:
                    zone_weights[zone_name] = q
            line_weights, line_axes = [], []
            for j, lw in enumerate(entry.get("line_weight", [])):
                lw_where = f"{where}.line_weight #{j + 1}"
                q = self.quantity(lw["weight"], LINE_LOAD, lw_where + ".weight", positive=False)
                located = self._line_segment(lw, lw_where, lines, need_extent=False)
                if q is None or located is None:
                    continue
                line, t0, t1 = located
                line_weights.append((line.name, t0, t1, q))
                line_axes.append(_across_axes(line.direction) if lw.get("only_across") else ("x", "y"))
            edge_weights = self.perimeter_weights(entry.get("perimeter_weight", []), where + ".perimeter_weight", region)
            point_weights, footprints = [], []
            for j, pw in enumerate(entry.get("point_weight", [])):
                pw_where = f"{where}.point_weight #{j + 1}"
                q = self.quantity(pw["weight"], FORCE, pw_where + ".weight", positive=False)
                at = self.points(pw["at"], pw_where + ".at")
                footprint = self.footprint(pw.get("footprint"), pw_where + ".footprint")
                if q is None or at is None or footprint is None:
                    continue
                if not region.buffer(self.tol).covers(Point(at)):
                    self.problem(pw_where, "is not on the diaphragm (outside the outline or in an opening); move it")
                    continue
                bx, by = footprint
                square = shapely.box(at[0] - bx / 2, at[1] - by / 2, at[0] + bx / 2, at[1] + by / 2)
                acting = square.intersection(region)
                if acting.geom_type != "Polygon" or acting.area < 0.05 * square.area:
                    self.problem(pw_where, "its footprint covers too little of the diaphragm or falls in pieces (near an "
                                 "opening or a corner); move the weight or give a smaller footprint")
                    continue
                point_weights.append((float(at[0]), float(at[1]), q))
                footprints.append(shapely.set_precision(acting, 0.0))
            has_total, has_fpx = "total" in entry, "fpx" in entry
            if has_total == has_fpx:
                self.problem(where, 'give exactly one of "total" (the diaphragm force) or "fpx" = { SDS, Ie, story_force_ratio } '
                             '(ASCE 7-16 Eq. 12.10-1)')
                continue
            total = self.quantity(entry["total"], FORCE, where + ".total") if has_total else None
            elf = self.elf(entry["fx"], where + ".fx") if isinstance(entry.get("fx"), dict) else None
            if isinstance(entry.get("fx"), dict) and elf is None:
                continue
            fx = elf.fx if elf is not None else (self.quantity(entry["fx"], FORCE, where + ".fx") if "fx" in entry else None)
            fpx = None
            if has_fpx:
                raw_fpx = entry["fpx"]
                if "ratio" in raw_fpx:
                    self.problem(where + ".fpx.ratio", "was renamed story_force_ratio (ΣFi/Σwi for the levels at and above "
                                 f"this one, ASCE 7-16 Eq. 12.10-1): write story_force_ratio = {raw_fpx['ratio']:g}")
                    continue
                if "story_force_ratio" not in raw_fpx and elf is None:
                    self.problem(where + ".fpx", 'needs "story_force_ratio" (ΣFi/Σwi for the levels at and above this one, '
                                 "ASCE 7-16 Eq. 12.10-1), e.g. story_force_ratio = 0.15, or fx = { base_shear, heights, "
                                 "weights, level, period } from which it is computed")
                    continue
                values = [self.number(float(raw_fpx[k]), f"{where}.fpx.{k}", positive=True, allow_zero=False)
                          for k in ("SDS", "Ie", "story_force_ratio") if k in raw_fpx]
                if any(v is None for v in values):
                    continue
                if len(values) == 2:  # the ratio of Eq. 12.10-1 from the §12.8.3 distribution
                    values.append(elf.story_force_ratio)
                fpx = tuple(values)
            sdc = entry.get("sdc")
            if sdc is not None and sdc not in SDCS:
                self.problem(where + ".sdc", f'must be a Seismic Design Category "A" to "F", got "{sdc}"')
                continue
            if area_weight is None or ecc is None or omega is None or (has_total and total is None):
                continue
            if area_weight == 0 and not zone_weights and not line_weights and not point_weights and not edge_weights:
                self.problem(where, 'has no seismic weight; give "area_weight" (e.g. "20 psf") and/or line and point weights')
                continue
            if area_weight == 0 and not zone_weights and not point_weights:
                acting = [a for a in line_axes] + [e[3] for e in edge_weights]
                empty = [d for d in directions if not any(d in a for a in acting)]
                if empty:
                    self.problem(where, f"has no seismic weight in the direction {', '.join(empty)}: its line and "
                                 "perimeter weights are all only_across lines parallel to that direction; add an "
                                 "area weight or drop that direction")
                    continue
            loads.append(
                Load(load_name, kind, directions, area_weight=area_weight, zone_area_weight=zone_weights,
                     line_weights=tuple(line_weights), point_weights=tuple(point_weights),
                     point_footprints=tuple(footprints), total=total, fpx=fpx,
                     eccentricity=ecc, collector_overstrength=omega, light_frame=bool(entry.get("light_frame", False)),
                     drift=self.drift_inputs(entry.get("drift"), where + ".drift", fpx), sdc=sdc,
                     fx=fx, fx_elf=elf, fpx_ratio_from_elf=has_fpx and "story_force_ratio" not in entry["fpx"],
                     rho=self.rho(entry.get("rho", 1.0), where + ".rho"),
                     line_weight_axes=tuple(line_axes) if any(a != ("x", "y") for a in line_axes) else (),
                     edge_weights=tuple(edge_weights))
            )
        if not raw:
            self.problem("load", 'no [[load]] given; add a seismic or edge load')
        return loads

    def elf(self, raw: dict, where: str) -> ElfDistribution | None:
        """``fx = { base_shear, heights, weights, level, period | k }``: the story force Fx of
        the diaphragm's level from the ELF vertical distribution, ASCE 7-16 §12.8.3."""
        example = ('e.g. fx = { base_shear = "180 kip", heights = ["12 ft", "24 ft"], weights = ["900 kip", '
                   '"600 kip"], level = 2, period = 0.4 }')
        known = {"base_shear", "heights", "weights", "level", "period", "k"}
        unknown = sorted(set(raw) - known)
        missing = sorted({"base_shear", "heights", "weights", "level"} - set(raw))
        if unknown or missing or ("period" in raw) == ("k" in raw):
            self.problem(where, ("unknown key " + ", ".join(unknown) + "; " if unknown else "")
                         + ("missing " + ", ".join(missing) + "; " if missing else "")
                         + "give base_shear, heights and weights of every level (bottom first, heights above the "
                         "base), level (this diaphragm's, 1 = lowest) and either period (T in s) or k; " + example)
            return None
        if not isinstance(raw["heights"], list) or not isinstance(raw["weights"], list):
            self.problem(where, "heights and weights must be lists, one entry per level; " + example)
            return None
        V = self.quantity(raw["base_shear"], FORCE, where + ".base_shear")
        heights = [self.quantity(h, LENGTH, f"{where}.heights #{i + 1}") for i, h in enumerate(raw["heights"])]
        weights = [self.quantity(w, FORCE, f"{where}.weights #{i + 1}") for i, w in enumerate(raw["weights"])]
        if V is None or None in heights or None in weights:
            return None
        if not heights or len(heights) != len(weights):
            self.problem(where, f"heights ({len(heights)}) and weights ({len(weights)}) must list the same levels, "
                                "bottom first; " + example)
            return None
        if any(b <= a for a, b in zip([0.0] + heights[:-1], heights, strict=True)):
            self.problem(where + ".heights", "must be above the base and increase from the lowest level up")
            return None
        for key in ("period", "k"):
            if key in raw and (isinstance(raw[key], bool) or not isinstance(raw[key], (int, float))):
                self.problem(f"{where}.{key}", f"must be a number ({'seconds' if key == 'period' else 'from 1 to 2'}), "
                                               f"got {raw[key]!r}")
                return None
        level = raw["level"]
        if isinstance(level, bool) or not isinstance(level, int) or not 1 <= level <= len(heights):
            self.problem(where + ".level", f"must be the diaphragm's level number, 1 (lowest) to {len(heights)}, got {level!r}")
            return None
        if "k" in raw:
            k = self.number(float(raw["k"]), where + ".k", positive=True)
            if k is not None and not 1.0 <= k <= 2.0:
                self.problem(where + ".k", f"ASCE 7-16 §12.8.3 gives k from 1 to 2; got {k:g}")
                return None
            period = None
        else:
            k, period = None, self.number(float(raw["period"]), where + ".period", positive=True, allow_zero=False)
            if period is None:
                return None
        if "k" in raw and k is None:
            return None
        return elf_distribution_12_8_3(V, heights, weights, level - 1, period=period, k=k)

    def perimeter_weights(self, raw: dict | list, where: str, region: Polygon) -> list[tuple]:
        """``perimeter_weight``: a line weight (N/m along each edge's own length) on every
        outline edge whose outward normal faces one of ``faces`` ("all", or some of "+x",
        "-x", "+y", "-y"; a skewed edge faces both directions its normal has a component
        in, re-entrant edges face where their normal points). With ``only_across`` an edge's
        weight acts only in the load direction across the edge (skewed edges: both)."""
        found: list[tuple] = []
        entries = [raw] if isinstance(raw, dict) else list(raw)
        ring = np.asarray(shapely.geometry.polygon.orient(Polygon(region.exterior), 1.0).exterior.coords)
        starts, ends = ring[:-1], ring[1:]
        edges = ends - starts
        lengths = np.hypot(edges[:, 0], edges[:, 1])
        normals = np.column_stack([edges[:, 1], -edges[:, 0]]) / lengths[:, None]  # outward: CCW ring
        for j, entry in enumerate(entries):
            here = f"{where} #{j + 1}" if len(entries) > 1 else where
            q = self.quantity(entry["weight"], LINE_LOAD, here + ".weight", positive=False)
            faces = entry.get("faces", "all")
            faces = list(FACE_NORMALS) if faces == "all" else [faces] if isinstance(faces, str) else list(faces)
            bad = [f for f in faces if f not in FACE_NORMALS]
            if bad or len(set(faces)) != len(faces):
                self.problem(here + ".faces", f'must be "all" or a list of some of "+x", "-x", "+y", "-y" (the '
                             f"outward direction an edge faces) once each, got {entry.get('faces')!r}")
                continue
            if q is None:
                continue
            facing = np.zeros(len(edges), dtype=bool)
            for face in faces:
                facing |= normals @ FACE_NORMALS[face] > 1e-9
            for a, b, n in zip(starts[facing], ends[facing], normals[facing], strict=True):
                axes = _across_axes(np.array([-n[1], n[0]])) if entry.get("only_across") else ("x", "y")
                found.append((a.copy(), b.copy(), q, axes))
        return found

    def mesh_settings(self, raw: dict, size: float) -> MeshSettings:
        element = raw.get("element", "triangle")
        if element not in ("triangle", "quad", "quad8"):
            self.problem("mesh.element", f'must be "triangle", "quad" (9-node) or "quad8" (8-node), got "{element}"')
        order = raw.get("order", 2)
        if order not in (1, 2):
            self.problem("mesh.order", f"must be 1 or 2 (2, quadratic, is recommended), got {order}")
        default_size = size / 40.0
        target = raw.get("size", default_size / self.scale)
        if not (math.isfinite(target) and target > 0):
            self.problem("mesh.size", f"must be a positive number of {self.unit}, got {target}")
            target = default_size / self.scale
        settings = MeshSettings(float(target) * self.scale, int(order) if order in (1, 2) else 2, element)
        self.check_mesh_memory(settings)
        return settings

    def check_mesh_memory(self, settings: MeshSettings) -> None:
        """Refuse a mesh that could not be solved in this machine's memory (estimated
        before any meshing; see :func:`estimate_mesh`)."""
        area = self.region_area
        dofs, need = estimate_mesh(area, settings.size, settings.order)
        available = physical_memory()
        if need > MEMORY_FRACTION * available:
            per_dof = need / dofs
            dofs_allowed = MEMORY_FRACTION * available / per_dof
            coarsest = settings.size * math.sqrt(dofs / dofs_allowed)
            self.problem(
                "mesh.size",
                f"{settings.size / self.scale:g} {self.unit} would give about {dofs / 1e6:.3g} million degrees of "
                f"freedom and need about {need / 2**30:.3g} GB of memory (this machine has {available / 2**30:.3g} GB); "
                f"coarsen the mesh: use mesh.size of at least {coarsest / self.scale:.3g} {self.unit}",
            )

    def drift_inputs(self, raw: dict | None, where: str, fpx) -> tuple[float, float, float, float] | None:
        """(Cd, Ie, story height m, allowable drift ratio) for ASCE 7-16 §12.8.6 / Table 12.12-1;
        Ie defaults to the one of fpx, else 1.0."""
        if raw is None:
            return None
        Cd = self.number(float(raw["Cd"]), where + ".Cd", positive=True, allow_zero=False)
        Ie = self.number(float(raw.get("Ie", fpx[1] if fpx else 1.0)), where + ".Ie", positive=True, allow_zero=False)
        height = self.quantity(raw["story_height"], LENGTH, where + ".story_height")
        allowable = self.number(float(raw["allowable"]), where + ".allowable", positive=True, allow_zero=False)
        if allowable is not None and allowable >= 0.1:
            self.problem(where + ".allowable", f"is the allowable story drift ratio Δa/hsx of ASCE 7-16 Table 12.12-1 "
                         f"(e.g. 0.025), got {allowable}")
            return None
        if None in (Cd, Ie, height, allowable):
            return None
        return Cd, Ie, height, allowable

    def rho(self, value: float, where: str) -> float:
        """The redundancy factor: 1.0 or 1.3 in ASCE 7-16 §12.3.4 (other values are refused)."""
        if value not in (1.0, 1.3):
            self.problem(where, f"the redundancy factor ρ is 1.0 or 1.3 (ASCE 7-16 §12.3.4), got {value}")
            return 1.0
        return float(value)

    def capacities(self, doc: dict, zones: list[Zone], walls: list[Wall], lines: dict[str, GridLine]) -> Capacities:
        """The optional capacities (README, "Capacities"): ``[diaphragm] capacity`` and
        ``[[diaphragm.zone]] capacity`` (unit shear), ``[[wall]] capacity`` (force) or
        ``unit_shear_capacity``, ``[[member]] tension_capacity`` / ``compression_capacity``
        (the member on that grid line), and the ``[capacity]`` table of defaults and members."""
        dia = doc["diaphragm"]
        diaphragm = None
        if "capacity" in dia:
            diaphragm = self.quantity(dia["capacity"], LINE_LOAD, "diaphragm.capacity")
        zone_names = {z.name for z in zones}
        zone_caps = {}
        for i, raw in enumerate(dia.get("zone", [])):
            name = raw.get("name", f"zone {i + 1}")
            if "capacity" in raw and name in zone_names:
                value = self.quantity(raw["capacity"], LINE_LOAD, f'diaphragm.zone "{name}".capacity')
                if value is not None:
                    zone_caps[name] = value
        wall_caps = {}
        known_walls = {w.id for w in walls}
        for raw in doc["wall"]:
            where = f'wall "{raw["id"]}"'
            if "capacity" in raw and "unit_shear_capacity" in raw:
                self.problem(where, 'give either "capacity" (force) or "unit_shear_capacity" (force per length), not both')
                continue
            if raw["id"] not in known_walls:
                continue
            if "capacity" in raw:
                value = self.quantity(raw["capacity"], FORCE, where + ".capacity")
                if value is not None:
                    wall_caps[raw["id"]] = ("force", value)
            elif "unit_shear_capacity" in raw:
                value = self.quantity(raw["unit_shear_capacity"], LINE_LOAD, where + ".unit_shear_capacity")
                if value is not None:
                    wall_caps[raw["id"]] = ("unit_shear", value)
        table = doc.get("capacity", {})
        wall_default = None
        if "wall" in table and "wall_unit_shear" in table:
            self.problem("capacity", 'give either "wall" (force) or "wall_unit_shear" (force per length), not both')
        elif "wall" in table:
            value = self.quantity(table["wall"], FORCE, "capacity.wall")
            wall_default = None if value is None else ("force", value)
        elif "wall_unit_shear" in table:
            value = self.quantity(table["wall_unit_shear"], LINE_LOAD, "capacity.wall_unit_shear")
            wall_default = None if value is None else ("unit_shear", value)

        def pair(entry: dict, tension: str, compression: str, where: str) -> tuple[float | None, float | None]:
            return tuple(self.quantity(entry[key], FORCE, f"{where}.{key}") if key in entry else None
                         for key in (tension, compression))

        member_default = pair(table, "tension", "compression", "capacity")
        member_caps: dict[tuple[str, str], tuple[float | None, float | None]] = {}

        def add(key: tuple[str, str], values: tuple, where: str) -> None:
            if key in member_caps:
                self.problem(where, f'the member {key[0]} "{key[1]}" has capacities twice; give them once')
            elif values != (None, None):
                member_caps[key] = values

        for i, raw in enumerate(doc.get("member", [])):
            where = f'member #{i + 1} (line "{raw["line"]}")'
            if raw["line"] in lines:
                add(("line", raw["line"]), pair(raw, "tension_capacity", "compression_capacity", where), where)
        for i, raw in enumerate(table.get("member", [])):
            where = f"capacity.member #{i + 1}"
            if ("line" in raw) == ("name" in raw):
                self.problem(where, 'give "line" (a grid line) or "name" (a member name as reported, e.g. '
                             '"edge at y = 12 ft, 1–2"), one of them')
                continue
            if "line" in raw and raw["line"] not in lines:
                close = difflib.get_close_matches(raw["line"], list(lines), n=1)
                self.problem(where + ".line", f'"{raw["line"]}" is not a grid line'
                             + (f' (did you mean "{close[0]}"?)' if close else f' (lines: {", ".join(lines)})'))
                continue
            if "tension" not in raw and "compression" not in raw:
                self.problem(where, 'give "tension" and/or "compression" (forces, e.g. "12 kip")')
                continue
            key = ("line", raw["line"]) if "line" in raw else ("name", raw["name"])
            add(key, pair(raw, "tension", "compression", where), where)
        return Capacities(diaphragm, zone_caps, wall_caps, wall_default, member_caps, member_default)

    def design_basis(self, raw: dict) -> str | None:
        basis = raw.get("basis")
        if basis is not None and basis not in ("LRFD", "ASD"):
            self.problem("design.basis", f'must be "LRFD" or "ASD", got "{basis}"')
            return None
        return basis

    def design_envelope(self, raw: dict) -> tuple[str, ...]:
        """[design] envelope: the assumptions of an engineer-chosen envelope, reported beside
        the code-allowed one (e.g. ["flexible", "rigid"], common practice where either is allowed)."""
        chosen = tuple(raw.get("envelope", ()))
        unknown = [a for a in chosen if a not in ("flexible", "rigid", "semirigid")]
        if unknown or ("envelope" in raw and not chosen) or len(set(chosen)) != len(chosen):
            self.problem("design.envelope", f'list some of "flexible", "rigid", "semirigid" once each, got {list(chosen)}')
            return ()
        return chosen

    def classification(self, raw: dict) -> ClassificationFlags:
        factors = tuple(float(f) for f in raw.get("sensitivity", ()))
        for f in factors:
            if not (math.isfinite(f) and f > 0):
                self.problem("classification.sensitivity", f"factors on diaphragm stiffness must be positive, got {f}")
        adjacent = raw.get("adjacent_stiffness_ratio")
        if adjacent is not None and not (math.isfinite(adjacent) and adjacent > 0):
            self.problem("classification.adjacent_stiffness_ratio", "is the effective diaphragm stiffness of the adjacent "
                         f"story divided by this one's and must be positive, e.g. 0.4; got {adjacent}")
            adjacent = None
        return ClassificationFlags(bool(raw.get("idealized_flexible", False)), bool(raw.get("idealized_rigid", False)), factors,
                                   float(adjacent) if adjacent is not None else None)


#: Outward normals named by the ``faces`` of a perimeter weight.
FACE_NORMALS = {"+x": np.array([1.0, 0.0]), "-x": np.array([-1.0, 0.0]), "+y": np.array([0.0, 1.0]),
                "-y": np.array([0.0, -1.0])}


def _across_axes(direction: np.ndarray) -> tuple[str, ...]:
    """Load axes across a line or edge running along unit vector ``direction``: "x" for
    one parallel to y, "y" for one parallel to x, both for a skewed one (its weight is
    partly out of its plane in either direction; counted whole in both, the larger share)."""
    if abs(direction[0]) <= 1e-9:
        return ("x",)
    if abs(direction[1]) <= 1e-9:
        return ("y",)
    return ("x", "y")


def expand_wall_types(document: dict, label: str) -> tuple[dict, list[str]]:
    """Merge ``[wall_type.NAME]`` into the walls that say ``type = "NAME"``: the type's
    stiffness form is the wall's unless the wall gives its own; a wall giving the same
    ``pier`` or ``wood`` form overrides only the fields it writes. Returns the document with
    merged walls (``type`` removed) and the problems found (an unknown type lists the
    defined ones). Runs before the schema so the merged walls are checked as any wall."""
    types = document.get("wall_type")
    walls = document.get("wall")
    if not isinstance(types, dict) and not (isinstance(walls, list) and any(
            isinstance(w, dict) and "type" in w for w in walls)):
        return document, []
    types = types if isinstance(types, dict) else {}
    problems: list[str] = []
    forms = ("stiffness", "pier", "wood")
    for name, spec in types.items():
        given = [k for k in forms if isinstance(spec, dict) and k in spec]
        if isinstance(spec, dict) and len(given) != 1:
            problems.append(f'{label}: wall_type "{name}": give exactly one of "stiffness", "pier" or "wood"'
                            + (f" (found {', '.join(given)})" if given else ""))
    if not isinstance(walls, list):
        return document, problems
    merged_walls = []
    for i, wall in enumerate(walls):
        if not isinstance(wall, dict) or "type" not in wall:
            merged_walls.append(wall)
            continue
        wall = dict(wall)
        type_name = wall.pop("type")
        where = f'wall "{wall["id"]}"' if isinstance(wall.get("id"), str) else f"wall #{i + 1}"
        spec = types.get(type_name) if isinstance(type_name, str) else None
        if not isinstance(spec, dict):
            defined = ", ".join(f'"{t}"' for t in types) or "none ([wall_type.NAME] tables)"
            close = difflib.get_close_matches(str(type_name), list(types), n=1)
            problems.append(f'{label}: {where}.type: "{type_name}" is not a defined wall type (defined: {defined})'
                            + (f'; did you mean "{close[0]}"?' if close else "; define it or fix the name"))
            merged_walls.append(wall)
            continue
        own = [k for k in forms if k in wall]
        if not own:
            for key in forms:
                if key in spec:
                    wall[key] = dict(spec[key]) if isinstance(spec[key], dict) else spec[key]
        elif len(own) == 1 and own[0] in spec and isinstance(spec[own[0]], dict) and isinstance(wall[own[0]], dict):
            wall[own[0]] = spec[own[0]] | wall[own[0]]  # the wall's fields win
        merged_walls.append(wall)
    return document | {"wall": merged_walls}, problems


#: Bytes of memory per degree of freedom assumed for assembly + sparse factorization
#: of a 2-D membrane model (a deliberately high figure; see benchmarks/).
BYTES_PER_DOF = 4096
#: Share of the machine's memory a run may plan to use.
MEMORY_FRACTION = 0.8


#: The nail-slip term of the 4-term diaphragm deflection, 0.188·L·en with L in ft (IBC 2021
#: Eq. 23-1; the constant assumes the equation's uniform fastening), per metre of span.
SLIP_CONSTANT = 0.188 / 0.3048


def apparent_shear_stiffness(Gt: float, en: float, v: float) -> float:
    """Apparent shear rigidity (N/m, the G·t of the membrane, = 1000·Ga lb/in) that gives the
    shear and nail-slip terms of the 4-term equation, vL/(4Gt) + 0.188·L·en, as the one shear
    term 0.25·vL/(1000·Ga) of SDPWS-2015 Eq. 4.2-1: 1/(1/Gt + 4·0.188/ft·en/v), with Gt the
    panel shear rigidity (N/m), en the nail slip (m) at the unit shear v (N/m). Since slip
    depends on the load, so does the result: take v at the level the model should represent
    (SDPWS tabulates Ga at 1.4 × the ASD capacity)."""
    return 1.0 / (1.0 / Gt + 4.0 * SLIP_CONSTANT * en / v)


def estimate_mesh(area: float, size: float, order: int) -> tuple[float, float]:
    """Rough degrees of freedom and memory (bytes) of a triangle mesh of element size
    ``size`` (m) over ``area`` (m²): about 2.3·A/h² triangles, 2 displacement DOFs per
    node, ≈ 2 nodes per quadratic triangle (½ for linear)."""
    triangles = 2.31 * area / size**2
    nodes = triangles * (2.0 if order == 2 else 0.5)
    dofs = 2.0 * nodes
    return dofs, dofs * BYTES_PER_DOF


def physical_memory() -> float:
    """Installed memory of this machine in bytes (24 GB assumed if it cannot be read)."""
    try:
        return float(os.sysconf("SC_PAGE_SIZE") * os.sysconf("SC_PHYS_PAGES"))
    except (ValueError, OSError, AttributeError):
        return 24.0 * 2**30


# --------------------------------------------------------------------------------------
# Stability
# --------------------------------------------------------------------------------------


def rigid_stiffness_rows(walls: tuple[Wall, ...] | list[Wall], reference: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Kinematic rows a_i (n_walls, 3) and stiffnesses k_i (N/m) of the walls for the
    rigid-body degrees of freedom (u, v, θ) about ``reference``: the displacement of
    wall i along its line is a_i · (u, v, θ)."""
    if not walls:
        return np.zeros((0, 3)), np.zeros(0)
    directions = np.array([w.direction for w in walls])
    arms = np.array([w.midpoint for w in walls]) - reference
    torsion = directions[:, 1] * arms[:, 0] - directions[:, 0] * arms[:, 1]
    rows = np.column_stack([directions, torsion])
    return rows, np.array([w.k for w in walls])


@dataclass(frozen=True)
class Stability:
    """What the walls allow: ``problems`` (the plan cannot be analyzed at all, each a full
    sentence) and ``unavailable`` (assumption → why it cannot be run on this plan)."""

    problems: tuple[str, ...]
    unavailable: dict[str, str]


def _lines_of_resistance(plan: Plan, axis: str) -> list[str]:
    """Grid lines parallel to ``axis`` that carry walls (the flexible method's supports)."""
    with_walls = {w.line for w in plan.walls}
    return [g.name for g in plan.grid_lines if g.parallel_to == axis and g.name in with_walls]


def assess_stability(plan: Plan) -> Stability:
    """Which assumptions the walls allow (checked on the rigid-body stiffness).

    A loaded direction without any wall is a problem. When the walls cannot hold the
    diaphragm in the other direction or in rotation (all walls parallel, or their lines
    meeting at one point), the rigid and semi-rigid models are a mechanism; the plan can
    still be analyzed as flexible if every loaded direction has at least two lines of
    resistance (simple spans between them), e.g. walls in one direction only, loaded in
    that direction. Otherwise that is a problem too."""
    reference = np.asarray(plan.region.centroid.coords[0])
    rows, k = rigid_stiffness_rows(plan.walls, reference)
    size = max(np.ptp(plan.outline, axis=0))
    label = plan.source
    loaded = [axis for axis in ("x", "y") if any(axis in load.directions for load in plan.loads)]
    problems = []
    for axis, col in (("x", 0), ("y", 1)):
        if axis in loaded and not np.any(np.abs(rows[:, col]) > 1e-9):
            problems.append(
                f"{label}: walls: no wall resists force in the {axis} direction; "
                f"add a wall on a grid line parallel to {axis} (a line of grid.{'y' if axis == 'x' else 'x'})"
            )
    if problems or not len(rows):
        return Stability(tuple(problems), {})
    # Non-dimensionalize the rotation column so the rank test is scale-free.
    scaled = rows * np.array([1.0, 1.0, 1.0 / size]) * np.sqrt(k / k.max())[:, None]
    singular = np.linalg.svd(scaled, compute_uv=False)
    if len(singular) == 3 and singular[2] > 1e-9 * singular[0]:
        return Stability((), {})
    supports = {axis: _lines_of_resistance(plan, axis) for axis in loaded}
    unheld = [axis for axis, col in (("x", 0), ("y", 1)) if not np.any(np.abs(rows[:, col]) > 1e-9)]
    if loaded and all(len(lines) >= 2 for lines in supports.values()) and unheld:
        across = unheld[0]
        along = "y" if across == "x" else "x"
        reason = (
            f"no wall resists force along {across} (every wall runs along {along}), so nothing holds the "
            f"diaphragm across the load: the {{}} model would be a mechanism. Only the flexible method "
            f"(simple spans between the lines of resistance {', '.join(supports[along])}) can be run; add walls "
            f"along {across} to run the rigid and semi-rigid models"
        )
        return Stability((), {"rigid": reason.format("rigid-diaphragm"), "semirigid": reason.format("finite-element")})
    if np.allclose(np.abs(rows[:, :2]), np.abs(rows[0, :2])):
        why = "all walls are parallel"
        fix = "add a wall in another direction"
    else:
        why = "the lines of all walls meet at one point"
        fix = "add a wall on a line that does not pass through that point"
    few = [f"{axis} ({len(lines)} found)" for axis, lines in supports.items() if len(lines) < 2]
    flexible = (f"; nor can it be analyzed as flexible only, which needs at least two lines of resistance "
                f"(grid lines with walls) parallel to each loaded direction: {', '.join(few)}") if few else ""
    return Stability((
        f"{label}: walls: {why}, so nothing resists rotation of the diaphragm (no torsional restraint){flexible}; {fix}",
    ), {})


def check_stability(plan: Plan) -> None:
    """Raise :class:`UnstablePlanError` if no assumption can be run (see
    :func:`assess_stability`); plans that only the flexible method can analyze pass."""
    stability = assess_stability(plan)
    if stability.problems:
        raise UnstablePlanError(list(stability.problems))
