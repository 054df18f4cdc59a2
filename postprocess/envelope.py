"""Comparison of the assumptions and the design envelope.

The envelope of a quantity is its largest magnitude over the assumptions the code allows
(see :mod:`planshear.postprocess.classify`) and over every case, with the assumption and
case that govern. Values under assumptions that are not allowed are kept as information.
Because every base case is enveloped together with its ±ecc cases, accidental torsion
never reduces a design force. Collector forces of seismic cases are also given with the
overstrength of ASCE 7-16 §12.10.2.1, separately. Chords and collectors also get their
largest tension and largest compression with the cases that govern them; ties go to the
base case and the simpler assumption.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace

from planshear.code.asce7_16 import collector_increase_applies_12_3_3_4
from planshear.loads import LoadCase
from planshear.results import MethodResult

from .classify import Classification
from .transfer import transfer_peaks

__all__ = ["Governing", "Envelope", "build_envelope", "compare_walls", "with_irregularity_increase"]


@dataclass(frozen=True)
class Governing:
    value: float  # signed, SI, with the design basis' load-combination factor applied
    assumption: str
    case: str
    factor: float = 1.0  # that load-combination factor (ASCE 7-16 §2.3 / §2.4)


@dataclass(frozen=True)
class Envelope:
    allowed: dict[str, tuple[str, ...]]  # axis → assumptions allowed for design
    walls: dict[str, dict[str, Governing | None]]  # id → {"design", "information", <assumption>…}
    line_reactions: dict[str, dict[str, Governing | None]]
    collectors: dict[str, dict[str, Governing | None]]  # name → {"design", "with_overstrength", "information"}
    chords: dict[str, dict[str, Governing | None]]
    cautions: dict[str, str]  # line → why its semi-rigid collector value may understate the demand
    # line → the collector of its wall pieces in the semi-rigid model ("declared", "chord",
    # "implied", "none" or combinations such as "declared+implied")
    collector_basis: dict[str, str] = field(default_factory=dict)
    # collector → how ASCE 7-16 §12.10.2.1 set its design force ("with_overstrength"): factor on the
    # governing case's force, the value without the Exception 1 cap, the cap, which governed (N)
    collector_rules: dict[str, dict] = field(default_factory=dict)


def _allowed(classification: Classification | None, methods: dict[str, MethodResult]) -> dict[str, tuple[str, ...]]:
    result = {}
    for axis in ("x", "y"):
        names = [m for m in methods if m.startswith("semirigid")]
        if classification is None:
            names += [m for m in ("flexible", "rigid") if m in methods]
        else:
            if classification.flexible_allowed(axis) and "flexible" in methods:
                names.append("flexible")
            if classification.rigid_allowed and "rigid" in methods:
                names.append("rigid")
        result[axis] = tuple(names)
    return result


#: Relative difference below which two values are a tie (round-off between assumptions).
TIE = 1e-6
#: Simpler assumptions first: a tie goes to the earlier one (and to a base case before a ±ecc case).
SIMPLICITY = ("flexible", "rigid", "semirigid")


def _rank(assumption: str, case: LoadCase | None) -> tuple[int, int]:
    simplicity = SIMPLICITY.index(assumption) if assumption in SIMPLICITY else len(SIMPLICITY)
    return (0 if case is None or case.eccentricity_sign == 0 else 1, simplicity)


def _better(current: Governing | None, value: float, assumption: str, case: str,
            cases: dict[str, LoadCase] | None = None, sign: float = 0.0, factor: float = 1.0) -> Governing | None:
    """The governing value after seeing ``value``: the larger magnitude (``sign`` 0), or the
    larger ``sign``·value among values of that sign (+1 tension, −1 compression). Ties within
    :data:`TIE` go to the base case and the simpler assumption, not to round-off."""
    measure = (lambda v: abs(v)) if sign == 0 else (lambda v: sign * v)
    if measure(value) <= 0 and sign != 0:
        return current
    if current is None:
        return Governing(value, assumption, case, factor)
    new, old = measure(value), measure(current.value)
    if new > old * (1 + TIE) + 1e-300:
        return Governing(value, assumption, case, factor)
    if new >= old * (1 - TIE) and cases is not None:
        if _rank(assumption, cases.get(case)) < _rank(current.assumption, cases.get(current.case)):
            return Governing(value, assumption, case, factor)
    return current


def build_envelope(
    methods: dict[str, MethodResult], cases: list[LoadCase] | tuple[LoadCase, ...], classification: Classification | None,
    chosen: tuple[str, ...] | None = None,
) -> Envelope:
    """Envelope over allowed assumptions and all cases (see module docstring). ``chosen``
    replaces the code-allowed assumptions by the engineer's (the sensitivity runs of the
    semi-rigid model join "semirigid")."""
    allowed = _allowed(classification, methods)
    if chosen is not None:
        picked = tuple(m for m in methods if m.split("@")[0] in chosen)
        allowed = {axis: picked for axis in allowed}
    by_name = {c.name: c for c in cases}
    walls: dict[str, dict[str, Governing | None]] = {}
    reactions: dict[str, dict[str, Governing | None]] = {}
    collectors: dict[str, dict[str, Governing | None]] = {}
    chords: dict[str, dict[str, Governing | None]] = {}
    def better(current, value, assumption, case_name, sign=0.0, factor=1.0):
        """Like _better, with ``value`` multiplied by ``factor`` (the combination factor)."""
        return _better(current, factor * value, assumption, case_name, by_name, sign, factor)

    def extremes(slot: dict, values, assumption: str, case_name: str, prefix: str = "", factor: float = 1.0,
                 combination: float = 1.0) -> None:
        """Largest tension and compression of a diagram (N) into slot[prefix + "tension"|"compression"]."""
        if len(values) == 0:
            return
        top, bottom = float(max(values)), float(min(values))
        if by_name[case_name].kind == "seismic":  # only +axis is analyzed: the −axis case is its negative
            top, bottom = max(top, -bottom), min(bottom, -top)
        slot[prefix + "tension"] = better(slot.get(prefix + "tension"), factor * top, assumption, case_name, 1.0,
                                          combination)
        slot[prefix + "compression"] = better(slot.get(prefix + "compression"), factor * bottom, assumption, case_name,
                                              -1.0, combination)

    for assumption, method in methods.items():
        for case_name, result in method.cases.items():
            case = by_name[case_name]
            design = assumption in allowed[case.axis]
            # ASCE 7-16 §12.10.2.1 (overstrength, its cap and exceptions) as a factor on the case's force.
            omega = case.collector_rule.factor
            # Walls and line reactions are the vertical elements' forces: Fx where the load gives it.
            to_fx = case.wall_factor
            fv, fd = case.combination.vertical, case.combination.diaphragm
            for wall_id, force in ((w, f * to_fx) for w, f in result.wall_forces.items()):
                slot = walls.setdefault(wall_id, {"design": None, "information": None})
                slot["information"] = better(slot["information"], force, assumption, case_name, factor=fv)
                slot[assumption] = better(slot.get(assumption), force, assumption, case_name, factor=fv)
                if design:
                    slot["design"] = better(slot["design"], force, assumption, case_name, factor=fv)
            for name, line in result.lines.items():
                r = reactions.setdefault(name, {"design": None, "information": None})
                c = collectors.setdefault(name, {"design": None, "with_overstrength": None, "information": None})
                r["information"] = better(r["information"], to_fx * line.reaction, assumption, case_name, factor=fv)
                c["information"] = better(c["information"], line.peak, assumption, case_name, factor=fd)
                if design:
                    r["design"] = better(r["design"], to_fx * line.reaction, assumption, case_name, factor=fv)
                    c["design"] = better(c["design"], line.peak, assumption, case_name, factor=fd)
                    c["with_overstrength"] = better(c["with_overstrength"], omega * line.peak, assumption, case_name,
                                                    factor=fd)
                    extremes(c, line.collector, assumption, case_name, combination=fd)
                    extremes(c, line.collector, assumption, case_name, "with_overstrength_", omega, fd)
            # Transfer diaphragms (flexible, rigid): their collectors and chords are enveloped too.
            extra_collectors, extra_chords = transfer_peaks(result.extra)
            for name, peak in extra_collectors:
                reactions.setdefault(name, {"design": None, "information": None})
                c = collectors.setdefault(name, {"design": None, "with_overstrength": None, "information": None})
                c["information"] = better(c["information"], peak, assumption, case_name, factor=fd)
                if design:
                    c["design"] = better(c["design"], peak, assumption, case_name, factor=fd)
                    c["with_overstrength"] = better(c["with_overstrength"], omega * peak, assumption, case_name,
                                                    factor=fd)
                    extremes(c, [peak], assumption, case_name, combination=fd)
                    extremes(c, [peak], assumption, case_name, "with_overstrength_", omega, fd)
            diagrams = [(name, chord.peak, chord.force) for name, chord in result.chords.items()]
            diagrams += [(name, peak, [peak]) for name, peak in extra_chords]
            for name, peak, values in diagrams:
                slot = chords.setdefault(name, {"design": None, "information": None})
                slot["information"] = better(slot["information"], peak, assumption, case_name, factor=fd)
                if design:
                    slot["design"] = better(slot["design"], peak, assumption, case_name, factor=fd)
                    extremes(slot, values, assumption, case_name, combination=fd)
    # The semi-rigid model lists its wall pieces with their collector (see fem/collectors.py);
    # a piece with no bar at all gets a caution naming its walls.
    bare: dict[str, list[str]] = {}
    basis: dict[str, list[str]] = {}
    for method in methods.values():
        for piece in method.extra.get("wall_pieces_without_member", ()):
            ids = bare.setdefault(piece["line"], [])
            ids += [w for w in piece["walls"] if w not in ids]
        for piece in method.extra.get("wall_pieces", ()):
            kinds = basis.setdefault(piece["line"], [])
            kinds += [k for k in piece["collector"].split("+") if k not in kinds]
    cautions = {
        name: f"walls {', '.join(ids)} on this line have no collector or chord bar in the model (no member, and "
        "neither [diaphragm] collector_EA nor chord_EA to imply one): the semi-rigid collector force there is the "
        "bar force only (here none), the sheathing drags the load to the walls; give [diaphragm] collector_EA or a "
        '[[member]] with role = "collector" on this line to read the force a collector would carry, and see the '
        "idealized results"
        for name, ids in sorted(bare.items())
    }
    collector_basis = {name: "+".join(kinds) for name, kinds in sorted(basis.items())}
    rules = {}
    for name, slots in collectors.items():
        governing = slots.get("with_overstrength")
        if governing is None:
            continue
        rule = by_name[governing.case].collector_rule
        # The collector force at that case's own force, before §12.10.2.1 (the combination factor stays).
        at_case = governing.value / rule.factor
        rules[name] = {"clause": "ASCE 7-16 §12.10.2.1", "governs": rule.governs, "factor": rule.factor,
                       "without_cap": at_case * rule.uncapped,
                       "cap": None if rule.cap is None else at_case * rule.cap, "note": rule.note}
    return Envelope(allowed, walls, reactions, collectors, chords, cautions, collector_basis, rules)


def with_irregularity_increase(envelope: Envelope, factor: float, reason: str) -> Envelope:
    """The envelope with ASCE 7-16 §12.3.3.4 applied: collector design values (design,
    tension, compression) × ``factor``, and their §12.10.2.1 values too where those do not
    include Ω0 (item 3, the Exception 1 cap, no overstrength). ``reason`` names the
    irregularities; it is recorded with each collector's rule."""
    def scaled(g: Governing | None) -> Governing | None:
        return None if g is None else Governing(factor * g.value, g.assumption, g.case, g.factor)

    collectors, rules = {}, {}
    for name, slots in envelope.collectors.items():
        rule = dict(envelope.collector_rules.get(name, {}))
        with_omega = collector_increase_applies_12_3_3_4(rule.get("governs", "no overstrength"))
        collectors[name] = {
            key: (scaled(value) if key in ("design", "tension", "compression")
                  or (key.startswith("with_overstrength") and with_omega) else value)
            for key, value in slots.items()
        }
        if rule:
            if with_omega:
                rule["without_cap"] *= factor
                rule["cap"] = None if rule["cap"] is None else rule["cap"] * factor
            rule["increase_12_3_3_4"] = (f"× {factor:g} ({reason})" if with_omega else
                                         f"× {factor:g} on the design value only; the overstrength value includes Ω0")
            rules[name] = rule
    return replace(envelope, collectors=collectors, collector_rules=rules)


def compare_walls(methods: dict[str, MethodResult]) -> dict[str, dict[str, dict[str, float | None]]]:
    """Wall force per case under each assumption, with the ratios semi-rigid / flexible
    and semi-rigid / rigid (None where a value is missing or zero)."""
    table: dict[str, dict[str, dict[str, float | None]]] = {}
    for assumption, method in methods.items():
        for case_name, result in method.cases.items():
            for wall_id, force in result.wall_forces.items():
                table.setdefault(wall_id, {}).setdefault(case_name, {})[assumption] = force
    for per_case in table.values():
        for values in per_case.values():
            semi = values.get("semirigid")
            for other in ("flexible", "rigid"):
                base = values.get(other)
                ratio = semi / base if semi is not None and base not in (None, 0.0) and abs(base) > 1e-9 else None
                values[f"semirigid/{other}"] = ratio
    return table
