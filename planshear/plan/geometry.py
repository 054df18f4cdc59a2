"""Reads the plan file's geometry: ``[diaphragm] outline`` and ``openings`` (the region
the diaphragm covers), ``[[diaphragm.zone]]`` (parts with their own material), ``[grid]``
(named lines), ``[[transfer]]`` (transfer regions between two grid lines), and locates
the ``line``/``from``/``to`` of walls, members and line weights on a grid line.
"""

from __future__ import annotations

import difflib
import math

import numpy as np
import shapely
from shapely.geometry import LineString, Polygon

from .context import MAX_COORDINATE, Context
from .materials import material
from .model import GridLine, Transfer, Zone


def plan_size(outline: Polygon) -> float:
    """The outline's larger side (m): the scale of tolerances and of the default mesh size."""
    return max(np.ptp(np.asarray(outline.exterior.coords), axis=0))


def outline(ctx: Context, raw: list) -> Polygon:
    """``[diaphragm] outline``; stops reading (raises) when it is not a usable polygon."""
    polygon = ctx.polygon(raw, "diaphragm.outline")
    if polygon is None:
        ctx.fail()
    return polygon


def openings(ctx: Context, raw: list, outline: Polygon) -> tuple[list[Polygon], Polygon]:
    """``[diaphragm] openings`` and the region (outline less openings). Each opening must lie
    strictly inside the outline and apart from the others; stops reading (raises) when the
    openings cut the diaphragm into pieces."""
    found: list[Polygon] = []
    for i, ring in enumerate(raw):
        where = f"diaphragm.openings #{i + 1}"
        opening = ctx.polygon(ring, where)
        if opening is None:
            continue
        if not opening.within(outline) or opening.boundary.distance(outline.boundary) <= ctx.tol:
            ctx.problem(where, "is not strictly inside the outline; an opening that reaches the edge is a notch: draw it as part of the outline instead")
            continue
        for j, other in enumerate(found):
            if opening.distance(other) <= ctx.tol:
                ctx.problem(where, f"overlaps or touches opening #{j + 1}; merge them into one opening")
                break
        else:
            found.append(opening)
    region = outline
    for opening in found:
        region = region.difference(opening)
    if isinstance(region, shapely.MultiPolygon) or region.geom_type != "Polygon":
        pieces = len(getattr(region, "geoms", [region]))
        ctx.problem("diaphragm.openings", f"the openings split the diaphragm into {pieces} separate pieces; analyze each piece as its own plan")
        ctx.fail()
    return found, region


def zones(ctx: Context, raw: list, outline: Polygon, region: Polygon) -> list[Zone]:
    """``[[diaphragm.zone]]``: named polygons with their own material, within the outline,
    not overlapping each other and covering some diaphragm (``region``)."""
    size = plan_size(outline)
    found: list[Zone] = []
    for i, entry in enumerate(raw):
        zone_name = entry.get("name", f"zone {i + 1}")
        where = f'diaphragm.zone "{zone_name}"'
        polygon = ctx.polygon(entry["polygon"], where + ".polygon")
        zone_material = material(ctx, entry["material"], where + ".material")
        if any(z.name == zone_name for z in found):
            ctx.problem(where, "duplicate zone name; give each zone its own name")
            continue
        if polygon is None or zone_material is None:
            continue
        outside = polygon.difference(outline).area
        if outside > ctx.tol * size:
            ctx.problem(where, f"lies partly outside the outline ({outside / ctx.scale**2:.4g} {ctx.unit}² outside); keep zones within the diaphragm")
            continue
        overlapping = [z.name for z in found if z.polygon.intersection(polygon).area > ctx.tol * size]
        if overlapping:
            ctx.problem(where, f'overlaps zone "{overlapping[0]}"; zones must not overlap')
            continue
        zone_region = polygon.intersection(region)
        if zone_region.area <= ctx.tol * size:
            ctx.problem(where, "lies entirely inside an opening, so it covers no diaphragm; move or remove it")
            continue
        found.append(Zone(zone_name, polygon, zone_region, zone_material))
    return found


def grid(ctx: Context, raw: dict, outline: Polygon) -> list[GridLine]:
    """``[grid]``: lines of ``x`` (parallel to y), of ``y`` (parallel to x) and skewed
    ``[[grid.line]]``, each with its extent over the outline."""
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
        ctx.problem("grid", "has no grid lines; add [grid] x = {...} and y = {...}")
    for line_name, family, value in specs:
        where = f'grid line "{line_name}"'
        if line_name in seen:
            ctx.problem(where, "the name is used twice; every grid line needs its own name")
            continue
        seen.add(line_name)
        if family == "skew":
            start = ctx.points(value["start"], where + ".start")
            end = ctx.points(value["end"], where + ".end")
            if start is None or end is None:
                continue
            length = float(np.hypot(*(end - start)))
            if length <= ctx.tol:
                ctx.problem(where, "start and end are the same point; give two different points")
                continue
            origin, direction, t_lo, t_hi = start, (end - start) / length, 0.0, length
        else:
            if not math.isfinite(value) or abs(value) > MAX_COORDINATE:
                ctx.problem(where, f"position must be a finite number within ±{MAX_COORDINATE:g}, got {value}")
                continue
            c = value * ctx.scale
            twin = next((g for g in lines if g.family == family and abs(g.origin[0 if family == "x" else 1] - c) <= ctx.tol), None)
            if twin is not None:
                ctx.problem(where, f'lies on grid line "{twin.name}" (both at {family} = {value:g}); give each position one name')
                continue
            if family == "x":
                origin, direction, t_lo, t_hi = np.array([c, 0.0]), np.array([0.0, 1.0]), miny - pad, maxy + pad
            else:
                origin, direction, t_lo, t_hi = np.array([0.0, c]), np.array([1.0, 0.0]), minx - pad, maxx + pad
        probe = LineString([origin + t_lo * direction, origin + t_hi * direction])
        hit = probe.intersection(outline)
        if hit.is_empty or hit.length <= ctx.tol:
            ctx.problem(where, "does not cross the diaphragm outline; check its position or remove it")
            continue
        coords = np.asarray([c for g in getattr(hit, "geoms", [hit]) for c in g.coords])
        ts = (coords - origin) @ direction
        lines.append(GridLine(line_name, family, origin, direction, float(ts.min()), float(ts.max())))
    return lines


def line_segment(ctx: Context, entry: dict, where: str, lines: dict[str, GridLine],
                 need_extent: bool = True) -> tuple[GridLine, float, float] | None:
    """The grid line ``entry["line"]`` names and the positions t0 <= t1 (m) of ``from``/``to``
    along it (the line's extent over the outline when both are absent and not
    ``need_extent``), or None (problem recorded)."""
    line_name = entry["line"]
    if line_name not in lines:
        names = ", ".join(lines) or "none"
        close = difflib.get_close_matches(line_name, list(lines), n=1)
        hint = f' (did you mean "{close[0]}"?)' if close else ""
        ctx.problem(where, f'line "{line_name}" is not a grid line (grid lines: {names}){hint}')
        return None
    line = lines[line_name]
    if "from" in entry or "to" in entry or need_extent:
        if "from" not in entry or "to" not in entry:
            ctx.problem(where, 'give both "from" and "to" along the line')
            return None
        t0 = ctx.number(entry["from"], where + ".from")
        t1 = ctx.number(entry["to"], where + ".to")
        if t0 is None or t1 is None:
            return None
        t0, t1 = t0 * ctx.scale, t1 * ctx.scale
        if t1 < t0:
            t0, t1 = t1, t0
        if t1 - t0 <= ctx.tol:
            ctx.problem(where, f'has zero length (from = to = {entry["from"]}); give the two ends of the segment')
            return None
        if t0 < line.t_min - ctx.tol or t1 > line.t_max + ctx.tol:
            lo, hi = line.t_min / ctx.scale, line.t_max / ctx.scale
            ctx.problem(where, f'runs from {t0 / ctx.scale:g} to {t1 / ctx.scale:g} but line "{line_name}" crosses the diaphragm only from {lo:g} to {hi:g} {ctx.unit}; keep from/to within that range')
            return None
    else:
        t0, t1 = line.t_min, line.t_max
    return line, t0, t1


def transfers(ctx: Context, raw: list, lines: dict[str, GridLine]) -> list[Transfer]:
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
                ctx.problem(where + "." + key, f'"{line_name}" is not a grid line (grid lines: {", ".join(lines)}){hint}')
                continue
            ends.append(lines[line_name])
        if len(ends) != 2:
            continue
        at, to = ends
        if at.family == "skew" or to.family != at.family:
            ctx.problem(where, f'"at" and "to" must both be lines of grid.x or both of grid.y (parallel to the load '
                               f'they serve); "{at.name}" and "{to.name}" are not')
            continue
        k = 0 if at.family == "x" else 1
        if abs(at.origin[k] - to.origin[k]) <= ctx.tol:
            ctx.problem(where, '"at" and "to" are the same position; "to" is the grid line that closes the '
                               "transfer region on the full-depth side")
            continue
        if any(t.name == name for t in found):
            ctx.problem(where, "the name is used twice; give every transfer region its own name")
            continue
        if any(t.at == at.name and (to.origin[k] - at.origin[k]) * (lines[t.to].origin[k] - at.origin[k]) > 0
               for t in found):
            ctx.problem(where, f'a transfer region from line "{at.name}" on that side is already given; keep one')
            continue
        found.append(Transfer(name, at.name, to.name))
    return found
