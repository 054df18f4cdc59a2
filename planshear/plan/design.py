"""Reads what the engineer states about the design: ``[classification]`` (the idealized
code conditions met, stiffness sensitivity factors, Table 12.3-1 Type 3 ratio),
``[design]`` (the design basis and an engineer-chosen envelope) and the capacities:
``[diaphragm] capacity``, ``[[diaphragm.zone]] capacity``, ``[[wall]] capacity`` /
``unit_shear_capacity``, ``[[member]] tension_capacity`` / ``compression_capacity`` and
the ``[capacity]`` table.
"""

from __future__ import annotations

import difflib
import math

from ..units import FORCE, LINE_LOAD
from .context import Context
from .model import Capacities, ClassificationFlags, GridLine, Wall, Zone


def capacities(ctx: Context, diaphragm: dict, wall_entries: list, member_entries: list, table: dict,
               zones: list[Zone], walls: list[Wall], lines: dict[str, GridLine]) -> Capacities:
    """The optional capacities (README, "Capacities"): ``[diaphragm] capacity`` and
    ``[[diaphragm.zone]] capacity`` (unit shear), ``[[wall]] capacity`` (force) or
    ``unit_shear_capacity``, ``[[member]] tension_capacity`` / ``compression_capacity``
    (the member on that grid line), and the ``[capacity]`` table of defaults and members.
    ``diaphragm``, ``wall_entries``, ``member_entries`` and ``table`` are those parts of
    the file as written; ``zones``, ``walls`` and ``lines`` as read (capacities of items
    that failed to read are left out)."""
    dia_cap, zone_caps = _diaphragm_capacities(ctx, diaphragm, zones)
    wall_caps, wall_default = _wall_capacities(ctx, wall_entries, table, walls)
    member_caps, member_default = _member_capacities(ctx, member_entries, table, lines)
    return Capacities(dia_cap, zone_caps, wall_caps, wall_default, member_caps, member_default)


def _diaphragm_capacities(ctx: Context, dia: dict, zones: list[Zone]) -> tuple[float | None, dict[str, float]]:
    """Unit-shear capacities (N/m) of the diaphragm outside every zone and of each zone."""
    diaphragm = None
    if "capacity" in dia:
        diaphragm = ctx.quantity(dia["capacity"], LINE_LOAD, "diaphragm.capacity")
    zone_names = {z.name for z in zones}
    zone_caps = {}
    for i, raw in enumerate(dia.get("zone", [])):
        name = raw.get("name", f"zone {i + 1}")
        if "capacity" in raw and name in zone_names:
            value = ctx.quantity(raw["capacity"], LINE_LOAD, f'diaphragm.zone "{name}".capacity')
            if value is not None:
                zone_caps[name] = value
    return diaphragm, zone_caps


def _wall_capacities(ctx: Context, wall_entries: list, table: dict, walls: list[Wall]
                     ) -> tuple[dict[str, tuple[str, float]], tuple[str, float] | None]:
    """Each wall's capacity, ("force", N) or ("unit_shear", N/m), and the default of
    ``[capacity] wall`` / ``wall_unit_shear``."""
    wall_caps = {}
    known_walls = {w.id for w in walls}
    for raw in wall_entries:
        where = f'wall "{raw["id"]}"'
        if "capacity" in raw and "unit_shear_capacity" in raw:
            ctx.problem(where, 'give either "capacity" (force) or "unit_shear_capacity" (force per length), not both')
            continue
        if raw["id"] not in known_walls:
            continue
        if "capacity" in raw:
            value = ctx.quantity(raw["capacity"], FORCE, where + ".capacity")
            if value is not None:
                wall_caps[raw["id"]] = ("force", value)
        elif "unit_shear_capacity" in raw:
            value = ctx.quantity(raw["unit_shear_capacity"], LINE_LOAD, where + ".unit_shear_capacity")
            if value is not None:
                wall_caps[raw["id"]] = ("unit_shear", value)
    wall_default = None
    if "wall" in table and "wall_unit_shear" in table:
        ctx.problem("capacity", 'give either "wall" (force) or "wall_unit_shear" (force per length), not both')
    elif "wall" in table:
        value = ctx.quantity(table["wall"], FORCE, "capacity.wall")
        wall_default = None if value is None else ("force", value)
    elif "wall_unit_shear" in table:
        value = ctx.quantity(table["wall_unit_shear"], LINE_LOAD, "capacity.wall_unit_shear")
        wall_default = None if value is None else ("unit_shear", value)
    return wall_caps, wall_default


def _member_capacities(ctx: Context, member_entries: list, table: dict, lines: dict[str, GridLine]
                       ) -> tuple[dict[tuple[str, str], tuple[float | None, float | None]], tuple[float | None, float | None]]:
    """Member capacities (tension N | None, compression N | None) by ("line", grid line) or
    ("name", member name), from ``[[member]]`` and ``[[capacity.member]]``, and the default
    of ``[capacity] tension`` / ``compression``."""

    def pair(entry: dict, tension: str, compression: str, where: str) -> tuple[float | None, float | None]:
        return tuple(ctx.quantity(entry[key], FORCE, f"{where}.{key}") if key in entry else None
                     for key in (tension, compression))

    member_default = pair(table, "tension", "compression", "capacity")
    member_caps: dict[tuple[str, str], tuple[float | None, float | None]] = {}

    def add(key: tuple[str, str], values: tuple, where: str) -> None:
        if key in member_caps:
            ctx.problem(where, f'the member {key[0]} "{key[1]}" has capacities twice; give them once')
        elif values != (None, None):
            member_caps[key] = values

    for i, raw in enumerate(member_entries):
        where = f'member #{i + 1} (line "{raw["line"]}")'
        if raw["line"] in lines:
            add(("line", raw["line"]), pair(raw, "tension_capacity", "compression_capacity", where), where)
    for i, raw in enumerate(table.get("member", [])):
        where = f"capacity.member #{i + 1}"
        if ("line" in raw) == ("name" in raw):
            ctx.problem(where, 'give "line" (a grid line) or "name" (a member name as reported, e.g. '
                        '"edge at y = 12 ft, 1–2"), one of them')
            continue
        if "line" in raw and raw["line"] not in lines:
            close = difflib.get_close_matches(raw["line"], list(lines), n=1)
            ctx.problem(where + ".line", f'"{raw["line"]}" is not a grid line'
                        + (f' (did you mean "{close[0]}"?)' if close else f' (lines: {", ".join(lines)})'))
            continue
        if "tension" not in raw and "compression" not in raw:
            ctx.problem(where, 'give "tension" and/or "compression" (forces, e.g. "12 kip")')
            continue
        key = ("line", raw["line"]) if "line" in raw else ("name", raw["name"])
        add(key, pair(raw, "tension", "compression", where), where)
    return member_caps, member_default


def design_basis(ctx: Context, raw: dict) -> str | None:
    """[design] basis: "LRFD" or "ASD" (None: unfactored)."""
    basis = raw.get("basis")
    if basis is not None and basis not in ("LRFD", "ASD"):
        ctx.problem("design.basis", f'must be "LRFD" or "ASD", got "{basis}"')
        return None
    return basis


def design_envelope(ctx: Context, raw: dict) -> tuple[str, ...]:
    """[design] envelope: the assumptions of an engineer-chosen envelope, reported beside
    the code-allowed one (e.g. ["flexible", "rigid"], common practice where either is allowed)."""
    chosen = tuple(raw.get("envelope", ()))
    unknown = [a for a in chosen if a not in ("flexible", "rigid", "semirigid")]
    if unknown or ("envelope" in raw and not chosen) or len(set(chosen)) != len(chosen):
        ctx.problem("design.envelope", f'list some of "flexible", "rigid", "semirigid" once each, got {list(chosen)}')
        return ()
    return chosen


def classification(ctx: Context, raw: dict) -> ClassificationFlags:
    """[classification]: the engineer's statement of which idealized code conditions apply."""
    factors = tuple(float(f) for f in raw.get("sensitivity", ()))
    for f in factors:
        if not (math.isfinite(f) and f > 0):
            ctx.problem("classification.sensitivity", f"factors on diaphragm stiffness must be positive, got {f}")
    adjacent = raw.get("adjacent_stiffness_ratio")
    if adjacent is not None and not (math.isfinite(adjacent) and adjacent > 0):
        ctx.problem("classification.adjacent_stiffness_ratio", "is the effective diaphragm stiffness of the adjacent "
                    f"story divided by this one's and must be positive, e.g. 0.4; got {adjacent}")
        adjacent = None
    return ClassificationFlags(bool(raw.get("idealized_flexible", False)), bool(raw.get("idealized_rigid", False)), factors,
                               float(adjacent) if adjacent is not None else None)
