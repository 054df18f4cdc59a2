"""What changed between two results folders (``planshear diff RUN_A RUN_B``).

Reads the two results.json files and compares, item by item: the flexibility verdict per
direction and per span (with MDD/ADVE), the assumptions that ran, the drift checks, and
the envelope's design values of walls, line reactions, collectors (with and without
overstrength) and chords. A value is reported as changed when it moved by more than both
the relative and the absolute threshold (defaults 5 % and 0.5 kip or 2 kN: a small force
that doubles and a large force that moves by a few tenths are both noise for design);
items present in only one run are "new" or "vanished". Results in different unit systems
(a kip/in run against a kN/mm run) are converted to RUN_A's units and the table says so.
"""

from __future__ import annotations

import csv
import json
import math
from dataclasses import dataclass
from pathlib import Path

from .errors import PlanError
from .units import FORCE, UNITS, QuantityError, parse_quantity

__all__ = ["Comparison", "DiffRow", "compare_runs", "format_table", "write_csv", "DEFAULT_RELATIVE"]

#: Default relative threshold (fraction of the larger magnitude of the two values).
DEFAULT_RELATIVE = 0.05
#: Default absolute threshold per force unit of RUN_A (common practice: below about half a
#: kip a change does not change a nailing schedule, a strap or a wall's design).
DEFAULT_ABSOLUTE = {"kip": 0.5, "kN": 2.0}

#: Order in the table: what needs attention first.
_ORDER = ("check fails", "verdict changed", "not run", "vanished", "new", "changed", "check passes",
          "within threshold", "same")


@dataclass(frozen=True)
class DiffRow:
    """One compared item. ``a``/``b`` are numbers (in RUN_A's units) or text; None where
    the item is absent. ``relative`` = |b − a| / max(|a|, |b|)."""

    status: str
    group: str
    item: str
    quantity: str
    unit: str
    a: float | str | None
    b: float | str | None
    delta: float | None = None
    relative: float | None = None
    governs_a: str = ""
    governs_b: str = ""


@dataclass(frozen=True)
class Comparison:
    """Two runs compared: their folders and plan names, RUN_A's units, the thresholds,
    a note when RUN_B was converted, and every row (reported ones first)."""

    run_a: str
    run_b: str
    plan_a: str
    plan_b: str
    units: dict
    relative: float
    absolute: float
    conversion: str
    rows: tuple[DiffRow, ...]

    @property
    def reported(self) -> tuple[DiffRow, ...]:
        return tuple(r for r in self.rows if r.status not in ("within threshold", "same"))


def _load(folder: str | Path, role: str) -> dict:
    folder = Path(folder)
    path = folder / "results.json"
    if not folder.is_dir():
        raise PlanError([f"{role} {folder}: no such folder; give a folder written by planshear run (or a run "
                         "folder of planshear batch)"])
    if not path.is_file():
        raise PlanError([f"{role} {folder}: has no results.json; give a folder written by planshear run (a failed "
                         "batch run has only error.txt)"])
    try:
        doc = json.loads(path.read_text(encoding="utf-8"))
    except (OSError, UnicodeDecodeError, json.JSONDecodeError) as exc:
        raise PlanError([f"{role} {path}: cannot be read as JSON ({exc}); run the plan again"]) from None
    if not isinstance(doc, dict) or doc.get("planshear_results") != 1 or "units" not in doc:
        raise PlanError([f"{role} {path}: not a planshear results file (format 1); run the plan again with this "
                         "version of planshear"])
    return doc


def _factor(unit_from: str, unit_to: str) -> float:
    return float(UNITS.Quantity(1.0, unit_from).to(unit_to).magnitude)


def _thresholds(texts: list[str], force_unit: str, length_unit: str) -> tuple[float, float]:
    relative, absolute = DEFAULT_RELATIVE, DEFAULT_ABSOLUTE.get(force_unit, 0.5)
    for text in texts:
        t = text.strip()
        if t.endswith("%"):
            try:
                relative = float(t[:-1]) / 100.0
            except ValueError:
                raise PlanError([f"--threshold {text!r}: write a percentage such as 5%"]) from None
            if not math.isfinite(relative) or relative < 0:
                raise PlanError([f"--threshold {text!r}: a percentage of zero or more, such as 5%"])
            continue
        try:
            newtons = parse_quantity(t, FORCE, length_unit)
        except QuantityError as exc:
            raise PlanError([f"--threshold {text!r}: {exc}; or give a percentage such as 5%"]) from None
        if newtons < 0:
            raise PlanError([f"--threshold {text!r}: a force of zero or more, such as 0.5 kip"])
        absolute = float(UNITS.Quantity(newtons, "N").to(force_unit).magnitude)
    return relative, absolute


def compare_runs(run_a: str | Path, run_b: str | Path, thresholds: list[str] | None = None) -> Comparison:
    """Compare the results folders ``run_a`` (reference) and ``run_b``. ``thresholds``:
    strings such as "5%" (relative) and "0.5 kip" (absolute, any force unit). Raises
    PlanError for a folder without a readable results.json or a bad threshold."""
    doc_a, doc_b = _load(run_a, "RUN_A"), _load(run_b, "RUN_B")
    units_a, units_b = doc_a["units"], doc_b["units"]
    force, disp = units_a["force"], units_a["displacement"]
    try:
        f_force = _factor(units_b["force"], force)
        f_disp = _factor(units_b["displacement"], disp)
    except Exception as exc:
        raise PlanError([f"RUN_B {run_b}: its units {units_b} cannot be converted to RUN_A's {units_a} ({exc}); "
                         "run both plans with the same length_unit"]) from None
    conversion = ""
    if (units_b["force"], units_b["displacement"]) != (force, disp):
        conversion = (f"RUN_B converted from {units_b['force']}, {units_b['displacement']} to RUN_A's {force}, "
                      f"{disp}; positions are not compared")
    length_unit = doc_a.get("plan", {}).get("length_unit", "ft")
    relative, absolute = _thresholds(list(thresholds or []), force, length_unit)
    rows: list[DiffRow] = []
    rows += _assumptions(doc_a, doc_b)
    rows += _verdicts(doc_a, doc_b, f_disp, disp, relative)
    rows += _drift(doc_a, doc_b)
    env_a, env_b = doc_a.get("envelope") or {}, doc_b.get("envelope") or {}
    for group, key, slot in (("wall", "walls", "design"), ("line reaction", "line_reactions", "design"),
                             ("collector", "collectors", "design"),
                             ("collector with overstrength", "collectors", "with_overstrength"),
                             ("chord", "chords", "design")):
        rows += _values(group, env_a.get(key) or {}, env_b.get(key) or {}, slot, f_force, force, relative, absolute)
    rows.sort(key=lambda r: (_ORDER.index(r.status), -(r.relative or 0.0)))
    return Comparison(str(run_a), str(run_b), doc_a.get("plan", {}).get("name", ""),
                      doc_b.get("plan", {}).get("name", ""), dict(units_a), relative, absolute, conversion,
                      tuple(rows))


def _presence(group: str, item: str, quantity: str, unit: str, a, b) -> DiffRow | None:
    if a is None and b is not None:
        return DiffRow("new", group, item, quantity, unit, None, b)
    if a is not None and b is None:
        return DiffRow("vanished", group, item, quantity, unit, a, None)
    return None


def _number(group, item, quantity, unit, a: float, b: float, relative: float, absolute: float,
            governs_a: str = "", governs_b: str = "") -> DiffRow:
    delta = b - a
    scale = max(abs(a), abs(b))
    rel = abs(delta) / scale if scale > 0 else 0.0
    if delta == 0:
        status = "same"
    elif abs(delta) > absolute and rel > relative:
        status = "changed"
    else:
        status = "within threshold"
    return DiffRow(status, group, item, quantity, unit, a, b, delta, rel, governs_a, governs_b)


def _governs(slot: dict | None) -> str:
    return "" if not slot else f"{slot.get('assumption', '')} {slot.get('case', '')}".strip()


def _values(group, items_a: dict, items_b: dict, slot: str, factor: float, unit: str, relative: float,
            absolute: float) -> list[DiffRow]:
    rows = []
    for name in dict.fromkeys([*items_a, *items_b]):
        sa = (items_a.get(name) or {}).get(slot)
        sb = (items_b.get(name) or {}).get(slot)
        a = None if not sa else sa["value"]
        b = None if not sb else sb["value"] * factor
        if a is None and b is None:
            continue
        row = _presence(group, name, slot, unit, a, b)
        rows.append(row or _number(group, name, slot, unit, a, b, relative, absolute, _governs(sa), _governs(sb)))
    return rows


def _assumptions(doc_a: dict, doc_b: dict) -> list[DiffRow]:
    rows = []
    names = dict.fromkeys([*doc_a.get("assumptions", {}), *doc_a.get("unavailable", {}),
                           *doc_b.get("assumptions", {}), *doc_b.get("unavailable", {})])
    for name in names:
        ran_a, ran_b = name in doc_a.get("assumptions", {}), name in doc_b.get("assumptions", {})
        if ran_a == ran_b:
            continue
        a = "ran" if ran_a else f"not run: {doc_a.get('unavailable', {}).get(name, 'absent')}"
        b = "ran" if ran_b else f"not run: {doc_b.get('unavailable', {}).get(name, 'absent')}"
        rows.append(DiffRow("not run" if ran_a else "new", "assumption", name, "ran", "", a, b))
    return rows


def _verdicts(doc_a, doc_b, f_disp: float, disp: str, relative: float) -> list[DiffRow]:
    rows = []
    dirs_a = ((doc_a.get("classification") or {}).get("directions")) or {}
    dirs_b = ((doc_b.get("classification") or {}).get("directions")) or {}
    for axis in dict.fromkeys([*dirs_a, *dirs_b]):
        ca, cb = dirs_a.get(axis), dirs_b.get(axis)
        va, vb = (ca or {}).get("verdict"), (cb or {}).get("verdict")
        row = _presence("verdict", f"load along {axis}", "verdict", "", va, vb)
        if row:
            rows.append(row)
        else:
            rows.append(DiffRow("verdict changed" if va != vb else "same", "verdict", f"load along {axis}",
                                "verdict", "", va, vb, governs_a=ca.get("governing_span") or "",
                                governs_b=cb.get("governing_span") or ""))
        spans_a = {f"{s['span']} ({s['case']})": s for s in (ca or {}).get("spans", [])}
        spans_b = {f"{s['span']} ({s['case']})": s for s in (cb or {}).get("spans", [])}
        for span in dict.fromkeys([*spans_a, *spans_b]):
            sa, sb = spans_a.get(span), spans_b.get(span)
            item = f"{axis}: span {span}"
            row = _presence("span", item, "verdict", "", sa and sa["verdict"], sb and sb["verdict"])
            if row:
                rows.append(row)
                continue
            if sa["verdict"] != sb["verdict"]:
                rows.append(DiffRow("verdict changed", "span", item, "verdict", "", sa["verdict"], sb["verdict"]))
            # Ratios and deflections: relative threshold only (a force threshold has no meaning here).
            if sa["ratio"] is not None and sb["ratio"] is not None:
                rows.append(_number("span", item, "MDD/ADVE", "", sa["ratio"], sb["ratio"], relative, 0.0))
            rows.append(_number("span", item, "MDD", disp, sa["MDD"], sb["MDD"] * f_disp, relative, 0.0))
            rows.append(_number("span", item, "ADVE", disp, sa["ADVE"], sb["ADVE"] * f_disp, relative, 0.0))
    return rows


def _drift(doc_a, doc_b) -> list[DiffRow]:
    rows = []
    da, db = doc_a.get("drift") or {}, doc_b.get("drift") or {}
    for group in ("walls", "lines"):
        ga, gb = da.get(group) or {}, db.get(group) or {}
        for name in dict.fromkeys([*ga, *gb]):
            a = None if name not in ga else ("ok" if ga[name]["ok"] else "exceeds")
            b = None if name not in gb else ("ok" if gb[name]["ok"] else "exceeds")
            row = _presence("drift", f"{group[:-1]} {name}", "drift check", "", a, b)
            if row is None:
                status = "same" if a == b else ("check fails" if b == "exceeds" else "check passes")
                row = DiffRow(status, "drift", f"{group[:-1]} {name}", "drift check", "", a, b)
            rows.append(row)
    return rows


def _cell(value) -> str:
    if value is None:
        return "-"
    if isinstance(value, float):
        return f"{value:.3f}"
    return str(value)


def format_table(comparison: Comparison, show_all: bool = False, width: int | None = None) -> str:
    """The terminal table as text: reported rows (failures and verdict changes first),
    laid out by rich (planshear.terminal) to ``width`` columns (default: wide enough that no
    row wraps)."""
    import io

    from .terminal import make_console, table

    c = comparison
    head = [f"RUN_A: {c.run_a} ({c.plan_a})", f"RUN_B: {c.run_b} ({c.plan_b})",
            f"threshold: changed when |B - A| > {c.absolute:g} {c.units['force']} and > {100 * c.relative:g} % of "
            "the larger magnitude (MDD, ADVE and their ratio: the percentage only); envelope design values"]
    if c.conversion:
        head.append(c.conversion)
    rows = c.rows if show_all else c.reported
    if not rows:
        return "\n".join(head + [f"no changes above the threshold ({len(c.rows)} items compared)"])
    text = io.StringIO()
    console = make_console(text)
    if width is not None:
        console.width = width
    grid = table(console, "status", "item", "quantity", ("A", "right"), ("B", "right"), ("change", "right"),
                 ("%", "right"), "governs A -> B", fit=width is not None)
    for r in rows:
        unit = f" [{r.unit}]" if r.unit else ""
        grid.add_row(r.status, f"{r.group} {r.item}", r.quantity + unit, _cell(r.a), _cell(r.b),
                     "" if r.delta is None else f"{r.delta:+.3f}",
                     "" if r.relative is None else f"{100 * r.relative:.1f}",
                     f"{r.governs_a} -> {r.governs_b}" if (r.governs_a or r.governs_b) else "")
    console.print(grid)
    lines = [line.rstrip() for line in text.getvalue().splitlines()]
    summary = {s: sum(1 for r in c.rows if r.status == s) for s in _ORDER}
    tail = ", ".join(f"{n} {s}" for s, n in summary.items() if n)
    return "\n".join(head + [""] + lines + ["", f"{len(c.rows)} items compared: {tail}"])


def write_csv(comparison: Comparison, path: str | Path) -> Path:
    """Every compared row (unchanged ones too) with its status; units in the unit column."""
    path = Path(path)
    try:
        with open(path, "w", newline="", encoding="utf-8") as handle:
            writer = csv.writer(handle)
            writer.writerow(["status", "group", "item", "quantity", "unit", "A", "B", "change", "change %",
                             "governs A", "governs B"])
            for r in comparison.rows:
                writer.writerow([r.status, r.group, r.item, r.quantity, r.unit,
                                 "" if r.a is None else r.a, "" if r.b is None else r.b,
                                 "" if r.delta is None else r.delta,
                                 "" if r.relative is None else round(100 * r.relative, 4),
                                 r.governs_a, r.governs_b])
    except OSError as exc:
        raise PlanError([f"--csv {path}: cannot be written ({exc.strerror}); choose another file"]) from None
    return path
