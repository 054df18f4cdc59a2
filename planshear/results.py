"""Result types shared by every assumption (flexible, rigid, semi-rigid), and their
conversion to the ``results.json`` contract in the plan's output units."""

from __future__ import annotations

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
    "comparison_to_json",
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


def _r(value: float, digits: int = 6) -> float:
    """Round for the JSON file: results are engineering numbers, not bit patterns."""
    if value == 0 or not np.isfinite(value):
        return float(value)
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
                 "shear": _r(units.displacement_out(d.shear)), "ADVE": _r(units.displacement_out(d.adve)),
                 "ratio": _r(d.ratio) if np.isfinite(d.ratio) else None}
                for d in value
            ]
        elif key == "transfer":
            out[key] = [transfer_to_json(td, units) for td in value]
        elif key == "span_shear":  # (s, V, ℓ) in m, N, m → stations, V, length present, unit shear V/ℓ
            s, shear, length = value
            with np.errstate(divide="ignore", invalid="ignore"):
                unit = np.where(length > 0, shear / np.where(length > 0, length, 1.0), 0.0)
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
    return {
        "allowed_assumptions": {axis: list(names) for axis, names in envelope.allowed.items()},
        "walls": table(envelope.walls),
        "lines": lines,
        "line_reactions": table(envelope.line_reactions),
        "collectors": collectors,
        "chords": table(envelope.chords),
    }


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
