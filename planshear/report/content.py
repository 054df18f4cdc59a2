"""The report's content as data: :class:`Report` (title block, caution, sections in
order), built once by :func:`build_report` from results.json (``doc``) and the in-memory
results; the writers (:mod:`.html`, :mod:`.pdf`) and the figure drawing (:mod:`.render`)
only read it."""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from .. import __version__
from ..caution import CAUTION
from .figures import broken_at, line_gaps
from .tables import _base_cases, _plain, checks_table, chord_label, envelope_table, report_tables

__all__ = ["build_report", "Report", "Section", "Table", "FigureSpec", "TitleBlock", "METHODS_TEXT",
           "LIMITATIONS_TEXT", "FIGURE_CHOICES", "PAGE_SIZES", "fe_unit_shear_along_span", "sensitivity_tables"]


#: ``--figures``: none (tables only), key (default: the figures that carry design values:
#: plan, every collector and chord at its governing case, unit shear along the spans of
#: the base cases) or all (also the unit shear along the spans of every case, the MDD
#: diagrams, the finite-element unit-shear maps, the deflected shapes, and the plan as SVG).
FIGURE_CHOICES = ("none", "key", "all")
#: ``--page-size``: paper (width, height) in inches; Letter by default.
PAGE_SIZES = {"letter": (8.5, 11.0), "a4": (8.27, 11.69)}

METHODS_TEXT = [
    ("Load cases", "Seismic weight from area, zone, line and point weights; Fpx by ASCE 7-16 Eq. 12.10-1 "
     "with the bounds of Eqs. 12.10-2 and 12.10-3; accidental eccentricity ±5 % of the plan dimension "
     "perpendicular to the load (ASCE 7-16 §12.8.4.2) for the rigid and semi-rigid assumptions."),
    ("Wall stiffness", "Piers: Δ = Vh³/(3EI) + 1.2Vh/(AG) cantilever, Vh³/(12EI) + 1.2Vh/(AG) fixed, "
     "G = 0.4E (masonry and concrete practice, e.g. Taly 2010 §7.4). Wood shear walls: ANSI/AWC SDPWS-2015 "
     "Eq. 4.3-1 with the hold-down elongation proportional to the overturning force."),
    ("Flexible", "Simple spans between adjacent lines of resistance, loads integrated exactly from the real "
     "plan, cantilevers to the end lines; walls on a line share by stiffness."),
    ("Rigid", "Three rigid-body degrees of freedom from the stiffness of every wall; center of rigidity from "
     "the rigid-body flexibility; wall force = stiffness × displacement along the wall."),
    ("Beam analogy", "Shear and moment along the span from loads and wall forces; unit shear = V / length of "
     "diaphragm present; on a grid line each side delivers its shear over the length present on that side; lines "
     "are split at gaps (openings, outside the outline) and nothing is carried across a gap; collector force = "
     "running sum of delivered shear minus wall reaction per piece; chord force = M / depth."),
    ("Transfer diaphragms", "At a notch or offset the offset chord force M / reduced depth is carried by a collector "
     "into a transfer region of the full-depth diaphragm spanning across the load between its chords (Malone & Rice "
     "2012, ch. 3–4); transfer shear = its beam shear / region length, added to the main shear (net shear)."),
    ("Semi-rigid", "Plane-stress membrane (quadratic triangles by default) with per-unit-width rigidities: wood "
     "panels G·t = Ga (SDPWS), steel deck G·t = G′ (AISI S310), concrete E·t with a cracked-section factor; "
     "wind on the faces, wall weights across the load and point weights spread across the depth along their "
     "line of action (no crushing of the membrane); "
     "walls as springs along the wall only, total equal to the wall stiffness; chords and collectors as bars; "
     "one sparse factorization for every case. Verified against Cook's membrane, MacNeal–Harder (1985), "
     "scikit-fem and the SDPWS deflection equation (see the test suite)."),
    ("Line cuts", "Shear delivered from each side of a line from the element nodal forces (exact equilibrium); "
     "collector force = bar force plus the membrane force within the stated effective width."),
    ("Collectors in the model", "Every piece of a line of resistance that carries a wall has a collector bar: a "
     "declared member, the outline chord where the line runs along the outline, or an implied bar of EA = "
     "[diaphragm] collector_EA (default chord_EA) over the whole piece; without either EA the piece has no bar and "
     "is flagged. Bar forces are EA·ε at the element ends."),
    ("Walls along chord lines", "A wall on a line across the load resists the chord's elongation; its forces "
     "beyond a rigid-body share of the line's net force are self-equilibrating and are reported per line with "
     "their running sum, and each chord's force is compared with M/d of the beam analogy from the same case's "
     "finite-element wall forces."),
    ("Classification", "ASCE 7-16 §12.3.1.3: MDD / ADVE > 2 in every span → may be idealized as flexible; "
     "MDD is the diaphragm's deflection averaged across its depth (sections through the plan, openings "
     "excluded) relative to the line between the support drifts, at the station where it is largest; the "
     "largest nodal value is listed as a local peak and not used. §12.3.1.1 and §12.3.1.2 conditions as "
     "stated by the engineer."),
    ("Envelope", "Largest magnitude over allowed assumptions and all cases; accidental torsion never reduces a "
     "force because base and ±ecc cases are enveloped together; collector forces also × Ω0 for seismic cases."),
]

CHORD_WALLS_TEXT = (
    "Semi-rigid model. A wall under a chord line resists the chord's change of length and takes force out of "
    "the chord: 'M/d' is the chord force of the beam analogy computed from the same case's finite-element wall "
    "forces, 'chord N' the finite-element chord force at the same place, 'lost' = 1 − N/(M/d), 'walls take' the "
    "running sum of the self-equilibrating wall forces on that edge there (chord N + walls ≈ M/d; the rest is "
    "in the membrane). These wall forces are real in the elastic model: design the walls and their connection "
    "to the chord for them, or do not count on them and design the chord for M/d."
)

LIMITATIONS_TEXT = [
    "Linear elastic analysis; wood and steel-deck stiffness values are secant values that the engineer chooses.",
    "One diaphragm level per plan; vertical irregularities, transfer forces and load combinations are not formed.",
    "The flexible method gives no force to walls on skewed lines.",
    "Peaks of unit shear at re-entrant corners and wall ends depend on the mesh (stress concentrations).",
    "Code checks are limited to the flexibility classification and the horizontal irregularities of ASCE 7-16 "
    "Table 12.3-1 Types 1a, 1b, 2 and 3 (detected; Ax and the §12.3.3.4 collector increase applied) and, where the "
    "plan gives capacities, demand/capacity of zones, walls and members (the engineer's capacities, taken as given); "
    "connections, hold-downs and the vertical elements' own design are not checked.",
]

IRREGULARITY_TEXT = (
    "Detected and reported. Of the consequences, the torsional amplification Ax (§12.8.4.3, SDC C–F: the ±ecc cases "
    "are run again with the eccentricity × Ax) and the 25 % increase of §12.3.3.4 on collector forces (SDC D–F, not "
    "on forces that include Ω0) are applied; the others are the engineer's to apply. Torsion: δ at the plan's two extreme edges "
    "across the load, worst of the accidental-torsion cases; re-entrant corners from the outline; open area = "
    "openings / area enclosed by the outline. The SDC application column is from memory of the standard."
)


# -- content as data --------------------------------------------------------------------


@dataclass(frozen=True)
class Table:
    """A table: ``headers`` (units in them), ``rows`` of cells (numbers, text, None),
    ``key`` the HTML class it is found by."""

    headers: list
    rows: list
    key: str = ""


@dataclass(frozen=True)
class FigureSpec:
    """A figure to draw: ``draw`` names a function of :mod:`planshear.report.figures` called with
    ``kwargs`` (plain data, so a worker process can draw it); ``name`` is the file stem
    under figures/; ``level`` "key" or "all" (the ``--figures`` choice that draws it);
    ``svg``: also write a vector copy (used inline in the HTML); ``local``: drawn in the
    main process (its arguments are large)."""

    name: str
    title: str
    draw: str
    kwargs: dict
    level: str = "key"
    svg: bool = False
    local: bool = False


@dataclass(frozen=True)
class Section:
    """A report section: a title and blocks in reading order (paragraph text, Table,
    FigureSpec)."""

    title: str
    blocks: tuple


@dataclass(frozen=True)
class TitleBlock:
    """What the title block shows on the HTML report and on every PDF page."""

    job: str
    engineer: str
    checker: str
    date: str
    revision: str
    plan_name: str
    plan_file: str
    version: str

    def fields(self) -> list[tuple[str, str]]:
        return [("job", self.job or self.plan_name), ("plan file", self.plan_file), ("engineer", self.engineer),
                ("checker", self.checker), ("date", self.date), ("revision", self.revision),
                ("program", f"planshear {self.version}")]


@dataclass(frozen=True)
class Report:
    """The report's content: ``sections`` in order (a list: sections may be added)."""

    title: str
    title_block: TitleBlock
    caution: str
    sections: list = field(default_factory=list)

    def add(self, title: str, *blocks) -> Section:
        """Append a section; empty blocks ("" or None) are left out."""
        made = Section(title, tuple(b for b in blocks if b is not None and b != ""))
        self.sections.append(made)
        return made

    def figures(self, choice: str) -> list[FigureSpec]:
        """The figures the ``--figures`` choice keeps, in reading order."""
        levels = {"none": (), "key": ("key",), "all": ("key", "all")}[choice]
        return [b for s in self.sections for b in s.blocks if isinstance(b, FigureSpec) and b.level in levels]


def title_block(doc: dict) -> TitleBlock:
    plan = doc["plan"]
    given = plan.get("title_block") or {}
    return TitleBlock(given.get("job", ""), given.get("engineer", ""), given.get("checker", ""),
                      given.get("date", ""), given.get("revision", ""), plan["name"], Path(plan["file"]).name,
                      __version__)


def _table_block(tables: dict, key: str) -> Table:
    headers, rows = tables[key]
    return Table(headers, rows, key)


def build_report(doc: dict, results=None, figures: str = "all") -> Report:
    """The report's sections from results.json ``doc`` (and the in-memory ``results`` for
    the figures that need the finite-element mesh; None: those figures are left out).
    ``figures``: the ``--figures`` choice; the data of figures it leaves out is not
    prepared."""
    tables = report_tables(doc)
    tab = lambda key: _table_block(tables, key)  # noqa: E731 - a short local alias
    plan = doc["plan"]
    report = Report(f"Diaphragm analysis: {plan['name']}", title_block(doc), CAUTION)
    units = doc["units"]
    area_key = next(k for k in plan if k.startswith("area_"))
    classification = doc.get("classification") or {"directions": {}}
    verdicts = [f"Load along {a}: {c['verdict']} (governing span {c['governing_span']})."
                + "".join(f" {n}" for n in c.get("notes", ())) for a, c in classification["directions"].items()]
    if classification.get("calculated") is False:
        verdicts.append(f"Not calculated: {classification['reason']}. {classification['note']}")
    if "overall" in classification:
        verdicts.append(f"Overall: {classification['overall']['verdict']}; governing: "
                        f"{classification['overall']['governing']}.")
    base = _base_cases(doc)
    report.add("Project and plan",
               f"Plan file {plan['file']}; diaphragm area {_plain(plan[area_key])} {area_key[5:]}; material: "
               f"{plan['material']}. Load cases: {', '.join(plan['cases'])}. Units: forces {units['force']}, "
               f"positions {units['position']}, displacements {units['displacement']}. planshear {__version__}.",
               *verdicts)
    not_run = [f"{a}: {r}" for a, r in doc.get("unavailable", {}).items()]
    if not_run:
        report.add("Assumptions not run", *not_run)
    # The vector copy (inline in the HTML, zoomable) is a second drawing: with --figures all.
    _design_check_sections(report, doc, figures)
    report.add("Plan drawing", FigureSpec("plan", "Plan", "plan_figure", {}, svg=figures == "all", local=True))
    report.add("Materials and wall stiffness", tab("materials"), tab("stiffness"))
    report.add("Loads and load cases", tab("loads"), tab("cases"))
    _traced_section(report, doc)
    report.add("Flexibility (ASCE 7-16 §12.3.1)", tab("classification"),
               "The same check by beam theory on the flexible method's simple spans (chord bending and sheathing "
               "shear; no finite-element model), for comparison only: the verdict above is the calculated one of "
               "§12.3.1.3, MDD from the semi-rigid model and ADVE from its walls. The two differ where the walls' "
               "drifts, openings, re-entrant corners or continuity over supports move MDD or ADVE away from the "
               "simple-span values; where they fall on opposite sides of 2, the engineer should see why before "
               "relying on the flexible idealization:", tab("span_deflection"),
               *(_span_deflection_specs(doc, results) if figures == "all" else ()))
    report.add("Horizontal irregularities (ASCE 7-16 Table 12.3-1)", IRREGULARITY_TEXT, tab("irregularities"))
    basis = doc["plan"].get("design_basis") or "unfactored"
    report.add("Wall forces", "Largest magnitude over the cases of each assumption; design = envelope over the "
               "assumptions the code allows for the load direction. Every column is on the design basis "
               f"({basis}: the lateral terms of its load combinations, e.g. 0.7ρ on E for ASD) and, where a seismic "
               "load gives fx, at the story force Fx (the case force × Fx/Fpx): so they differ from the per-case "
               "wall forces of walls.csv and from the worked spans, which are at the case force and unfactored "
               "(the loads table gives each load's factor and Fx).", tab("walls"))
    report.add("Collectors", tab("collectors"), MEMBER_TEXT, *_member_specs(doc, "collectors"))
    report.add("Chords", tab("chords"), MEMBER_TEXT, *_member_specs(doc, "chords"))
    report.add("Unit shear along the spans", UNIT_SHEAR_TEXT,
               *(_unit_shear_specs(doc, results, base, figures) if figures != "none" else ()),
               tab("unit_shear"), *(_map_specs(doc, results, base, "shear") if figures == "all" else ()))
    if doc.get("drift"):
        report.add("Story drift (ASCE 7-16 §12.8.6, §12.12.1)", doc["drift"]["note"], tab("drift"))
    if doc.get("engineer_envelope"):
        report.add("Engineer-chosen envelope", doc["engineer_envelope"]["label"], tab("engineer_envelope"))
    report.add("Walls along chord lines", CHORD_WALLS_TEXT, tab("chord_walls"), tab("walls_across"))
    report.add("Transfer diaphragms (flexible and rigid methods)", TRANSFER_TEXT, tab("transfer"), tab("net_shears"))
    report.add("Notes per case", tab("case_notes"))
    if doc.get("sensitivity"):
        report.add("Sensitivity to the diaphragm stiffness", SENSITIVITY_TEXT, *sensitivity_tables(doc))
    if figures == "all":
        report.add("Deflected shape", *_map_specs(doc, results, base, "deflected"))
    report.add("Equilibrium residuals", tab("residuals"))
    report.add("Methods and sources", *[f"{n}: {t}" for n, t in METHODS_TEXT])
    report.add("Assumptions and limitations", *LIMITATIONS_TEXT,
               *[n for m in doc["assumptions"].values() for n in m.get("notes", [])])
    return report


def _traced_section(report: Report, doc: dict) -> None:
    """"Loads and stiffness, traced" (postprocess/traceability.py): each block a sub-heading
    paragraph, its text and its table."""
    from ..postprocess.traceability import traced_section

    data = traced_section(doc)
    blocks: list = []
    for block in data["blocks"]:
        blocks += [block["heading"] + ":", *block["text"]]
        if block["rows"]:
            blocks.append(Table(block["headers"], block["rows"], "traced"))
    if blocks:
        report.add(data["title"], *blocks)


def _design_check_sections(report: Report, doc: dict, figures: str) -> None:
    """"Design checks" (with capacities: failures first, and the D/C map) and "Chords and
    collectors by member" (each member once, with both roles)."""
    checks = doc.get("checks")
    if checks:
        failures = checks["failures"]
        lead = (f"Basis: {checks['basis']}. {checks['rule']}. "
                + (f"{failures} check(s) FAIL on {checks.get('failing_items', failures)} item(s) (listed first; "
                   "tension and compression of a member are two checks)." if failures
                   else "Every check with a capacity passes."))
        report.add("Design checks", lead, Table(*checks_table(doc), "checks"),
                   FigureSpec("dc_map", "Demand/capacity map", "dc_map_figure", {}, local=True)
                   if figures != "none" else None)
    headers, rows = envelope_table(doc)
    rows = [r for r in rows if r[0] in ("member", "splice")]
    report.add("Chords and collectors by member",
               "Each member once, by grid line and bay, with both roles: chord (load across it) and collector (load "
               "along it; with Ω0 per ASCE 7-16 §12.10.2.1 where the case requires it); the design value is the "
               "larger. Splices: the member force at each declared splice.", Table(headers, rows, "members"))


MEMBER_TEXT = (
    "Each diagram: heavy, the case and assumption that govern the design value (tension and compression); thin, "
    "the base cases of the same direction under every assumption for comparison. The marked point is the design "
    "value of the envelope, with its case; where the envelope value includes a factor (e.g. §12.3.3.4) the "
    "diagram's own peak is given beside it."
)

UNIT_SHEAR_TEXT = (
    "V(s)/ℓ(s) along each span, from which nailing or weld zones are laid out: flexible and rigid from the beam "
    "analogy of the method (V the diaphragm shear, ℓ the length of diaphragm present at the station); semi-rigid "
    "from the finite-element unit shear Nxy averaged across the depth at the same stations and over a stated "
    "width along the span (dotted: the largest value across the depth, averaged over the same width). Grey zones "
    "lie within one element size of a re-entrant corner or a wall end, where the finite-element unit shear has a "
    "singular peak that grows with mesh refinement: values there are not design values. The marked values are "
    "the largest outside those zones. Magnitudes."
)

SENSITIVITY_TEXT = (
    "The semi-rigid model run again with the diaphragm's membrane rigidities × the factor ([classification] "
    "sensitivity). Largest magnitudes over the cases; change relative to the plan's stiffness. The design envelope "
    "includes these runs with the semi-rigid assumption: 'governs' says where a run sets the design value "
    "(shown as semirigid@factor in the envelope tables). The flexibility classification is computed for the plan's "
    "stiffness only."
)

TRANSFER_TEXT = (
    "Where a notch or offset interrupts a chord, the offset chord force (M / reduced depth) is carried by a "
    "collector into a transfer region of the full-depth diaphragm that spans across the load between its "
    "supports (Malone & Rice 2012, ch. 3–4). Unit shears have the sign of the diaphragm shear V; net = main + "
    "transfer. Reactions are forces along the span delivered to the supports. Representative base case per "
    "direction; every case is in transfer.csv, net_shears.csv and results.json."
)


def _case_axis(doc: dict) -> dict[str, str]:
    """Case name → load axis ("x" or "y")."""
    return {c["name"]: c["direction"][1:] for c in doc["plan"]["case_details"]}


def _fmt(value: float) -> str:
    return f"{value:.4g}"


def _named(assumption: str) -> str:
    """An assumption as the report names it: "semirigid@0.5" → "semirigid, stiffness × 0.5"."""
    base, _, factor = assumption.partition("@")
    return f"{base}, stiffness × {factor}" if factor else base


def _case_doc(doc: dict, assumption: str, case: str) -> dict:
    """A case's results under an assumption; "semirigid@0.5" is the stiffness-sensitivity
    run × 0.5 (results.json ``sensitivity``), which the envelope includes."""
    if "@" in assumption:
        factor = assumption.split("@", 1)[1]
        return (doc.get("sensitivity") or {}).get(factor, {}).get("cases", {}).get(case, {})
    return doc["assumptions"].get(assumption, {}).get("cases", {}).get(case, {})


def _member_specs(doc: dict, group: str) -> list[FigureSpec]:
    """One diagram per collector or chord with a diagram: governing case(s) heavy and the
    base cases of that direction thin, design values marked (tension and compression)."""
    envelope = (doc.get("envelope") or {}).get(group, {})
    units = doc["units"]
    f, p = units["force"], units["position"]
    axis_of = _case_axis(doc)
    base = _base_cases(doc)
    kinds = {name: load["kind"] for name, load in doc["plan"]["loads"].items()}
    seismic = {c["name"]: kinds.get(c["load"]) == "seismic" for c in doc["plan"]["case_details"]}
    specs = []

    def diagram(assumption: str, case: str, name: str):
        case_doc = _case_doc(doc, assumption, case)
        if group == "collectors":
            combined = case_doc.get("collectors_with_transfer", {}).get(name)
            if combined:  # the line's own diagram with the transfer regions' forces on it
                return broken_at(combined["diagram"], line_gaps(doc, name))
            data = case_doc.get("lines", {}).get(name)
            return data and broken_at(data["collector"], line_gaps(doc, name))
        data = case_doc.get("chords", {}).get(name)
        return data and data.get("diagram")

    for k, (name, slots) in enumerate(envelope.items()):
        governing = [(kind, slots[kind]) for kind in ("tension", "compression") if slots.get(kind)]
        if not governing and slots.get("design"):
            governing = [("design", slots["design"])]
        heavy = {(g["assumption"], g["case"]) for _, g in governing}
        series, marks = [], []
        for assumption, case in sorted(heavy):
            points = diagram(assumption, case, name)
            if points:
                series.append({"assumption": assumption.split("@")[0], "label": f"{_named(assumption)} {case} (governs)",
                               "points": points, "governs": True})
        if not series:
            continue  # no diagram of its own (e.g. a transfer collector): its values are in the table
        axes = {axis_of.get(case) for _, case in heavy}
        for assumption in ("flexible", "rigid", "semirigid"):
            for axis in sorted(a for a in axes if a):
                case = base.get(axis)
                if case is None or (assumption, case) in heavy:
                    continue
                points = diagram(assumption, case, name)
                if points:
                    series.append({"assumption": assumption, "label": f"{assumption} {case}", "points": points,
                                   "governs": False})
        for kind, g in governing:
            points = np.asarray(diagram(g["assumption"], g["case"], name) or [], dtype=float).reshape(-1, 2)
            finite = points[np.isfinite(points[:, 1])]
            if not len(finite):
                continue
            i_top, i_bottom = int(np.argmax(finite[:, 1])), int(np.argmin(finite[:, 1]))
            top, bottom = float(finite[i_top, 1]), float(finite[i_bottom, 1])
            # A seismic case is analyzed along +axis only; its reversal is the negative diagram.
            reverses = seismic.get(g["case"], False)
            if kind == "tension":
                reversed_ = reverses and -bottom > top
                i, peak = (i_bottom, -bottom) if reversed_ else (i_top, top)
            elif kind == "compression":
                reversed_ = reverses and -top < bottom
                i, peak = (i_top, -top) if reversed_ else (i_bottom, bottom)
            else:
                reversed_ = False
                i = int(np.argmax(np.abs(finite[:, 1])))
                peak = float(finite[i, 1])
            label = f"{_named(g['assumption'])} {g['case']}"
            if reversed_:
                label = f"{_named(g['assumption'])} {g['case']} reversed"
                if not any(x["label"] == f"{label} (governs)" for x in series):
                    series.append({"assumption": g["assumption"].split("@")[0], "label": f"{label} (governs)",
                                   "points": (points * [1.0, -1.0]).tolist(), "governs": True, "reversed": True})
            text = f"design {'T' if kind == 'tension' else 'C' if kind == 'compression' else ''} {_fmt(g['value'])} {f}"
            if abs(g["value"] - peak) > 1e-3 * max(abs(peak), abs(g["value"]), 1e-12):
                text += f" (diagram {_fmt(peak)})"
            marks.append({"assumption": g["assumption"].split("@")[0], "s": float(finite[i, 0]), "value": peak,
                          "text": f"{text}\n{label}"})
        note = ""
        if slots.get("with_overstrength"):
            w = slots["with_overstrength"]
            note = f"With Ω0 (ASCE 7-16 §12.10.2.1): {_fmt(w['value'])} {f}, {_named(w['assumption'])} {w['case']}."
        where = f"along line {name}" if group == "collectors" else f"along {name} from its first corner"
        role = "Collector" if group == "collectors" else "Chord"
        named = (slots.get("member") or name) if group == "collectors" else chord_label(name, slots)
        specs.append(FigureSpec(
            f"{role.lower()}_{k:02d}_{_slug(named)}", f"{role} force, {named}", "member_diagram_figure",
            {"title": f"{role} force, {named}", "xlabel": f"position {where} ({p})",
             "ylabel": f"N ({f}), tension +", "series": series, "marks": marks, "note": note}))
    return specs


def _span_deflection_specs(doc: dict, results) -> list[FigureSpec]:
    if results is None or results.classification is None:
        return []
    specs = []
    for axis, check in results.classification.directions.items():
        by_case: dict[str, list] = {}
        for span in check.spans:
            by_case.setdefault(span.case, []).append(span)
        for case_name, spans in by_case.items():
            plain = [{"stations": sp.stations, "deflection": sp.deflection, "mdd_at": tuple(sp.mdd_at),
                      "ratio": sp.ratio, "mdd_local": sp.mdd_local, "mdd_local_at": tuple(sp.mdd_local_at),
                      "left_line": sp.left_line, "right_line": sp.right_line} for sp in spans]
            specs.append(FigureSpec(
                f"span_deflection_{_slug(case_name)}", f"Diaphragm deflection along the span (MDD), {case_name}",
                "span_deflection_figure", {"spans": plain, "case": case_name, "axis": axis, "units": doc["units"],
                                           "disp_factor": results.units.displacement_out(1.0),
                                           "length_scale": results.plan.length_scale,
                                           "length_unit": results.plan.length_unit},
                level="all"))  # the classification table carries the values
    return specs


def _map_specs(doc: dict, results, base: dict[str, str], kind: str) -> list[FigureSpec]:
    """Unit-shear maps or deflected shapes of the semi-rigid cases (base cases: key)."""
    if results is None or results.semirigid is None:
        return []
    mesh, solution = results.semirigid.mesh, results.semirigid.solution
    plan = results.plan
    scale = 1.0 / plan.length_scale
    corners = 3 if mesh.element_type.startswith("tri") else 4
    cells = mesh.elements[:, :corners]
    key: set[str] = set()  # the maps and deflected shapes: --figures all (the span diagrams carry the design values)
    specs = []
    for j, case in enumerate(solution.cases):
        level = "key" if case.name in key else "all"
        if kind == "shear":
            values = np.abs(results.semirigid.membrane[:, 2, j]) * results.units.line_force_out(1.0)
            specs.append(FigureSpec(
                f"unit_shear_{_slug(case.name)}", f"Unit shear, {case.name}", "shear_map_figure",
                {"polygons": mesh.nodes[cells] * scale, "values": values,
                 "title": f"Unit shear |Nxy|, semi-rigid, {case.name} (element averages)",
                 "label": f"unit shear |Nxy| ({doc['units']['unit_shear']})"}, level=level))
        else:
            u = solution.node_displacements(j)
            magnitude = np.hypot(u[:, 0], u[:, 1])
            size = float(np.ptp(mesh.nodes, axis=0).max())
            magnify = 0.08 * size / magnitude.max() if magnitude.max() > 0 else 1.0
            specs.append(FigureSpec(
                f"deflected_{_slug(case.name)}", f"Deflected shape, {case.name}", "deflected_figure",
                {"moved": (mesh.nodes + magnify * u)[cells] * scale,
                 "values": magnitude[cells].mean(axis=1) * results.units.displacement_out(1.0),
                 "outline": plan.outline * scale,
                 "title": f"Deflected shape, semi-rigid, {case.name} (magnified ×{magnify:.3g}; dashed: undeformed)",
                 "label": f"displacement ({doc['units']['displacement']})"}, level=level))
    return specs


def _singular_zones(plan, s_index: int, width: float) -> list[tuple[float, float]]:
    """Stations (m) within ``width`` of a re-entrant corner (of the outline or an opening)
    or a wall end, merged into zones."""
    points = [w.start for w in plan.walls] + [w.end for w in plan.walls]
    outline = plan.outline
    after, before = np.roll(outline, -1, axis=0) - outline, outline - np.roll(outline, 1, axis=0)
    turn = before[:, 0] * after[:, 1] - before[:, 1] * after[:, 0]
    points += list(outline[turn < 0])  # counter-clockwise outline: a right turn is re-entrant
    for opening in plan.openings:
        points += list(opening)  # every corner of an opening is re-entrant for the diaphragm
    zones: list[list[float]] = []
    for s in sorted(float(p[s_index]) for p in points):
        if zones and s - width <= zones[-1][1]:
            zones[-1][1] = s + width
        else:
            zones.append([s - width, s + width])
    return [(a, b) for a, b in zones]


def fe_unit_shear_along_span(results, case_index: int, axis: str, stations: np.ndarray, width: float,
                             sub: int = 3, samples: int = 48) -> tuple[np.ndarray, np.ndarray]:
    """Finite-element unit shear Nxy (N/m) along the span for load along ``axis`` at
    ``stations`` (m): the mean across the depth (the finite-element counterpart of V/ℓ)
    and the largest magnitude across the depth, each averaged over ``width`` (m) along
    the span (``sub`` sections across it). Element values are constant per element."""
    from ..fem.model import element_polygons
    from ..postprocess.sections import _locate, section_points

    s_index = 0 if axis == "y" else 1
    plan, mesh = results.plan, results.semirigid.mesh
    offsets = width * ((np.arange(sub) + 0.5) / sub - 0.5)
    lo, hi = float(plan.outline[:, s_index].min()), float(plan.outline[:, s_index].max())
    inset = 1e-6 * (hi - lo)  # every cut strictly inside the plan's extent crosses the diaphragm
    probe = np.clip(stations[:, None] + offsets[None, :], lo + inset, hi - inset).ravel()
    xy, _ = section_points(plan, s_index, probe, samples)
    flat = xy.reshape(-1, 2)
    element = np.full(len(flat), -1)
    finite = np.all(np.isfinite(flat), axis=1)
    element[finite] = _locate(element_polygons(mesh), flat[finite])
    nxy = np.where(element >= 0, results.semirigid.membrane[np.maximum(element, 0), 2, case_index], np.nan)
    nxy = nxy.reshape(len(stations), sub, samples)
    with np.errstate(invalid="ignore"), __import__("warnings").catch_warnings():
        __import__("warnings").simplefilter("ignore", RuntimeWarning)  # stations beyond the outline: all NaN
        mean = np.abs(np.nanmean(np.nanmean(nxy, axis=2), axis=1))
        peak = np.nanmean(np.nanmax(np.abs(nxy), axis=2), axis=1)
    return mean, peak


def _unit_shear_specs(doc: dict, results, base: dict[str, str], figures: str = "all") -> list[FigureSpec]:
    """V(s)/ℓ(s) along the span per direction (base case: key; other cases: all), every
    assumption, the finite-element unit shear beside it."""
    units = doc["units"]
    names = [c.name for c in results.semirigid.solution.cases] if results is not None and results.semirigid else []
    specs = []
    for case in doc["plan"]["case_details"]:
        name, axis = case["name"], case["direction"][1:]
        if figures == "key" and name not in base.values():
            continue
        series, marks, shaded, note = [], [], [], ""
        stations = None
        for assumption in ("flexible", "rigid"):
            data = doc["assumptions"].get(assumption, {}).get("cases", {}).get(name, {}).get("span_shear")
            if not data:
                continue
            s = np.asarray(data["stations"], dtype=float)
            v = np.abs(np.asarray(data["unit_shear"], dtype=float))
            stations = s if stations is None else stations
            series.append({"assumption": assumption, "label": f"{assumption}: V/ℓ", "s": s, "values": v})
            k = int(np.argmax(v))
            marks.append({"assumption": assumption, "s": float(s[k]), "value": float(v[k]),
                          "text": f"{assumption}: {_fmt(v[k])} {units['unit_shear']}"})
        if name in names and results is not None:
            plan = results.plan
            scale = plan.length_scale
            width = plan.mesh.size
            s_index = 0 if axis == "y" else 1
            lo, hi = float(plan.outline[:, s_index].min()), float(plan.outline[:, s_index].max())
            s_m = np.linspace(lo, hi, 122)[1:-1]
            mean, peak = fe_unit_shear_along_span(results, names.index(name), axis, s_m, width)
            factor = results.units.line_force_out(1.0)
            s_out = s_m / scale
            series.append({"assumption": "semirigid", "label": "semi-rigid: Nxy mean across the depth", "s": s_out,
                           "values": mean * factor})
            series.append({"assumption": "semirigid", "label": "semi-rigid: largest across the depth", "s": s_out,
                           "values": peak * factor, "thin": True})
            zones = _singular_zones(plan, s_index, plan.mesh.size)
            shaded = [(a / scale, b / scale) for a, b in zones]
            outside = np.ones(len(s_m), bool)
            for a, b in zones:
                outside &= ~((s_m >= a) & (s_m <= b))
            usable = np.where(outside & np.isfinite(mean), mean, -np.inf)
            if np.isfinite(usable).any() and usable.max() > -np.inf:
                k = int(np.argmax(usable))
                marks.append({"assumption": "semirigid", "s": float(s_out[k]), "value": float(mean[k] * factor),
                              "text": f"semi-rigid: {_fmt(mean[k] * factor)} {units['unit_shear']}"})
            note = (f"Semi-rigid: averaged over a width of {_fmt(width / scale)} {units['position']} along the span "
                    "(the plan's element size); grey: within one element size of a re-entrant corner or wall end.")
        if not series:
            continue
        along = "x" if axis == "y" else "y"
        specs.append(FigureSpec(
            f"span_unit_shear_{_slug(name)}", f"Unit shear along the span, {name}", "unit_shear_figure",
            {"title": f"Unit shear along the span, {name} (load along {axis})",
             "xlabel": f"{along} ({units['position']})", "ylabel": f"unit shear ({units['unit_shear']})",
             "series": series, "shaded": shaded, "marks": marks, "note": note},
            level="key" if name in base.values() else "all"))
    return specs


def sensitivity_tables(doc: dict) -> list[Table]:
    """Per stiffness factor: walls, collectors and chords against the plan's stiffness."""
    f = doc["units"]["force"]
    semi = doc["assumptions"].get("semirigid", {}).get("cases", {})
    envelope = doc.get("envelope") or {}

    def largest(cases: dict, pick) -> dict[str, float]:
        out: dict[str, float] = {}
        for case in cases.values():
            for name, value in pick(case).items():
                if value is not None and abs(value) > abs(out.get(name, 0.0)):
                    out[name] = value
        return out

    picks = {
        "walls": lambda c: c.get("walls", {}),
        "collectors": lambda c: {n: line.get("collector_peak") for n, line in c.get("lines", {}).items()},
        "chords": lambda c: {n: chord.get("peak") for n, chord in c.get("chords", {}).items()},
    }
    out = []
    for group, pick in picks.items():
        reference = largest(semi, pick)
        rows = []
        for factor, method in doc["sensitivity"].items():
            scaled = largest(method.get("cases", {}), pick)
            for name, value in scaled.items():
                ref = reference.get(name)
                design = ((envelope.get(group) or {}).get(name) or {}).get("design")
                change = None if not ref else round(100 * (abs(value) / abs(ref) - 1), 1)
                governs = "" if design is None else ("yes" if design["assumption"] == f"semirigid@{factor}" else "no")
                rows.append([f"× {factor}", name, ref, value, change, governs])
        out.append(Table(["stiffness", group[:-1], f"plan's stiffness ({f})", f"with the factor ({f})", "change (%)",
                          "governs the design value"], rows, f"sensitivity_{group}"))
    return out


def _slug(text: str) -> str:
    """A file-name stem for ``text`` that keeps case names apart: "+" and "-" are spelled
    out ("E+x+ecc" → "E_plus_x_plus_ecc", never the same stem as "E+x-ecc")."""
    spelled = text.replace("+", "_plus_").replace("-", "_minus_")
    return "_".join(part for part in "".join(ch if ch.isalnum() else "_" for ch in spelled).split("_") if part)
