"""Reads the plan file's ``[[load]]`` entries: seismic loads (area, zone, line, perimeter
and point weights; the diaphragm force as ``total`` or ``fpx`` (ASCE 7-16 Eq. 12.10-1);
the story force ``fx`` directly or from the ELF distribution of §12.8.3; ``drift``,
``sdc``, ``rho``) and edge loads (wind per unit of plan width on the windward faces, or
split into ``windward`` and ``leeward``), with the eccentricity and collector
overstrength common to both.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import shapely
from shapely.geometry import Point, Polygon

from ..code.asce7_16 import SDCS, ElfDistribution, elf_distribution_12_8_3
from ..units import AREA_LOAD, FORCE, LENGTH, LINE_LOAD
from .context import Context
from .geometry import line_segment
from .model import GridLine, Load, Zone

LOAD_KINDS = ("seismic", "edge")
#: Keys of a ``[[load]]`` that only a seismic load takes.
SEISMIC_KEYS = {"area_weight", "zone_area_weight", "line_weight", "point_weight", "perimeter_weight", "total",
                "fpx", "light_frame", "drift", "sdc", "fx", "rho"}
#: Default side of the square over which a point weight acts (m, about 4 ft): a point
#: force on a membrane has unbounded displacement under it, while real equipment and
#: framing deliver the force over a curb or a framing bay.
DEFAULT_FOOTPRINT = 1.2


def loads(ctx: Context, raw: list, lines: dict[str, GridLine], zones: list[Zone], region: Polygon) -> list[Load]:
    """``[[load]]`` entries, each with its own name; at least one is needed. ``lines``
    locate line weights, ``zones`` name the zone weights, ``region`` (the diaphragm) holds
    the point weights and gives the perimeter."""
    found: list[Load] = []
    names: set[str] = set()
    zone_names = {z.name for z in zones}
    for entry in raw:
        load_name = entry["name"]
        where = f'load "{load_name}"'
        if load_name in names:
            ctx.problem(where, "the name is used twice; give every load its own name")
            continue
        names.add(load_name)
        load = _load(ctx, entry, where, lines, zone_names, region)
        if load is not None:
            found.append(load)
    if not raw:
        ctx.problem("load", 'no [[load]] given; add a seismic or edge load')
    return found


def _load(ctx: Context, entry: dict, where: str, lines: dict[str, GridLine], zone_names: set[str],
          region: Polygon) -> Load | None:
    """One ``[[load]]``: name, kind, directions, eccentricity and collector overstrength,
    then the kind's own keys; None when a problem was recorded."""
    load_name = entry["name"]
    if not load_name or any(ch in load_name for ch in "+-/ "):
        ctx.problem(where, 'names may not be empty or contain "+", "-", "/" or spaces (they are used in case names such as E+x)')
        return None
    kind = entry["kind"]
    if kind not in LOAD_KINDS:
        ctx.problem(where, f'kind "{kind}" is unknown; use "seismic" (weight-based body force) or "edge" (wind line load)')
        return None
    directions = tuple(entry["directions"])
    bad = [d for d in directions if d not in ("x", "y")]
    if bad or len(set(directions)) != len(directions):
        ctx.problem(where + ".directions", f'must list "x" and/or "y" once each, got {list(directions)}')
        return None
    ecc = ctx.number(float(entry.get("eccentricity", 0.05 if kind == "seismic" else 0.0)), where + ".eccentricity", positive=True)
    omega = ctx.number(float(entry.get("collector_overstrength", 1.0)), where + ".collector_overstrength")
    if omega is not None and omega < 1.0:
        ctx.problem(where + ".collector_overstrength", f"must be at least 1.0 (it multiplies collector forces), got {omega}")
        omega = None
    if ecc is not None and ecc > 0.5:
        ctx.problem(where + ".eccentricity", f"is a fraction of the plan dimension; {ecc} is more than half the plan; use e.g. 0.05")
        ecc = None
    if kind == "edge":
        return _edge_load(ctx, entry, where, directions, ecc, omega)
    return _seismic_load(ctx, entry, where, directions, ecc, omega, lines, zone_names, region)


def _edge_load(ctx: Context, entry: dict, where: str, directions: tuple[str, ...], ecc: float | None,
               omega: float | None) -> Load | None:
    """An edge (wind) load: ``intensity``, or ``windward`` and ``leeward`` (N/m of plan width)."""
    misplaced = sorted(SEISMIC_KEYS & set(entry))
    if misplaced:
        ctx.problem(where, f'{", ".join(misplaced)} apply to seismic loads only; an edge load takes "intensity"')
        return None
    given = [k for k in ("intensity", "windward", "leeward") if k in entry]
    if "intensity" in entry and len(given) > 1:
        ctx.problem(where, 'give either "intensity" (all on the windward faces) or "windward" and "leeward" '
                           '(each per unit of plan width), not both')
        return None
    if not given:
        ctx.problem(where, 'an edge load needs "intensity" (force per unit of plan width, applied on the faces '
                           'the wind reaches first), e.g. "0.3 kip/ft", or "windward" and "leeward" to split it')
        return None
    if given == ["leeward"]:
        ctx.problem(where, 'gives "leeward" without "windward"; give both (e.g. windward = "0.18 kip/ft", '
                           'leeward = "0.12 kip/ft"), or "intensity" for the whole load on the windward faces')
        return None
    windward_key = "intensity" if "intensity" in entry else "windward"
    intensity = (ctx.quantity(entry[windward_key], LINE_LOAD, f"{where}.{windward_key}", positive=windward_key == "intensity")
                 if windward_key in entry else 0.0)
    leeward = ctx.quantity(entry["leeward"], LINE_LOAD, where + ".leeward", positive=False) if "leeward" in entry else 0.0
    if intensity is None or leeward is None or ecc is None or omega is None:
        return None
    if intensity + leeward <= 0:
        ctx.problem(where, "the edge load is zero; give a positive intensity")
        return None
    return Load(entry["name"], "edge", directions, intensity=intensity, leeward=leeward, eccentricity=ecc,
                collector_overstrength=omega)


@dataclass(frozen=True, eq=False)
class _Weights:
    """The seismic weights of one load, as :class:`~planshear.plan.model.Load` holds them."""

    area: float | None  # N/m², None when invalid
    zones: dict[str, float]  # zone name → N/m²
    lines: list[tuple[str, float, float, float]]  # (line, t0, t1, N/m)
    line_axes: list[tuple[str, ...]]  # load axes each line weight acts in
    edges: list[tuple]  # perimeter weight per outline edge (start, end, N/m, axes)
    points: list[tuple[float, float, float]]  # (x, y, N)
    footprints: list[Polygon]  # where each point weight acts

    @property
    def is_empty(self) -> bool:
        """No weight of any kind (the load would have no force)."""
        return self.area == 0 and not self.zones and not self.lines and not self.points and not self.edges


def _seismic_weights(ctx: Context, entry: dict, where: str, lines: dict[str, GridLine], zone_names: set[str],
                     region: Polygon) -> _Weights:
    """``area_weight``, ``zone_area_weight``, ``line_weight``, ``perimeter_weight`` and
    ``point_weight`` of a seismic load (invalid items left out, problems recorded)."""
    area_weight = ctx.quantity(entry["area_weight"], AREA_LOAD, where + ".area_weight", positive=False) if "area_weight" in entry else 0.0
    zone_weights = {}
    for zone_name, value in entry.get("zone_area_weight", {}).items():
        if zone_name not in zone_names:
            ctx.problem(where + ".zone_area_weight", f'"{zone_name}" is not a zone (zones: {", ".join(sorted(zone_names)) or "none"})')
            continue
        q = ctx.quantity(value, AREA_LOAD, f"{where}.zone_area_weight.{zone_name}", positive=False)
        if q is not None:
            zone_weights[zone_name] = q
    line_weights, line_axes = [], []
    for j, lw in enumerate(entry.get("line_weight", [])):
        lw_where = f"{where}.line_weight #{j + 1}"
        q = ctx.quantity(lw["weight"], LINE_LOAD, lw_where + ".weight", positive=False)
        located = line_segment(ctx, lw, lw_where, lines, need_extent=False)
        if q is None or located is None:
            continue
        line, t0, t1 = located
        line_weights.append((line.name, t0, t1, q))
        line_axes.append(_across_axes(line.direction) if lw.get("only_across") else ("x", "y"))
    edge_weights = _perimeter_weights(ctx, entry.get("perimeter_weight", []), where + ".perimeter_weight", region)
    point_weights, footprints = [], []
    for j, pw in enumerate(entry.get("point_weight", [])):
        pw_where = f"{where}.point_weight #{j + 1}"
        q = ctx.quantity(pw["weight"], FORCE, pw_where + ".weight", positive=False)
        at = ctx.points(pw["at"], pw_where + ".at")
        footprint = _footprint(ctx, pw.get("footprint"), pw_where + ".footprint")
        if q is None or at is None or footprint is None:
            continue
        if not region.buffer(ctx.tol).covers(Point(at)):
            ctx.problem(pw_where, "is not on the diaphragm (outside the outline or in an opening); move it")
            continue
        bx, by = footprint
        square = shapely.box(at[0] - bx / 2, at[1] - by / 2, at[0] + bx / 2, at[1] + by / 2)
        acting = square.intersection(region)
        if acting.geom_type != "Polygon" or acting.area < 0.05 * square.area:
            ctx.problem(pw_where, "its footprint covers too little of the diaphragm or falls in pieces (near an "
                                  "opening or a corner); move the weight or give a smaller footprint")
            continue
        point_weights.append((float(at[0]), float(at[1]), q))
        footprints.append(shapely.set_precision(acting, 0.0))
    return _Weights(area_weight, zone_weights, line_weights, line_axes, edge_weights, point_weights, footprints)


def _seismic_load(ctx: Context, entry: dict, where: str, directions: tuple[str, ...], ecc: float | None,
                  omega: float | None, lines: dict[str, GridLine], zone_names: set[str], region: Polygon) -> Load | None:
    """A seismic load: its weights, the diaphragm force (``total`` or ``fpx``), the story
    force ``fx``, ``sdc``, ``drift`` and ``rho``; None when a problem was recorded."""
    if {"intensity", "windward", "leeward"} & set(entry):
        ctx.problem(where, '"intensity", "windward" and "leeward" apply to edge loads only; a seismic load takes weights')
        return None
    weights = _seismic_weights(ctx, entry, where, lines, zone_names, region)
    has_total, has_fpx = "total" in entry, "fpx" in entry
    if has_total == has_fpx:
        ctx.problem(where, 'give exactly one of "total" (the diaphragm force) or "fpx" = { SDS, Ie, story_force_ratio } '
                           '(ASCE 7-16 Eq. 12.10-1)')
        return None
    total = ctx.quantity(entry["total"], FORCE, where + ".total") if has_total else None
    elf = _elf(ctx, entry["fx"], where + ".fx") if isinstance(entry.get("fx"), dict) else None
    if isinstance(entry.get("fx"), dict) and elf is None:
        return None
    fx = elf.fx if elf is not None else (ctx.quantity(entry["fx"], FORCE, where + ".fx") if "fx" in entry else None)
    fpx = None
    if has_fpx:
        raw_fpx = entry["fpx"]
        if "ratio" in raw_fpx:
            ctx.problem(where + ".fpx.ratio", "was renamed story_force_ratio (ΣFi/Σwi for the levels at and above "
                                              f"this one, ASCE 7-16 Eq. 12.10-1): write story_force_ratio = {raw_fpx['ratio']:g}")
            return None
        if "story_force_ratio" not in raw_fpx and elf is None:
            ctx.problem(where + ".fpx", 'needs "story_force_ratio" (ΣFi/Σwi for the levels at and above this one, '
                                        "ASCE 7-16 Eq. 12.10-1), e.g. story_force_ratio = 0.15, or fx = { base_shear, heights, "
                                        "weights, level, period } from which it is computed")
            return None
        values = [ctx.number(float(raw_fpx[k]), f"{where}.fpx.{k}", positive=True, allow_zero=False)
                  for k in ("SDS", "Ie", "story_force_ratio") if k in raw_fpx]
        if any(v is None for v in values):
            return None
        if len(values) == 2:  # the ratio of Eq. 12.10-1 from the §12.8.3 distribution
            values.append(elf.story_force_ratio)
        fpx = tuple(values)
    sdc = entry.get("sdc")
    if sdc is not None and sdc not in SDCS:
        ctx.problem(where + ".sdc", f'must be a Seismic Design Category "A" to "F", got "{sdc}"')
        return None
    if weights.area is None or ecc is None or omega is None or (has_total and total is None):
        return None
    if weights.is_empty:
        ctx.problem(where, 'has no seismic weight; give "area_weight" (e.g. "20 psf") and/or line and point weights')
        return None
    if weights.area == 0 and not weights.zones and not weights.points:
        acting = list(weights.line_axes) + [e[3] for e in weights.edges]
        empty = [d for d in directions if not any(d in a for a in acting)]
        if empty:
            ctx.problem(where, f"has no seismic weight in the direction {', '.join(empty)}: its line and "
                               "perimeter weights are all only_across lines parallel to that direction; add an "
                               "area weight or drop that direction")
            return None
    line_axes = weights.line_axes
    return Load(entry["name"], "seismic", directions, area_weight=weights.area, zone_area_weight=weights.zones,
                line_weights=tuple(weights.lines), point_weights=tuple(weights.points),
                point_footprints=tuple(weights.footprints), total=total, fpx=fpx,
                eccentricity=ecc, collector_overstrength=omega, light_frame=bool(entry.get("light_frame", False)),
                drift=_drift_inputs(ctx, entry.get("drift"), where + ".drift", fpx), sdc=sdc,
                fx=fx, fx_elf=elf, fpx_ratio_from_elf=has_fpx and "story_force_ratio" not in entry["fpx"],
                rho=_rho(ctx, entry.get("rho", 1.0), where + ".rho"),
                line_weight_axes=tuple(line_axes) if any(a != ("x", "y") for a in line_axes) else (),
                edge_weights=tuple(weights.edges))


def _footprint(ctx: Context, raw: object, where: str) -> tuple[float, float] | None:
    """Sides (m) of the rectangle a point weight acts over: a number (a square) or
    [along x, along y] in the plan's length unit; default :data:`DEFAULT_FOOTPRINT`."""
    if raw is None:
        return DEFAULT_FOOTPRINT, DEFAULT_FOOTPRINT
    sides = [raw, raw] if isinstance(raw, (int, float)) else list(raw)
    if len(sides) != 2 or not all(isinstance(v, (int, float)) and math.isfinite(v) and v > 0 for v in sides):
        ctx.problem(where, f"must be a positive side length in {ctx.unit} (a square) or [side along x, side along y], got {raw}")
        return None
    return float(sides[0]) * ctx.scale, float(sides[1]) * ctx.scale


def _elf(ctx: Context, raw: dict, where: str) -> ElfDistribution | None:
    """``fx = { base_shear, heights, weights, level, period | k }``: the story force Fx of
    the diaphragm's level from the ELF vertical distribution, ASCE 7-16 §12.8.3."""
    example = ('e.g. fx = { base_shear = "180 kip", heights = ["12 ft", "24 ft"], weights = ["900 kip", '
               '"600 kip"], level = 2, period = 0.4 }')
    known = {"base_shear", "heights", "weights", "level", "period", "k"}
    unknown = sorted(set(raw) - known)
    missing = sorted({"base_shear", "heights", "weights", "level"} - set(raw))
    if unknown or missing or ("period" in raw) == ("k" in raw):
        ctx.problem(where, ("unknown key " + ", ".join(unknown) + "; " if unknown else "")
                    + ("missing " + ", ".join(missing) + "; " if missing else "")
                    + "give base_shear, heights and weights of every level (bottom first, heights above the "
                    "base), level (this diaphragm's, 1 = lowest) and either period (T in s) or k; " + example)
        return None
    if not isinstance(raw["heights"], list) or not isinstance(raw["weights"], list):
        ctx.problem(where, "heights and weights must be lists, one entry per level; " + example)
        return None
    V = ctx.quantity(raw["base_shear"], FORCE, where + ".base_shear")
    heights = [ctx.quantity(h, LENGTH, f"{where}.heights #{i + 1}") for i, h in enumerate(raw["heights"])]
    weights = [ctx.quantity(w, FORCE, f"{where}.weights #{i + 1}") for i, w in enumerate(raw["weights"])]
    if V is None or None in heights or None in weights:
        return None
    if not heights or len(heights) != len(weights):
        ctx.problem(where, f"heights ({len(heights)}) and weights ({len(weights)}) must list the same levels, "
                           "bottom first; " + example)
        return None
    if any(b <= a for a, b in zip([0.0] + heights[:-1], heights, strict=True)):
        ctx.problem(where + ".heights", "must be above the base and increase from the lowest level up")
        return None
    for key in ("period", "k"):
        if key in raw and (isinstance(raw[key], bool) or not isinstance(raw[key], (int, float))):
            ctx.problem(f"{where}.{key}", f"must be a number ({'seconds' if key == 'period' else 'from 1 to 2'}), "
                                          f"got {raw[key]!r}")
            return None
    level = raw["level"]
    if isinstance(level, bool) or not isinstance(level, int) or not 1 <= level <= len(heights):
        ctx.problem(where + ".level", f"must be the diaphragm's level number, 1 (lowest) to {len(heights)}, got {level!r}")
        return None
    if "k" in raw:
        k = ctx.number(float(raw["k"]), where + ".k", positive=True)
        if k is not None and not 1.0 <= k <= 2.0:
            ctx.problem(where + ".k", f"ASCE 7-16 §12.8.3 gives k from 1 to 2; got {k:g}")
            return None
        period = None
    else:
        k, period = None, ctx.number(float(raw["period"]), where + ".period", positive=True, allow_zero=False)
        if period is None:
            return None
    if "k" in raw and k is None:
        return None
    return elf_distribution_12_8_3(V, heights, weights, level - 1, period=period, k=k)


def _perimeter_weights(ctx: Context, raw: dict | list, where: str, region: Polygon) -> list[tuple]:
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
        q = ctx.quantity(entry["weight"], LINE_LOAD, here + ".weight", positive=False)
        faces = entry.get("faces", "all")
        faces = list(FACE_NORMALS) if faces == "all" else [faces] if isinstance(faces, str) else list(faces)
        bad = [f for f in faces if f not in FACE_NORMALS]
        if bad or len(set(faces)) != len(faces):
            ctx.problem(here + ".faces", f'must be "all" or a list of some of "+x", "-x", "+y", "-y" (the '
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


def _drift_inputs(ctx: Context, raw: dict | None, where: str, fpx) -> tuple[float, float, float, float] | None:
    """(Cd, Ie, story height m, allowable drift ratio) for ASCE 7-16 §12.8.6 / Table 12.12-1;
    Ie defaults to the one of fpx, else 1.0."""
    if raw is None:
        return None
    Cd = ctx.number(float(raw["Cd"]), where + ".Cd", positive=True, allow_zero=False)
    Ie = ctx.number(float(raw.get("Ie", fpx[1] if fpx else 1.0)), where + ".Ie", positive=True, allow_zero=False)
    height = ctx.quantity(raw["story_height"], LENGTH, where + ".story_height")
    allowable = ctx.number(float(raw["allowable"]), where + ".allowable", positive=True, allow_zero=False)
    if allowable is not None and allowable >= 0.1:
        ctx.problem(where + ".allowable", f"is the allowable story drift ratio Δa/hsx of ASCE 7-16 Table 12.12-1 "
                    f"(e.g. 0.025), got {allowable}")
        return None
    if None in (Cd, Ie, height, allowable):
        return None
    return Cd, Ie, height, allowable


def _rho(ctx: Context, value: float, where: str) -> float:
    """The redundancy factor: 1.0 or 1.3 in ASCE 7-16 §12.3.4 (other values are refused)."""
    if value not in (1.0, 1.3):
        ctx.problem(where, f"the redundancy factor ρ is 1.0 or 1.3 (ASCE 7-16 §12.3.4), got {value}")
        return 1.0
    return float(value)


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
