"""Reads a plan file: the TOML text, the placeholder and schema checks, the ``[plan]``
table (name, length unit, code edition, title block), then each section of the file in
order through its own module, and assembles the :class:`~planshear.plan.model.Plan`.

Section modules: :mod:`.geometry` (outline, openings, zones, grid, transfer regions),
:mod:`.materials` (diaphragm material, edge-bar EA), :mod:`.walls` (wall types, walls,
members, splices), :mod:`.loads` (loads), :mod:`.mesh_settings` (mesh), :mod:`.design`
(classification, design basis and envelope, capacities). Each takes the
:class:`~planshear.plan.context.Context` and what it needs from earlier sections, and
returns typed pieces.

:func:`load_plan` reads and validates a file; every problem found is collected and
raised together as one :class:`~planshear.errors.PlanError`.
"""

from __future__ import annotations

import datetime
import difflib
import tomllib
from dataclasses import replace
from pathlib import Path

import numpy as np

from ..code import DEFAULT_EDITION, EDITIONS
from ..errors import PlanError
from ..schema import placeholder_problems, schema_problems
from ..units import LENGTH_UNITS
from . import design, geometry, materials
from . import loads as load_section
from . import walls as wall_section
from .context import Context
from .mesh_settings import mesh_settings
from .model import Plan
from .stability import check_stability
from .walls import expand_wall_types

#: ``[plan]`` keys of the report's title block, in the order they are shown.
TITLE_BLOCK_KEYS = ("job", "engineer", "checker", "date", "revision")


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
    return build_plan(document, label)


def build_plan(document: dict, label: str) -> Plan:
    """Turn a schema-valid ``document`` into a Plan, section by section, collecting every
    problem; raises them all at the end (or earlier when a later section could not be
    read without the piece that failed: the length unit, the outline, a connected region).
    Then checks that the walls can hold the diaphragm."""
    plan_table = document["plan"]
    ctx = _length_unit(Context(label), plan_table["length_unit"])
    name = plan_table.get("name", Path(label).stem)
    code = plan_table.get("code", DEFAULT_EDITION)
    title_block = _title_block(ctx, plan_table)
    _check_code(ctx, code)

    dia = document["diaphragm"]
    outline = geometry.outline(ctx, dia["outline"])
    size = geometry.plan_size(outline)
    ctx = replace(ctx, tol=1e-6 * size)  # same problem list
    openings, region = geometry.openings(ctx, dia.get("openings", []), outline)
    material = materials.material(ctx, dia["material"], "diaphragm.material")
    chord_EA, collector_EA = materials.edge_rigidities(ctx, dia)
    zones = geometry.zones(ctx, dia.get("zone", []), outline, region)

    grid_lines = geometry.grid(ctx, document["grid"], outline)
    lines = {g.name: g for g in grid_lines}
    walls = wall_section.walls(ctx, document["wall"], lines, region)
    members = wall_section.members(ctx, document.get("member", []), lines, region)
    loads = load_section.loads(ctx, document.get("load", []), lines, zones, region)
    transfers = geometry.transfers(ctx, document.get("transfer", []), lines)
    splices = wall_section.splices(ctx, document.get("splice", []), outline, chord_EA, members, lines)
    mesh = mesh_settings(ctx, document.get("mesh", {}), size, region.area)
    classification = design.classification(ctx, document.get("classification", {}))
    chosen = design.design_envelope(ctx, document.get("design", {}))
    basis = design.design_basis(ctx, document.get("design", {}))
    capacities = design.capacities(ctx, dia, document["wall"], document.get("member", []),
                                   document.get("capacity", {}), zones, walls, lines)
    if ctx.problems:
        ctx.fail()
    plan = Plan(
        name=name,
        source=label,
        length_unit=ctx.unit,
        outline=np.asarray(outline.exterior.coords)[:-1],
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


def _length_unit(ctx: Context, unit: str) -> Context:
    """``ctx`` in the plan's length unit (``[plan] length_unit``); stops reading (raises)
    when the unit is not supported, since no coordinate can be read without it."""
    if unit not in LENGTH_UNITS:
        close = difflib.get_close_matches(unit, list(LENGTH_UNITS), n=1)
        ctx.problem("plan.length_unit", f'"{unit}" is not supported; use "ft" or "m"' + (f' (did you mean "{close[0]}"?)' if close else ""))
        ctx.fail()
    return replace(ctx, unit=unit, scale=LENGTH_UNITS[unit])


def _check_code(ctx: Context, code: str) -> None:
    """``[plan] code``: an edition planshear implements (:mod:`planshear.code`)."""
    if code not in EDITIONS:
        ctx.problem("plan.code", f'"{code}" is not available; planshear implements {", ".join(EDITIONS)} '
                    "(ASCE 7-22 only where its clauses can be confirmed from the standard's text: not yet). "
                    f'Remove the key or write code = "{DEFAULT_EDITION}"')


def _title_block(ctx: Context, table: dict) -> tuple[tuple[str, str], ...]:
    """[plan] job, engineer, checker, date and revision as text; the date may be a TOML
    date (date = 2026-12-02) or text."""
    out = []
    for key in TITLE_BLOCK_KEYS:
        if key not in table:
            continue
        value = table[key]
        if key == "date" and isinstance(value, datetime.date):
            value = value.isoformat()[:10]
        if not isinstance(value, str):
            ctx.problem(f"plan.{key}", f"must be text or a date, got {value!r}; write e.g. {key} = \"2026-12-02\"")
            continue
        out.append((key, value.strip()))
    return tuple(out)
