"""Command line: ``planshear check | run | demo | import | batch | diff``.

Exit codes: 0 success, 2 bad input (the plan file), 1 internal error (including a case
whose wall forces fail the equilibrium check: nothing is written then). Only this module
prints or exits; the library raises exceptions.
"""

from __future__ import annotations

import argparse
import contextlib
import json
import sys
import time
from importlib import resources
from pathlib import Path

from .errors import AnalysisError, EquilibriumError, PlanError
from .mesh_export import MESH_UNIT_CHOICES
from .plan import load_plan, parse_plan
from .run import CAUTION, Results, analyze, plan_summary

EXIT_OK, EXIT_INTERNAL, EXIT_BAD_INPUT = 0, 1, 2


def _parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="planshear",
        description="Diaphragm analysis as flexible, rigid and semi-rigid. " + CAUTION,
    )
    from . import __version__

    parser.add_argument("--version", action="version", version=f"planshear {__version__}")
    sub = parser.add_subparsers(dest="command", required=True)
    check = sub.add_parser("check", help="validate a plan file and print a short summary")
    check.add_argument("plan", help="plan file (.toml)")
    check.add_argument("--format", choices=("text", "json"), default="text")
    run = sub.add_parser("run", help="analyze a plan and write the results folder")
    run.add_argument("plan", help="plan file (.toml)")
    run.add_argument("--out", default=None, help="output folder (default: <plan name>-results)")
    run.add_argument("--format", choices=("text", "json"), default="text")
    run.add_argument("--quiet", action="store_true", help="print nothing but errors")
    run.add_argument("--no-report", action="store_true", help="write results.json and mesh files only")
    run.add_argument("--mesh-units", choices=MESH_UNIT_CHOICES, default="si",
                     help="units of the mesh files: si (N, m; default, for a finite-element program) or plan "
                          "(the units of results.json, e.g. ft, in, kip)")
    _report_options(run)
    demo = sub.add_parser("demo", help="analyze the built-in demo plan")
    demo.add_argument("--out", default="planshear-demo", help="output folder (default: planshear-demo)")
    demo.add_argument("--format", choices=("text", "json"), default="text")
    demo.add_argument("--quiet", action="store_true")
    demo.add_argument("--no-report", action="store_true", help="write results.json and mesh files only")
    demo.add_argument("--mesh-units", choices=MESH_UNIT_CHOICES, default="si", help="units of the mesh files: si or plan")
    _report_options(demo)
    imp = sub.add_parser("import", help="read a plan drawing (DXF) and write a plan file with placeholders to fill in")
    imp.add_argument("drawing", help="plan drawing (.dxf)")
    imp.add_argument("--out", required=True, help="plan file to write (.toml); never replaced without --force")
    imp.add_argument("--layer", action="append", default=[], metavar="ROLE=LAYER",
                     help="layer of a role (outline, opening, zone, wall, grid); repeatable; defaults PS-OUTLINE, "
                          "PS-OPENING, PS-ZONE, PS-WALL, PS-GRID")
    imp.add_argument("--units", default=None, help="what one drawing unit is (in, ft, mm, cm, m); default: the "
                                                   "drawing header's $INSUNITS")
    imp.add_argument("--force", action="store_true", help="replace an existing --out file")
    batch = sub.add_parser("batch", help="run many plans and parameter variants (on Dask) with one summary table")
    batch.add_argument("plans", nargs="*", metavar="PLAN", help="plan files (.toml)")
    batch.add_argument("--out", required=True, help="output folder: one folder per run and summary.csv/.parquet")
    batch.add_argument("--vary", action="append", default=[], metavar="KEY=V1,V2,...",
                       help='dotted key into the plan and its values, e.g. "diaphragm.material.Ga=10 kip/in,20 kip/in"'
                            " (repeat for a grid of every combination)")
    batch.add_argument("--sweep", metavar="SWEEP.toml", help="sweep file: plans, [grid] and [[variant]] entries")
    batch.add_argument("--scheduler", metavar="ADDRESS", help="existing Dask scheduler (tcp://host:8786); "
                       "default: a local cluster on this machine's cores")
    batch.add_argument("--workers", type=int, metavar="N", help="local worker processes (default: the cores)")
    batch.add_argument("--serial", action="store_true", help="run one after another in this process, without Dask")
    batch.add_argument("--no-report", action="store_true", help="write results.json and mesh files only per run")
    batch.add_argument("--quiet", action="store_true", help="print nothing but errors")
    diff = sub.add_parser("diff", help="what changed between two results folders")
    diff.add_argument("run_a", metavar="RUN_A", help="results folder (holding results.json), the reference")
    diff.add_argument("run_b", metavar="RUN_B", help="results folder compared with RUN_A")
    diff.add_argument("--threshold", action="append", default=[], metavar="5%|0.5 kip",
                      help="report a value that moved by more than this relative and this absolute amount "
                           "(default 5%% and 0.5 kip / 2 kN; give either or both)")
    diff.add_argument("--csv", metavar="OUT.csv", help="also write every compared item to this CSV file")
    diff.add_argument("--all", action="store_true", help="list unchanged items in the terminal too")
    return parser


def _import(args) -> int:
    """``planshear import``: the drawing read, what was skipped, the file written."""
    from .dxf_import import import_drawing, parse_layer_options

    report = import_drawing(args.drawing, args.out, parse_layer_options(args.layer), args.units, args.force)
    d = report.drawing
    print(f"read {d.source} ({d.units_note}; plan in {d.length_unit}): outline with {len(d.outline)} corners, "
          f"{len(d.openings)} opening(s), {len(d.zones)} zone(s), {len(d.walls)} wall(s), {len(d.grid)} grid line(s)")
    for line in d.skipped:
        print(f"  skipped: {line}")
    for line in d.notes:
        print(f"  note: {line}")
    print(f"wrote {report.out} with {report.placeholders} FILL-IN placeholder(s); fill them in "
          f"(planshear check {report.out} lists them)")
    return EXIT_OK


def _report_options(command) -> None:
    command.add_argument("--figures", choices=("none", "key", "all"), default="key",
                         help="figures in the report: none, key (default: plan, every collector and chord at its "
                              "governing case, unit shear along the spans, maps of the base cases) or all (every case)")
    command.add_argument("--page-size", choices=("letter", "a4"), default="letter",
                         help="paper of report.pdf and of the printed HTML (default: letter)")


def _figure_workers(args):
    """Figure processes for the report, started now (one per idle core), or nothing."""
    if args.no_report or args.figures == "none":
        return contextlib.nullcontext()
    from .report import FigureWorkers

    return FigureWorkers()


def main(argv: list[str] | None = None) -> int:
    args = _parser().parse_args(argv)
    try:
        if args.command == "import":
            return _import(args)
        if args.command == "check":
            plan = load_plan(args.plan)
            from .loads import expand_load_cases
            from .plan import assess_stability

            summary = plan_summary(plan, expand_load_cases(plan))
            not_run = assess_stability(plan).unavailable
            if args.format == "json":
                print(json.dumps(summary | {"unavailable": not_run}, indent=1, ensure_ascii=False))
            else:
                _print_check(summary)
                for assumption, reason in not_run.items():
                    print(f"  {assumption}: cannot be run — {reason}")
            return EXIT_OK
        if args.command == "batch":
            return _batch(args)
        if args.command == "diff":
            return _diff(args)
        if args.command == "demo":
            text = resources.files("planshear").joinpath("data/demo.toml").read_text(encoding="utf-8")
            plan = parse_plan(text, "demo.toml")
            out = Path(args.out)
        else:
            plan = load_plan(args.plan)
            out = Path(args.out) if args.out else Path(f"{Path(args.plan).stem}-results")
        progress = _progress_printer(quiet=args.quiet or args.format == "json")
        with _figure_workers(args) as workers:  # they start up while the analysis runs
            results = analyze(plan, progress=progress)
            progress("writing results, report, figures and mesh files")
            results.write(out, report=not args.no_report, mesh_units=args.mesh_units, figures=args.figures,
                          page_size=args.page_size, figure_workers=workers)
        progress("done")
        if args.format == "json":
            print(json.dumps(_short_json(results), indent=1, ensure_ascii=False))
        elif not args.quiet:
            _print_results(results, out)
        return EXIT_OK
    except PlanError as exc:
        for problem in exc.problems:
            print(f"error: {problem}", file=sys.stderr)
        if len(exc.problems) > 1:
            print(f"{len(exc.problems)} problems found; nothing was analyzed.", file=sys.stderr)
        return EXIT_BAD_INPUT
    except EquilibriumError as exc:  # results that do not balance are a defect, never output
        print(f"error: {exc}", file=sys.stderr)
        return EXIT_INTERNAL
    except AnalysisError as exc:
        print(f"error: {exc}", file=sys.stderr)
        return EXIT_BAD_INPUT
    except (FileExistsError, PermissionError, IsADirectoryError, NotADirectoryError) as exc:
        print(f"error: cannot write the results: {exc}; choose another --out folder", file=sys.stderr)
        return EXIT_BAD_INPUT
    except KeyboardInterrupt:
        print("interrupted; earlier results (if any) were left as they were", file=sys.stderr)
        return EXIT_INTERNAL
    except BrokenPipeError:  # the reader of our output went away (e.g. `| head`): not an error
        sys.stderr.close()
        return EXIT_OK
    except Exception as exc:  # the one place that turns an unexpected failure into a message
        print(f"internal error: {type(exc).__name__}: {exc}", file=sys.stderr)
        print("This is a bug in planshear; please report it with the plan file.", file=sys.stderr)
        return EXIT_INTERNAL


def _batch(args) -> int:
    """planshear batch: exit 0 when every run succeeded, else 2 (some plan refused) or 1."""
    from .batch import load_sweep, make_jobs, parse_vary, run_batch

    plans, axes, variants = list(args.plans), [], []
    if args.sweep:
        sweep = load_sweep(args.sweep)
        plans += [str(p) for p in sweep.plans]
        axes += list(sweep.axes)
        variants = list(sweep.variants)
    axes += [parse_vary(option) for option in args.vary]
    if args.workers is not None and args.workers < 1:
        raise PlanError([f"--workers {args.workers}: give at least 1"])
    jobs = make_jobs(plans, axes, variants)
    show = not args.quiet
    if show:
        where = ("in this process" if args.serial else f"on the Dask scheduler {args.scheduler}" if args.scheduler
                 else "on a local Dask cluster")
        print(f"{len(jobs)} run(s) {where}", file=sys.stderr)
    outcome = run_batch(jobs, args.out, scheduler=args.scheduler, workers=args.workers, serial=args.serial,
                        report=not args.no_report, progress=show and sys.stdout.isatty() and not args.serial)
    if show:
        for run in outcome.runs:
            verdicts = "  ".join(f"{k}: {v}" for k, v in run.row.items() if k.startswith("verdict"))
            largest = next((f"largest wall {run.row['largest wall']} {v:.2f} {k.split('[')[1][:-1]}"
                            for k, v in run.row.items() if k.startswith("largest wall force")), "")
            state = "ok    " if run.status == "ok" else "FAILED"
            print(f"{state} {run.name}" + (f"  {verdicts}  {largest}" if run.status == "ok" else f": {run.error}"))
        print(f"summary: {outcome.out}/summary.csv and summary.parquet ({len(outcome.runs) - len(outcome.failed)} "
              f"ok, {len(outcome.failed)} failed; a failed run's traceback is in its folder's error.txt)")
    if not outcome.failed:
        return EXIT_OK
    serious = any(r.error_kind not in ("bad input", "analysis") for r in outcome.failed)
    return EXIT_INTERNAL if serious else EXIT_BAD_INPUT


def _diff(args) -> int:
    from .diff import compare_runs, format_table, write_csv

    comparison = compare_runs(args.run_a, args.run_b, args.threshold)
    if args.csv:
        write_csv(comparison, args.csv)
    print(format_table(comparison, show_all=args.all))
    return EXIT_OK


def _progress_printer(quiet: bool):
    """Stage messages with elapsed time on stderr, only when it is a terminal."""
    if quiet or not sys.stderr.isatty():
        return lambda stage: None
    start = time.perf_counter()

    def show(stage: str) -> None:
        print(f"[{time.perf_counter() - start:6.1f} s] {stage}", file=sys.stderr, flush=True)

    return show


def _print_check(summary: dict) -> None:
    print(f"plan: {summary['name']} ({summary['file']}) — OK")
    area_key = next(k for k in summary if k.startswith("area_"))
    print(f"  diaphragm area: {summary[area_key]:.6g} {area_key[5:]}")
    print(f"  walls along x: {', '.join(summary['walls_along_x']) or '-'}")
    print(f"  walls along y: {', '.join(summary['walls_along_y']) or '-'}")
    force = summary["stiffness_unit"].split("/")[0]
    length = summary["length_unit"]
    for name, load in summary["loads"].items():
        line = f"  load {name} ({load['kind']}):"
        if "seismic_weight" in load:
            cm = ", ".join(f"{c:.4g}" for c in load["center_of_mass"])
            line += f" weight {load['seismic_weight']:.5g} {force}, center of mass ({cm}) {length},"
            for axis, own in load.get("by_direction", {}).items():  # only_across weights
                at = ", ".join(f"{c:.4g}" for c in own["center_of_mass"])
                line += f" [along {axis}: weight {own['seismic_weight']:.5g} {force} at ({at})]"
        line += " force " + ", ".join(f"{axis}: {f:.5g} {force}" for axis, f in load["force"].items())
        if load.get("fpx_equation"):
            values = ", ".join(f"Eq. {eq} {v:.5g}" for eq, v in load["fpx_values"].items())
            line += f"; Fpx by ASCE 7-16 Eq. {load['fpx_equation']} ({values} {force})"
        elif load["kind"] == "seismic":
            line += " (total given in the plan)"
        if "fx" in load:
            line += f"; walls and drifts at Fx = {load['fx']:.5g} {force}"
        if "fx_distribution" in load:
            elf = load["fx_distribution"]
            line += (f" (level {elf['level']} of the ELF distribution, k = {elf['k']:.3g}; ΣFi/Σwi at and above it "
                     f"{elf['story_force_ratio']:.4g})")
        print(line)
    for name, splice in summary.get("splices", {}).items():
        at = ", ".join(f"{c:.4g}" for c in splice["at"])
        slip = (f", slip {splice['slip']:.4g} {summary['stiffness_unit'].split('/')[1]} at {splice['at_force']:.4g} {force}" if splice["slip"] is not None else "")
        print(f"  splice {name} at ({at}) {length} in the {splice['on']}: {splice['stiffness']:.4g} "
              f"{summary['stiffness_unit']}{slip}")
    print(f"  load cases: {', '.join(summary['cases'])}")


def _short_json(results: Results) -> dict:
    doc = results.to_json()
    short = {"plan": doc["plan"]["name"], "units": doc["units"], "unavailable": doc["unavailable"], "walls": {}}
    for assumption, method in doc["assumptions"].items():
        for case_name, case in method["cases"].items():
            for wall, force in case["walls"].items():
                short["walls"].setdefault(wall, {})[f"{assumption}:{case_name}"] = force
    return short


def _print_checks(doc: dict) -> None:
    """Design checks, failures first (only when the plan gives capacities), and splice forces."""
    force = doc["units"]["force"]
    for splice in doc.get("splice_forces", []):
        cells = [f"{key} {splice[key]['value']:.2f} {force} ({splice[key]['assumption']} {splice[key]['case']})"
                 for key in ("tension", "compression") if splice.get(key)]
        print(f"splice {splice['name']} in {splice['member'] or 'no member'}: " + ("; ".join(cells) or "no force"))
    checks = doc.get("checks")
    if not checks:
        return
    failures = checks["failures"]
    print(f"\ndesign checks ({checks['basis']}; D/C = demand / capacity): "
          + (f"{failures} FAIL" if failures else "all checks with a capacity pass"))
    for c in checks["items"]:
        if c["status"] == "no capacity":
            continue
        unit = c["unit"]
        mark = "FAILS" if c["status"] == "fails" else "ok"
        print(f"  {mark:5} D/C {c['ratio']:6.2f}  {c['item']} {c['quantity']}: {c['demand']:.2f} of "
              f"{c['capacity']:.2f} {unit}  ({c['assumption']} {c['case']})")
    missing = sorted({c["item"] for c in checks["items"] if c["status"] == "no capacity"})
    if missing:
        print(f"  no capacity given: {', '.join(missing)}")


def _print_results(results: Results, out: Path) -> None:
    doc = results.to_json()
    units = doc["units"]
    force = units["force"]
    print(f"plan: {doc['plan']['name']}")
    _print_checks(doc)
    for assumption, reason in doc["unavailable"].items():
        print(f"\n{assumption}: not run — {reason}")
    classification = doc.get("classification")
    if classification:
        print("\nflexibility (" + classification["criterion"] + ")")
        if classification.get("calculated") is False:
            print(f"  cannot be calculated: {classification['reason']}")
            print(f"  {classification['note']}")
        for axis, check in classification["directions"].items():
            print(f"  load along {axis}: {check['verdict']}")
            governing = [s for s in check["spans"] if f"{s['span']} ({s['case']})" == check["governing_span"]]
            for span in governing:
                ratio = "inf" if span["ratio"] is None else f"{span['ratio']:.2f}"
                print(f"    governing span {span['span']} ({span['case']}): MDD {span['MDD']:.3f} {units['displacement']}, "
                      f"ADVE {span['ADVE']:.3f} {units['displacement']}, ratio {ratio}")
            for note in check.get("notes", ()):
                print(f"    note: {note}")
    _print_irregularities(doc)
    methods = list(doc["assumptions"])
    envelope = doc.get("envelope") or {}
    print(f"\ndesign basis: {doc['plan']['design_basis']} — "
          + "; ".join(f"{n}: {ld['combination']}" for n, ld in doc["plan"]["loads"].items()))
    print(f"wall forces ({force}): largest magnitude over all cases (at Fx where a seismic load gives fx), on the "
          "design basis; design = envelope of allowed assumptions")
    header = "  " + "wall".ljust(8) + "".join(m.rjust(11) for m in methods) + "design".rjust(11) + "  governs"
    print(header)
    for wall in doc["plan"]["wall_stiffness"]:
        cells = []
        for m in methods:
            largest = envelope.get("walls", {}).get(wall, {}).get(m)
            cells.append(f"{largest['value']:11.2f}" if largest else " " * 11)
        design = envelope.get("walls", {}).get(wall, {}).get("design")
        tail = f"{design['value']:11.2f}  {design['assumption']} {design['case']}" if design else ""
        print("  " + wall.ljust(8) + "".join(cells) + tail)
    print(f"\ncollector peaks ({force}): design envelope, and with overstrength per ASCE 7-16 §12.10.2.1 (Ω0 with "
          "the Exception 1 cap at Eq. 12.10-3; seismic cases); [collector in the semi-rigid model: declared member, "
          "outline chord, implied, none]")
    for name, slots in envelope.get("collectors", {}).items():
        design, omega = slots.get("design"), slots.get("with_overstrength")
        if design:
            basis = slots.get("collector_in_model")
            print(f"  {name.ljust(8)}{design['value']:11.2f}  ({design['assumption']} {design['case']})   "
                  f"§12.10.2.1: {omega['value']:.2f}"
                  + (" (cap)" if "Exception 1" in (slots.get("overstrength") or {}).get("governs", "") else "")
                  + (f"   [{basis}]" if basis else "")
                  + ("   (!) no collector bar in the model" if "caution" in slots else ""))
        elif "caution" in slots:  # e.g. a transfer strut that only the idealized methods have
            print(f"  {name}: (!) {slots['caution']}")
    print(f"\nchord peaks ({force}, tension +; load across the member)")
    for name, slots in envelope.get("chords", {}).items():
        design = slots.get("design")
        if design:
            label = slots.get("part") or slots.get("member", name)
            print(f"  {label.ljust(14)}{design['value']:11.2f}  ({design['assumption']} {design['case']})")
    _print_walls_along_chords(doc)
    drift = doc.get("drift")
    if drift:
        print(f"\nstory drift ({drift['clause']}; {units['displacement']})")
        for group in ("walls", "lines"):
            for name, c in drift[group].items():
                print(f"  {group[:-1]} {name}: δxe {c['elastic']:.3f}, δx {c['amplified']:.3f}, δx/h {c['ratio']:.4f} "
                      f"{'≤' if c['ok'] else '>'} {c['allowable']:g}  ({c['assumption']} {c['case']})"
                      + ("" if c["ok"] else "   (!) exceeds the allowable drift"))
    chosen = doc.get("engineer_envelope")
    if chosen:
        print(f"\n{chosen['label']} ({force})")
        for group in ("walls", "collectors", "chords"):
            cells = [f"{name} {slots['design']['value']:.2f} ({slots['design']['assumption']} {slots['design']['case']})"
                     for name, slots in chosen.get(group, {}).items() if slots.get("design")]
            if cells:
                print(f"  {group}: " + "; ".join(cells))
    print(f"\nresults written to {out}/")
    print(CAUTION)


def _print_irregularities(doc: dict) -> None:
    """ASCE 7-16 Table 12.3-1 checks: found ones with their consequence, the rest in a line each."""
    items = doc.get("irregularities") or []
    if not items:
        return
    d = doc["units"]["displacement"]
    applied = doc.get("irregularity_consequences_applied") or []
    print("\nhorizontal irregularities (ASCE 7-16 Table 12.3-1; "
          + ("applied: " + "; ".join(applied) if applied else "no consequence applied to the forces: §12.8.4.3 "
             "and §12.3.3.4 apply only where a load states sdc C–F / D–F and the irregularity is present")
          + ")")
    for item in items:
        v = item["values"]
        where = " ".join(filter(None, [item.get("method"), item.get("load") and f"load {item['load']}",
                                       item.get("axis") and f"along {item['axis']}"]))
        head = f"  Type {item['type']} {item['name']}" + (f" [{where}]" if where else "")
        if "delta_max" in v:
            ratio = "unbounded (δavg ≤ 0)" if v["ratio"] is None else f"{v['ratio']:.3f}"
            head += f": δmax/δavg = {ratio} ({v['delta_max']:.4g}/{v['delta_avg']:.4g} {d}, {v['case']})"
        elif "share_x" in v:
            head += f": projections {100 * v['share_x']:.1f} % / {100 * v['share_y']:.1f} % of the plan dimensions"
        elif "open_area" in v:
            head += f": open area {100 * v['ratio']:.1f} % of the gross enclosed area"
        state = {True: "PRESENT", False: "not present", None: "not checked"}[item["present"]]
        print(f"{head} — {state}")
        if item["present"] is None:
            print(f"    {item['consequence']}")
        elif item["present"] is False:
            continue
        elif item["applies"] is False:
            print(f"    does not apply: {item['consequence']}")
        else:
            sections = ", ".join(x if x.startswith("Table") else f"§{x}" for x in item["sections"])
            text = (f"    applies: {sections}" if item["applies"] else
                    f"    no sdc given; by SDC Table 12.3-1 refers to {sections}")
            print(text + (f"; Ax = {v['Ax']:.3f} on the ±ecc cases" if "Ax" in v and "12.8.4.3" in item["sections"]
                          else "") + " (see results.json or the report)")


def _print_walls_along_chords(doc: dict) -> None:
    """Walls along chord lines: the chord force they take over in the semi-rigid model."""
    cases = doc["assumptions"].get("semirigid", {}).get("cases", {})
    if not cases:
        return
    force, position = doc["units"]["force"], doc["units"]["position"]
    print(f"\nwalls along chord lines (semi-rigid, {force}): force that walls on a chord edge take out of the chord "
          "(self-equilibrating, from chord elongation), against M/d of the beam analogy from the same case's wall "
          "forces; shown from 5 % of M/d")
    shown = False
    for case_name, case in cases.items():
        info = case.get("walls_along_chords") or {"lines": {}, "chords": {}}
        for edge, c in info["chords"].items():
            if abs(c["walls_share"]) < 0.05:
                continue
            shown = True
            print(f"  {case_name} {edge} at {c['at']:.4g} {position}: walls take {c['walls_force']:.2f} of "
                  f"M/d {c['M_over_d']:.2f} ({100 * c['walls_share']:.0f} %); chord N {c['chord_force']:.2f}")
        threshold = 0.01 * abs(case["applied_force"])
        lines = [(name, item) for name, item in info["lines"].items() if abs(item["restraint_force"]) >= threshold]
        if lines:
            shown = True
            name, item = max(lines, key=lambda pair: abs(pair[1]["restraint_force"]))
            text = (f"  {case_name}: walls on line {name} take {item['restraint_force']:.2f} from chord elongation "
                    f"(at {item['at']:.4g} {position})")
            wall, value = max(((w, f) for _, i in lines for w, f in i["self_equilibrating"].items()), key=lambda p: abs(p[1]))
            if abs(value) >= threshold:
                text += f"; largest such force in one wall: {wall} {value:.2f}"
            print(text)
    if not shown:
        print("  none above 5 % of M/d or 1 % of the applied force")


if __name__ == "__main__":
    sys.exit(main())
