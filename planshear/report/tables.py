"""The report's tables, built only from the results document (results.json ``doc``), and
the CSV files written from them: every number in the report is the document's own."""

from __future__ import annotations

import csv
from pathlib import Path

__all__ = ["report_tables", "transfer_tables", "envelope_table", "checks_table", "write_tables", "DECIMALS"]


def _plain(value, missing: str = "-") -> str:
    """A table cell as text: numbers to 6 significant digits, booleans as yes/no."""
    if value is None:
        return missing
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, (int, float)):
        return f"{value:.6g}"
    return str(value)



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


def chord_label(key: str, slots: dict) -> str:
    """A chord as a reviewer names it: its part ("line B, 3–4"), and the member it belongs to
    where that is longer ("line B, 3–4 (of line B, 1–4)"); the envelope key only where
    neither is known (a transfer region's chord keeps its own name)."""
    part, member = slots.get("part"), slots.get("member")
    if part is None:
        return member or key
    return part if member in (None, part) else f"{part} (of {member})"


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
          ("not checked" if i["present"] is None else {True: "yes", False: "no", None: "SDC not given"}[i["applies"]]),
          i["consequence"]]
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
        [[chord_label(n, s), s["design"] and s["design"]["value"], s["design"] and f"{s['design']['assumption']} {s['design']['case']}",
          s["information"] and s["information"]["value"]] for n, s in envelope["chords"].items()],
    )
    rows, line_rows = [], []
    for case_name, case in doc["assumptions"].get("semirigid", {}).get("cases", {}).items():
        info = case.get("walls_along_chords") or {"lines": {}, "chords": {}}
        for edge, c in info["chords"].items():
            rows.append([case_name, chord_label(edge, envelope["chords"].get(edge) or {}), c["at"], c["M_over_d"],
                         c["chord_force"], round(100 * c["share_lost"], 1), c["walls_force"],
                         round(100 * c["walls_share"], 1)])
        for name, item in info["lines"].items():
            wall, value = max(item["self_equilibrating"].items(), key=lambda pair: abs(pair[1]), default=("", 0.0))
            if abs(value) <= 1e-9 * max(abs(item["restraint_force"]), abs(item["net_force"]), 1e-30):
                wall, value = "none (round-off)", None  # no wall takes a self-equilibrating force
            line_rows.append([case_name, name, item["restraint_force"], item["at"], item["net_force"], wall, value])
    tables["chord_walls"] = (
        ["case", "chord", f"at ({p})", f"M/d ({f})", f"chord N ({f})", "lost (%)", f"walls take ({f})", "walls (% of M/d)"],
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
