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
from importlib import resources
from pathlib import Path

from .errors import AnalysisError, EquilibriumError, PlanError
from .mesh_export import MESH_UNIT_CHOICES
from .plan import load_plan, parse_plan
from .run import CAUTION, Results, analyze, plan_summary
from .terminal import (
    batch_progress,
    force_text,
    governs,
    make_console,
    sense,
    stages,
    table,
)

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
                console = make_console()
                _print_check(summary, console)
                for assumption, reason in not_run.items():
                    console.print(f"  {assumption}: cannot be run — {reason}")
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
        quiet = args.quiet or args.format == "json"
        with stages(make_console(sys.stderr), enabled=not quiet) as progress, \
                _figure_workers(args) as workers:  # the figure processes start up while the analysis runs
            results = analyze(plan, progress=progress)
            progress("writing results, report, figures and mesh files")
            results.write(out, report=not args.no_report, mesh_units=args.mesh_units, figures=args.figures,
                          page_size=args.page_size, figure_workers=workers)
            progress("done")
        if args.format == "json":
            print(json.dumps(_short_json(results), indent=1, ensure_ascii=False))
        elif not args.quiet:
            _print_results(results, out, make_console())
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
    err = make_console(sys.stderr)
    if show:
        where = ("in this process" if args.serial else f"on the Dask scheduler {args.scheduler}" if args.scheduler
                 else "on a local Dask cluster")
        err.print(f"{len(jobs)} run(s) {where}")
    with batch_progress(err, len(jobs), enabled=show) as on_done:
        outcome = run_batch(jobs, args.out, scheduler=args.scheduler, workers=args.workers, serial=args.serial,
                            report=not args.no_report, on_done=on_done)
    if show:
        console = make_console()
        errors = ("error",) if outcome.failed else ()
        rows = table(console, "status", "run", "verdict x", "verdict y", "largest wall force", *errors)
        for run in outcome.runs:
            largest = next((f"{run.row['largest wall']} {force_text(v, k.split('[')[1][:-1])}"
                            for k, v in run.row.items() if k.startswith("largest wall force") and v is not None), "")
            rows.add_row("ok" if run.status == "ok" else "FAILED", run.name, str(run.row.get("verdict x") or ""),
                         str(run.row.get("verdict y") or ""), largest, *([run.error or ""] if errors else []))
        console.print(rows)
        console.print(f"summary: {outcome.out}/summary.csv and summary.parquet ({len(outcome.runs) - len(outcome.failed)}"
                      f" ok, {len(outcome.failed)} failed; a failed run's traceback is in its folder's error.txt)")
    if not outcome.failed:
        return EXIT_OK
    serious = any(r.error_kind not in ("bad input", "analysis") for r in outcome.failed)
    return EXIT_INTERNAL if serious else EXIT_BAD_INPUT


def _diff(args) -> int:
    from .diff import compare_runs, format_table, write_csv

    comparison = compare_runs(args.run_a, args.run_b, args.threshold)
    if args.csv:
        write_csv(comparison, args.csv)
    console = make_console()
    console.print(format_table(comparison, show_all=args.all, width=console.width if console.is_terminal else None))
    return EXIT_OK


def _print_check(summary: dict, console) -> None:
    """The plan summary of ``planshear check``: every number with its unit (a dimensionless
    one says so)."""
    say = console.print
    say(f"plan: {summary['name']} ({summary['file']}) — OK")
    area_key = next(k for k in summary if k.startswith("area_"))
    say(f"  diaphragm area: {summary[area_key]:.6g} {area_key[5:]}")
    say(f"  walls along x: {', '.join(summary['walls_along_x']) or '-'}")
    say(f"  walls along y: {', '.join(summary['walls_along_y']) or '-'}")
    force, displacement = summary["stiffness_unit"].split("/")
    length = summary["length_unit"]

    def point(coordinates) -> str:
        return "(" + ", ".join(f"{c:.4g} {length}" for c in coordinates) + ")"

    for name, load in summary["loads"].items():
        line = f"  load {name} ({load['kind']}):"
        if "seismic_weight" in load:
            line += f" weight {load['seismic_weight']:.5g} {force}, center of mass {point(load['center_of_mass'])},"
            for axis, own in load.get("by_direction", {}).items():  # only_across weights
                line += f" [along {axis}: weight {own['seismic_weight']:.5g} {force} at {point(own['center_of_mass'])}]"
        line += " force " + ", ".join(f"along {axis} {f:.5g} {force}" for axis, f in load["force"].items())
        if load.get("fpx_equation"):
            values = ", ".join(f"Eq. {eq}: {v:.5g} {force}" for eq, v in load["fpx_values"].items())
            line += f"; Fpx by ASCE 7-16 Eq. {load['fpx_equation']} ({values})"
        elif load["kind"] == "seismic":
            line += " (total given in the plan)"
        if "fx" in load:
            line += f"; walls and drifts at Fx = {load['fx']:.5g} {force}"
        if "fx_distribution" in load:
            elf = load["fx_distribution"]
            line += (f" (level {elf['level']} of the ELF distribution, exponent k = {elf['k']:.3g} (dimensionless); "
                     f"ΣFi/Σwi at and above it {elf['story_force_ratio']:.4g} (dimensionless))")
        say(line)
    for name, splice in summary.get("splices", {}).items():
        slip = (f", slip {splice['slip']:.4g} {displacement} at {splice['at_force']:.4g} {force}"
                if splice["slip"] is not None else "")
        say(f"  splice {name} at {point(splice['at'])} in the {splice['on']}: {splice['stiffness']:.4g} "
            f"{summary['stiffness_unit']}{slip}")
    say(f"  load cases: {', '.join(summary['cases'])}")


def _short_json(results: Results) -> dict:
    doc = results.to_json()
    short = {"plan": doc["plan"]["name"], "units": doc["units"], "unavailable": doc["unavailable"], "walls": {}}
    for assumption, method in doc["assumptions"].items():
        for case_name, case in method["cases"].items():
            for wall, force in case["walls"].items():
                short["walls"].setdefault(wall, {})[f"{assumption}:{case_name}"] = force
    return short


def _print_checks(doc: dict, console) -> None:
    """Design checks, failures first (only when the plan gives capacities), and splice forces."""
    say = console.print
    force = doc["units"]["force"]
    for splice in doc.get("splice_forces", []):
        cells = [f"{key} {force_text(splice[key]['value'], force)} ({governs(splice[key])})"
                 for key in ("tension", "compression") if splice.get(key)]
        say(f"splice {splice['name']} in {splice['member'] or 'no member'}: " + ("; ".join(cells) or "no force"))
    checks = doc.get("checks")
    if not checks:
        return
    failures = checks["failures"]
    say(f"\ndesign checks ({checks['basis']}; D/C = demand / capacity): "
        + (f"{failures} FAIL on {checks.get('failing_items', failures)} item(s)" if failures
           else "all checks with a capacity pass"))
    rows = table(console, "status", ("D/C", "right"), "item", "quantity", ("demand", "right"), ("capacity", "right"),
                 "governs")
    for c in checks["items"]:
        if c["status"] == "no capacity":
            continue
        rows.add_row("FAILS" if c["status"] == "fails" else "ok", f"{c['ratio']:.2f}", c["item"], c["quantity"],
                     f"{abs(c['demand']):.2f} {c['unit']}", f"{c['capacity']:.2f} {c['unit']}", governs(c))
    if rows.row_count:
        say(rows)
    missing = sorted({c["item"] for c in checks["items"] if c["status"] == "no capacity"})
    if missing:
        say(f"  no capacity given: {', '.join(missing)}")


def _print_results(results: Results, out: Path, console=None) -> None:
    console = console or make_console()
    say = console.print
    doc = results.to_json()
    units = doc["units"]
    force = units["force"]
    say(f"plan: {doc['plan']['name']}")
    _print_checks(doc, console)
    for assumption, reason in doc["unavailable"].items():
        say(f"\n{assumption}: not run — {reason}")
    classification = doc.get("classification")
    if classification:
        say("\nflexibility (" + classification["criterion"] + ")")
        if classification.get("calculated") is False:
            say(f"  cannot be calculated: {classification['reason']}")
            say(f"  {classification['note']}")
        for axis, check in classification["directions"].items():
            say(f"  load along {axis}: {check['verdict']}")
            governing = [s for s in check["spans"] if f"{s['span']} ({s['case']})" == check["governing_span"]]
            for span in governing:
                ratio = "inf" if span["ratio"] is None else f"{span['ratio']:.2f}"
                say(f"    governing span {span['span']} ({span['case']}): MDD {span['MDD']:.3f} {units['displacement']}, "
                    f"ADVE {span['ADVE']:.3f} {units['displacement']}, ratio {ratio}")
            for note in check.get("notes", ()):
                say(f"    note: {note}")
    _print_irregularities(doc, console)
    envelope = doc.get("envelope") or {}
    say(f"\ndesign basis: {doc['plan']['design_basis']} — "
        + "; ".join(f"{n}: {ld['combination']}" for n, ld in doc["plan"]["loads"].items()))
    _print_walls(doc, envelope, console)
    _print_collectors(results, doc, envelope, console)
    _print_chords(doc, envelope, console)
    _print_walls_along_chords(doc, console)
    drift = doc.get("drift")
    if drift:
        say(f"\nstory drift ({drift['clause']})")
        rows = table(console, "wall or line", ("δxe", "right"), ("δx", "right"), ("δx/h", "right"), "allowable",
                     "governs", "")
        d = units["displacement"]
        for group in ("walls", "lines"):
            for name, c in drift[group].items():
                rows.add_row(f"{group[:-1]} {name}", f"{c['elastic']:.3f} {d}", f"{c['amplified']:.3f} {d}",
                             f"{c['ratio']:.4f}", f"{'≤' if c['ok'] else '>'} {c['allowable']:g}", governs(c),
                             "" if c["ok"] else "(!) exceeds the allowable drift")
        say(rows)
    chosen = doc.get("engineer_envelope")
    if chosen:
        say(f"\n{chosen['label']}")
        rows = table(console, "item", ("design", "right"), "", "governs")
        with_walls = {w.line for w in results.plan.walls}
        for group in ("walls", "collectors", "chords"):
            for name, slots in chosen.get(group, {}).items():
                design = slots.get("design")
                if not design or (group == "collectors" and _nil_line(name, slots, with_walls)):
                    continue
                word = "" if group == "walls" else sense(design, slots.get("tension"), slots.get("compression"))
                label = slots.get("member", name) if group == "chords" else name
                rows.add_row(f"{group[:-1]} {label}", force_text(design["value"], force), word, governs(design))
        say(rows)
    say(f"\nresults written to {out}/")
    say(CAUTION)


def _print_walls(doc: dict, envelope: dict, console) -> None:
    """Wall forces: the largest magnitude per assumption and the design value with its case.
    A wall force acts along the wall; its sign (the direction along the wall) is in
    results.json and is not needed to size the wall."""
    force = doc["units"]["force"]
    console.print(f"\nwall forces ({force}): largest magnitude over all cases (at Fx where a seismic load gives fx), "
                  "on the design basis; design = envelope of the allowed assumptions")
    methods = list(doc["assumptions"])
    rows = table(console, "wall", *[(f"{m} [{force}]", "right") for m in methods], ("design", "right"), "governs")
    for wall in doc["plan"]["wall_stiffness"]:
        slots = envelope.get("walls", {}).get(wall, {})
        cells = [f"{abs(slots[m]['value']):.2f}" if slots.get(m) else "" for m in methods]
        design = slots.get("design")
        rows.add_row(wall, *cells, force_text(design["value"], force) if design else "",
                     governs(design) if design else "")
    console.print(rows)


def _print_collectors(results: Results, doc: dict, envelope: dict, console) -> None:
    """Collector design values (magnitude, tension / compression, case) and with Ω0; lines
    without walls whose collector force is nil in every case are left out (counted)."""
    force = doc["units"]["force"]
    with_walls = {w.line for w in results.plan.walls}
    grid = {line.name for line in results.plan.grid_lines}
    rows = table(console, "line", ("design", "right"), "", "governs", ("with Ω0", "right"), "", "governs",
                 "in model")
    cautions, left_out = [], []
    for name, slots in envelope.get("collectors", {}).items():
        design, omega = slots.get("design"), slots.get("with_overstrength")
        if "caution" in slots and not design:  # e.g. a transfer strut that only the idealized methods have
            cautions.append(f"  {name}: (!) {slots['caution']}")
            continue
        if not design:
            continue
        if _nil_line(name, slots, with_walls):
            left_out.append(name)
            continue
        rule = (slots.get("overstrength") or {}).get("governs", "").split(":")[0]  # "item 2", "Exception 1"…
        omega_cells = (force_text(omega["value"], force),
                       sense(omega, slots.get("with_overstrength_tension"), slots.get("with_overstrength_compression")),
                       governs(omega) + (f", {rule}" if rule else "")) if omega else ("", "", "")
        basis = slots.get("collector_in_model") or (
            "" if name not in grid or "semirigid" not in doc["assumptions"]  # e.g. a transfer collector
            else "none" if name in with_walls else "no walls on it")
        rows.add_row(name, force_text(design["value"], force),
                     sense(design, slots.get("tension"), slots.get("compression")), governs(design),
                     *omega_cells, basis + ("  (!) no collector bar in the model" if "caution" in slots else ""))
    console.print(f"\ncollector forces ({force}): design envelope, and with overstrength per ASCE 7-16 §12.10.2.1 "
                  "(Ω0 on seismic cases, with the item or exception of §12.10.2.1 that governs; Exception 1: the cap at "
                  "Eq. 12.10-3); the two may come from different cases. In model: the collector in the semi-rigid model (declared member, outline chord, "
                  "implied, none, or no walls on the line; blank when it did not run)")
    if rows.row_count:
        console.print(rows)
    for line in cautions:
        console.print(line)
    if left_out:
        console.print(f"  {len(left_out)} line(s) without walls and without collector force left out: "
                      f"{', '.join(left_out)}")


def _nil_line(name: str, slots: dict, with_walls: set[str]) -> bool:
    """A collector entry with nothing to design: no walls on the line, no caution, and its
    design and Ω0 values 0.00 as printed."""
    values = [slots.get(key) for key in ("design", "with_overstrength")]
    return (name not in with_walls and "caution" not in slots
            and all(g is None or abs(g["value"]) < 0.005 for g in values))


def _chord_name(key: str, slots: dict) -> str:
    """A chord in the terminal: its part ("line B, 3–4"), else its member, else its key."""
    return slots.get("part") or slots.get("member") or key


def _print_chords(doc: dict, envelope: dict, console) -> None:
    force = doc["units"]["force"]
    console.print(f"\nchord forces ({force}; load across the member)")
    rows = table(console, "chord", ("design", "right"), "", "governs")
    for name, slots in envelope.get("chords", {}).items():
        design = slots.get("design")
        if design:
            rows.add_row(_chord_name(name, slots), force_text(design["value"], force),
                         sense(design, slots.get("tension"), slots.get("compression")), governs(design))
    console.print(rows)


def _print_irregularities(doc: dict, console=None) -> None:
    """ASCE 7-16 Table 12.3-1 checks: found ones with their consequence, the rest in a line each."""
    items = doc.get("irregularities") or []
    if not items:
        return
    say = (console or make_console()).print
    d = doc["units"]["displacement"]
    applied = doc.get("irregularity_consequences_applied") or []
    say("\nhorizontal irregularities (ASCE 7-16 Table 12.3-1; "
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
            head += f": δmax/δavg = {ratio} ({v['delta_max']:.4g} {d} / {v['delta_avg']:.4g} {d}, {v['case']})"
        elif "share_x" in v:
            head += f": projections {100 * v['share_x']:.1f} % / {100 * v['share_y']:.1f} % of the plan dimensions"
        elif "open_area" in v:
            head += f": open area {100 * v['ratio']:.1f} % of the gross enclosed area"
        state = {True: "PRESENT", False: "not present", None: "not checked"}[item["present"]]
        say(f"{head} — {state}")
        if item["present"] is None:
            say(f"    {item['consequence']}")
        elif item["present"] is False:
            continue
        elif item["applies"] is False:
            say(f"    does not apply: {item['consequence']}")
        else:
            sections = ", ".join(x if x.startswith("Table") else f"§{x}" for x in item["sections"])
            text = (f"    applies: {sections}" if item["applies"] else
                    f"    no sdc given; by SDC Table 12.3-1 refers to {sections}")
            ax = ""
            if "Ax" in v and "12.8.4.3" in item["sections"]:
                ax = (f"; Ax = {v['Ax']:.3f} applied to the ±ecc cases" if item["applies"] else
                      f"; Ax would be {v['Ax']:.3f} (not applied: no sdc given)")
            say(text + ax + " (see results.json or the report)")


def _print_walls_along_chords(doc: dict, console) -> None:
    """Walls along chord lines: the chord force they take over in the semi-rigid model, the
    governing case per chord edge and per line (every case is in results.json)."""
    cases = doc["assumptions"].get("semirigid", {}).get("cases", {})
    if not cases:
        return
    force, position = doc["units"]["force"], doc["units"]["position"]
    console.print(f"\nwalls along chord lines (semi-rigid, {force}): force that walls on a chord edge take out of the "
                  "chord (self-equilibrating, from chord elongation), against M/d of the beam analogy from the same "
                  "case's wall forces; per chord and per line the case where the walls take the most, shown from "
                  "5 % of M/d or 1 % of the case's force; every case in results.json "
                  "(assumptions.semirigid.cases.*.walls_along_chords)")
    edges: dict[str, tuple[str, dict]] = {}
    lines: dict[str, tuple[str, dict, list]] = {}
    for case_name, case in cases.items():
        info = case.get("walls_along_chords") or {"lines": {}, "chords": {}}
        for edge, c in info["chords"].items():
            if abs(c["walls_share"]) >= 0.05 and (edge not in edges
                                                  or abs(c["walls_force"]) > abs(edges[edge][1]["walls_force"])):
                edges[edge] = (case_name, c)
        threshold = 0.01 * abs(case["applied_force"])
        for name, item in info["lines"].items():
            if abs(item["restraint_force"]) >= threshold and (
                    name not in lines or abs(item["restraint_force"]) > abs(lines[name][1]["restraint_force"])):
                largest = max(item["self_equilibrating"].items(), key=lambda p: abs(p[1]), default=None)
                lines[name] = (case_name, item, [largest] if largest and abs(largest[1]) >= threshold else [])
    if not edges and not lines:
        console.print("  none above 5 % of M/d or 1 % of the applied force")
        return
    if edges:
        chords = (doc.get("envelope") or {}).get("chords", {})
        rows = table(console, "chord", ("at", "right"), ("walls take", "right"), ("of M/d", "right"), "",
                     ("share", "right"), ("chord force", "right"), "", "case")
        for edge, (case_name, c) in edges.items():
            rows.add_row(_chord_name(edge, chords.get(edge) or {}), f"{c['at']:.4g} {position}", force_text(c["walls_force"], force),
                         force_text(c["M_over_d"], force), sense({"value": c["M_over_d"]}, None, None),
                         f"{100 * c['walls_share']:.0f} %", force_text(c["chord_force"], force),
                         sense({"value": c["chord_force"]}, None, None), case_name)
        console.print(rows)
    if lines:
        rows = table(console, "line", ("at", "right"), ("walls take", "right"), "largest in one wall", "case")
        for name, (case_name, item, largest) in lines.items():
            rows.add_row(name, f"{item['at']:.4g} {position}", force_text(item["restraint_force"], force),
                         " ".join(f"{w} {force_text(f, force)}" for w, f in largest), case_name)
        console.print(rows)


if __name__ == "__main__":
    sys.exit(main())
