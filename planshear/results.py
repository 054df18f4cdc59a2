"""Result types shared by every assumption (flexible, rigid, semi-rigid), and their
conversion to the ``results.json`` contract in the plan's output units."""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from .units import OutputUnits

__all__ = [
    "LineResult",
    "ChordResult",
    "CaseResult",
    "MethodResult",
    "method_to_json",
    "transfer_to_json",
    "classification_to_json",
    "irregularity_to_json",
    "envelope_to_json",
    "members_to_json",
    "checks_to_json",
    "splices_to_json",
    "comparison_to_json",
    "traceability_to_json",
]


@dataclass(frozen=True, eq=False)
class LineResult:
    """Forces along one grid line for one case (SI units)."""

    name: str
    reaction: float  # N, sum of the wall forces on the line, along the line direction
    delivered: float  # N, shear delivered by the diaphragm to the line
    unit_shear_left: float  # N/m
    unit_shear_right: float  # N/m
    stations: np.ndarray  # m along the line (plan-file convention)
    collector: np.ndarray  # N, tension positive
    residual: float  # N
    side_shear: np.ndarray | None = None  # (k, 3): t, delivered per length from left, from right
    has_member: bool | None = None  # semi-rigid only: whether a bar (collector/chord) lies on the line
    # Semi-rigid only, lines with walls: the collector of each run of the line's wall pieces,
    # (kind "declared" | "chord" | "implied" | "none", t_from m, t_to m, EA N).
    collector_segments: tuple[tuple[str, float, float, float], ...] = ()
    pieces: np.ndarray | None = None  # idealized: (k, 5) t_start, t_end, peak, peak_at, residual per piece (m, N)

    @property
    def peak(self) -> float:
        return float(self.collector[np.argmax(np.abs(self.collector))]) if len(self.collector) else 0.0

    @property
    def peak_position(self) -> float:
        return float(self.stations[np.argmax(np.abs(self.collector))]) if len(self.collector) else 0.0


@dataclass(frozen=True, eq=False)
class ChordResult:
    """Chord force diagram along an axis (N), tension on the +load edge when positive."""

    name: str
    stations: np.ndarray  # m
    force: np.ndarray  # N

    @property
    def peak(self) -> float:
        return float(self.force[np.argmax(np.abs(self.force))]) if len(self.force) else 0.0

    @property
    def peak_position(self) -> float:
        return float(self.stations[np.argmax(np.abs(self.force))]) if len(self.force) else 0.0


@dataclass(frozen=True, eq=False)
class CaseResult:
    """One assumption, one load case."""

    case: str
    axis: str
    applied_force: float  # N along +axis
    wall_forces: dict[str, float]  # N along each wall's direction
    wall_drifts: dict[str, float]  # m, force / stiffness
    lines: dict[str, LineResult]
    chords: dict[str, ChordResult]
    max_unit_shear: float  # N/m
    max_unit_shear_at: np.ndarray  # m
    max_displacement: float  # m
    equilibrium_residual: float  # relative to the applied force
    extra: dict[str, object] = field(default_factory=dict)


@dataclass(frozen=True, eq=False)
class MethodResult:
    """All cases under one assumption."""

    assumption: str
    cases: dict[str, CaseResult]
    notes: tuple[str, ...] = ()
    extra: dict[str, object] = field(default_factory=dict)


def unit_shear_along(shear: np.ndarray, length: np.ndarray) -> np.ndarray:
    """Unit shear V(s)/ℓ(s) (N/m) from the shear V (N) and the diaphragm length ℓ (m) cut at
    each station; zero where no diaphragm is cut."""
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(length > 0, shear / np.where(length > 0, length, 1.0), 0.0)


def _r(value: float, digits: int = 6) -> float:
    """Round for the JSON file: results are engineering numbers, not bit patterns."""
    value = float(value)  # math.isfinite on a float: 2.4× faster than np.isfinite (called ~10⁵ times)
    if value == 0 or not math.isfinite(value):
        return value
    return float(f"{value:.{digits + 3}g}")


def case_to_json(case: CaseResult, units: OutputUnits) -> dict:
    lines = {}
    for name, line in case.lines.items():
        k = int(np.argmax(np.abs(line.collector))) if len(line.collector) else 0
        lines[name] = {
            "reaction": _r(units.force_out(line.reaction)),
            "delivered_shear": _r(units.force_out(line.delivered)),
            "unit_shear_left": _r(units.line_force_out(line.unit_shear_left)),
            "unit_shear_right": _r(units.line_force_out(line.unit_shear_right)),
            "collector_peak": _r(units.force_out(line.collector[k])) if len(line.collector) else 0.0,
            "collector_peak_at": _r(units.length_out(line.stations[k])) if len(line.stations) else 0.0,
            "collector": [
                [_r(units.length_out(s)), _r(units.force_out(n))] for s, n in zip(line.stations, line.collector, strict=True)
            ],
            "residual": _r(units.force_out(line.residual)),
        }
        if line.has_member is not None:
            lines[name]["collector_member"] = line.has_member
        if line.collector_segments:
            lines[name]["collector_members"] = [
                {"kind": kind, "from": _r(units.length_out(a)), "to": _r(units.length_out(b)),
                 "EA": _r(units.force_out(EA))}
                for kind, a, b, EA in line.collector_segments
            ]
        if line.pieces is not None:
            lines[name]["pieces"] = [
                {"from": _r(units.length_out(t0)), "to": _r(units.length_out(t1)), "peak": _r(units.force_out(pk)),
                 "peak_at": _r(units.length_out(at)), "residual": _r(units.force_out(res))}
                for t0, t1, pk, at, res in line.pieces
            ]
        if line.side_shear is not None:
            lines[name]["delivered_shear_diagram"] = [
                [_r(units.length_out(t)), _r(units.line_force_out(a)), _r(units.line_force_out(b))]
                for t, a, b in line.side_shear
            ]
    chords = {
        name: {
            "peak": _r(units.force_out(chord.peak)),
            "peak_at": _r(units.length_out(chord.peak_position)),
            "diagram": [
                [_r(units.length_out(s)), _r(units.force_out(f))] for s, f in zip(chord.stations, chord.force, strict=True)
            ],
        }
        for name, chord in case.chords.items()
    }
    out = {
        "axis": case.axis,
        "applied_force": _r(units.force_out(case.applied_force)),
        "walls": {k: _r(units.force_out(v)) for k, v in case.wall_forces.items()},
        "wall_drifts": {k: _r(units.displacement_out(v)) for k, v in case.wall_drifts.items()},
        "lines": lines,
        "chords": chords,
        "max_unit_shear": _r(units.line_force_out(case.max_unit_shear)),
        "max_unit_shear_at": [_r(units.length_out(c)) for c in case.max_unit_shear_at],
        "max_displacement": _r(units.displacement_out(case.max_displacement)),
        "equilibrium_residual": float(f"{case.equilibrium_residual:.3e}"),
    }
    for key, value in case.extra.items():
        if key == "rigid_body_motion":
            out[key] = {
                "u": _r(units.displacement_out(value["u"])),
                "v": _r(units.displacement_out(value["v"])),
                "rotation_rad": _r(value["rotation"]),
            }
        elif key == "solver_residual":
            out[key] = value
        elif key == "unit_shear_by_zone":
            out[key] = {
                zone: {"value": _r(units.line_force_out(v)), "at": [_r(units.length_out(c)) for c in at]}
                for zone, (v, at) in value.items()
            }
        elif key == "walls_along_chords":
            out[key] = walls_along_chords_to_json(value, units)
        elif key == "span_deflections":
            out[key] = [
                {"span": f"{d.left_line}-{d.right_line}", "MDD": _r(units.displacement_out(d.mdd)),
                 "MDD_at": _r(units.length_out(d.at)), "bending": _r(units.displacement_out(d.bending)),
                 "shear": _r(units.displacement_out(d.shear)),
                 "splice_slip": _r(units.displacement_out(d.splice_slip)), "ADVE": _r(units.displacement_out(d.adve)),
                 "ratio": _r(d.ratio) if np.isfinite(d.ratio) else None}
                for d in value
            ]
        elif key == "transfer":
            out[key] = [transfer_to_json(td, units) for td in value]
        elif key == "collectors_with_transfer":
            out[key] = {
                name: {"diagram": [[_r(units.length_out(t)), _r(units.force_out(n))] for t, n in zip(t_, n_, strict=True)],
                       "includes": list(parts)}
                for name, (t_, n_, parts) in value.items()
            }
        elif key == "span_shear":  # the main span's (s, V, ℓ) in m, N, m → stations, V, length present, V/ℓ
            _, s, shear, length = value[0]
            unit = unit_shear_along(shear, length)
            out[key] = {"stations": [_r(units.length_out(x)) for x in s], "V": [_r(units.force_out(x)) for x in shear],
                        "length": [_r(units.length_out(x)) for x in length],
                        "unit_shear": [_r(units.line_force_out(x)) for x in unit]}
        elif key == "line_forces":
            out[key] = {name: _r(units.force_out(f)) for name, f in value.items()}
        else:
            out[key] = value
    return out


def wall_piece_to_json(piece: dict, units: OutputUnits) -> dict:
    """A wall piece (SI dict: line, from, to, walls, collector, segments) in output units."""
    out = {"line": piece["line"], "from": _r(units.length_out(piece["from"])), "to": _r(units.length_out(piece["to"])),
           "walls": list(piece["walls"])}
    if "collector" in piece:
        out["collector"] = piece["collector"]
        out["segments"] = [{"kind": kind, "from": _r(units.length_out(a)), "to": _r(units.length_out(b)),
                            "EA": _r(units.force_out(EA))} for kind, a, b, EA in piece["segments"]]
    return out


def walls_along_chords_to_json(value: dict, units: OutputUnits) -> dict:
    """Forces that walls along chord lines take from chord elongation (see
    postprocess/chord_restraint.py), in output units."""
    force, length = units.force_out, units.length_out
    return {
        "lines": {
            name: {"walls": list(item["walls"]), "net_force": _r(force(item["net_force"])),
                   "restraint_force": _r(force(item["restraint_force"])), "at": _r(length(item["at"])),
                   "self_equilibrating": {w: _r(force(f)) for w, f in item["self_equilibrating"].items()}}
            for name, item in value["lines"].items()
        },
        "chords": {
            name: {"at": _r(length(item["at"])), "M_over_d": _r(force(item["M_over_d"])),
                   "chord_force": _r(force(item["chord_force"])), "share_lost": _r(item["share_lost"], 4),
                   "walls_force": _r(force(item["walls_force"])), "walls_share": _r(item["walls_share"], 4)}
            for name, item in value["chords"].items()
        },
    }


def transfer_to_json(td, units: OutputUnits) -> dict:
    """One transfer diaphragm (see planshear.postprocess.transfer) in output units."""
    length, force, shear = units.length_out, units.force_out, units.line_force_out

    def diagram(stations, values):
        return [[_r(length(a)), _r(force(b))] for a, b in zip(stations, values, strict=True)]

    return {
        "name": td.name,
        "load_axis": td.axis,
        "at_line": td.at_line,
        "far_line": td.far_line,
        "region": {"along_span": [_r(length(v)) for v in td.s_range], "across": [_r(length(v)) for v in td.t_range]},
        "chord_forces": [{"line": line, "at": _r(length(t)), "force": _r(force(f))} for line, t, f in td.chord_forces],
        "reactions": [_r(force(r)) for r in td.reactions],
        "transfer_shears": [{"from": _r(length(a)), "to": _r(length(b)), "shear": _r(shear(v))} for a, b, v in td.shears],
        "net_shears": [
            {"line": n.line, "side": n.side, "from": _r(length(n.t_start)), "to": _r(length(n.t_end)),
             "main": _r(shear(n.main)), "transfer": _r(shear(n.transfer)), "net": _r(shear(n.net))}
            for n in td.net
        ],
        "struts": [
            {"role": s.role, "line": s.line, "label": s.label, "at": _r(length(s.t)),
             "peak": _r(force(s.total[np.argmax(np.abs(s.total))])) if len(s.total) else 0.0,
             "added": diagram(s.stations, s.added), "diagram": diagram(s.stations, s.total)}
            for s in td.struts
        ],
        "collectors": {
            name: {"collector_peak": _r(force(d.peak)), "collector_peak_at": _r(length(d.peak_position)),
                   "collector": diagram(d.stations, d.force), "residual": _r(force(d.residual))}
            for name, d in td.collectors.items()
        },
    }


def method_to_json(method: MethodResult, units: OutputUnits) -> dict:
    out = {
        "cases": {name: case_to_json(case, units) for name, case in method.cases.items()},
        "notes": list(method.notes),
    }
    for key, value in method.extra.items():
        if key == "center_of_rigidity":
            out[key] = [_r(units.length_out(float(c))) for c in value]
        elif key in ("wall_pieces", "wall_pieces_without_member"):
            out[key] = [wall_piece_to_json(piece, units) for piece in value]
        elif key == "implied_collector_EA":
            out[key] = None if value is None else {"value": _r(units.force_out(value["value"])), "unit": units.force,
                                                   "source": value["source"]}
        else:
            out[key] = value
    return out


def classification_to_json(classification, units: OutputUnits) -> dict | None:
    """Flexibility check per direction and span (MDD and ADVE in displacement units)."""
    if classification is None:
        return None
    out = {
        "criterion": "ASCE 7-16 §12.3.1.3: may be idealized as flexible when MDD/ADVE > 2",
        "MDD_definition": "largest in-plane deflection of the diaphragm averaged across its depth (section through the "
                          "plan, openings excluded) relative to the straight line between the support drifts; MDD_at = "
                          "station and mid-depth; MDD_local = largest nodal value (information only, not classified on)",
        "idealized_flexible_stated": classification.idealized_flexible,
        "idealized_rigid_stated": classification.idealized_rigid,
        "directions": {},
    }
    for axis, check in classification.directions.items():
        governing = check.governing
        out["directions"][axis] = {
            "verdict": classification.verdict(axis),
            "flexible_allowed": classification.flexible_allowed(axis),
            "rigid_allowed": classification.rigid_allowed,
            "governing_span": None if governing is None else f"{governing.left_line}-{governing.right_line} ({governing.case})",
            "spans": [
                {
                    "case": span.case,
                    "span": f"{span.left_line}-{span.right_line}",
                    "MDD": _r(units.displacement_out(span.mdd)),
                    "MDD_at": [_r(units.length_out(c)) for c in span.mdd_at],
                    "MDD_local": _r(units.displacement_out(span.mdd_local)),
                    "MDD_local_at": [_r(units.length_out(c)) for c in span.mdd_local_at],
                    "ADVE": _r(units.displacement_out(span.adve)),
                    "ratio": _r(span.ratio) if np.isfinite(span.ratio) else None,
                    "flexible": span.flexible,
                    "verdict": "may be idealized as flexible" if span.flexible else "not flexible",
                    "behaviour": span.behaviour,
                }
                for span in check.spans
            ],
            "notes": list(check.notes),
        }
    governing = [(axis, c.governing) for axis, c in classification.directions.items() if c.governing is not None]
    if governing:
        axis, span = min(governing, key=lambda item: item[1].ratio)
        everywhere = all(classification.flexible_allowed(a) for a in classification.directions)
        out["overall"] = {
            "verdict": ("may be idealized as flexible in every direction" if everywhere
                        else "not flexible in every direction: use the semi-rigid model where flexible is not allowed"),
            "governing": f"load along {axis}, span {span.left_line}-{span.right_line} ({span.case}), "
                         f"MDD/ADVE = {span.ratio:.3g}",
        }
    return out


def _governing(item, units: OutputUnits) -> dict | None:
    if item is None:
        return None
    out = {"value": _r(units.force_out(item.value)), "assumption": item.assumption, "case": item.case}
    if item.factor != 1.0:
        out["combination_factor"] = _r(item.factor, 4)
    return out


def envelope_to_json(envelope, units: OutputUnits) -> dict | None:
    """Design envelope: governing value, assumption and case per wall, line and chord."""
    if envelope is None:
        return None

    def table(entries):
        return {name: {k: _governing(v, units) for k, v in slots.items()} for name, slots in entries.items()}

    lines = {
        name: {
            "reaction": _governing(envelope.line_reactions[name]["design"], units),
            "collector_peak": _governing(slots["design"], units),
            "collector_peak_with_overstrength": _governing(slots["with_overstrength"], units),
        }
        for name, slots in envelope.collectors.items()
    }
    collectors = table(envelope.collectors)
    for name, kind in envelope.collector_basis.items():
        collectors.setdefault(name, {})["collector_in_model"] = kind
        lines.setdefault(name, {})["collector_in_model"] = kind
    for name, rule in envelope.collector_rules.items():
        collectors.setdefault(name, {})["overstrength"] = {
            "clause": rule["clause"], "governs": rule["governs"], "factor": _r(rule["factor"], 4),
            "value": collectors[name]["with_overstrength"]["value"] if collectors[name].get("with_overstrength") else None,
            "without_cap": _r(units.force_out(rule["without_cap"])),
            "cap": None if rule["cap"] is None else _r(units.force_out(rule["cap"])),
            **({"note": rule["note"]} if rule["note"] else {}),
            **({"increase_12_3_3_4": rule["increase_12_3_3_4"]} if "increase_12_3_3_4" in rule else {}),
        }
        lines.setdefault(name, {})["collector_overstrength_governs"] = rule["governs"]
    for name, text in envelope.cautions.items():
        collectors.setdefault(name, {})["caution"] = text
        lines.setdefault(name, {})["caution"] = text
    members = members_to_json(envelope, units)
    chords = table(envelope.chords)
    parts = envelope.layout.chord_part if envelope.layout is not None else {}
    for name, item in members.items():
        for key in item["chord"]["sources"]:
            if key in chords:
                chords[key]["member"] = name
                if key in parts:
                    chords[key]["part"] = parts[key]
        if item["collector"]["source"] in collectors:
            collectors[item["collector"]["source"]]["member"] = name
    return {
        "allowed_assumptions": {axis: list(names) for axis, names in envelope.allowed.items()},
        "walls": table(envelope.walls),
        "lines": lines,
        "line_reactions": table(envelope.line_reactions),
        "collectors": collectors,
        "chords": chords,
        "members": members,
    }


def members_to_json(envelope, units: OutputUnits) -> dict:
    """Chords and collectors by member (grid line and bay), both roles, in output units:
    ``chord`` (tension, compression; sources: the outline edges or declared chords, and
    "across": the bar under load across it in the semi-rigid model), ``collector`` (tension,
    compression without and with ASCE 7-16 §12.10.2.1), and the member's ``design`` value
    with the role that governs it."""
    from .postprocess.envelope import member_envelopes  # postprocess imports this module

    out = {}
    for name, m in member_envelopes(envelope).items():
        (tension, t_role), (compression, c_role), (design, role) = m.tension, m.compression, m.design
        member = m.member
        out[name] = {
            "line": member.line,
            "from": None if not np.isfinite(member.start[0]) else [_r(units.length_out(v)) for v in member.start],
            "to": None if not np.isfinite(member.end[0]) else [_r(units.length_out(v)) for v in member.end],
            "chord": {"sources": list(member.chords), "bays": member.chord_bays,
                      "tension": _governing(m.chord_tension, units),
                      "compression": _governing(m.chord_compression, units)},
            "collector": {"source": member.collector,
                          "tension": _governing(m.collector_tension, units),
                          "compression": _governing(m.collector_compression, units),
                          "tension_with_overstrength": _governing(m.collector_tension_omega, units),
                          "compression_with_overstrength": _governing(m.collector_compression_omega, units)},
            "tension": None if tension is None else {**_governing(tension, units), "role": t_role},
            "compression": None if compression is None else {**_governing(compression, units), "role": c_role},
            "design": {**_governing(design, units), "role": role},
        }
    return out


def comparison_to_json(table: dict, units: OutputUnits) -> dict:
    out: dict = {}
    for wall_id, per_case in table.items():
        out[wall_id] = {}
        for case_name, values in per_case.items():
            out[wall_id][case_name] = {
                key: (None if value is None else (_r(value, 4) if "/" in key else _r(units.force_out(value))))
                for key, value in values.items()
            }
    return out


def irregularity_to_json(item, units: OutputUnits) -> dict:
    """One ASCE 7-16 Table 12.3-1 check (a :class:`planshear.postprocess.irregularity.Irregularity`)
    in output units: lengths and displacements as the plan's, areas in length units²."""
    from .postprocess.irregularity import VALUE_KINDS  # that module imports this one

    convert = {
        "displacement": lambda v: _r(units.displacement_out(v)),
        "length": lambda v: _r(units.length_out(v)),
        "area": lambda v: _r(units.length_out(units.length_out(v))),
    }
    values = {}
    for key, value in item.values.items():
        kind = VALUE_KINDS.get(key)
        if kind is None:
            values[key] = value
        elif np.ndim(value):
            values[key] = [convert[kind](float(v)) for v in value]
        else:
            values[key] = convert[kind](float(value))
    out = {"type": item.type, "name": item.name, "clause": item.clause, "present": item.present,
           "values": values, "applies": item.applies, "sections": list(item.sections),
           "consequence": item.consequence}
    for key in ("method", "load", "axis"):
        if getattr(item, key) is not None:
            out[key] = getattr(item, key)
    return out


def checks_to_json(checks, units: OutputUnits) -> dict | None:
    """Design checks (a :class:`planshear.postprocess.checks.DesignChecks`), failures first:
    demand and capacity in force or unit-shear units, D/C, status, governing case."""
    if checks is None:
        return None

    def out(value: float | None, quantity: str) -> float | None:
        if value is None:
            return None
        return _r(units.line_force_out(value) if quantity == "unit shear" else units.force_out(value))

    items = []
    for c in checks.checks:
        g = c.governing
        items.append({
            "kind": c.kind, "item": c.item, "quantity": c.quantity,
            "unit": units.line_force if c.quantity == "unit shear" else units.force,
            "demand": out(c.demand, c.quantity), "capacity": out(c.capacity, c.quantity),
            "ratio": None if c.ratio is None else _r(c.ratio, 4), "status": c.status,
            "assumption": None if g is None else g.assumption, "case": None if g is None else g.case,
            "combination_factor": None if g is None else _r(g.factor, 4),
            **({"note": c.note} if c.note else {}),
        })
    return {
        "basis": checks.basis or "unfactored (no [design] basis)",
        "rule": "D/C = design demand / capacity on the design basis; above 1 fails",
        "failures": len(checks.failures),
        "failing_items": len({c.item for c in checks.failures}),
        "items": items,
    }


def splices_to_json(splices, units: OutputUnits) -> list[dict]:
    """Member force at each splice (:class:`planshear.postprocess.checks.Splice`): the member it
    sits in, the largest tension and compression with their governing case."""
    return [{"name": s.name, "at": [_r(units.length_out(v)) for v in s.at], "member": s.member,
             "tension": _governing(s.tension, units), "compression": _governing(s.compression, units)}
            for s in splices]


def traceability_to_json(trace, units: OutputUnits) -> dict:
    """The traced numbers (planshear.postprocess.traceability) in output units, each step as
    {quantity, formula, numbers, value, unit} so that a reviewer can repeat it."""
    F, L = units.force, units.length
    f_out, l_out, q_out = units.force_out, units.length_out, units.line_force_out
    area_unit, pressure_unit = f"{L}²", f"{F}/{L}²"

    def area(v):
        return l_out(l_out(v))

    def pressure(v):
        return f_out(v) * units.length_factor**2

    def n(v):
        return f"{v:.5g}"

    weights = {}
    for b in trace.weights:
        items = []
        for item in b.items:
            entry = {"kind": item.kind, "label": item.label, "weight": _r(f_out(item.weight))}
            if item.kind == "area":
                less = "".join(f" − {n(area(a))}" for _, a in item.deductions)
                entry |= {"gross_area": _r(area(item.gross)), "deductions": [
                    {"opening": name, "area": _r(area(a))} for name, a in item.deductions],
                    "net_area": _r(area(item.quantity)), "area_weight": _r(pressure(item.intensity)),
                    "calculation": f"({n(area(item.gross))}{less}) {area_unit} × {n(pressure(item.intensity))} "
                                   f"{pressure_unit} = {n(f_out(item.weight))} {F}"}
            elif item.kind == "line":
                entry |= {"length": _r(l_out(item.quantity)), "line_weight": _r(q_out(item.intensity)),
                          "calculation": f"{n(l_out(item.quantity))} {L} × {n(q_out(item.intensity))} {F}/{L} = "
                                         f"{n(f_out(item.weight))} {F}"}
            else:
                entry["calculation"] = f"{n(f_out(item.weight))} {F} as given"
            items.append(entry)
        out = {"items": items, "total": _r(f_out(b.total)), "used_in_analysis": _r(f_out(b.used)),
               "difference": _r(f_out(b.total - b.used)),
               "units": {"area": area_unit, "area_weight": pressure_unit, "line_weight": units.line_force, "weight": F}}
        if b.fpx is not None:
            SDS, Ie, ratio = b.fpx_inputs
            w = f_out(b.used)
            out["fpx"] = {
                "clause": "ASCE 7-16 §12.10.1.1", "wpx": _r(w), "SDS": SDS, "Ie": Ie, "story_force_ratio": ratio,
                "equations": {
                    "12.10-1": {"formula": "Fpx = (ΣFi/Σwi)·wpx", "numbers": f"{n(ratio)} × {n(w)}",
                                "value": _r(f_out(b.fpx.eq_12_10_1))},
                    "12.10-2": {"formula": "Fpx,min = 0.2·SDS·Ie·wpx", "numbers": f"0.2 × {n(SDS)} × {n(Ie)} × {n(w)}",
                                "value": _r(f_out(b.fpx.eq_12_10_2))},
                    "12.10-3": {"formula": "Fpx,max = 0.4·SDS·Ie·wpx", "numbers": f"0.4 × {n(SDS)} × {n(Ie)} × {n(w)}",
                                "value": _r(f_out(b.fpx.eq_12_10_3))},
                },
                "governing": b.fpx.governing, "Fpx": _r(f_out(b.fpx.value)), "unit": F,
            }
        weights[b.load] = out

    # Wall terms in one consistent set a calculator takes directly: kip and in, or kN and mm.
    imperial = units.force == "kip"
    cf, cl = (units.force_factor, 0.0254) if imperial else (1000.0, 0.001)
    c_force, c_len = ("kip", "in") if imperial else ("kN", "mm")
    kinds = {"E": (cf / cl**2, f"{c_force}/{c_len}²"), "G": (cf / cl**2, f"{c_force}/{c_len}²"),
             "t": (cl, c_len), "h": (cl, c_len), "d": (cl, c_len), "b": (cl, c_len), "EA": (cf, c_force),
             "Ga": (cf / cl, f"{c_force}/{c_len}"), "k_hd": (cf / cl, f"{c_force}/{c_len}"),
             "k": (cf / cl, f"{c_force}/{c_len}")}
    flex_unit, flex_factor = f"{c_len}/{c_force}", cl / cf
    walls = {}
    for wall in trace.walls:
        v = {key: value / kinds[key][0] for key, value in wall.inputs.items() if key in kinds}
        numbers = {}
        if {"E", "G", "t", "h", "d"} <= set(v):
            cantilever = "3EI" in wall.formula
            inertia = v["t"] * v["d"] ** 3 / 12
            numbers["flexure"] = (f"h³/({3 if cantilever else 12}·E·I), I = t·d³/12 = {n(inertia)} {c_len}⁴: "
                                  f"{n(v['h'])}³/({3 if cantilever else 12} × {n(v['E'])} × {n(inertia)})")
            numbers["shear"] = f"1.2·h/(A·G), A = t·d: 1.2 × {n(v['h'])}/({n(v['t'])} × {n(v['d'])} × {n(v['G'])})"
        elif {"Ga", "h", "b", "EA"} <= set(v):
            numbers["bending"] = f"2h³/(3·EA·b²): 2 × {n(v['h'])}³/(3 × {n(v['EA'])} × {n(v['b'])}²)"
            numbers["shear"] = f"h/(Ga·b): {n(v['h'])}/({n(v['Ga'])} × {n(v['b'])})"
            if "k_hd" in v:
                numbers["holdown"] = f"h²/(k_hd·b²): {n(v['h'])}²/({n(v['k_hd'])} × {n(v['b'])}²)"
        elif "k" in v:
            numbers["given"] = f"1/k: 1/{n(v['k'])}"
        total = sum(wall.terms.values())
        walls[wall.id] = {
            "line": wall.line, "formula": wall.formula,
            "inputs": {key: {"value": _r(value), "unit": kinds[key][1]} for key, value in v.items()},
            # A wall model that records no inputs still shows its terms, without the numbers.
            "terms": {key: {"calculation": numbers.get(key, f"{key} (inputs not recorded)"),
                            "value": _r(value / flex_factor)}
                      for key, value in wall.terms.items()},
            "flexibility_total": _r(total / flex_factor), "flexibility_unit": flex_unit,
            "k": _r(1.0 / total * flex_factor), "k_unit": f"{c_force}/{c_len}",
            "k_in_results_units": _r(units.stiffness_out(wall.k)),
        }

    spans = [_worked_span_to_json(span, units) for span in trace.spans]
    return {"seismic_weight": weights, "wall_stiffness": walls, "worked_spans": spans, "notes": list(trace.notes)}


def _worked_span_to_json(span, units: OutputUnits) -> dict:
    """One worked span as steps with formula, the numbers put in, and the result."""
    F, L = units.force, units.length
    f_out, l_out, q_out = units.force_out, units.length_out, units.line_force_out

    def n(v):
        return f"{v:.5g}"

    def m_out(v):
        return f_out(l_out(v))

    length = l_out(span.s_right - span.s_left)
    s_l, s_r = l_out(span.s_left), l_out(span.s_right)
    W, xbar = f_out(span.total), l_out(span.centroid)
    R_l, R_r = f_out(span.reaction_left), f_out(span.reaction_right)
    M = m_out(span.m_max)
    steps = []

    def step(quantity, formula, numbers, value, unit):
        steps.append({"quantity": quantity, "formula": formula, "numbers": numbers, "value": _r(value), "unit": unit})

    pieces = [{"from": _r(l_out(a)), "to": _r(l_out(b)), "diaphragm_length": _r(l_out(ell)),
               "w_start": _r(q_out(w0)), "w_end": _r(q_out(w1))} for a, b, ell, w0, w1 in span.pieces]
    if span.force_ratio is not None:
        how = (f"w(s) = (F/W) × (area weight × diaphragm length l(s) across the load (openings excluded) + weights across the load, "
               f"point weights over their footprint), F/W = {n(span.force_ratio)} (case force / seismic weight)")
    else:
        how = "w(s) = wind intensity on the windward and leeward faces, spread across the depth of the diaphragm"
    L_sym = f"{n(length)} {L}"
    if span.uniform is not None:
        w = q_out(span.uniform)
        step("w", "uniform over the span", how, w, units.line_force)
        step("W", "w·L", f"{n(w)} × {L_sym}", W, F)
        step("R", "w·L/2", f"{n(w)} × {n(length)}/2", R_l, F)
        step("V_max", "R (at the supports)", f"{n(R_l)}", f_out(span.v_max), F)
        step("M_max", "w·L²/8", f"{n(w)} × {n(length)}²/8", M, f"{F}·{L}")
    else:
        parts = " + ".join(f"({n(p['w_start'])} + {n(p['w_end'])})/2 × {n(p['to'] - p['from'])}" for p in pieces)
        if len(span.points):
            parts += "".join(f" + {n(f_out(p))}" for _, p in span.points)
        step("W", "Σ (w_start + w_end)/2 × (to − from) + point loads in the span", parts, W, F)
        step("x̄", "position of the resultant: Σ W_k·x_k / W (x_k of a trapezoid: from + Δ(w_start + 2w_end)/(3(w_start + w_end)))",
             f"from the pieces above; the span runs from {n(s_l)} to {n(s_r)} {L}", xbar, L)
        step("R_left", "W·(s_right − x̄)/L", f"{n(W)} × ({n(s_r)} − {n(xbar)})/{n(length)}", R_l, F)
        step("R_right", "W − R_left", f"{n(W)} − {n(R_l)}", R_r, F)
        step("V_max", "largest |V|, at a support for loads of one sign", f"max({n(abs(R_l))}, {n(abs(R_r))})",
             f_out(span.v_max), F)
        step("M_max", "∫V ds from the left support to V = 0", f"V = 0 at {n(l_out(span.m_max_at))} {L}", M,
             f"{F}·{L}")
        step("M_max, uniform equivalent", "W·L/8 (the same W spread uniformly; a quick check)",
             f"{n(W)} × {n(length)}/8", W * length / 8, f"{F}·{L}")
    b_l, b_r = l_out(span.b_left), l_out(span.b_right)
    step("v_left", "V/b at the left line, b = diaphragm depth beside it (openings excluded)",
         f"{n(abs(R_l))}/{n(b_l)}", q_out(span.unit_shear_left), units.line_force)
    step("v_right", "V/b at the right line", f"{n(abs(R_r))}/{n(b_r)}", q_out(span.unit_shear_right), units.line_force)
    d = l_out(span.depth_at_m)
    step("T = C", "M/d, d = outline depth at the section of M_max", f"{n(M)}/{n(d)}", f_out(span.chord), F)

    def compare(name, hand, program, unit):
        diff = hand - program
        rel = diff / program if program else None if diff else 0.0  # None: not defined (program value 0)
        return {"quantity": name, "hand": _r(hand), "program": _r(program), "difference": _r(diff),
                "relative_difference": None if rel is None else float(f"{rel:.2e}"), "unit": unit}

    checks = [
        compare(f"unit shear at line {span.left} (right side)", q_out(span.unit_shear_left),
                q_out(span.program["unit_shear_left"]), units.line_force),
        compare(f"unit shear at line {span.right} (left side)", q_out(span.unit_shear_right),
                q_out(span.program["unit_shear_right"]), units.line_force),
        compare(f"chord force M/d at {n(l_out(span.program['chord_at']))} {L} (the program's station nearest to M_max)",
                f_out(span.program["hand_chord_at"]), f_out(span.program["chord"]), F),
    ] + [compare(f"line {name} force (Σ of the span reactions beside it)", f_out(hand), f_out(program), F)
         for name, (hand, program) in span.line_check.items()]
    return {
        "load_axis": span.axis, "case": span.case, "span": f"{span.left}-{span.right}", "from": _r(s_l), "to": _r(s_r),
        "L": _r(length), "why": "the span with the largest unit shear V/b at its ends among the flexible cases along "
                                f"{span.axis}",
        "load": {"how": how, "pieces": pieces,
                 "points_in_span": [{"at": _r(l_out(s)), "P": _r(f_out(p))} for s, p in span.points],
                 "on_the_lines": {span.left: _r(f_out(span.on_lines[0])), span.right: _r(f_out(span.on_lines[1]))},
                 "note": "loads exactly on a support line go straight to that line and are not in V or M"},
        "steps": steps, "check_against_flexible": checks,
        "units": {"force": F, "length": L, "line_load": units.line_force, "moment": f"{F}·{L}"},
    }
