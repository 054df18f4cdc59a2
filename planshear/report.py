"""The review package: report.html, report.pdf, CSV tables and figures.

How the report is assembled (one content, two writers):

- :func:`build_report` turns results.json (``doc``) and the in-memory results into a
  :class:`Report`: a title block and a list of :class:`Section`. A section is plain data:
  a title and blocks in reading order, each block a paragraph (``str``), a :class:`Table`
  (headers, rows, an HTML class) or a :class:`FigureSpec` (which function of
  :mod:`planshear.figures` draws it, with plain-data arguments, and whether it is a
  ``key`` figure or drawn only with ``--figures all``).
- To add a section, append one: ``report.add("Title", "a paragraph", Table(...), ...)``
  (in :func:`build_report`, where the order of sections is decided).
- :func:`render_figures` draws every figure the ``--figures`` choice keeps, once each,
  as PNG (the plan also as SVG), in parallel worker processes when there are enough.
- :func:`write_html` and :mod:`planshear.report_pdf` render the same sections: the HTML
  report (self-contained, figures inline) and the PDF (title block and "page n of m" on
  every page, several figures per page, tables wrapped and split, never truncated).

Every number in the report's tables is taken from the results.json document itself, so
the two always agree.
"""

from __future__ import annotations

import base64
import csv
import html
import os
import pickle
import time
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from . import __version__
from .caution import CAUTION
from .errors import AnalysisError
from .figures import broken_at, line_gaps

__all__ = ["write_review_package", "write_tables", "build_report", "render_figures", "write_html", "Report",
           "Section", "Table", "FigureSpec", "TitleBlock", "METHODS_TEXT", "LIMITATIONS_TEXT", "FIGURE_CHOICES",
           "PAGE_SIZES"]

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
    "Table 12.3-1 Types 1a, 1b, 2 and 3 (detected; Ax and the §12.3.3.4 collector increase applied); capacities are "
    "not checked.",
]

IRREGULARITY_TEXT = (
    "Detected and reported. Of the consequences, the torsional amplification Ax (§12.8.4.3, SDC C–F: the ±ecc cases "
    "are run again with the eccentricity × Ax) and the 25 % increase of §12.3.3.4 on collector forces (SDC D–F, not "
    "on forces that include Ω0) are applied; the others are the engineer's to apply. Torsion: δ at the plan's two extreme edges "
    "across the load, worst of the accidental-torsion cases; re-entrant corners from the outline; open area = "
    "openings / area enclosed by the outline. The SDC application column is from memory of the standard."
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
        ["chord (of member)", f"design peak ({f})", "governs", f"largest of all assumptions ({f})"],
        [[_chord_label(n, s), s["design"] and s["design"]["value"], s["design"] and f"{s['design']['assumption']} {s['design']['case']}",
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
    tables["unit_shear"] = (["case", "zone", f"largest element value ({units['unit_shear']}); may be a singular peak",
                             f"at ({p})"], rows)
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
    """A figure to draw: ``draw`` names a function of :mod:`planshear.figures` called with
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
               "shear; no finite-element model):", tab("span_deflection"),
               *(_span_deflection_specs(doc, results) if figures == "all" else ()))
    report.add("Horizontal irregularities (ASCE 7-16 Table 12.3-1)", IRREGULARITY_TEXT, tab("irregularities"))
    report.add("Wall forces", "Largest magnitude over the cases of each assumption; design = envelope over the "
               "assumptions the code allows for the load direction.", tab("walls"))
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
    from .postprocess.traceability import traced_section

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
                + (f"{failures} check(s) FAIL (listed first)." if failures else "Every check with a capacity passes."))
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
        named = (slots.get("member") or name) if group == "collectors" else _chord_label(name, slots)
        specs.append(FigureSpec(
            f"{role.lower()}_{k:02d}_{_slug(name)}", f"{role} force, {named}", "member_diagram_figure",
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
    from .fem.model import element_polygons
    from .postprocess.sections import _locate, section_points

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


# -- figures --------------------------------------------------------------------------


def render_figures(report: Report, doc: dict, results, folder: Path, choice: str = "key",
                   workers: int | None = None, timings: dict | None = None,
                   meanwhile: Callable[[], None] | None = None,
                   started_workers: FigureWorkers | None = None) -> dict[str, tuple[float, float]]:
    """Draw the figures ``choice`` keeps into ``folder`` (PNG; SVG where asked): name →
    (width, height) in inches.

    With enough figures to pay for starting them, ``workers`` − 1 separate Python
    processes draw a share each while this one draws its own (None: one per idle core,
    see :func:`_helpers`). A worker runs planshear/figures.py alone (numpy and
    matplotlib, not the whole package, and nothing of the calling program) on a pickle of
    plain data; a batch whose worker fails is drawn here instead. ``started_workers``
    (optional) are processes started earlier (:class:`FigureWorkers`), used instead of
    starting new ones; those not given a batch are let go."""
    from .figures import render

    specs = report.figures(choice)
    if not specs:
        return {}
    names = [s.name for s in specs]
    if len(set(names)) != len(names):  # two figures would overwrite one file (and race in the workers)
        twice = sorted({n for n in names if names.count(n) > 1})
        raise AnalysisError(f"figure file names used twice: {', '.join(twice)}; this is a bug in planshear")
    folder.mkdir(parents=True, exist_ok=True)
    sizes: dict[str, tuple[float, float]] = {}
    start = time.perf_counter()
    local = [s for s in specs if s.local]
    shared = [s for s in specs if not s.local]
    if started_workers is not None:  # already running: they cost nothing more to use
        helpers = started_workers.count if shared else 0
    else:
        helpers = _helpers(workers) if len(shared) >= PARALLEL_FROM else 0
    # Every (helpers + 1)-th figure to each process (the costly maps come in pairs, so they
    # are spread); this process also draws the plan, so it takes a smaller share.
    batches = [shared[k::helpers + 1] for k in range(helpers + 1)]
    started = []
    try:
        started = (started_workers.hand_out(batches[1:], folder) if started_workers is not None
                   else _start_workers(batches[1:], folder))
        if meanwhile is not None:  # e.g. the mesh files, while the helper processes draw
            meanwhile()
        for spec in local + batches[0]:
            kwargs = ({"doc": doc, "plan": results.plan} if spec.draw == "plan_figure" else
                      {"plan": results.plan, "checks": results.checks} if spec.draw == "dc_map_figure" else spec.kwargs)
            t = time.perf_counter()
            name, w, h = render(spec.draw, kwargs, str(folder), spec.name, spec.svg)
            sizes[name] = (w, h)
            if timings is not None:
                timings["figure " + spec.draw] = timings.get("figure " + spec.draw, 0.0) + time.perf_counter() - t
        for process, path, batch in started:
            process.wait()
            out = path.with_suffix(".out")
            if process.returncode == 0 and out.exists():
                sizes.update(pickle.loads(out.read_bytes()))
                continue
            for spec in batch:  # the worker failed (e.g. could not start): draw its share here
                name, w, h = render(spec.draw, spec.kwargs, str(folder), spec.name, spec.svg)
                sizes[name] = (w, h)
    finally:
        for process, path, _ in started:
            if process.poll() is None:  # only after an error above: stop the workers this call started
                process.kill()
                process.wait()
            path.unlink(missing_ok=True)
            path.with_suffix(".out").unlink(missing_ok=True)
    if timings is not None:
        timings["figures (wall time)"] = time.perf_counter() - start
    return sizes


def _helpers(workers: int | None) -> int:
    """Worker processes to start besides this one: ``workers`` − 1 when given; else one per
    idle core (cores less the one-minute load average, which counts this process), at
    most 3. On a busy machine a helper only adds its start-up (about a second of numpy and
    matplotlib imports) to work that has no free core to run on."""
    if workers is not None:
        return max(0, workers - 1)
    cores = os.cpu_count() or 1
    try:
        idle = cores - os.getloadavg()[0]
    except OSError:  # no load average on this platform
        idle = cores - 1
    return max(0, min(3, cores - 1, int(idle + 0.5)))


def _start_workers(batches: list[list[FigureSpec]], folder: Path) -> list:
    """Start one figure process per batch: [(process, batch file, batch)]."""
    import subprocess

    started = []
    for k, batch in enumerate(batches):
        if not batch:
            continue
        path = folder / f".batch-{k}.pickle"
        path.write_bytes(pickle.dumps([(s.draw, s.kwargs, str(folder), s.name, s.svg) for s in batch]))
        process = subprocess.Popen(_worker_command(str(path)), stdin=subprocess.DEVNULL,
                                   stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        started.append((process, path, batch))
    return started


#: Fewest figures drawn in worker processes (below this, starting the processes costs more).
PARALLEL_FROM = 8


def _worker_command(*args: str) -> list[str]:
    import sys

    script = str(Path(__file__).with_name("figures.py"))
    launcher = "import runpy, sys; runpy.run_path(sys.argv[1], run_name='__main__')"
    return [sys.executable, "-c", launcher, script, *args]


class FigureWorkers:
    """Figure processes started before the analysis, so that their start-up (Python, numpy
    and matplotlib imports, about 0.6 s each) runs on idle cores while this process
    analyzes; :func:`render_figures` then hands each one its batch. Use as a context
    manager: on leaving, a worker that got no batch is let go (its input closed) and one
    still running after an error is stopped.

    ``count``: processes to start (None: one per idle core, see :func:`_helpers`)."""

    def __init__(self, count: int | None = None):
        import subprocess

        self.processes = []
        for _ in range(_helpers(None) if count is None else max(0, count)):
            try:
                self.processes.append(subprocess.Popen(
                    _worker_command("--wait"), stdin=subprocess.PIPE, stdout=subprocess.DEVNULL,
                    stderr=subprocess.DEVNULL))
            except OSError:  # could not start one: the figures are drawn here instead
                break
        self._waiting = list(self.processes)

    @property
    def count(self) -> int:
        """Workers still waiting for a batch."""
        return len(self._waiting)

    def hand_out(self, batches: list[list[FigureSpec]], folder: Path) -> list:
        """Give each non-empty batch to a waiting worker: [(process, batch file, batch)]."""
        handed = []
        for k, batch in enumerate(batches):
            if not batch or not self._waiting:
                continue
            process = self._waiting.pop(0)
            path = folder / f".batch-{k}.pickle"
            path.write_bytes(pickle.dumps([(s.draw, s.kwargs, str(folder), s.name, s.svg) for s in batch]))
            try:
                process.stdin.write(f"{path}\n".encode())
                process.stdin.close()
            except OSError:  # the worker is gone: render_figures draws this batch itself
                pass
            handed.append((process, path, batch))
        return handed

    def __enter__(self) -> FigureWorkers:
        return self

    def __exit__(self, *exc) -> None:
        self.close()

    def close(self) -> None:
        """Let waiting workers go; stop any still running (only after an error)."""
        for process in self._waiting:
            try:
                process.stdin.close()
            except OSError:
                pass
        self._waiting = []
        for process in self.processes:
            try:
                process.wait(timeout=5)
            except Exception:  # noqa: BLE001 - a stuck worker must not keep the program alive
                process.kill()
                process.wait()


def _chord_label(key: str, slots: dict) -> str:
    """A chord as a reviewer names it: its part ("line B, 3–4"), and the member it belongs to
    where that is longer ("line B, 3–4 (of line B, 1–4)"); the outline edge's key only
    where neither is known (a transfer region's chord keeps its own name)."""
    part, member = slots.get("part"), slots.get("member")
    if part is None:
        return member or key
    return part if member in (None, part) else f"{part} (of {member})"


def _slug(text: str) -> str:
    """A file-name stem for ``text`` that keeps case names apart: "+" and "-" are spelled
    out ("E+x+ecc" → "E_plus_x_plus_ecc", never the same stem as "E+x-ecc")."""
    spelled = text.replace("+", "_plus_").replace("-", "_minus_")
    return "_".join(part for part in "".join(ch if ch.isalnum() else "_" for ch in spelled).split("_") if part)


# -- HTML -------------------------------------------------------------------------------


def write_html(path: Path, report: Report, figures_dir: Path, sizes: dict, page_size: str = "letter") -> None:
    """The HTML report: title block, caution, sections; figures inline (SVG where drawn,
    else PNG); ``@page`` for printing with "page n of m"."""
    def figure(spec: FigureSpec) -> str:
        if spec.name not in sizes:
            return ""
        svg_path = figures_dir / f"{spec.name}.svg"
        if spec.svg and svg_path.exists():
            svg = svg_path.read_text(encoding="utf-8")
            svg = svg[svg.index("<svg"):]  # drop the XML prolog and doctype for inlining
            start, end = svg.find("<metadata>"), svg.find("</metadata>")
            if start >= 0 and end > start:
                svg = svg[:start] + svg[end + len("</metadata>"):]
            body = svg
        else:
            data = base64.b64encode((figures_dir / f"{spec.name}.png").read_bytes()).decode("ascii")
            width = sizes[spec.name][0]
            body = (f'<img alt="{_esc(spec.title)}" style="max-width:{width:.2f}in" '
                    f'src="data:image/png;base64,{data}">')
        return f"<figure>{body}<figcaption>{_esc(spec.title)}</figcaption></figure>"

    def block(item) -> str:
        if isinstance(item, Table):
            return f'<div class="scroll">{_table(item.headers, item.rows, item.key)}</div>'
        if isinstance(item, FigureSpec):
            return figure(item)
        return f"<p>{_esc(item)}</p>"

    tb = report.title_block
    cells = "".join(f"<td><small>{_esc(label)}</small>{_esc(value) or '&nbsp;'}</td>" for label, value in tb.fields())
    width, height = PAGE_SIZES[page_size]
    css = _CSS + (f"@page{{size:{width}in {height}in;margin:.6in .55in .75in;"
                  f"@bottom-left{{content:'{_css_text(tb.job or tb.plan_name)} · {_css_text(tb.plan_file)} · "
                  f"rev {_css_text(tb.revision or '-')} · {_css_text(tb.date)}';font-size:8pt}}"
                  "@bottom-right{content:'page ' counter(page) ' of ' counter(pages);font-size:8pt}}")
    parts = [
        "<!DOCTYPE html><html lang=\"en\"><head><meta charset=\"utf-8\">",
        f"<title>planshear report: {_esc(tb.plan_name)}</title><style>{css}</style></head><body>",
        f'<table class="titleblock"><tr>{cells}<td class="pages"><small>page</small>1 of 1 (screen)</td></tr></table>',
        f"<h1>{_esc(report.title)}</h1>",
        f'<p class="caution">{_esc(report.caution)}</p>',
    ]
    for section in report.sections:
        parts.append(f"<section><h2>{_esc(section.title)}</h2>" + "".join(block(b) for b in section.blocks)
                     + "</section>")
    parts += [f'<p class="caution">{_esc(report.caution)}</p>', "</body></html>"]
    path.write_text("\n".join(parts), encoding="utf-8")


def _css_text(text: str) -> str:
    return text.replace("\\", "\\\\").replace("'", "\\'")


_CSS = """
body{font-family:Georgia,'DejaVu Serif',serif;color:#222;background:#fbfaf6;max-width:62rem;margin:1rem auto;padding:0 1rem;line-height:1.4}
h1{font-size:1.6rem;border-bottom:3px double #222;padding-bottom:.3rem}
h2{font-size:1.15rem;margin-top:2rem;border-bottom:1px solid #999}
.scroll{overflow-x:auto}
table{border-collapse:collapse;font-size:.8rem;margin:.5rem 0 1rem;font-family:'DejaVu Sans Mono',monospace}
th,td{border:1px solid #aaa;padding:.15rem .4rem;text-align:right;vertical-align:top}
th{background:#ece8dc}
td.text,th{white-space:normal;overflow-wrap:break-word;max-width:24rem}
td:first-child,th:first-child,td.text{text-align:left}
table.titleblock{width:100%;font-family:'DejaVu Sans',sans-serif;border:2px solid #1f6f8b;border-left:8px solid #1f6f8b}
table.titleblock td{text-align:left;border:1px solid #9fb9c3;background:#fff;padding:.2rem .5rem}
table.titleblock small{display:block;font-size:.62rem;text-transform:uppercase;letter-spacing:.06em;color:#5a6b70}
.caution{border:2px solid #222;padding:.6rem 1rem;background:#fff;font-weight:bold}
figure{margin:1rem 0;page-break-inside:avoid}
figure svg,figure img{width:100%;height:auto}
figcaption{font-size:.8rem;font-style:italic}
@media print{body{background:#fff;max-width:none;margin:0}h2{page-break-after:avoid}.scroll{overflow:visible}
table{font-size:6.5pt}td.pages{display:none}}
"""


# -- the package ---------------------------------------------------------------------------


def write_review_package(folder: Path, results, doc: dict, figures: str = "key", page_size: str = "letter",
                         workers: int | None = None, timings: dict | None = None,
                         meanwhile: Callable[[], None] | None = None,
                         started_workers: FigureWorkers | None = None) -> list[str]:
    """Write report.html, report.pdf, the CSV tables and figures/ into ``folder``.
    ``figures``: one of :data:`FIGURE_CHOICES`; ``page_size``: a key of
    :data:`PAGE_SIZES`; ``timings`` (optional dict) receives seconds per step;
    ``meanwhile`` (optional) is other writing done once, while the figure processes draw;
    ``started_workers`` (optional): figure processes started earlier (:class:`FigureWorkers`)."""
    from .report_pdf import write_pdf

    if figures not in FIGURE_CHOICES:
        raise AnalysisError(f"--figures {figures!r}: choose one of {', '.join(FIGURE_CHOICES)}")
    if page_size not in PAGE_SIZES:
        raise AnalysisError(f"--page-size {page_size!r}: choose one of {', '.join(PAGE_SIZES)}")
    clock = time.perf_counter()

    def lap(name: str) -> None:
        nonlocal clock
        if timings is not None:
            timings[name] = timings.get(name, 0.0) + time.perf_counter() - clock
        clock = time.perf_counter()

    written = write_tables(folder, doc)
    lap("csv tables")
    report = build_report(doc, results, figures)
    lap("content")
    figures_dir = folder / "figures"
    pending = [meanwhile] if meanwhile is not None else []

    def other_writing() -> None:
        while pending:
            pending.pop()()

    sizes = render_figures(report, doc, results, figures_dir, figures, workers, timings, other_writing,
                           started_workers)
    other_writing()  # when no figure was drawn
    clock = time.perf_counter()
    write_pdf(folder / "report.pdf", report, figures_dir, sizes, page_size)
    for raw in figures_dir.glob(".*.rgb.npy"):  # pixels the PDF did not use
        raw.unlink()
    written.append("report.pdf")
    lap("pdf")
    write_html(folder / "report.html", report, figures_dir, sizes, page_size)
    written.append("report.html")
    lap("html")
    return written
