"""Plan drawing (DXF) → plan file (TOML): ``planshear import``.

Reads a plan drawing with ezdxf and writes a complete plan file whose geometry comes from
the drawing and whose every other value (materials, wall stiffness, loads) is a
``FILL-IN:`` placeholder that ``planshear check`` refuses, naming each one. Which layer
holds what is given per role (:data:`DEFAULT_LAYERS`, overridden by ``--layer
ROLE=LAYER``):

- ``outline``: exactly one closed polyline (LWPOLYLINE or POLYLINE);
- ``opening`` and ``zone``: closed polylines;
- ``wall``: LINEs and polylines (open or closed); every straight segment is a wall; a
  TEXT or MTEXT on the wall layer nearest to a wall's midpoint names it (else W1, W2, …);
- ``grid``: LINEs or polylines, each straight segment a grid line, named by the TEXT or
  MTEXT on the grid layer nearest to one of its ends; without a grid layer (or for walls on
  no drawn grid line) lines are generated through the walls: 1, 2, … across x, A, B, …
  across y, S1, S2, … for skewed walls.

Nothing is guessed: arcs (and polyline segments with a bulge), circles, splines,
ellipses, blocks (INSERT), hatches, open outlines, open openings or zones and everything on
other layers are skipped and reported, on the terminal and at the top of the written file.

This module sits beside the CLI, above the pipeline: it produces a plan file and never
calls the analysis. ezdxf is imported only when a drawing is read.
"""

from __future__ import annotations

import json
import math
import os
import tempfile
from collections import Counter
from dataclasses import dataclass
from pathlib import Path

import numpy as np
from shapely.geometry import LineString, Polygon

from .errors import PlanError
from .schema import PLACEHOLDER

__all__ = ["ROLES", "DEFAULT_LAYERS", "DRAWING_UNITS", "Drawing", "read_drawing", "plan_text", "import_drawing"]

ROLES = ("outline", "opening", "zone", "wall", "grid")
#: Layer names looked for when no ``--layer`` is given (our own names; case-insensitive, as
#: DXF layer names are).
DEFAULT_LAYERS = {"outline": "PS-OUTLINE", "opening": "PS-OPENING", "zone": "PS-ZONE", "wall": "PS-WALL",
                  "grid": "PS-GRID"}
#: Drawing units accepted with ``--units`` → (plan length_unit, plan units per drawing unit).
DRAWING_UNITS = {"in": ("ft", 1.0 / 12.0), "ft": ("ft", 1.0), "mm": ("m", 1e-3), "cm": ("m", 1e-2), "m": ("m", 1.0)}
#: DXF header $INSUNITS codes (DXF reference, HEADER section) for the units above.
INSUNITS = {1: "in", 2: "ft", 4: "mm", 5: "cm", 6: "m"}
#: Entity types read on a role's layer; anything else there is skipped and reported.
LINEAR = ("LINE", "LWPOLYLINE", "POLYLINE")
TEXTS = ("TEXT", "MTEXT")
#: A segment is taken as parallel to x or y when its other coordinate changes by no more
#: than this fraction of the plan size (drafting round-off, not a skew).
AXIS_TOLERANCE = 1e-6
#: Largest distance of a label text from a wall's midpoint or a grid line's end, as a
#: fraction of the plan's larger dimension.
LABEL_REACH = 0.08


@dataclass(frozen=True)
class Segment:
    """A straight piece of a wall or grid line, in plan units."""

    start: tuple[float, float]
    end: tuple[float, float]


@dataclass(frozen=True)
class GridSpec:
    """A grid line of the plan file: ``family`` "x" (parallel to y, at ``value``), "y"
    (parallel to x) or "skew" (through ``start`` and ``end``)."""

    name: str
    family: str
    value: float = 0.0
    start: tuple[float, float] = (0.0, 0.0)
    end: tuple[float, float] = (0.0, 0.0)
    generated: bool = False


@dataclass(frozen=True)
class WallSpec:
    """A wall of the plan file: on grid line ``line`` from ``t_from`` to ``t_to``."""

    id: str
    line: str
    t_from: float
    t_to: float
    start: tuple[float, float]
    end: tuple[float, float]


@dataclass(frozen=True)
class Drawing:
    """What was read from a drawing, in the plan's length unit."""

    source: str
    length_unit: str  # "ft" or "m"
    units_note: str  # where the units came from
    outline: tuple[tuple[float, float], ...]
    openings: tuple[tuple[tuple[float, float], ...], ...]
    zones: tuple[tuple[str, tuple[tuple[float, float], ...]], ...]
    grid: tuple[GridSpec, ...]
    walls: tuple[WallSpec, ...]
    layers: dict[str, str]  # role → layer name used
    skipped: tuple[str, ...]  # what was not read, one sentence each
    notes: tuple[str, ...]  # what was generated or decided, one sentence each


# --------------------------------------------------------------------------------------
# Reading
# --------------------------------------------------------------------------------------


def parse_layer_options(options: list[str] | None, label: str = "--layer") -> dict[str, str]:
    """``ROLE=LAYER`` strings → role → layer (defaults for roles not given)."""
    layers = dict(DEFAULT_LAYERS)
    problems = []
    for option in options or ():
        role, sep, layer = option.partition("=")
        role = role.strip().lower()
        if not sep or not layer.strip():
            problems.append(f'{label} "{option}": write ROLE=LAYER, e.g. --layer wall=A-WALL')
        elif role not in ROLES:
            problems.append(f'{label} "{option}": unknown role "{role}"; the roles are {", ".join(ROLES)}')
        else:
            layers[role] = layer.strip()
    if problems:
        raise PlanError(problems)
    return layers


def _units(doc, label: str, units: str | None) -> tuple[str, float, str]:
    """(plan length_unit, plan units per drawing unit, where the units came from)."""
    if units is not None:
        if units not in DRAWING_UNITS:
            raise PlanError([f'{label}: --units "{units}" is not supported; use one of {", ".join(DRAWING_UNITS)}'])
        unit, factor = DRAWING_UNITS[units]
        return unit, factor, f"drawing units {units} (--units)"
    code = int(doc.header.get("$INSUNITS", 0) or 0)
    if code not in INSUNITS:
        raise PlanError([f"{label}: the drawing does not state its units in a way planshear reads ($INSUNITS = {code}"
                         f"{', unitless' if code == 0 else ''}); give them with --units "
                         f"({', '.join(DRAWING_UNITS)}), the unit one drawing unit stands for"])
    name = INSUNITS[code]
    unit, factor = DRAWING_UNITS[name]
    return unit, factor, f"drawing units {name} ($INSUNITS = {code} in the drawing header)"


def _vertices(entity) -> tuple[list[tuple[float, float]], list[float], bool]:
    """(x, y) vertices in world coordinates, bulge per vertex and closed flag of a LINE,
    LWPOLYLINE or POLYLINE."""
    kind = entity.dxftype()
    if kind == "LINE":
        a, b = entity.dxf.start, entity.dxf.end
        return [(a.x, a.y), (b.x, b.y)], [0.0, 0.0], False
    if kind == "LWPOLYLINE":
        points = [(v.x, v.y) for v in entity.vertices_in_wcs()]
        bulges = [float(b) for *_, b in entity.get_points("xyb")]
        return points, bulges, bool(entity.closed)
    points = [(v.x, v.y) for v in entity.points_in_wcs()]
    bulges = [float(v.dxf.get("bulge", 0.0)) for v in entity.vertices]
    return points, bulges, bool(entity.is_closed)


def _ring(points: list[tuple[float, float]], closed: bool, tol: float) -> list[tuple[float, float]] | None:
    """Corners of a closed polyline (the repeated last point dropped); None when open. A
    polyline whose last point is its first (within ``tol``) is closed too."""
    if len(points) > 2 and math.dist(points[0], points[-1]) <= tol:
        return points[:-1]
    return points if closed and len(points) >= 3 else None


def _text_of(entity) -> tuple[str, tuple[float, float]]:
    """Text and anchor point of a TEXT or MTEXT."""
    if entity.dxftype() == "MTEXT":
        text, at = entity.plain_text(), entity.dxf.insert
    else:
        text = entity.plain_text() if hasattr(entity, "plain_text") else entity.dxf.text
        aligned = entity.dxf.get("halign", 0) or entity.dxf.get("valign", 0)
        at = entity.dxf.align_point if aligned and entity.dxf.hasattr("align_point") else entity.dxf.insert
    return " ".join(text.split()), (float(at.x), float(at.y))


def read_drawing(path: str | Path, layers: dict[str, str] | None = None, units: str | None = None) -> Drawing:
    """Read a plan drawing. Raises :class:`PlanError` for a drawing that cannot give a plan
    (unreadable, units unknown, no or several closed outlines), naming the file, the layer
    and the fix."""
    import ezdxf  # lazily: only the import command needs it

    path = Path(path)
    label = path.name
    layers = dict(DEFAULT_LAYERS) if layers is None else layers
    try:
        doc = ezdxf.readfile(str(path))
    except FileNotFoundError:
        raise PlanError([f"{path}: file not found; check the path"]) from None
    except IsADirectoryError:
        raise PlanError([f"{path}: is a folder; give the drawing (.dxf) itself"]) from None
    except (OSError, ezdxf.DXFError) as exc:
        raise PlanError([f"{label}: is not a DXF drawing ezdxf can read ({exc}); save it from CAD as DXF"]) from None
    length_unit, factor, units_note = _units(doc, label, units)
    drawing_unit = length_unit
    role_of = {}
    for role, layer in layers.items():
        role_of.setdefault(layer.upper(), role)

    by_role: dict[str, list] = {role: [] for role in ROLES}
    texts: dict[str, list[tuple[str, tuple[float, float]]]] = {"wall": [], "grid": []}
    skipped_by_kind: Counter = Counter()
    unknown_layers: Counter = Counter()
    for entity in doc.modelspace():
        layer = entity.dxf.get("layer", "0")
        role = role_of.get(layer.upper())
        kind = entity.dxftype()
        if role is None:
            unknown_layers[layer] += 1
        elif kind in LINEAR and not (kind == "POLYLINE" and (entity.is_poly_face_mesh or entity.is_polygon_mesh)):
            by_role[role].append(entity)
        elif kind in TEXTS and role in texts:
            text, at = _text_of(entity)
            if text:
                texts[role].append((text, (at[0] * factor, at[1] * factor)))
        else:
            skipped_by_kind[(kind, layer)] += 1

    skipped: list[str] = []
    notes: list[str] = []
    for (kind, layer), count in sorted(skipped_by_kind.items()):
        what = {"INSERT": "block reference(s) (INSERT): explode the block in CAD to import its contents",
                "ARC": "arc(s): planshear's plan has straight edges only; draw the arc as straight segments",
                "SPLINE": "spline(s): draw as straight segments", "CIRCLE": "circle(s): draw as a polygon",
                "ELLIPSE": "ellipse(s): draw as a polygon"}.get(kind, f"{kind} entit(ies), not read on this layer")
        skipped.append(f'layer "{layer}": {count} {what}')

    def polylines(role: str) -> tuple[list[tuple[list, object]], list]:
        """Closed rings (plan units) and the open polylines of a role's layer."""
        closed, open_ = [], []
        for entity in by_role[role]:
            points, bulges, is_closed = _vertices(entity)
            points = [(x * factor, y * factor) for x, y in points]
            if any(abs(b) > 1e-12 for b in bulges[: len(points) if is_closed else len(points) - 1]):
                skipped.append(f'layer "{layers[role]}": a {entity.dxftype()} with arc segments (bulges), handle '
                               f"{entity.dxf.handle}: draw its arcs as straight segments")
                continue
            ring = _ring(points, is_closed, 1e-9 * max(1.0, *(abs(c) for p in points for c in p)))
            (closed if ring is not None else open_).append((ring if ring is not None else points, entity))
        return closed, open_

    outlines, open_outlines = polylines("outline")
    for _, entity in open_outlines:
        skipped.append(f'layer "{layers["outline"]}": an open {entity.dxftype()} (handle {entity.dxf.handle}) is not '
                       "an outline; close it in CAD")
    used_layers = Counter(e.dxf.get("layer", "0") for e in doc.modelspace())
    layer_names = [f"{name} ({count})" for name, count in sorted(used_layers.items())] or ["none: it is empty"]
    if not outlines:
        why = (f"only open polylines ({len(open_outlines)}); close the outline polyline in CAD" if open_outlines
               else f"no closed polyline; the drawing's layers with entities (count) are {', '.join(layer_names)}: "
                    "draw the outline as a closed polyline on that layer or name its layer with --layer outline=LAYER")
        raise PlanError([f'{label}: layer "{layers["outline"]}" (outline) has {why}'])
    if len(outlines) > 1:
        handles = ", ".join(e.dxf.handle for _, e in outlines)
        raise PlanError([f'{label}: layer "{layers["outline"]}" (outline) has {len(outlines)} closed polylines '
                         f"(handles {handles}); a plan has exactly one outline: keep one on that layer (one "
                         "diaphragm per plan file; draw openings on the opening layer)"])
    outline = outlines[0][0]
    xy = np.asarray(outline)
    size = float(np.ptp(xy, axis=0).max())
    tol = AXIS_TOLERANCE * size

    openings = []
    found, open_ = polylines("opening")
    openings = [ring for ring, _ in found]
    zone_rings, open_zones = polylines("zone")
    for role, items in (("opening", open_), ("zone", open_zones)):
        for _, entity in items:
            skipped.append(f'layer "{layers[role]}": an open {entity.dxftype()} (handle {entity.dxf.handle}) is not '
                           f"{'an' if role == 'opening' else 'a'} {role}; close it in CAD")
    zones = tuple((f"zone {i + 1}", tuple(ring)) for i, (ring, _) in enumerate(zone_rings))
    if zones:
        notes.append(f"zones named zone 1 … zone {len(zones)} in drawing order; rename them as you like")

    wall_segments, wall_skipped = _segments(by_role["wall"], factor)
    grid_segments, grid_skipped = _segments(by_role["grid"], factor)
    skipped += [f'layer "{layers["wall"]}": {s}' for s in wall_skipped]
    skipped += [f'layer "{layers["grid"]}": {s}' for s in grid_skipped]
    if not wall_segments:
        notes.append(f'no walls on layer "{layers["wall"]}": add [[wall]] entries by hand')
    region = Polygon(outline)
    crossing = [w for w in wall_segments if _chord(w, _family(w, tol), region, tol) is not None]
    for w in wall_segments:
        if w not in crossing:
            skipped.append(f'layer "{layers["wall"]}": the wall from ({_n(w.start[0])}, {_n(w.start[1])}) to '
                           f"({_n(w.end[0])}, {_n(w.end[1])}) {drawing_unit} lies on a line that misses the outline")
    wall_segments = crossing
    grid, grid_notes, grid_skipped = _grid_lines(grid_segments, texts["grid"], wall_segments, tol, size, region)
    notes += grid_notes
    skipped += [f'layer "{layers["grid"]}": {s}' for s in grid_skipped]
    walls, wall_notes = _walls(wall_segments, texts["wall"], grid, tol, size)
    notes += wall_notes
    for layer, count in sorted(unknown_layers.items()):
        skipped.append(f'layer "{layer}": {count} entit{"y" if count == 1 else "ies"} on a layer with no role '
                       f"(roles: {', '.join(f'{r}={n}' for r, n in layers.items())}; --layer ROLE=LAYER to use it)")
    return Drawing(label, length_unit, units_note, tuple(outline), tuple(tuple(o) for o in openings), zones,
                   tuple(grid), tuple(walls), dict(layers), tuple(skipped), tuple(notes))


def _segments(entities, factor: float) -> tuple[list[Segment], list[str]]:
    """Every straight segment of LINEs and polylines (plan units); bulged ones skipped."""
    segments, skipped = [], []
    for entity in entities:
        points, bulges, closed = _vertices(entity)
        points = [(x * factor, y * factor) for x, y in points]
        pairs = list(zip(points[:-1], points[1:], bulges[:-1], strict=True))
        if closed and len(points) > 2:
            pairs.append((points[-1], points[0], bulges[-1]))
        for a, b, bulge in pairs:
            if abs(bulge) > 1e-12:
                skipped.append(f"an arc segment of {entity.dxftype()} handle {entity.dxf.handle}: draw it straight")
            elif math.dist(a, b) > 0:
                segments.append(Segment(a, b))
    return segments, skipped


def _family(segment: Segment, tol: float) -> str:
    (x0, y0), (x1, y1) = segment.start, segment.end
    if abs(x1 - x0) <= tol:
        return "x"  # a line of grid.x runs parallel to y
    if abs(y1 - y0) <= tol:
        return "y"
    return "skew"


def _nearest_labels(anchors: list[list[tuple[float, float]]], texts, reach: float) -> list[str | None]:
    """For each item (a list of anchor points), the text nearest to one of its anchors,
    within ``reach``; each text names at most one item (the one it is nearest to)."""
    names: list[str | None] = [None] * len(anchors)
    best: dict[int, tuple[float, str]] = {}
    for text, at in texts:
        distances = [min(math.dist(at, p) for p in points) for points in anchors]
        if not distances:
            break
        i = int(np.argmin(distances))
        if distances[i] <= reach and (i not in best or distances[i] < best[i][0]):
            best[i] = (distances[i], text)
    for i, (_, text) in best.items():
        names[i] = text
    return names


def _letters(n: int) -> str:
    """0 → A, 25 → Z, 26 → AA, …"""
    name = ""
    n += 1
    while n:
        n, r = divmod(n - 1, 26)
        name = chr(65 + r) + name
    return name


def _line_key(segment: Segment, family: str) -> tuple:
    """What makes two segments the same grid line: x, y or (angle, offset) for a skew."""
    (x0, y0), (x1, y1) = segment.start, segment.end
    if family == "x":
        return (0.5 * (x0 + x1),)
    if family == "y":
        return (0.5 * (y0 + y1),)
    angle = math.atan2(y1 - y0, x1 - x0) % math.pi
    d = np.array([math.cos(angle), math.sin(angle)])
    return angle, float(-d[1] * x0 + d[0] * y0)


def _same_line(key_a: tuple, key_b: tuple, tol: float, size: float) -> bool:
    if len(key_a) != len(key_b):
        return False
    if len(key_a) == 1:
        return abs(key_a[0] - key_b[0]) <= tol
    return abs(key_a[0] - key_b[0]) <= tol / size and abs(key_a[1] - key_b[1]) <= tol


def _chord(segment: Segment, family: str, region: Polygon, tol: float) -> Segment | None:
    """The part of the (infinite) line through ``segment`` inside the outline, from its
    lowest to its highest point along the segment's direction; None when it misses it."""
    a, b = np.asarray(segment.start), np.asarray(segment.end)
    if family == "skew":
        angle = math.atan2(*(b - a)[::-1]) % math.pi
        d = np.array([math.cos(angle), math.sin(angle)])
    else:
        d = np.array([0.0, 1.0]) if family == "x" else np.array([1.0, 0.0])
    minx, miny, maxx, maxy = region.bounds
    reach = 2.0 * (maxx - minx + maxy - miny) + float(np.abs(a).max())
    hit = LineString([a - reach * d, a + reach * d]).intersection(region)
    pieces = [g for g in getattr(hit, "geoms", [hit]) if not g.is_empty and g.length > 0]
    coords = np.asarray([c for g in pieces for c in g.coords]).reshape(-1, 2)
    # A line along an outline edge can come back shortened or empty from GEOS (round-off on
    # the boundary): outline corners on the line count too.
    corners = np.asarray(region.exterior.coords)
    on_line = np.abs((corners - a) @ np.array([-d[1], d[0]])) <= tol
    t = (np.vstack([coords, corners[on_line]]) - a) @ d
    if len(t) < 2 or t.max() - t.min() <= tol:
        return None
    return Segment(tuple(float(c) for c in a + t.min() * d), tuple(float(c) for c in a + t.max() * d))


def _grid_lines(segments: list[Segment], texts, walls: list[Segment], tol: float, size: float, region: Polygon):
    """Grid lines from the grid layer (named by nearby text, else generated) plus generated
    lines through walls that lie on no drawn line. Returns (grid, notes, skipped)."""
    notes: list[str] = []
    skipped: list[str] = []
    lines: list[tuple[str, tuple, Segment]] = []  # (family, key, the line's chord through the outline)
    drawn_ends: list[list[tuple[float, float]]] = []
    for segment in segments:
        family = _family(segment, tol)
        key = _line_key(segment, family)
        chord = _chord(segment, family, region, tol)
        if chord is None:
            skipped.append(f"the grid line from ({_n(segment.start[0])}, {_n(segment.start[1])}) to "
                           f"({_n(segment.end[0])}, {_n(segment.end[1])}) misses the outline")
        elif not any(f == family and _same_line(k, key, tol, size) for f, k, _ in lines):
            lines.append((family, key, chord))
            drawn_ends.append([segment.start, segment.end])  # labels sit at the drawn ends
    labels = _nearest_labels(drawn_ends, texts, LABEL_REACH * size)
    used: set[str] = set()
    grid: list[GridSpec] = []
    unnamed = []
    for (family, key, segment), label in zip(lines, labels, strict=True):
        if label is not None and label not in used:
            used.add(label)
            grid.append(_spec(label, family, key, segment, generated=False))
        else:
            unnamed.append((family, key, segment))
    drawn = len(lines)
    # Walls on no drawn line get a line of their own (collinear walls share one).
    for wall in walls:
        family = _family(wall, tol)
        key = _line_key(wall, family)
        if not any(f == family and _same_line(k, key, tol, size) for f, k, _ in lines):
            chord = _chord(wall, family, region, tol)
            lines.append((family, key, chord))
            unnamed.append((family, key, chord))
    counters = {"x": 0, "y": 0, "skew": 0}
    for family, key, segment in sorted(unnamed, key=lambda item: (item[0], item[1])):
        while True:
            counters[family] += 1
            n = counters[family]
            name = {"x": str(n), "y": _letters(n - 1), "skew": f"S{n}"}[family]
            if name not in used:
                break
        used.add(name)
        grid.append(_spec(name, family, key, segment, generated=True))
    generated = [g.name for g in grid if g.generated]
    if drawn == 0 and generated:
        notes.append("no grid lines drawn: grid lines generated through the walls (" + ", ".join(generated) + ")")
    elif generated:
        notes.append("grid lines without a label, or through walls on no drawn grid line, named "
                     + ", ".join(generated))
    order = {"x": 0, "y": 1, "skew": 2}
    grid.sort(key=lambda g: (order[g.family], g.value if g.family != "skew" else 0.0))
    return grid, notes, skipped


def _spec(name: str, family: str, key: tuple, segment: Segment, generated: bool) -> GridSpec:
    if family in ("x", "y"):
        return GridSpec(name, family, float(key[0]), generated=generated)
    return GridSpec(name, "skew", 0.0, segment.start, segment.end, generated=generated)


def _walls(segments: list[Segment], texts, grid: list[GridSpec], tol: float, size: float):
    """Walls on their grid lines, named by the wall-layer text nearest to their midpoint."""
    notes: list[str] = []
    mids = [[(0.5 * (s.start[0] + s.end[0]), 0.5 * (s.start[1] + s.end[1]))] for s in segments]
    labels = _nearest_labels(mids, texts, LABEL_REACH * size)
    used: set[str] = set(label for label in labels if label is not None)
    walls: list[WallSpec] = []
    counter = 0
    renamed = []
    seen: set[str] = set()
    for segment, label in zip(segments, labels, strict=True):
        if label is None or label in seen:
            if label is not None:
                renamed.append(label)
            while True:
                counter += 1
                label = f"W{counter}"
                if label not in used:
                    break
            used.add(label)
        seen.add(label)
        family = _family(segment, tol)
        key = _line_key(segment, family)
        line = next(g for g in grid if g.family == family and _same_line(_grid_key(g), key, tol, size))
        if family == "x":
            t0, t1 = segment.start[1], segment.end[1]
        elif family == "y":
            t0, t1 = segment.start[0], segment.end[0]
        else:
            origin, end = np.asarray(line.start), np.asarray(line.end)
            d = (end - origin) / np.linalg.norm(end - origin)
            t0, t1 = (float((np.asarray(p) - origin) @ d) for p in (segment.start, segment.end))
        a, b = (segment.start, segment.end) if t0 <= t1 else (segment.end, segment.start)
        walls.append(WallSpec(label, line.name, min(t0, t1), max(t0, t1), a, b))
    if renamed:
        notes.append(f"wall labels used twice ({', '.join(sorted(set(renamed)))}): the later walls got generated ids")
    unlabeled = [w.id for w, label in zip(walls, labels, strict=True) if label is None]
    if unlabeled:
        notes.append(f"walls without a label text nearby got generated ids: {', '.join(unlabeled)}")
    return walls, notes


def _grid_key(g: GridSpec) -> tuple:
    if g.family in ("x", "y"):
        return (g.value,)
    return _line_key(Segment(g.start, g.end), "skew")


# --------------------------------------------------------------------------------------
# Writing
# --------------------------------------------------------------------------------------


def _q(text: str) -> str:
    """A TOML basic string (JSON escapes are valid TOML)."""
    return json.dumps(text, ensure_ascii=False)


def _n(value: float) -> str:
    """A coordinate to 12 significant digits (beyond that it is drawing round-off)."""
    value = float(f"{float(value):.12g}") + 0.0
    return repr(int(value)) if value == int(value) and abs(value) < 1e15 else repr(value)


def _points(points) -> str:
    return "[" + ", ".join(f"[{_n(x)}, {_n(y)}]" for x, y in points) + "]"


def _fill(what: str) -> str:
    return _q(f"{PLACEHOLDER} {what}")


def plan_text(drawing: Drawing) -> str:
    """The plan file (TOML) for ``drawing``: geometry from the drawing, every other value a
    ``FILL-IN:`` placeholder, the skipped entities and notes as comments at the top."""
    ft = drawing.length_unit == "ft"
    ex = {"ga": "14 kip/in" if ft else "2.5 kN/mm", "ea": "40000 kip" if ft else "180 MN",
          "k": "55 kip/in" if ft else "10 kN/mm", "w": "20 psf" if ft else "1.0 kPa",
          "f": "120 kip" if ft else "500 kN"}
    out = [f"# Plan imported by planshear import from {drawing.source}",
           f"# Coordinates in {drawing.length_unit} ({drawing.units_note}).",
           "# Layers read: " + ", ".join(f"{role} = {layer}" for role, layer in drawing.layers.items()) + ".",
           "# Every value the drawing does not give is a FILL-IN placeholder: planshear check lists them all",
           "# and refuses the plan until each is replaced.",
           "#"]
    out.append("# Skipped (not read, nothing guessed):" if drawing.skipped else "# Skipped: nothing.")
    out += [f"#   - {s}" for s in drawing.skipped]
    if drawing.notes:
        out.append("# Notes:")
        out += [f"#   - {s}" for s in drawing.notes]
    name = Path(drawing.source).stem
    out += ["", "[plan]", f"name = {_q(name)}", f"length_unit = {_q(drawing.length_unit)}", "",
            "[diaphragm]", f"outline = {_points(drawing.outline)}"]
    if drawing.openings:
        out.append("openings = [" + ", ".join(_points(o) for o in drawing.openings) + "]")
    material = '{ kind = "wood-panel", Ga = "' + ex["ga"] + '" }'
    out += ["material = " + _fill(f"the diaphragm material as a table, e.g. {material} (kinds: wood-panel, "
                                  "steel-deck, concrete, custom; see the README)"),
            "chord_EA = " + _fill(f'axial stiffness EA of the chords along the outline, e.g. "{ex["ea"]}"')]
    for zone_name, ring in drawing.zones:
        out += ["", "[[diaphragm.zone]]", f"name = {_q(zone_name)}", f"polygon = {_points(ring)}",
                "material = " + _fill(f"the material of this zone as a table, e.g. {material}")]
    out += ["", "[grid]"]
    for family in ("x", "y"):
        entries = [g for g in drawing.grid if g.family == family]
        if entries:
            out.append(f"{family} = {{ " + ", ".join(f"{_q(g.name)} = {_n(g.value)}" for g in entries) + " }")
    if not drawing.grid:
        out.append("x = " + _fill('grid lines parallel to y by name and position, e.g. { "1" = 0, "2" = 90 }; '
                                  'add y = { ... } for lines parallel to x'))
    skews = [g for g in drawing.grid if g.family == "skew"]
    if skews:
        out.append("line = [" + ", ".join(
            f"{{ name = {_q(g.name)}, start = [{_n(g.start[0])}, {_n(g.start[1])}], end = [{_n(g.end[0])}, "
            f"{_n(g.end[1])}] }}" for g in skews) + "]")
    if drawing.walls:
        out += ["", "# One wall type for every wall: fill in its stiffness once, or give a wall its own",
                "# (stiffness, pier or wood on the wall overrides the type).",
                "[wall_type.typical]",
                "stiffness = " + _fill(f'the wall stiffness, e.g. "{ex["k"]}", or replace this line by pier = '
                                       "{ ... } or wood = { ... } (see the README)")]
    else:
        out += ["", "# No walls were read from the drawing: add one [[wall]] entry per wall.", "[[wall]]",
                'id = "W1"', "line = " + _fill("the name of the grid line the wall stands on"),
                "from = " + _fill("where the wall starts along its line (a number)"),
                "to = " + _fill("where the wall ends along its line (a number)"),
                "stiffness = " + _fill(f'the wall stiffness, e.g. "{ex["k"]}"')]
    for wall in drawing.walls:
        out += ["", "[[wall]]", f"id = {_q(wall.id)}", f"line = {_q(wall.line)}", f"from = {_n(wall.t_from)}",
                f"to = {_n(wall.t_to)}", 'type = "typical"']
    out += ["", "[[load]]", 'name = "E"', 'kind = "seismic"',
            "area_weight = " + _fill(f'seismic weight per unit area, e.g. "{ex["w"]}"'),
            "total = " + _fill(f'the diaphragm force, e.g. "{ex["f"]}", or replace this line by fpx = '
                               "{ SDS = 1.0, Ie = 1.0, story_force_ratio = 0.15 }"),
            'directions = ["x", "y"]', ""]
    return "\n".join(out)


@dataclass(frozen=True)
class ImportReport:
    """What ``planshear import`` did: the drawing read and the file written."""

    drawing: Drawing
    out: Path
    placeholders: int


def import_drawing(path: str | Path, out: str | Path, layers: dict[str, str] | None = None,
                   units: str | None = None, force: bool = False) -> ImportReport:
    """Read ``path`` and write the plan file ``out`` (completely or not at all; an
    existing file only with ``force``). The drawing is never written."""
    out = Path(out)
    if out.exists() and not force:
        raise PlanError([f"{out}: exists; give --force to replace it, or choose another --out"])
    if out.is_dir():
        raise PlanError([f"{out}: is a folder; give a file name for --out, e.g. {out / 'plan.toml'}"])
    drawing = read_drawing(path, layers, units)
    text = plan_text(drawing)
    folder = out.parent if str(out.parent) else Path(".")
    handle, temporary = tempfile.mkstemp(prefix=f".{out.name}.", suffix=".part", dir=folder)
    try:
        with os.fdopen(handle, "w", encoding="utf-8") as stream:
            stream.write(text)
        os.replace(temporary, out)
    except BaseException:
        Path(temporary).unlink(missing_ok=True)
        raise
    return ImportReport(drawing, out, text.count(PLACEHOLDER))
