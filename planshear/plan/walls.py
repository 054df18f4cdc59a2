"""Reads the plan file's walls and members: ``[wall_type.NAME]`` (merged into the walls
that name it, before the schema check), ``[[wall]]`` (segments of grid lines with their
stiffness: direct, concrete/masonry pier or wood shear wall), ``[[member]]`` (declared
chords and collectors) and ``[[splice]]`` (slip points in a chord or collector).
"""

from __future__ import annotations

import difflib

import numpy as np
from shapely.geometry import Point, Polygon

from ..stiffness import WallStiffness, direct_stiffness, pier_stiffness, wood_wall_stiffness
from ..units import FORCE, LENGTH, PRESSURE, STIFFNESS
from .context import Context
from .geometry import line_segment
from .model import GridLine, Member, Splice, Wall

MEMBER_ROLES = ("chord", "collector")


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


def walls(ctx: Context, raw: list, lines: dict[str, GridLine], region: Polygon) -> list[Wall]:
    """``[[wall]]`` entries (wall types already merged): unique ids, one stiffness form,
    on the diaphragm (``region``), not overlapping another wall on the same line."""
    found: list[Wall] = []
    ids: set[str] = set()
    covered = region.buffer(ctx.tol)
    for entry in raw:
        wall_id = entry["id"]
        where = f'wall "{wall_id}"'
        if wall_id in ids:
            ctx.problem(where, "the id is used twice; give every wall its own id")
            continue
        ids.add(wall_id)
        forms = [k for k in ("stiffness", "pier", "wood") if k in entry]
        if len(forms) != 1:
            ctx.problem(where, 'give exactly one of "stiffness", "pier" or "wood"' + (f" (found {', '.join(forms)})" if forms else ""))
            continue
        located = line_segment(ctx, entry, where, lines)
        if located is None:
            continue
        line, t0, t1 = located
        segment = line.segment(t0, t1)
        if not covered.covers(segment):
            outside = segment.difference(region.buffer(ctx.tol)).length / ctx.scale
            ctx.problem(where, f"is not on the diaphragm ({outside:.4g} {ctx.unit} of it lies outside the outline or inside an opening); move it onto the diaphragm")
            continue
        clash = next((w for w in found if w.line == line.name and min(w.t_to, t1) - max(w.t_from, t0) > ctx.tol), None)
        if clash is not None:
            lo, hi = max(clash.t_from, t0) / ctx.scale, min(clash.t_to, t1) / ctx.scale
            ctx.problem(where, f'overlaps wall "{clash.id}" on line "{line.name}" between {lo:g} and {hi:g} {ctx.unit}; '
                               "walls on one line must not overlap (give one wall the combined stiffness)")
            continue
        stiffness = wall_stiffness(ctx, entry, forms[0], where, t1 - t0)
        if stiffness is None:
            continue
        found.append(Wall(wall_id, line.name, t0, t1, line.point(t0), line.point(t1), line.direction.copy(), stiffness))
    return found


def wall_stiffness(ctx: Context, entry: dict, form: str, where: str, length: float) -> WallStiffness | None:
    """The stiffness of a wall ``length`` m long given in ``form`` ("stiffness", "pier" or
    "wood"; see :mod:`planshear.stiffness`), or None (problem recorded)."""
    if form == "stiffness":
        k = ctx.quantity(entry["stiffness"], STIFFNESS, where + ".stiffness")
        return None if k is None else direct_stiffness(k)
    if form == "pier":
        pier = entry["pier"]
        E = ctx.quantity(pier["E"], PRESSURE, where + ".pier.E")
        t = ctx.quantity(pier["thickness"], LENGTH, where + ".pier.thickness")
        h = ctx.quantity(pier["height"], LENGTH, where + ".pier.height")
        G = ctx.quantity(pier["G"], PRESSURE, where + ".pier.G") if "G" in pier else None
        top = pier.get("top", "free")
        if top not in ("free", "fixed"):
            ctx.problem(where + ".pier.top", f'must be "free" (cantilever) or "fixed", got "{top}"')
            return None
        if None in (E, t, h) or ("G" in pier and G is None):
            return None
        return pier_stiffness(E, t, h, length, top, G)
    wood = entry["wood"]
    Ga = ctx.quantity(wood["Ga"], STIFFNESS, where + ".wood.Ga")
    h = ctx.quantity(wood["height"], LENGTH, where + ".wood.height")
    EA = ctx.quantity(wood["chord_EA"], FORCE, where + ".wood.chord_EA")
    k_hd = ctx.quantity(wood["holdown_k"], STIFFNESS, where + ".wood.holdown_k") if "holdown_k" in wood else None
    if None in (Ga, h, EA) or ("holdown_k" in wood and k_hd is None):
        return None
    return wood_wall_stiffness(Ga, h, length, EA, k_hd)


def members(ctx: Context, raw: list, lines: dict[str, GridLine], region: Polygon) -> list[Member]:
    """``[[member]]`` entries: a chord or collector bar with its EA (N) along a grid line,
    the whole line over the outline unless ``from``/``to`` are given."""
    found: list[Member] = []
    covered = region.buffer(ctx.tol)
    for i, entry in enumerate(raw):
        where = f'member #{i + 1} (line "{entry["line"]}")'
        role = entry["role"]
        if role not in MEMBER_ROLES:
            ctx.problem(where, f'role "{role}" is unknown; use "chord" or "collector"')
            continue
        EA = ctx.quantity(entry["EA"], FORCE, where + ".EA")
        located = line_segment(ctx, entry, where, lines, need_extent=False)
        width = ctx.number(float(entry.get("effective_width", 0.0)), where + ".effective_width", positive=True)
        if EA is None or located is None or width is None:
            continue
        line, t0, t1 = located
        if "from" in entry and not covered.covers(line.segment(t0, t1)):
            ctx.problem(where, "is not on the diaphragm; members must lie on the diaphragm (members may not span an opening)")
            continue
        found.append(Member(role, line.name, t0, t1, EA, width * ctx.scale))
    return found


def splices(ctx: Context, raw: list, outline: Polygon, chord_EA: float | None, members: list[Member],
            lines: dict[str, GridLine]) -> list[Splice]:
    """``[[splice]]`` entries: a point on an outline chord (needs ``chord_EA``) or on a
    declared member, with ``slip`` and ``at_force`` or with ``stiffness``."""
    found: list[Splice] = []
    for i, entry in enumerate(raw):
        name = entry.get("name", f"S{i + 1}")
        where = f'splice "{name}"' if "name" in entry else f"splice #{i + 1}"
        if any(s.name == name for s in found):
            ctx.problem(where, "the name is used twice; give every splice its own name")
            continue
        given = {k for k in ("slip", "at_force", "stiffness") if k in entry}
        if given not in ({"slip", "at_force"}, {"stiffness"}):
            ctx.problem(where, 'give either slip and at_force (the slip Δc at that chord force, e.g. slip = '
                               '"0.03 in", at_force = "8 kip") or stiffness (e.g. "250 kip/in"), not '
                               + (", ".join(sorted(given)) or "neither"))
            continue
        at = ctx.points(entry["at"], where + ".at")
        if at is None:
            continue
        if given == {"stiffness"}:
            k = ctx.quantity(entry["stiffness"], STIFFNESS, where + ".stiffness")
            slip = force = None
        else:
            slip = ctx.quantity(entry["slip"], LENGTH, where + ".slip")
            force = ctx.quantity(entry["at_force"], FORCE, where + ".at_force")
            k = None if slip is None or force is None else force / slip
        if k is None:
            continue
        point = Point(at)
        on = None
        for member in members:
            if lines[member.line].segment(member.t_from, member.t_to).distance(point) <= ctx.tol:
                on = f'{member.role} on line "{member.line}"'
                break
        if on is None and outline.exterior.distance(point) <= ctx.tol:
            if chord_EA is None:
                ctx.problem(where, "lies on the outline, which has no chord bar; give diaphragm.chord_EA (or a "
                                   "[[member]] chord on that line) so the splice has a chord to sit in")
                continue
            on = "outline chord"
        if on is None:
            ctx.problem(where, f"at ({entry['at'][0]}, {entry['at'][1]}) is neither on the outline chord nor on a "
                               "[[member]]; a splice sits in a chord or collector: move it onto one")
            continue
        found.append(Splice(name, np.asarray(at, dtype=float), k, slip, force, on))
    return found
