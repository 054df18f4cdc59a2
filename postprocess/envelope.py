"""Comparison of the assumptions and the design envelope.

The envelope of a quantity is its largest magnitude over the assumptions the code allows
(see :mod:`planshear.postprocess.classify`) and over every case, with the assumption and
case that govern. Values under assumptions that are not allowed are kept as information.
Because every base case is enveloped together with its ±ecc cases, accidental torsion
never reduces a design force. Collector forces of seismic cases are also given with the
overstrength of ASCE 7-16 §12.10.2.1, separately. Chords and collectors also get their
largest tension and largest compression with the cases that govern them; ties go to the
base case and the simpler assumption.

Roles by load direction (semi-rigid model): a bar carries one force, whatever acts on it.
A member along x is a collector under load along x (it drags the diaphragm's shear into the
walls of its line) and a chord under load along y (it takes M/d of the span across it).
So the semi-rigid bar force of a grid line enters its collector role only in the cases
along the line, and in the cases across it enters the member's chord role (slots
``across_tension`` / ``across_compression`` of the line); where walls stand on the line they
take force out of it under torsion, and that drag part, estimated by the flexible method's
collector rule (:func:`torsional_collector`), is the only part that takes Ω0: the collector
role with Ω0 of such a case is the bar force + (Ω0 − 1) × drag, station by station; an outline-edge
chord on a grid line enters the chord role only in the cases across it (in the cases along
it the same bar is the line's collector). The idealized methods keep their roles apart by
construction (collector = running sum along the line, chord = M/depth) and are taken as
they are. Members are named by grid line and bay (:func:`member_layout`).

Transfer regions (flexible, rigid) act on members that lie on grid lines: the strut that
extends an interrupted chord, and the transfer shear a region delivers to the lines at its
ends, are forces in the member of that line in the same case, so they are added to the
line's collector diagram station by station (:func:`line_collectors_with_transfer`) and take
Ω0 with it. A region's support chord is already the total chord force there (main M/d plus
the transfer reaction it collects, see :mod:`.transfer`), so it is enveloped with the chord
role of the member on its line, not added to it. The transfer items stay listed on their own.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace

import numpy as np

from planshear.code.asce7_16 import collector_increase_applies_12_3_3_4
from planshear.loads import LoadCase
from planshear.plan import merge_intervals
from planshear.results import MethodResult

from .beam_analogy import line_sides, running_axial_force
from .classify import Classification
from .transfer import transfer_peaks

__all__ = ["Governing", "Envelope", "MemberName", "MemberLayout", "MemberEnvelope", "build_envelope", "compare_walls",
           "member_envelopes", "member_layout", "with_irregularity_increase"]


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
    layout: MemberLayout | None = None  # the plan's members by grid line and bay (roles kept apart when given)
    # grid line → {"collector": transfer items whose force the line's collector includes (added
    # station by station), "chord": transfer-region chords on the line (each the total chord force
    # there, main + transfer share, enveloped with the line's chord role, not added to it)}
    transfer_parts: dict[str, dict[str, tuple[str, ...]]] = field(default_factory=dict)


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
    chosen: tuple[str, ...] | None = None, layout: MemberLayout | None = None,
) -> Envelope:
    """Envelope over allowed assumptions and all cases (see module docstring). ``chosen``
    replaces the code-allowed assumptions by the engineer's (the sensitivity runs of the
    semi-rigid model join "semirigid"). ``layout`` (from :func:`member_layout`) keeps the
    chord and collector roles of the semi-rigid bar forces apart by load direction."""
    allowed = _allowed(classification, methods)
    if chosen is not None:
        picked = tuple(m for m in methods if m.split("@")[0] in chosen)
        allowed = {axis: picked for axis in allowed}
    by_name = {c.name: c for c in cases}
    walls: dict[str, dict[str, Governing | None]] = {}
    reactions: dict[str, dict[str, Governing | None]] = {}
    collectors: dict[str, dict[str, Governing | None]] = {}
    chords: dict[str, dict[str, Governing | None]] = {}
    transfer_parts: dict[str, dict[str, list[str]]] = {}

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

    def collect(c: dict, values, assumption: str, case_name: str, design: bool, omega: float, fd: float) -> None:
        """A collector diagram (N) of one case into its slots, with Ω0 (``omega``) and the combination factor."""
        values = np.asarray(values)
        peak = float(values[np.argmax(np.abs(values))]) if len(values) else 0.0  # as LineResult.peak
        c["information"] = better(c["information"], peak, assumption, case_name, factor=fd)
        if design:
            c["design"] = better(c["design"], peak, assumption, case_name, factor=fd)
            c["with_overstrength"] = better(c["with_overstrength"], omega * peak, assumption, case_name, factor=fd)
            extremes(c, values, assumption, case_name, combination=fd)
            extremes(c, values, assumption, case_name, "with_overstrength_", omega, fd)

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
            semirigid = assumption.startswith("semirigid") and layout is not None
            # Flexible, rigid: the collector of a line that a transfer region acts on carries the
            # region's share and the strut extending an offset chord too (same member, same case).
            with_transfer = result.extra.get("collectors_with_transfer", {})
            for name, (_, _, parts) in with_transfer.items():
                slot = transfer_parts.setdefault(name, {"collector": [], "chord": []})["collector"]
                slot += [p for p in parts if p not in slot]
            for td in result.extra.get("transfer", ()):
                for strut in td.struts:
                    if strut.role == "support" and strut.line is not None:
                        slot = transfer_parts.setdefault(strut.line, {"collector": [], "chord": []})["chord"]
                        key = f"{td.name} chord on {strut.label}"
                        slot += [key] if key not in slot else []

            for name in with_transfer.keys() - result.lines.keys():  # e.g. a strut on a line across the load
                c = collectors.setdefault(name, {"design": None, "with_overstrength": None, "information": None})
                collect(c, with_transfer[name][1], assumption, case_name, design, omega, fd)
            for name, line in result.lines.items():
                r = reactions.setdefault(name, {"design": None, "information": None})
                c = collectors.setdefault(name, {"design": None, "with_overstrength": None, "information": None})
                r["information"] = better(r["information"], to_fx * line.reaction, assumption, case_name, factor=fv)
                if design:
                    r["design"] = better(r["design"], to_fx * line.reaction, assumption, case_name, factor=fv)
                if semirigid and layout.line_axis.get(name) not in (None, case.axis):
                    # Load across the line: the bar is a chord here (no Ω0), see the module docstring,
                    # except the part that collects the line's wall forces (torsion), which takes Ω0.
                    if design:
                        extremes(c, line.collector, assumption, case_name, "across_", combination=fd)
                        drag = torsional_collector(layout, name, result.wall_forces, np.asarray(line.stations))
                        if omega != 1.0 and len(drag) and np.abs(drag).max() > 1e-9 * case.force:
                            combined = np.asarray(line.collector) + (omega - 1.0) * drag
                            peak = float(combined[np.argmax(np.abs(combined))])
                            c["with_overstrength"] = better(c["with_overstrength"], peak, assumption, case_name,
                                                            factor=fd)
                            extremes(c, combined, assumption, case_name, "with_overstrength_", 1.0, fd)
                    continue
                diagram = with_transfer[name][1] if name in with_transfer else line.collector
                collect(c, diagram, assumption, case_name, design, omega, fd)
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
                if semirigid and layout.chord_line.get(name) is not None and layout.chord_axis.get(name) == case.axis:
                    continue  # load along a chord on a grid line: that bar is the line's collector here
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
    parts = {line: {role: tuple(names) for role, names in roles.items()} for line, roles in sorted(transfer_parts.items())}
    return Envelope(allowed, walls, reactions, collectors, chords, cautions, collector_basis, rules, layout, parts)


def with_irregularity_increase(envelope: Envelope, factor: float, reason: str) -> Envelope:
    """The envelope with ASCE 7-16 §12.3.3.4 applied: collector design values (design,
    tension, compression, and the largest of all assumptions) × ``factor``, and their
    §12.10.2.1 values too where those do not include Ω0 (item 3; the Exception 1 cap, a force
    from Eq. 12.10-3 with the basic combinations; no overstrength): the exception of
    §12.3.3.4 names forces calculated with the overstrength factor, which these are not.
    ``reason`` names the irregularities; it is recorded with each collector's rule."""
    def scaled(g: Governing | None) -> Governing | None:
        return None if g is None else Governing(factor * g.value, g.assumption, g.case, g.factor)

    collectors, rules = {}, {}
    for name, slots in envelope.collectors.items():
        rule = dict(envelope.collector_rules.get(name, {}))
        with_omega = collector_increase_applies_12_3_3_4(rule.get("governs", "no overstrength"))
        collectors[name] = {
            key: (scaled(value) if key in ("design", "tension", "compression", "information")
                  or (key.startswith("with_overstrength") and with_omega) else value)
            for key, value in slots.items()
        }
        if rule:
            if with_omega:
                rule["without_cap"] *= factor
                rule["cap"] = None if rule["cap"] is None else rule["cap"] * factor
            rule["increase_12_3_3_4"] = (f"× {factor:g} ({reason}; this §12.10.2.1 value does not include Ω0 "
                                         f"({rule.get('governs', '')}), so §12.3.3.4's exception for forces with "
                                         "overstrength does not apply)" if with_omega else
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


# --------------------------------------------------------------------------------------
# Members by grid line and bay
# --------------------------------------------------------------------------------------


@dataclass(frozen=True)
class MemberName:
    """One physical member as a reviewer names it (see :func:`member_layout`)."""

    name: str  # "line B, 1–4", "edge at y = 12 ft, 2–3"
    line: str | None  # grid line it lies on (None: an outline edge off the grid)
    start: tuple[float, float]  # m, plan coordinates of its ends
    end: tuple[float, float]
    collector: str | None  # key of its collector role in Envelope.collectors (the grid line)
    chords: tuple[str, ...]  # keys of its chord role in Envelope.chords ("edge 3", "chord on B")
    chord_bays: str | None  # where along the member the chord role acts, e.g. "3–4"


@dataclass(frozen=True)
class MemberLayout:
    """The plan's chords and collectors by grid line and bay, and the axis each runs along."""

    members: tuple[MemberName, ...]
    line_axis: dict[str, str | None]  # grid line → axis it runs along (None: skewed)
    chord_line: dict[str, str | None]  # chord key → grid line it lies on
    chord_axis: dict[str, str | None]  # chord key → axis it runs along
    # grid line → its walls (id, t0, t1 m, sign of the wall's force direction along the line)
    line_walls: dict[str, tuple[tuple[str, float, float, float], ...]] = field(default_factory=dict)
    # grid line → pieces (t0, t1 m) of the line with diaphragm on or beside it
    line_pieces: dict[str, tuple[tuple[float, float], ...]] = field(default_factory=dict)
    # chord key → the chord part as a reviewer names it ("line B, 3–4"; off the grid: its member's name)
    chord_part: dict[str, str] = field(default_factory=dict)


def _cross(a: np.ndarray, b: np.ndarray) -> float:
    return float(a[0] * b[1] - a[1] * b[0])


def _bays(plan, origin: np.ndarray, direction: np.ndarray, t0: float, t1: float, skip: str | None, tol: float) -> str:
    """"1–4": the grid lines crossing the line (origin, direction) at t0 and t1; an end on no
    crossing grid line is written as its coordinate ("x = 62 ft")."""
    crossings = []
    for g in plan.grid_lines:
        denominator = _cross(direction, g.direction)
        if g.name == skip or abs(denominator) < 1e-9:
            continue
        crossings.append((_cross(g.origin - origin, g.direction) / denominator, g.name))

    def end(t: float) -> str:
        near = sorted((abs(tc - t), name) for tc, name in crossings if abs(tc - t) <= tol)
        if near:
            return near[0][1]
        p = origin + t * direction
        axis = 0 if abs(direction[0]) >= abs(direction[1]) else 1
        return f"{'xy'[axis]} = {p[axis] / plan.length_scale:.4g} {plan.length_unit}"

    lo, hi = sorted((t0, t1))
    return f"{end(lo)}–{end(hi)}"


def member_layout(plan) -> MemberLayout:
    """Name every chord and collector by grid line and bay, one member per physical line.

    Rule: a member on a grid line is "line L, a–b", where a and b are the grid lines that cross
    L at the ends of its extent over the diaphragm; where the diaphragm leaves the line and
    comes back (a notch, an opening with no declared member across it) the pieces are listed,
    "line L, 1–2 and 3–4". One member per grid line carries the line's collector role (its
    design value is the largest over all its pieces) and the chord role of every outline edge
    (or declared chord) on it, with the bays of the chord part ("chord 3–4"); each chord part
    is also named on its own ("line L, 3–4", :attr:`MemberLayout.chord_part`). An outline edge on no grid line is "edge at y = 12 ft,
    a–b" (its coordinate, then the crossing grid lines at its ends); an end where no grid line
    crosses is written as its coordinate ("x = 62 ft"); a skewed edge off the grid is named by
    its end coordinates. The outline is counter-clockwise, edge i from corner i to i + 1.
    """
    size = float(np.ptp(plan.outline, axis=0).max())
    tol = 1e-4 * size
    line_axis = {g.name: g.parallel_to for g in plan.grid_lines}
    chord_line: dict[str, str | None] = {}
    chord_axis: dict[str, str | None] = {}
    on_line: dict[str, list[tuple[str, float, float]]] = {}
    off_grid = []
    outline = plan.outline
    for i in range(len(outline)):
        a, b = outline[i], outline[(i + 1) % len(outline)]
        key = f"edge {i + 1}"
        d = (b - a) / float(np.hypot(*(b - a)))
        axis = "x" if abs(d[1]) <= 1e-9 else "y" if abs(d[0]) <= 1e-9 else None
        chord_axis[key] = axis
        host = next((g for g in plan.grid_lines
                     if abs(_cross(a - g.origin, g.direction)) <= tol and abs(_cross(b - g.origin, g.direction)) <= tol),
                    None)
        chord_line[key] = None if host is None else host.name
        if host is not None:
            on_line.setdefault(host.name, []).append((key, float((a - host.origin) @ host.direction),
                                                      float((b - host.origin) @ host.direction)))
        else:
            off_grid.append((key, a, b, d, axis))
    for member in plan.members:
        if member.role == "chord":
            key = f"chord on {member.line}"
            chord_line[key], chord_axis[key] = member.line, line_axis.get(member.line)
            on_line.setdefault(member.line, []).append((key, member.t_from, member.t_to))
    # The line's pieces with diaphragm on or beside it (shapely cuts: once per line).
    sides = {g.name: tuple(line_sides(plan, g, 1 if g.parallel_to == "x" else 0, size)[2])
             for g in plan.grid_lines if g.parallel_to is not None}
    members = []
    chord_part: dict[str, str] = {}
    for g in plan.grid_lines:
        chords = on_line.get(g.name, [])
        pieces = _member_pieces(plan, g, chords, sides.get(g.name, ()), tol)
        t_lo, t_hi = pieces[0][0], pieces[-1][1]
        chord_bays = None
        if chords:
            chord_bays = _bays(plan, g.origin, g.direction, min(min(t0, t1) for _, t0, t1 in chords),
                               max(max(t0, t1) for _, t0, t1 in chords), g.name, tol)
            for key, t0, t1 in chords:
                chord_part[key] = f"line {g.name}, {_bays(plan, g.origin, g.direction, t0, t1, g.name, tol)}"
        bays = " and ".join(_bays(plan, g.origin, g.direction, a, b, g.name, tol) for a, b in pieces)
        members.append(MemberName(
            f"line {g.name}, {bays}", g.name,
            tuple(g.point(t_lo)), tuple(g.point(t_hi)), g.name, tuple(k for k, _, _ in chords), chord_bays))
    for key, a, b, d, axis in off_grid:
        unit, scale = plan.length_unit, plan.length_scale
        if axis is None:
            name = (f"edge ({a[0] / scale:.4g}, {a[1] / scale:.4g})–({b[0] / scale:.4g}, {b[1] / scale:.4g}) {unit}")
        else:
            across = 1 if axis == "x" else 0
            name = (f"edge at {'xy'[across]} = {a[across] / scale:.4g} {unit}, "
                    f"{_bays(plan, a, d, 0.0, float(np.hypot(*(b - a))), None, tol)}")
        members.append(MemberName(name, None, tuple(a), tuple(b), None, (key,), None))
        chord_part[key] = name
    line_walls: dict[str, list] = {}
    for wall in plan.walls:
        g = plan.line(wall.line)
        t0, t1 = sorted(((wall.start - g.origin) @ g.direction, (wall.end - g.origin) @ g.direction))
        line_walls.setdefault(wall.line, []).append((wall.id, float(t0), float(t1), float(wall.direction @ g.direction)))
    line_pieces = {name: pieces for name, pieces in sides.items() if name in line_walls}
    return MemberLayout(tuple(members), line_axis, chord_line, chord_axis,
                        {k: tuple(v) for k, v in line_walls.items()}, line_pieces, chord_part)


def _member_pieces(plan, g, chords: list[tuple[str, float, float]], sides: tuple[tuple[float, float], ...],
                   tol: float) -> list[tuple[float, float]]:
    """The pieces (t0, t1 m, in order) of grid line ``g`` that a member on it occupies: where
    the diaphragm is on or beside the line (``sides``, from :func:`line_sides`; none for a
    skewed line), its chords and any declared member on it, joined where they touch. A line
    with none of these keeps its whole extent over the diaphragm."""
    spans = [(min(t0, t1), max(t0, t1)) for _, t0, t1 in chords]
    spans += [(min(m.t_from, m.t_to), max(m.t_from, m.t_to)) for m in plan.members if m.line == g.name]
    spans += list(sides)
    pieces = merge_intervals(spans, tol)
    return pieces or [(g.t_min, g.t_max)]


def torsional_collector(layout: MemberLayout, line: str, wall_forces: dict[str, float],
                        stations: np.ndarray) -> np.ndarray:
    """Collector force (N, tension +) at ``stations`` (m along the line) that the walls of a
    line take out of the diaphragm under a load ACROSS the line (torsion), by the hand method
    of the flexible idealization (common practice): on each piece of the line with diaphragm,
    the piece's wall forces are delivered by a uniform shear over the piece, and the collector
    force is the running sum of delivered shear less wall forces. The semi-rigid bar on the
    line carries this together with its chord force; only this part takes Ω0."""
    walls = layout.line_walls.get(line, ())
    out = np.zeros(len(stations))
    for t0, t1 in layout.line_pieces.get(line, ()):
        inside = [(a, b, sign * wall_forces.get(w, 0.0)) for w, a, b, sign in walls
                  if a >= t0 - 1e-9 * (t1 - t0 + 1.0) and b <= t1 + 1e-9 * (t1 - t0 + 1.0)]
        taken = sum(f for _, _, f in inside)
        if not inside or t1 <= t0:
            continue
        # Forces on the line along +t: the walls push back (−f), the diaphragm delivers +taken.
        spans = [(a, b, -f) for a, b, f in inside] + [(t0, t1, taken)]
        knots, force = running_axial_force(spans, [], t0, t1, 1.0)
        here = (stations >= t0 - 1e-9) & (stations <= t1 + 1e-9)
        out[here] = np.interp(stations[here], knots, force)
    return out


@dataclass(frozen=True)
class MemberEnvelope:
    """Design forces of one member in both its roles (N, combination factor applied).
    The collector role is given without and with ASCE 7-16 §12.10.2.1 (Ω0 where the case
    requires it); the member's design tension / compression is the larger of the chord role
    and the collector role (the larger of its values with and without §12.10.2.1, which
    differ where §12.3.3.4 raised only the latter); the second item of each pair says which
    role governs."""

    member: MemberName
    chord_tension: Governing | None
    chord_compression: Governing | None
    collector_tension: Governing | None
    collector_compression: Governing | None
    collector_tension_omega: Governing | None
    collector_compression_omega: Governing | None

    def _pick(self, chord: Governing | None, collector: Governing | None) -> tuple[Governing | None, str | None]:
        if chord is None and collector is None:
            return None, None
        if collector is None or (chord is not None and abs(chord.value) >= abs(collector.value)):
            return chord, "chord"
        return collector, "collector"

    @property
    def tension(self) -> tuple[Governing | None, str | None]:
        return self._pick(self.chord_tension, _largest([self.collector_tension_omega, self.collector_tension], 1.0))

    @property
    def compression(self) -> tuple[Governing | None, str | None]:
        return self._pick(self.chord_compression,
                          _largest([self.collector_compression_omega, self.collector_compression], -1.0))

    @property
    def design(self) -> tuple[Governing | None, str | None]:
        (t, tr), (c, cr) = self.tension, self.compression
        if t is None or (c is not None and abs(c.value) > abs(t.value)):
            return c, cr
        return t, tr


def _largest(values: list[Governing | None], sign: float) -> Governing | None:
    found = [g for g in values if g is not None]
    return max(found, key=lambda g: sign * g.value) if found else None


def member_envelopes(envelope: Envelope) -> dict[str, MemberEnvelope]:
    """Member name → both roles of that member (see :func:`member_layout`); members with no
    force in either role are left out. Transfer-region struts keep their own names."""
    layout = envelope.layout
    if layout is None:
        return {}
    out: dict[str, MemberEnvelope] = {}
    named = [(m, m.collector, m.chords) for m in layout.members]
    known_collectors = {m.collector for m in layout.members}
    known_chords = {k for m in layout.members for k in m.chords}
    for name in envelope.collectors:
        if name not in known_collectors:
            named.append((MemberName(name, None, (np.nan, np.nan), (np.nan, np.nan), name, (), None), name, ()))
    for name in envelope.chords:
        if name not in known_chords:
            named.append((MemberName(name, None, (np.nan, np.nan), (np.nan, np.nan), None, (name,), None), None, (name,)))
    for member, collector, chords in named:
        if member.line is not None:  # transfer-region chords on the member's line: the same member
            chords = tuple(chords) + envelope.transfer_parts.get(member.line, {}).get("chord", ())
        c = envelope.collectors.get(collector, {}) if collector else {}
        slots = [envelope.chords.get(k, {}) for k in chords]
        item = MemberEnvelope(
            member,
            _largest([s.get("tension") for s in slots] + [c.get("across_tension")], 1.0),
            _largest([s.get("compression") for s in slots] + [c.get("across_compression")], -1.0),
            c.get("tension"), c.get("compression"),
            c.get("with_overstrength_tension"), c.get("with_overstrength_compression"),
        )
        if item.design[0] is not None:
            out[member.name] = item
    return out
