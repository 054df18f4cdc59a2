"""The review package: report.html (self-contained, figures inline as SVG), report.pdf
(written directly with matplotlib), CSV tables and figures.

Every number in the report's tables is taken from the results.json document itself, so
the two always agree.
"""

from __future__ import annotations

import csv
import html
from pathlib import Path

import numpy as np
from matplotlib.backends.backend_pdf import PdfPages
from matplotlib.figure import Figure

from . import __version__
from .caution import CAUTION
from .figures import (
    FigureFile,
    chord_figure,
    collector_figure,
    deflected_figure,
    plan_figure,
    save,
    shear_map_figure,
    span_deflection_figure,
)

__all__ = ["write_review_package", "write_tables", "METHODS_TEXT", "LIMITATIONS_TEXT"]

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
    "Table 12.3-1 Types 1a, 1b, 2 and 3 (detected; Ax and the §12.3.3.4 collector increase applied); capacities are "
    "not checked.",
]


_TRANSFER_INTRO = (
    "<p>Where a notch or offset interrupts a chord, the offset chord force (M / reduced depth) is carried by a "
    "collector into a transfer region of the full-depth diaphragm that spans across the load between its "
    "supports (Malone &amp; Rice 2012, ch. 3–4). Unit shears have the sign of the diaphragm shear V; net = main + "
    "transfer. Reactions are forces along the span delivered to the supports. Representative base case per "
    "direction; every case is in transfer.csv, net_shears.csv and results.json.</p>"
)


def _esc(value) -> str:
    return html.escape(str(value))


def _plain(value, missing: str = "-") -> str:
    """A table cell as text: numbers to 6 significant digits, booleans as yes/no."""
    if value is None:
        return missing
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, (int, float)):
        return f"{value:.6g}"
    return str(value)


def _num(value) -> str:
    """A table cell for HTML."""
    return _esc(_plain(value, missing="–"))


def _table(headers: list[str], rows: list[list], cls: str = "") -> str:
    head = "".join(f"<th>{_esc(h)}</th>" for h in headers)
    def cell(value) -> str:
        numeric = isinstance(value, (int, float)) and not isinstance(value, bool)
        return f"<td>{_num(value)}</td>" if numeric else f'<td class="text">{_num(value)}</td>'

    body = "".join("<tr>" + "".join(cell(c) for c in row) + "</tr>" for row in rows)
    return f'<table class="{cls}"><thead><tr>{head}</tr></thead><tbody>{body}</tbody></table>'


def _force_source(load: dict) -> str:
    """Where a load's force came from: the governing Fpx equation, a given total, or wind."""
    if load.get("fpx_equation"):
        return f"Fpx, ASCE 7-16 Eq. {load['fpx_equation']} governs"
    return "total given" if load["kind"] == "seismic" else "wind intensity × plan width"


def _at(point) -> str:
    """A plan position as "(x, y)" for a table cell."""
    return "" if not point else f"({point[0]:.4g}, {point[1]:.4g})"


def _base_cases(doc: dict) -> dict[str, str]:
    """One representative base case per direction (the first seismic, else the first)."""
    kinds = {name: load["kind"] for name, load in doc["plan"]["loads"].items()}
    chosen: dict[str, tuple[str, bool]] = {}
    for case in doc["plan"]["case_details"]:
        if case["accidental_eccentricity"]:
            continue
        axis, seismic = case["direction"][1:], kinds[case["load"]] == "seismic"
        if axis not in chosen or (seismic and not chosen[axis][1]):
            chosen[axis] = (case["name"], seismic)
    return {axis: name for axis, (name, _) in chosen.items()}


def report_tables(doc: dict) -> dict[str, tuple[list[str], list[list]]]:
    """The report's tables, built only from the results document."""
    units = doc["units"]
    f, p, d = units["force"], units["position"], units["displacement"]
    plan = doc["plan"]
    tables: dict[str, tuple[list[str], list[list]]] = {}
    tables["stiffness"] = (
        ["wall", f"stiffness ({plan['stiffness_unit']})", "formula"],
        [[w, s["k"], s["formula"]] for w, s in plan["wall_stiffness"].items()],
    )
    tables["materials"] = (
        ["zone", "kind", f"Et_x ({plan['rigidity_unit']})", f"Et_y ({plan['rigidity_unit']})", "ν",
         f"Gt ({plan['rigidity_unit']})", "how it was set"],
        [[m["zone"], m["kind"], m["Et_x"], m["Et_y"], m["nu"], m["Gt"], m["description"]] for m in plan["materials"]],
    )
    tables["cases"] = (
        ["case", "load", "direction", f"force ({f})", f"accidental eccentricity ({p})", "assumptions"],
        [[c["name"], c["load"], c["direction"], c["force"], c["accidental_eccentricity"], ", ".join(c["assumptions"])]
         for c in plan["case_details"]],
    )
    tables["loads"] = (
        ["load", "kind", "directions", f"seismic weight ({f})", f"force x ({f})", f"force y ({f})", "Ω0",
         "force from", f"Eq. 12.10-1 ({f})", f"Eq. 12.10-2, lower ({f})", f"Eq. 12.10-3, upper ({f})",
         f"walls and drifts at ({f})", "load combination (lateral terms)"],
        [[n, ld["kind"], ", ".join(ld["directions"]), ld.get("seismic_weight"), ld["force"].get("x"),
          ld["force"].get("y"), ld["collector_overstrength"], _force_source(ld),
          *[(ld.get("fpx_values") or {}).get(eq) for eq in ("12.10-1", "12.10-2", "12.10-3")],
          (f"Fx = {ld['fx']}" + (f" (ELF level {ld['fx_distribution']['level']}, k = {ld['fx_distribution']['k']:.3g})"
                                 if "fx_distribution" in ld else "")) if "fx" in ld else "the same force",
          ld.get("combination", "")]
         for n, ld in plan["loads"].items()],
    )
    classification = doc.get("classification") or {"directions": {}}
    rows = []
    for axis, check in classification["directions"].items():
        for span in check["spans"]:
            rows.append([axis, span["case"], span["span"], span["MDD"], span["ADVE"], span["ratio"], span["behaviour"],
                         _at(span.get("MDD_at")), span.get("MDD_local"), _at(span.get("MDD_local_at"))])
    tables["classification"] = (["load along", "case", "span", f"MDD ({d})", f"ADVE ({d})", "MDD/ADVE", "behaviour",
                                 "MDD at (x, y)", f"local nodal peak ({d}), not used", "peak at (x, y)"], rows)
    tables["irregularities"] = (
        ["type", "irregularity", "method", "load", "along", "present", "measured", "applies", "consequence"],
        [[i["type"], i["name"], i.get("method", ""), i.get("load", ""), i.get("axis", ""),
          {True: "yes", False: "no", None: "not checked"}[i["present"]], _measured(i, d),
          {True: "yes", False: "no", None: "SDC not given"}[i["applies"]], i["consequence"]]
         for i in doc.get("irregularities", [])],
    )
    envelope = doc.get("envelope") or {"walls": {}, "collectors": {}, "chords": {}}
    methods = list(doc["assumptions"])
    rows = []
    for wall, slots in envelope["walls"].items():
        row = [wall]
        for m in methods:
            g = slots.get(m)
            row += [None, None] if g is None else [g["value"], g["case"]]
        design = slots.get("design")
        row += [None, None] if design is None else [design["value"], f"{design['assumption']} {design['case']}"]
        rows.append(row)
    headers = ["wall"]
    for m in methods:
        headers += [f"{m} ({f})", "case"]
    headers += [f"design ({f})", "governs"]
    tables["walls"] = (headers, rows)
    tables["collectors"] = (
        ["line", f"design peak ({f})", "governs", f"with Ω0 per ASCE 7-16 §12.10.2.1 ({f})", "§12.10.2.1 governs",
         f"Ω0 force before the cap ({f})", f"largest of all assumptions ({f})", "collector in the semi-rigid model",
         "caution"],
        [[n, s["design"] and s["design"]["value"], s["design"] and f"{s['design']['assumption']} {s['design']['case']}",
          s["with_overstrength"] and s["with_overstrength"]["value"],
          (s.get("overstrength") or {}).get("governs", ""), (s.get("overstrength") or {}).get("without_cap"),
          s["information"] and s["information"]["value"],
          s.get("collector_in_model", ""), "no collector bar in the model" if "caution" in s else ""]
         for n, s in envelope["collectors"].items()],
    )
    flexible = doc["assumptions"].get("flexible", {}).get("cases", {})
    tables["span_deflection"] = (
        ["case", "span", f"MDD ({d})", f"at ({p})", f"bending ({d})", f"shear ({d})", f"splice slip ({d})",
         f"ADVE ({d})", "MDD/ADVE"],
        [[name, sp["span"], sp["MDD"], sp["MDD_at"], sp["bending"], sp["shear"], sp["splice_slip"], sp["ADVE"],
          sp["ratio"]]
         for name, case in flexible.items() for sp in case.get("span_deflections", [])],
    )
    drift = doc.get("drift") or {"walls": {}, "lines": {}}
    tables["drift"] = (
        ["element", "name", f"δxe ({d})", f"δx = Cd·δxe/Ie ({d})", "δx / h", "allowable", "within", "governs"],
        [[group[:-1], name, c["elastic"], c["amplified"], c["ratio"], c["allowable"], "yes" if c["ok"] else "NO",
          f"{c['assumption']} {c['case']}"] for group in ("walls", "lines") for name, c in drift[group].items()],
    )
    chosen = doc.get("engineer_envelope") or {}
    tables["engineer_envelope"] = (
        ["kind", "name", f"design ({f})", "governs"],
        [[group[:-1], name, slots["design"]["value"], f"{slots['design']['assumption']} {slots['design']['case']}"]
         for group in ("walls", "collectors", "chords") for name, slots in chosen.get(group, {}).items()
         if slots.get("design")],
    )
    tables["chords"] = (
        ["member (outline edge)", f"design peak ({f})", "governs", f"largest of all assumptions ({f})"],
        [[f"{s['member']} ({n})" if "member" in s else n, s["design"] and s["design"]["value"], s["design"] and f"{s['design']['assumption']} {s['design']['case']}",
          s["information"] and s["information"]["value"]] for n, s in envelope["chords"].items()],
    )
    rows, line_rows = [], []
    for case_name, case in doc["assumptions"].get("semirigid", {}).get("cases", {}).items():
        info = case.get("walls_along_chords") or {"lines": {}, "chords": {}}
        for edge, c in info["chords"].items():
            rows.append([case_name, edge, c["at"], c["M_over_d"], c["chord_force"], round(100 * c["share_lost"], 1),
                         c["walls_force"], round(100 * c["walls_share"], 1)])
        for name, item in info["lines"].items():
            wall, value = max(item["self_equilibrating"].items(), key=lambda pair: abs(pair[1]))
            line_rows.append([case_name, name, item["restraint_force"], item["at"], item["net_force"], wall, value])
    tables["chord_walls"] = (
        ["case", "edge", f"at ({p})", f"M/d ({f})", f"chord N ({f})", "lost (%)", f"walls take ({f})", "walls (% of M/d)"],
        rows)
    tables["walls_across"] = (
        ["case", "line", f"force from chord elongation ({f})", f"at ({p})", f"net line force ({f})",
         "wall with the largest", f"its self-equilibrating force ({f})"], line_rows)
    rows = []
    semi = doc["assumptions"].get("semirigid", {}).get("cases", {})
    for case_name, case in semi.items():
        for zone, item in case.get("unit_shear_by_zone", {}).items():
            rows.append([case_name, zone, item["value"], f"({item['at'][0]:.4g}, {item['at'][1]:.4g})"])
    tables["unit_shear"] = (["case", "zone", f"max unit shear ({units['unit_shear']})", f"at ({p})"], rows)
    tables.update(transfer_tables(doc, set(_base_cases(doc).values())))
    rows = []
    for m, method in doc["assumptions"].items():
        for case_name, case in method["cases"].items():
            rows.append([m, case_name, case["applied_force"], case["equilibrium_residual"]])
    tables["residuals"] = (["assumption", "case", f"applied force ({f})", "relative residual"], rows)
    return tables


def _measured(item: dict, d: str) -> str:
    """Short text of an irregularity's measured values (``d``: displacement unit)."""
    v = item["values"]
    if "delta_max" in v:
        ratio = "unbounded (δavg ≤ 0)" if v["ratio"] is None else f"{v['ratio']:.3f}"
        text = f"δmax/δavg = {ratio} ({v['delta_max']:.4g}/{v['delta_avg']:.4g} {d}, {v['case']})"
        return text + (f"; Ax = {v['Ax']:.3f}" if "Ax" in v else "")
    if "share_x" in v:
        return f"projections {100 * v['share_x']:.1f} % and {100 * v['share_y']:.1f} % of the plan dimensions"
    if "open_area" in v:
        return f"open area {100 * v['ratio']:.1f} % of the gross enclosed area"
    if "change" in v:
        return f"stated stiffness ratio {v['adjacent_stiffness_ratio']:g}, change {100 * v['change']:.0f} %"
    return "no re-entrant corner" if v.get("corners") == 0 else "-"


def transfer_tables(doc: dict, cases: set[str] | None = None) -> dict[str, tuple[list[str], list[list]]]:
    """Transfer diaphragms of the idealized methods (``cases``: only these, None: all):
    one summary row per region and case, and the net shears per line segment."""
    units = doc["units"]
    f, p, v = units["force"], units["position"], units["unit_shear"]
    summary, net, notes = [], [], {}
    for m, method in doc["assumptions"].items():
        for case_name, case in method["cases"].items():
            for note in case.get("notes", []):
                notes.setdefault(note, []).append(f"{m} {case_name}")
            if cases is not None and case_name not in cases:
                continue
            for td in case.get("transfer", []):
                summary.append([
                    m, case_name, td["name"], f"{td['at_line']} to {td['far_line']}",
                    "; ".join(f"{c['line']}: {_plain(c['force'])}" for c in td["chord_forces"]),
                    ", ".join(_plain(r) for r in td["reactions"]),
                    "; ".join(f"{_plain(t['from'])}-{_plain(t['to'])}: {_plain(t['shear'])}" for t in td["transfer_shears"]),
                    "; ".join(f"{st['role']} {st['label']}: {_plain(st['peak'])}" for st in td["struts"]),
                    "; ".join(f"{n}: {_plain(c['collector_peak'])}" for n, c in td["collectors"].items()),
                ])
                net += [[m, case_name, td["name"], n["line"], n["side"], n["from"], n["to"], n["main"], n["transfer"],
                         n["net"]] for n in td["net_shears"]]
    return {
        "transfer": (
            ["assumption", "case", "region", "lines", f"offset chord force ({f})", f"reactions at supports ({f})",
             f"transfer shear ({p}: {v})", f"strut peaks ({f})", f"collector peaks with transfer ({f})"],
            summary,
        ),
        "net_shears": (
            ["assumption", "case", "region", "line", "side", f"from ({p})", f"to ({p})", f"main ({v})",
             f"transfer ({v})", f"net ({v})"],
            net,
        ),
        "case_notes": (["note", "assumption and cases"], [[n, ", ".join(where)] for n, where in notes.items()]),
    }


#: Decimals of each output unit in envelope.csv and checks.csv: what the unit justifies
#: (0.01 kip ≈ 44 N, 0.001 kip/ft = 1 plf, 0.01 ft ≈ 3 mm; kN, kN/m and m alike).
DECIMALS = {"kip": 2, "kN": 2, "kip/ft": 3, "kN/m": 2, "ft": 2, "m": 3, "in": 3, "mm": 1, "ratio": 3}


def _rounded(value, unit: str):
    """``value`` rounded to :data:`DECIMALS` of ``unit``; blank when missing."""
    if value is None:
        return ""
    return round(float(value), DECIMALS[unit])


def envelope_table(doc: dict) -> tuple[list[str], list[list]]:
    """envelope.csv: every wall, line reaction, member (chord and collector roles once per
    member) and splice (its position under "source keys") with its design value, governing assumption, case and role, with and without Ω0,
    and the load-combination factor; forces rounded per :data:`DECIMALS`."""
    f = doc["units"]["force"]
    envelope = doc.get("envelope") or {}
    headers = ["kind", "name", "value", f"design [{f}]", "governing role", "assumption", "case",
               "combination factor [-]", f"chord role [{f}]", f"collector role without Ω0 [{f}]",
               f"collector role with Ω0 (ASCE 7-16 §12.10.2.1) [{f}]", "chord on", "source keys"]
    rows = []

    def row(kind, name, value, g, role="", chord=None, collector=None, omega=None, chord_on="", keys=""):
        rows.append([kind, name, value, _rounded(g and g["value"], f), role, g["assumption"] if g else "",
                     g["case"] if g else "", _rounded(g.get("combination_factor", 1.0) if g else None, "ratio"),
                     _rounded(chord and chord["value"], f), _rounded(collector and collector["value"], f),
                     _rounded(omega and omega["value"], f), chord_on, keys])

    for wall, slots in envelope.get("walls", {}).items():
        if slots.get("design"):
            row("wall", wall, "force along the wall", slots["design"])
    for line, slots in envelope.get("line_reactions", {}).items():
        if slots.get("design"):
            row("line", line, "reaction (sum of its walls)", slots["design"])
    for name, m in envelope.get("members", {}).items():
        keys = " ".join(k for k in [m["collector"]["source"] or "", *m["chord"]["sources"]] if k)
        for value in ("tension", "compression"):
            g = m.get(value)
            if g:
                row("member", name, value, g, g["role"], m["chord"][value], m["collector"][value],
                    m["collector"][f"{value}_with_overstrength"], m["chord"]["bays"] or "", keys)
    for splice in doc.get("splice_forces", []):
        for value in ("tension", "compression"):
            if splice.get(value):
                row("splice", f"{splice['name']} in {splice['member'] or 'no member'}", value, splice[value],
                    keys=" ".join(f"{c:g}" for c in splice["at"]))
    return headers, rows


def checks_table(doc: dict) -> tuple[list[str], list[list]]:
    """checks.csv: every design check, failures first (results.json "checks")."""
    units = doc["units"]
    f, v = units["force"], units["unit_shear"]
    headers = ["kind", "item", "quantity", f"demand [{f}]", f"capacity [{f}]", f"demand [{v}]", f"capacity [{v}]",
               "D/C [-]", "status", "assumption", "case", "combination factor [-]", "note"]
    rows = []
    for c in (doc.get("checks") or {}).get("items", []):
        shear = c["quantity"] == "unit shear"
        pair = [_rounded(c["demand"], v if shear else f), _rounded(c["capacity"], v if shear else f)]
        rows.append([c["kind"], c["item"], c["quantity"], *(["", ""] + pair if shear else pair + ["", ""]),
                     _rounded(c["ratio"], "ratio"), c["status"], c["assumption"] or "", c["case"] or "",
                     _rounded(c["combination_factor"], "ratio"), c.get("note", "")])
    return headers, rows


def write_tables(folder: Path, doc: dict) -> list[str]:
    """walls.csv, lines.csv, chords.csv, classification.csv, envelope.csv and (with
    capacities) checks.csv with units in the headers."""
    units = doc["units"]
    f, p, d, v = units["force"], units["position"], units["displacement"], units["unit_shear"]
    written = []

    def write(name: str, header: list[str], rows: list[list]) -> None:
        with open(folder / name, "w", newline="", encoding="utf-8") as handle:
            writer = csv.writer(handle)
            writer.writerow(header)
            writer.writerows(rows)
        written.append(name)

    walls, lines, chords = [], [], []
    for m, method in doc["assumptions"].items():
        for case_name, case in method["cases"].items():
            for wall, force in case["walls"].items():
                walls.append([wall, m, case_name, force, case["wall_drifts"][wall]])
            for name, line in case["lines"].items():
                lines.append([name, m, case_name, line["reaction"], line["collector_peak"], line["collector_peak_at"],
                              line["unit_shear_left"], line["unit_shear_right"], line["residual"]])
            for name, chord in case["chords"].items():
                member = ((doc.get("envelope") or {}).get("chords", {}).get(name) or {}).get("member", "")
                chords.append([name, m, case_name, chord["peak"], chord["peak_at"], member])
    write("walls.csv", ["wall", "assumption", "case", f"force [{f}]", f"drift [{d}]"], walls)
    write("lines.csv", ["line", "assumption", "case", f"reaction [{f}]", f"collector_peak [{f}]",
                        f"collector_peak_at [{p}]", f"unit_shear_left [{v}]", f"unit_shear_right [{v}]",
                        f"residual [{f}]"], lines)
    write("chords.csv", ["edge", "assumption", "case", f"peak [{f}]", f"peak_at [{p}]", "member"], chords)
    rows = []
    for axis, check in ((doc.get("classification") or {}).get("directions") or {}).items():
        for span in check["spans"]:
            rows.append([axis, span["case"], span["span"], span["MDD"], span["ADVE"], span["ratio"],
                         span["flexible"], span["behaviour"], check["verdict"], *(span.get("MDD_at") or ["", ""]),
                         span.get("MDD_local"), *(span.get("MDD_local_at") or ["", ""])])
    transfer = transfer_tables(doc)
    write("transfer.csv", *transfer["transfer"])
    write("net_shears.csv", *transfer["net_shears"])
    write("classification.csv", ["direction", "case", "span", f"MDD [{d}]", f"ADVE [{d}]", "ratio [-]",
                                 "flexible", "behaviour", "verdict", "MDD_x", "MDD_y", f"MDD_local [{d}]",
                                 "MDD_local_x", "MDD_local_y"], rows)
    write("envelope.csv", *envelope_table(doc))
    if doc.get("checks"):
        write("checks.csv", *checks_table(doc))
    return written


_CSS = """
body{font-family:Georgia,'DejaVu Serif',serif;color:#222;background:#fbfaf6;max-width:60rem;margin:2rem auto;padding:0 1rem;line-height:1.4}
h1{font-size:1.6rem;border-bottom:3px double #222;padding-bottom:.3rem}
h2{font-size:1.15rem;margin-top:2rem;border-bottom:1px solid #999}
table{border-collapse:collapse;font-size:.8rem;margin:.5rem 0 1rem;font-family:'DejaVu Sans Mono',monospace}
th,td{border:1px solid #aaa;padding:.15rem .4rem;text-align:right}
th{background:#ece8dc}
td:first-child,th:first-child,td.text{text-align:left}
.caution{border:2px solid #222;padding:.6rem 1rem;background:#fff;font-weight:bold}
figure{margin:1rem 0;page-break-inside:avoid}
figure svg{width:100%;height:auto}
figcaption{font-size:.8rem;font-style:italic}
@media print{body{background:#fff;max-width:none;margin:0}h2{page-break-after:avoid}table{page-break-inside:avoid}}
"""


def _figures(doc: dict, results, folder: Path, pdf: PdfPages) -> dict[str, list[FigureFile]]:
    figures_dir = folder / "figures"
    made: dict[str, list[FigureFile]] = {"plan": [], "collectors": [], "chords": [], "shear": [], "deflected": []}

    def keep(section: str, fig: Figure, name: str, title: str) -> None:
        made[section].append(save(fig, figures_dir, name, title))
        pdf.savefig(fig)

    keep("plan", plan_figure(doc, results.plan), "plan", "Plan")
    base = _base_cases(doc)
    assumptions = [a for a in ("flexible", "rigid", "semirigid") if a in doc["assumptions"]]
    line_names = sorted({n for a in assumptions for c in doc["assumptions"][a]["cases"].values() for n in c["lines"]})
    for line in line_names:
        for axis, case_name in base.items():
            cases = {a: case_name for a in assumptions}
            if not any(line in doc["assumptions"][a]["cases"].get(case_name, {}).get("lines", {}) for a in assumptions):
                continue
            keep("collectors", collector_figure(doc, line, cases), f"collector_{_slug(line)}_{axis}",
                 f"Collector force along line {line}, load along {axis}")
    edges = sorted({n for a in assumptions for c in doc["assumptions"][a]["cases"].values() for n in c["chords"]},
                   key=lambda s: int(s.split()[-1]) if s.split()[-1].isdigit() else 0)
    for edge in edges:
        for axis, case_name in base.items():
            cases = {a: case_name for a in assumptions}
            if not any(doc["assumptions"][a]["cases"].get(case_name, {}).get("chords", {}).get(edge, {}).get("diagram")
                       for a in assumptions):
                continue
            member = ((doc.get("envelope") or {}).get("chords", {}).get(edge) or {}).get("member", edge)
            keep("chords", chord_figure(doc, edge, cases), f"chord_{_slug(edge)}_{axis}",
                 f"Chord force, {member} (outline {edge}), load along {axis}")
    if results.semirigid is not None:
        solution = results.semirigid.solution
        membrane = results.semirigid.membrane
        names = [c.name for c in solution.cases]
        units = results.units
        for case_name in base.values():
            if case_name not in names:
                continue
            j = names.index(case_name)
            keep("shear", shear_map_figure(results.plan, results.semirigid.mesh, np.abs(membrane[:, 2, j]), case_name,
                                           doc["units"], units.line_force_out(1.0)),
                 f"unit_shear_{_slug(case_name)}", f"Unit shear, {case_name}")
            keep("deflected", deflected_figure(results.plan, results.semirigid.mesh, solution.node_displacements(j),
                                               case_name, doc["units"], units.displacement_out(1.0)),
                 f"deflected_{_slug(case_name)}", f"Deflected shape, {case_name}")
    if results.classification is not None:
        for axis, check in results.classification.directions.items():
            by_case: dict[str, list] = {}
            for span in check.spans:
                by_case.setdefault(span.case, []).append(span)
            for case_name, spans in by_case.items():
                keep("deflected", span_deflection_figure(results.plan, spans, case_name, axis, doc["units"],
                                                         results.units.displacement_out(1.0)),
                     f"span_deflection_{_slug(case_name)}", f"Diaphragm deflection along the span (MDD), {case_name}")
    return made


def _slug(text: str) -> str:
    return "".join(ch if ch.isalnum() else "_" for ch in text).strip("_")


def _text_pages(pdf: PdfPages, sections: list[tuple[str, list[str]]]) -> None:
    """A4 pages of monospaced text, sections flowing one after the other."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg

    fig, y = None, 0.0

    def new_page():
        page = Figure(figsize=(8.27, 11.69), facecolor="white")
        FigureCanvasAgg(page)
        return page, 0.95

    for title, lines in sections:
        if fig is None or y < 0.12:
            if fig is not None:
                pdf.savefig(fig)
            fig, y = new_page()
        fig.text(0.07, y, title, fontsize=12, weight="bold", va="top")
        y -= 0.03
        for line in lines:
            if y < 0.04:
                pdf.savefig(fig)
                fig, y = new_page()
            fig.text(0.07, y, line, fontsize=7, family="monospace", va="top")
            y -= 0.0135
        y -= 0.02
    if fig is not None:
        pdf.savefig(fig)


def _plain_rows(headers: list[str], rows: list[list]) -> list[str]:
    cells = [headers] + [[_plain(c) for c in row] for row in rows]
    widths = [max(len(str(r[i])) for r in cells) for i in range(len(headers))]
    return ["  ".join(str(c).ljust(w)[:40] for c, w in zip(row, widths, strict=True)) for row in cells]


def _irregularity_lines(headers: list[str], rows: list[list]) -> list[str]:
    """Plain lines of the irregularity table: the short columns, then each consequence wrapped."""
    lines = _plain_rows(headers[:6] + headers[7:8], [row[:6] + row[7:8] for row in rows]) + [""]
    for row in rows:
        where = " ".join(str(c) for c in row[2:5] if c)
        lines += _wrap(f"Type {row[0]} {row[1]}" + (f" [{where}]" if where else "") + f": {row[6]} — {row[8]}", 110)
    return lines


def _traced(doc: dict) -> tuple[str, list[str]]:
    """The "Loads and stiffness, traced" section (postprocess/traceability.py) as HTML and
    as text lines for the PDF."""
    from .postprocess.traceability import traced_section

    data = traced_section(doc)
    html_parts, lines = [], []
    for block in data["blocks"]:
        html_parts.append(f"<h3>{_esc(block['heading'])}</h3>" + "".join(f"<p>{_esc(t)}</p>" for t in block["text"]))
        lines += [block["heading"]] + [w for t in block["text"] for w in _wrap(t, 110)]
        if block["rows"]:
            html_parts.append(_table(block["headers"], block["rows"], "traced"))
            # One wrapped line per row: calculations are too long for fixed columns.
            lines += _wrap(" | ".join(block["headers"]), 110)
            lines += [w for row in block["rows"] for w in _wrap("  " + " | ".join(_plain(c) for c in row), 110)]
        lines.append("")
    return f"<section><h2>{_esc(data['title'])}</h2>{''.join(html_parts)}</section>", [data["title"], lines]


def write_review_package(folder: Path, results, doc: dict) -> list[str]:
    """Write report.html, report.pdf, the CSV tables and figures/ into ``folder``."""
    written = write_tables(folder, doc)
    tables = report_tables(doc)
    with PdfPages(folder / "report.pdf", metadata={"Title": f"planshear report: {doc['plan']['name']}",
                                                   "Creator": f"planshear {__version__}"}) as pdf:
        classification = doc.get("classification") or {"directions": {}}
        summary = [
            f"Plan: {doc['plan']['name']} ({doc['plan']['file']})",
            f"Units: forces {doc['units']['force']}, positions {doc['units']['position']}, "
            f"displacements {doc['units']['displacement']}",
            "",
            *[line for axis, check in classification["directions"].items()
              for line in [f"Load along {axis}: {check['verdict']}"] + [w for n in check.get("notes", ()) for w in _wrap(f"  {n}", 110)]],
            *_not_run_lines(doc),
            "",
            *_wrap(CAUTION, 110),
        ]
        sections = [("planshear report", summary)]
        for key, title in (("materials", "Materials"), ("stiffness", "Wall stiffness"), ("loads", "Loads"),
                           ("cases", "Load cases"),
                           ("classification", "Flexibility check"),
                           ("span_deflection", "Span deflection by beam theory (flexible method)"),
                           ("irregularities", "Horizontal irregularities, ASCE 7-16 Table 12.3-1 (Ax and §12.3.3.4 applied where they apply)"),
                           ("walls", "Wall forces"),
                           ("collectors", "Collector peaks"), ("chords", "Chord peaks"),
                           ("engineer_envelope", "Engineer-chosen envelope (not the code check)"),
                           ("drift", "Story drift (ASCE 7-16 §12.8.6, §12.12.1)"),
                           ("chord_walls", "Walls along chord lines: chord force against M/d"),
                           ("walls_across", "Walls across the load: force from chord elongation"),
                           ("transfer", "Transfer diaphragms"), ("net_shears", "Net shears in transfer regions"),
                           ("case_notes", "Notes per case"),
                           ("unit_shear", "Unit shear per zone"), ("residuals", "Equilibrium residuals")):
            headers, rows = tables[key]
            if key in ("engineer_envelope", "drift") and not rows:
                continue
            if key == "irregularities":  # the consequence is a sentence: wrapped below each row
                sections.append((title, _irregularity_lines(headers, rows)))
                continue
            sections.append((title, _plain_rows(headers, rows)))
        sections.append(tuple(_traced(doc)[1]))
        _text_pages(pdf, sections)
        figures = _figures(doc, results, folder, pdf)
        _text_pages(pdf, [(
            "Methods, sources and limitations",
            [line for name, text in METHODS_TEXT for line in _wrap(f"{name}: {text}", 110)]
            + [""] + [line for text in LIMITATIONS_TEXT for line in _wrap(f"- {text}", 110)]
            + [""] + _wrap(CAUTION, 110),
        )])
        checks_html = _design_checks_section(doc, results, folder, pdf)
    written.append("report.pdf")
    (folder / "report.html").write_text(_html(doc, tables, figures, checks_html), encoding="utf-8")
    written.append("report.html")
    return written


IRREGULARITY_TEXT = (
    "Detected and reported. Of the consequences, the torsional amplification Ax (§12.8.4.3, SDC C–F: the ±ecc cases "
    "are run again with the eccentricity × Ax) and the 25 % increase of §12.3.3.4 on collector forces (SDC D–F, not "
    "on forces that include Ω0) are applied; the others are the engineer's to apply. Torsion: δ at the plan's two extreme edges "
    "across the load, worst of the accidental-torsion cases; re-entrant corners from the outline; open area = "
    "openings / area enclosed by the outline. The SDC application column is from memory of the standard."
)


def _not_run_lines(doc: dict) -> list[str]:
    """Plain lines on the assumptions that were not run and the flexibility check that
    could not be calculated (empty when everything ran)."""
    lines = []
    for assumption, reason in doc.get("unavailable", {}).items():
        lines += _wrap(f"Not run: {assumption}: {reason}", 110)
    classification = doc.get("classification") or {}
    if classification.get("calculated") is False:
        lines += _wrap(f"Flexibility check not calculated: {classification['reason']}. {classification['note']}", 110)
    return lines


def _wrap(text: str, width: int) -> list[str]:
    import textwrap

    return textwrap.wrap(text, width) or [""]


def _design_checks_section(doc: dict, results, folder: Path, pdf: PdfPages) -> str:
    """"Design checks" (failures first) and the chords and collectors by member: PDF pages
    (table, then the D/C map) and the HTML section; empty HTML without capacities for the
    checks part."""
    from .figures_checks import dc_map_figure

    f = doc["units"]["force"]
    members = envelope_table(doc)
    members = (members[0], [r for r in members[1] if r[0] in ("member", "splice")])
    intro = ("Each member once, by grid line and bay, with both roles: chord (load across it) and collector (load "
             "along it; with Ω0 per ASCE 7-16 §12.10.2.1 where the case requires it); the design value is the larger.")
    # The PDF page is ~110 characters wide: the columns a reviewer needs first.
    narrow = (["member", "", f"design ({f})", "role", "governs", f"chord ({f})", f"coll. ({f})", f"coll.·Ω0 ({f})"],
              [[r[1], r[2], r[3], r[4], f"{r[5]} {r[6]}", r[8], r[9], r[10]] for r in members[1]])
    sections = [("Chords and collectors by member", _wrap(intro, 110) + _plain_rows(*narrow))]
    body = f"<section><h2>Chords and collectors by member</h2><p>{_esc(intro)}</p>{_table(*members, 'members')}</section>"
    if not doc.get("checks"):
        _text_pages(pdf, sections)
        return body
    checks = checks_table(doc)
    failures = doc["checks"]["failures"]
    lead = (f"Basis: {doc['checks']['basis']}. {doc['checks']['rule']}. "
            + (f"{failures} check(s) FAIL (listed first)." if failures else "Every check with a capacity passes."))
    narrow = (["item", "quantity", "demand", "capacity", "unit", "D/C", "status", "governs"],
              [[c["item"], c["quantity"], _rounded(c["demand"], c["unit"]), _rounded(c["capacity"], c["unit"]),
                c["unit"], _rounded(c["ratio"], "ratio"), c["status"],
                f"{c['assumption'] or ''} {c['case'] or ''}"] for c in doc["checks"]["items"]])
    sections.insert(0, ("Design checks", _wrap(lead, 110) + _plain_rows(*narrow)))
    _text_pages(pdf, sections)
    fig = dc_map_figure(results.plan, results.checks)
    figure = save(fig, folder / "figures", "dc_map", "Demand/capacity map")
    pdf.savefig(fig)
    return (f"<section><h2>Design checks</h2><p>{_esc(lead)}</p>{_table(*checks, 'checks')}"
            f"<figure>{figure.svg}<figcaption>{_esc(figure.title)}</figcaption></figure></section>" + body)


def _html(doc: dict, tables: dict, figures: dict[str, list[FigureFile]], checks_html: str = "") -> str:
    def section(title: str, body: str) -> str:
        return f"<section><h2>{_esc(title)}</h2>{body}</section>"

    def figs(items: list[FigureFile]) -> str:
        return "".join(f"<figure>{f.svg}<figcaption>{_esc(f.title)}</figcaption></figure>" for f in items)

    def tab(key: str) -> str:
        headers, rows = tables[key]
        return _table(headers, rows, key)

    plan = doc["plan"]
    area_key = next(k for k in plan if k.startswith("area_"))
    classification = doc.get("classification") or {"directions": {}}
    verdicts = "".join(f"<li>load along {_esc(a)}: <b>{_esc(c['verdict'])}</b> (governing span {_esc(c['governing_span'])})"
                       + "".join(f"<br><small>{_esc(n)}</small>" for n in c.get("notes", ())) + "</li>"
                       for a, c in classification["directions"].items())
    if classification.get("calculated") is False:
        verdicts += (f"<li><b>not calculated</b>: {_esc(classification['reason'])}. "
                     f"{_esc(classification['note'])}</li>")
    not_run = "".join(f"<li><b>{_esc(a)}</b>: {_esc(r)}</li>" for a, r in doc.get("unavailable", {}).items())
    if "overall" in classification:
        overall = classification["overall"]
        verdicts += f"<li>overall: <b>{_esc(overall['verdict'])}</b>; governing: {_esc(overall['governing'])}</li>"
    notes = "".join(f"<li>{_esc(n)}</li>" for m in doc["assumptions"].values() for n in m.get("notes", []))
    methods = "".join(f"<dt>{_esc(n)}</dt><dd>{_esc(t)}</dd>" for n, t in METHODS_TEXT)
    limits = "".join(f"<li>{_esc(t)}</li>" for t in LIMITATIONS_TEXT)
    parts = [
        "<!DOCTYPE html><html lang=\"en\"><head><meta charset=\"utf-8\">",
        f"<title>planshear report: {_esc(plan['name'])}</title><style>{_CSS}</style></head><body>",
        f"<h1>Diaphragm analysis: {_esc(plan['name'])}</h1>",
        f'<p class="caution">{_esc(CAUTION)}</p>',
        section("Project and plan", f"<p>Plan file <code>{_esc(plan['file'])}</code>; diaphragm area "
                f"{_num(plan[area_key])} {_esc(area_key[5:])}; material: {_esc(plan['material'])}. "
                f"Load cases: {_esc(', '.join(plan['cases']))}. planshear {__version__}.</p>"),
        section("Assumptions not run", f"<ul>{not_run}</ul>") if not_run else "",
        checks_html,
        section("Plan drawing", figs(figures["plan"])),
        section("Materials and wall stiffness", tab("materials") + tab("stiffness")),
        section("Loads and load cases", tab("loads") + tab("cases")),
        _traced(doc)[0],
        section("Flexibility (ASCE 7-16 §12.3.1)", f"<ul>{verdicts}</ul>" + tab("classification")
                + "<p>The same check by beam theory on the flexible method's simple spans (chord bending and "
                "sheathing shear; no finite-element model):</p>" + tab("span_deflection")),
        section("Horizontal irregularities (ASCE 7-16 Table 12.3-1)", f"<p>{_esc(IRREGULARITY_TEXT)}</p>"
                + tab("irregularities")),
        section("Wall forces", "<p>Largest magnitude over the cases of each assumption; design = envelope over "
                "the assumptions the code allows for the load direction.</p>" + tab("walls")),
        section("Collectors", tab("collectors") + figs(figures["collectors"])),
        section("Chords", tab("chords") + figs(figures["chords"])),
        section("Story drift (ASCE 7-16 §12.8.6, §12.12.1)", f"<p>{_esc(doc['drift']['note'])}</p>" + tab("drift"))
        if doc.get("drift") else "",
        section("Engineer-chosen envelope", f"<p>{_esc(doc['engineer_envelope']['label'])}</p>" + tab("engineer_envelope"))
        if doc.get("engineer_envelope") else "",
        section("Walls along chord lines", f"<p>{_esc(CHORD_WALLS_TEXT)}</p>" + tab("chord_walls") + tab("walls_across")),
        section("Transfer diaphragms (flexible and rigid methods)", _TRANSFER_INTRO + tab("transfer") + tab("net_shears")),
        section("Notes per case", tab("case_notes")),
        section("Unit shear", tab("unit_shear") + figs(figures["shear"])),
        section("Deflected shape", figs(figures["deflected"])),
        section("Equilibrium residuals", tab("residuals")),
        section("Methods and sources", f"<dl>{methods}</dl>"),
        section("Assumptions and limitations", f"<ul>{limits}{notes}</ul>"),
        f'<p class="caution">{_esc(CAUTION)}</p>',
        "</body></html>",
    ]
    return "\n".join(parts)
