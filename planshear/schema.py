"""Structure of the plan file (JSON Schema, checked with the jsonschema library).

The schema checks keys, required fields and the types of plain values. Quantities with
units are strings whose dimension is checked later by :mod:`planshear.units`, so the
schema only marks them with ``QUANTITY``.
"""

from __future__ import annotations

import difflib

import jsonschema

__all__ = ["PLAN_SCHEMA", "PLACEHOLDER", "schema_problems", "placeholder_problems"]

#: Start of a value that ``planshear import`` could not read from the drawing; the text after
#: it says what to write. A plan holding one is refused (see :func:`placeholder_problems`).
PLACEHOLDER = "FILL-IN:"

QUANTITY: dict = {"description": "string with a unit"}
NUMBER = {"type": "number"}
POINT = {"type": "array", "items": NUMBER, "minItems": 2, "maxItems": 2}
POLYGON = {"type": "array", "items": POINT, "minItems": 3}

MATERIAL = {
    "type": "object",
    "required": ["kind"],
    "properties": {
        "kind": {"type": "string"},
        "Ga": QUANTITY,
        "G_prime": QUANTITY,
        "E": QUANTITY,
        "nu": NUMBER,
        "thickness": QUANTITY,
        "cracked": NUMBER,
        "Et_x": QUANTITY,
        "Et_y": QUANTITY,
        "Gt": QUANTITY,
        "axial_ratio": NUMBER,
        "en": QUANTITY,
        "at_unit_shear": QUANTITY,
    },
    "additionalProperties": False,
}

#: A ``[wall_type.NAME]``: one wall-stiffness form, possibly partial (the walls that use the
#: type may add or override fields; the merged wall is checked as any wall).
WALL_TYPE = {
    "type": "object",
    "properties": {
        "stiffness": QUANTITY,
        "pier": {"type": "object", "properties": {k: QUANTITY for k in ("E", "G", "thickness", "height")}
                 | {"top": {"type": "string"}}, "additionalProperties": False},
        "wood": {"type": "object", "properties": {k: QUANTITY for k in ("Ga", "height", "chord_EA", "holdown_k")},
                 "additionalProperties": False},
    },
    "additionalProperties": False,
}

#: ``perimeter_weight`` of a seismic load: a line weight on the outline edges facing the
#: given directions ("all", or some of "+x", "-x", "+y", "-y" by outward normal).
PERIMETER_WEIGHT = {
    "type": "object",
    "required": ["weight"],
    "properties": {
        "weight": QUANTITY,
        "faces": {"type": ["string", "array"], "items": {"type": "string"}, "minItems": 1},
        "only_across": {"type": "boolean"},
    },
    "additionalProperties": False,
}

PLAN_SCHEMA: dict = {
    "type": "object",
    "required": ["plan", "diaphragm", "grid", "wall"],
    "properties": {
        "plan": {
            "type": "object",
            "required": ["length_unit"],
            "properties": {
                "name": {"type": "string"},
                "length_unit": {"type": "string"},
                "description": {"type": "string"},
                "code": {"type": "string"},
                # Title block of the report (all optional); date: a TOML date or text, default today.
                "job": {"type": "string"},
                "engineer": {"type": "string"},
                "checker": {"type": "string"},
                "date": {},
                "revision": {"type": "string"},
            },
            "additionalProperties": False,
        },
        "diaphragm": {
            "type": "object",
            "required": ["outline", "material"],
            "properties": {
                "outline": POLYGON,
                "openings": {"type": "array", "items": POLYGON},
                "material": MATERIAL,
                "chord_EA": QUANTITY,
                "collector_EA": QUANTITY,
                "capacity": QUANTITY,
                "zone": {
                    "type": "array",
                    "items": {
                        "type": "object",
                        "required": ["polygon", "material"],
                        "properties": {
                            "name": {"type": "string"},
                            "polygon": POLYGON,
                            "material": MATERIAL,
                            "capacity": QUANTITY,
                        },
                        "additionalProperties": False,
                    },
                },
            },
            "additionalProperties": False,
        },
        "grid": {
            "type": "object",
            "properties": {
                "x": {"type": "object", "additionalProperties": NUMBER},
                "y": {"type": "object", "additionalProperties": NUMBER},
                "line": {
                    "type": "array",
                    "items": {
                        "type": "object",
                        "required": ["name", "start", "end"],
                        "properties": {"name": {"type": "string"}, "start": POINT, "end": POINT},
                        "additionalProperties": False,
                    },
                },
            },
            "additionalProperties": False,
        },
        "wall": {
            "type": "array",
            "minItems": 1,
            "items": {
                "type": "object",
                "required": ["id", "line", "from", "to"],
                "properties": {
                    "id": {"type": "string"},
                    "line": {"type": "string"},
                    "type": {"type": "string"},
                    "from": NUMBER,
                    "to": NUMBER,
                    "stiffness": QUANTITY,
                    "capacity": QUANTITY,
                    "unit_shear_capacity": QUANTITY,
                    "pier": {
                        "type": "object",
                        "required": ["E", "thickness", "height"],
                        "properties": {
                            "E": QUANTITY,
                            "G": QUANTITY,
                            "thickness": QUANTITY,
                            "height": QUANTITY,
                            "top": {"type": "string"},
                        },
                        "additionalProperties": False,
                    },
                    "wood": {
                        "type": "object",
                        "required": ["Ga", "height", "chord_EA"],
                        "properties": {
                            "Ga": QUANTITY,
                            "height": QUANTITY,
                            "chord_EA": QUANTITY,
                            "holdown_k": QUANTITY,
                        },
                        "additionalProperties": False,
                    },
                },
                "additionalProperties": False,
            },
        },
        "member": {
            "type": "array",
            "items": {
                "type": "object",
                "required": ["role", "line", "EA"],
                "properties": {
                    "role": {"type": "string"},
                    "line": {"type": "string"},
                    "EA": QUANTITY,
                    "from": NUMBER,
                    "to": NUMBER,
                    "effective_width": NUMBER,
                    "tension_capacity": QUANTITY,
                    "compression_capacity": QUANTITY,
                },
                "additionalProperties": False,
            },
        },
        "load": {
            "type": "array",
            "items": {
                "type": "object",
                "required": ["name", "kind", "directions"],
                "properties": {
                    "name": {"type": "string"},
                    "kind": {"type": "string"},
                    "directions": {"type": "array", "items": {"type": "string"}, "minItems": 1},
                    "area_weight": QUANTITY,
                    "zone_area_weight": {"type": "object", "additionalProperties": QUANTITY},
                    "line_weight": {
                        "type": "array",
                        "items": {
                            "type": "object",
                            "required": ["line", "weight"],
                            "properties": {
                                "line": {"type": "string"},
                                "weight": QUANTITY,
                                "from": NUMBER,
                                "to": NUMBER,
                                "only_across": {"type": "boolean"},
                            },
                            "additionalProperties": False,
                        },
                    },
                    "point_weight": {
                        "type": "array",
                        "items": {
                            "type": "object",
                            "required": ["at", "weight"],
                            "properties": {
                                "at": POINT,
                                "weight": QUANTITY,
                                "footprint": {"oneOf": [NUMBER, POINT]},
                            },
                            "additionalProperties": False,
                        },
                    },
                    # one table, or a list of them (JSON Schema applies "items" to lists only)
                    "perimeter_weight": PERIMETER_WEIGHT | {"type": ["object", "array"], "items": PERIMETER_WEIGHT},
                    "total": QUANTITY,
                    "fpx": {
                        "type": "object",
                        "required": ["SDS", "Ie"],
                        # "ratio" is the old name of story_force_ratio: accepted here so that
                        # the plan reader (plan/loads.py) can give the rename as the fix.
                        "properties": {"SDS": NUMBER, "Ie": NUMBER, "story_force_ratio": NUMBER, "ratio": NUMBER},
                        "additionalProperties": False,
                    },
                    "intensity": QUANTITY,
                    "windward": QUANTITY,
                    "leeward": QUANTITY,
                    "eccentricity": NUMBER,
                    "collector_overstrength": NUMBER,
                    "light_frame": {"type": "boolean"},
                    "fx": QUANTITY,
                    "rho": NUMBER,
                    "drift": {
                        "type": "object",
                        "required": ["Cd", "story_height", "allowable"],
                        "properties": {"Cd": NUMBER, "Ie": NUMBER, "story_height": QUANTITY, "allowable": NUMBER},
                        "additionalProperties": False,
                    },
                    "sdc": {"type": "string"},
                },
                "additionalProperties": False,
            },
        },
        "splice": {
            "type": "array",
            "items": {
                "type": "object",
                "required": ["at"],
                "properties": {
                    "name": {"type": "string"},
                    "at": POINT,
                    "slip": QUANTITY,
                    "at_force": QUANTITY,
                    "stiffness": QUANTITY,
                },
                "additionalProperties": False,
            },
        },
        "wall_type": {"type": "object", "additionalProperties": WALL_TYPE},
        "transfer": {
            "type": "array",
            "items": {
                "type": "object",
                "required": ["at", "to"],
                "properties": {
                    "name": {"type": "string"},
                    "at": {"type": "string"},
                    "to": {"type": "string"},
                },
                "additionalProperties": False,
            },
        },
        "mesh": {
            "type": "object",
            "properties": {
                "size": NUMBER,
                "order": {"type": "integer"},
                "element": {"type": "string"},
            },
            "additionalProperties": False,
        },
        "capacity": {
            "type": "object",
            "properties": {
                "wall": QUANTITY,
                "wall_unit_shear": QUANTITY,
                "tension": QUANTITY,
                "compression": QUANTITY,
                "member": {
                    "type": "array",
                    "items": {
                        "type": "object",
                        "properties": {"line": {"type": "string"}, "name": {"type": "string"},
                                       "tension": QUANTITY, "compression": QUANTITY},
                        "additionalProperties": False,
                    },
                },
            },
            "additionalProperties": False,
        },
        "design": {
            "type": "object",
            "properties": {"envelope": {"type": "array", "items": {"type": "string"}}, "basis": {"type": "string"}},
            "additionalProperties": False,
        },
        "classification": {
            "type": "object",
            "properties": {
                "idealized_flexible": {"type": "boolean"},
                "idealized_rigid": {"type": "boolean"},
                "sensitivity": {"type": "array", "items": NUMBER},
                "adjacent_stiffness_ratio": NUMBER,
            },
            "additionalProperties": False,
        },
    },
    "additionalProperties": False,
}

_TYPE_WORDS = {
    "number": "a number",
    "integer": "a whole number",
    "string": "a text in quotes",
    "array": "a list [ ... ]",
    "object": "a table { ... }",
    "boolean": "true or false",
}


def _item_label(document: dict, path: list) -> str:
    """Readable location such as 'wall "W4": stiffness' for a JSON path."""
    parts: list[str] = []
    node: object = document
    i = 0
    while i < len(path):
        key = path[i]
        child = node[key] if isinstance(node, (dict, list)) and _has(node, key) else None
        if isinstance(key, str) and isinstance(child, list) and i + 1 < len(path) and isinstance(path[i + 1], int):
            index = path[i + 1]
            element = child[index] if index < len(child) else None
            label = None
            if isinstance(element, dict):
                label = element.get("id") or element.get("name")
            parts.append(f'{key} "{label}"' if isinstance(label, str) else f"{key} #{index + 1}")
            node = element
            i += 2
            continue
        parts.append(str(key) if not isinstance(key, int) else f"#{key + 1}")
        node = child
        i += 1
    return ".".join(parts) if parts else "top level"


def _has(node: object, key: object) -> bool:
    if isinstance(node, dict):
        return key in node
    if isinstance(node, list) and isinstance(key, int):
        return 0 <= key < len(node)
    return False


def _misplaced_key(key: str, path: list, file_label: str) -> str:
    """Message for a top-level key found inside another table. In TOML every key after a
    [table] header belongs to that table, so a `wall = [...]` written below [mesh] (or a
    [[mesh.wall]] header) ends up as mesh.wall."""
    spec = PLAN_SCHEMA["properties"][key]
    fix = (f"write it as [[{key}]] entries, each starting with a [[{key}]] line" if spec.get("type") == "array"
           else f"write it as its own [{key}] section")
    table = ".".join(str(p) for p in path if isinstance(p, str))
    if isinstance(path[-1], int):
        owner = f"[[{table}]] entry #{path[-1] + 1}"
        because = f"it comes after that entry's [[{table}]] header"
    else:
        owner = f"the [{table}] table"
        because = f"it comes after the [{table}] header (a [[{table}.{key}]] header puts it there too)"
    return (f'{file_label}: key "{key}" belongs to {owner} because {because}; it is needed at the top level: '
            f"move it above the first table header or {fix}")


def schema_problems(document: dict, file_label: str) -> list[str]:
    """Return one message per structural problem of the parsed TOML ``document``."""
    validator = jsonschema.Draft202012Validator(PLAN_SCHEMA)
    problems: list[str] = []
    errors = sorted(validator.iter_errors(document), key=lambda e: list(map(str, e.absolute_path)))
    # Top-level keys that turned up inside another table (reported once, where they are).
    misplaced = {
        key
        for error in errors
        if error.validator == "additionalProperties" and isinstance(error.instance, dict) and error.absolute_path
        for key in error.instance
        if key in PLAN_SCHEMA["properties"] and key not in error.schema.get("properties", {})
    }
    for error in errors:
        where = _item_label(document, list(error.absolute_path))
        if error.validator == "additionalProperties" and isinstance(error.instance, dict):
            allowed = sorted(error.schema.get("properties", {}))
            extra = [k for k in error.instance if k not in allowed]
            for key in extra:
                if key in misplaced and error.absolute_path:
                    problems.append(_misplaced_key(key, list(error.absolute_path), file_label))
                    continue
                close = difflib.get_close_matches(key, allowed, n=1, cutoff=0.6)
                hint = f'did you mean "{close[0]}"?' if close else f"allowed keys: {', '.join(allowed)}"
                problems.append(f'{file_label}: {where}: unknown key "{key}" ({hint})')
        elif error.validator == "required":
            missing = [k for k in error.validator_value if k not in error.instance]
            for key in missing:
                if key not in misplaced or error.absolute_path:
                    problems.append(f'{file_label}: {where}: required key "{key}" is missing; add it')
        elif error.validator == "type":
            expected = error.validator_value
            expected = [expected] if isinstance(expected, str) else expected
            words = " or ".join(_TYPE_WORDS.get(t, t) for t in expected)
            problems.append(f"{file_label}: {where}: expected {words}, got {error.instance!r}")
        elif error.validator in ("minItems", "maxItems"):
            problems.append(
                f"{file_label}: {where}: has {len(error.instance)} entries; "
                f"{'at least' if error.validator == 'minItems' else 'at most'} {error.validator_value} needed"
            )
        else:
            problems.append(f"{file_label}: {where}: {error.message}")
    return problems


def placeholder_problems(document: dict, file_label: str) -> list[str]:
    """One message per value still holding a ``FILL-IN:`` placeholder (left by ``planshear
    import`` where the drawing does not say), naming where it is and what to write there."""
    problems: list[str] = []

    def walk(node: object, path: list) -> None:
        if isinstance(node, str) and node.strip().upper().startswith(PLACEHOLDER):
            where = _item_label(document, path)
            hint = node.strip()[len(PLACEHOLDER):].strip()
            problems.append(f"{file_label}: {where}: not filled in yet (placeholder left by planshear import); "
                            f"replace the placeholder: {hint}")
        elif isinstance(node, dict):
            for key, child in node.items():
                walk(child, [*path, key])
        elif isinstance(node, list):
            for index, child in enumerate(node):
                walk(child, [*path, index])

    walk(document, [])
    return problems
