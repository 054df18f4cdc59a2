"""Report-writing benchmark: the full command with and without the report, in one run.

    python -m benchmarks.report            # demo and a 34-wall floor; prints a Markdown section
    python -m benchmarks.report --repeat 3

For each plan, ``planshear run|demo --quiet`` is timed end to end as a separate process
(start-up, analysis and writing, as a user sees it), alternately without the report
(``--no-report``) and with it (``--figures key``, the default; and ``all``), ``--repeat``
times each; the median is reported with the one-minute load average before each run,
since the machine may be shared. Then one in-process run gives the seconds per writing
step (CSV tables, report content, each kind of figure, PDF, HTML).
"""

from __future__ import annotations

import argparse
import os
import shutil
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

WALLS_34 = "34-wall floor"


def plan_34_walls() -> str:
    """A 240 × 120 ft office floor of our own with a 60 × 40 ft notch, grid lines every
    40 ft (x) and 30 ft (y), and 34 wood shear walls; seismic and wind loads."""
    xs = {str(k + 1): 40 * k for k in range(7)}  # 0 … 240 ft
    ys = {chr(ord("A") + k): 30 * k for k in range(5)}  # 0 … 120 ft
    lines = [
        "[plan]", 'name = "34-wall floor"', 'length_unit = "ft"',
        "[diaphragm]", "outline = [[0, 0], [240, 0], [240, 80], [180, 80], [180, 120], [0, 120]]",
        'material = { kind = "wood-panel", Ga = "18 kip/in" }', 'chord_EA = "30000 kip"',
        "[grid]",
        "x = { " + ", ".join(f'"{n}" = {v}' for n, v in xs.items()) + " }",
        "y = { " + ", ".join(f'"{n}" = {v}' for n, v in ys.items()) + " }",
    ]
    walls = []
    for name, x in xs.items():  # walls along y on every x line, two pieces each where the floor is deep
        top = 80 if x > 180 else 120
        walls += [(name, 4, 26), (name, top - 26, top - 4)]
    for name, y in ys.items():  # walls along x, four pieces on every y line
        pieces = ((10, 40), (70, 100), (140, 170), (200, 230)) if y <= 80 else ((10, 40), (55, 85), (100, 130),
                                                                                  (140, 170))
        walls += [(name, a, b) for a, b in pieces]
    for k, (line, start, end) in enumerate(walls, start=1):
        lines += ["[[wall]]", f'id = "W{k}"', f'line = "{line}"', f"from = {start}", f"to = {end}",
                  'stiffness = "60 kip/in"']
    lines += [
        "[[load]]", 'name = "E"', 'kind = "seismic"', 'area_weight = "25 psf"', 'total = "160 kip"',
        'directions = ["x", "y"]',
        "[[load]]", 'name = "W"', 'kind = "edge"', 'intensity = "0.35 kip/ft"', 'directions = ["x", "y"]',
        "[mesh]", "size = 3.0",
    ]
    return "\n".join(lines) + "\n"


def _load() -> float:
    return os.getloadavg()[0]


def _env(source: str | None) -> dict | None:
    """Environment for the timed commands: ``source``, a planshear source tree to time
    instead of this one (e.g. an export of an earlier commit), first on the path."""
    if source is None:
        return None
    return dict(os.environ, PYTHONPATH=os.pathsep.join(p for p in (source, os.environ.get("PYTHONPATH")) if p))


def _command(plan: str | None, out: Path, extra: list[str]) -> list[str]:
    base = [sys.executable, "-m", "planshear.cli"]
    target = ["demo"] if plan is None else ["run", plan]
    return base + target + ["--out", str(out), "--quiet"] + extra


def time_commands(plan: str | None, folder: Path, repeat: int, source: str | None = None) -> dict[str, dict]:
    """Median wall time (s), CPU time and the load averages of each variant, run in turn
    in every round (``source``: also that planshear tree, with and without its report)."""
    variants = {"no report": ([], ["--no-report"]), "report, --figures key": ([], ["--figures", "key"]),
                "report, --figures all": ([], ["--figures", "all"])}
    if source is not None:  # the earlier tree first, in the same rounds, under the same load
        variants = {"before: no report": ([source], ["--no-report"]), "before: report": ([source], []),
                    **variants}
    times: dict[str, list[float]] = {v: [] for v in variants}
    cpu: dict[str, list[float]] = {v: [] for v in variants}
    loads: dict[str, list[float]] = {v: [] for v in variants}
    for _ in range(repeat):
        for name, (tree, extra) in variants.items():
            out = folder / "out"
            shutil.rmtree(out, ignore_errors=True)
            loads[name].append(_load())
            before = _children_cpu()
            start = time.perf_counter()
            subprocess.run(_command(plan, out, extra), check=True, env=_env(tree[0] if tree else None))
            times[name].append(time.perf_counter() - start)
            cpu[name].append(_children_cpu() - before)
    return {v: {"median": statistics.median(times[v]), "all": times[v], "load": loads[v],
                "cpu": statistics.median(cpu[v])} for v in variants}


def _children_cpu() -> float:
    """User + system CPU seconds of the finished child processes (and theirs): the work
    done, which a shared machine's load does not stretch the way it stretches wall time."""
    import resource

    usage = resource.getrusage(resource.RUSAGE_CHILDREN)
    return usage.ru_utime + usage.ru_stime


def step_times(plan_text: str, label: str, folder: Path) -> tuple[float, float, dict]:
    """Analysis seconds, results.json + mesh seconds, and seconds per report step."""
    from planshear.plan import parse_plan
    from planshear.run import analyze

    start = time.perf_counter()
    results = analyze(parse_plan(plan_text, label))
    analysis = time.perf_counter() - start
    start = time.perf_counter()
    results.write(folder / "bare", report=False)
    bare = time.perf_counter() - start
    steps: dict[str, float] = {}
    results.write(folder / "full", report=True, timings=steps)
    return analysis, bare, steps


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(prog="python -m benchmarks.report", description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=2, help="runs of each variant (median reported)")
    parser.add_argument("--source", help="also time the planshear source tree in this folder (e.g. `git archive` of "
                                         "an earlier commit) with and without its report, in the same rounds")
    args = parser.parse_args(argv)
    from importlib import resources

    demo_text = resources.files("planshear").joinpath("data/demo.toml").read_text(encoding="utf-8")
    rows, steps_rows = [], []
    with tempfile.TemporaryDirectory(prefix="planshear-report-bench-") as tmp:
        folder = Path(tmp)
        plan_34 = folder / "floor34.toml"
        plan_34.write_text(plan_34_walls(), encoding="utf-8")
        for label, plan, text in (("demo", None, demo_text), (WALLS_34, str(plan_34), plan_34_walls())):
            timed = time_commands(plan, folder, args.repeat, args.source)
            for variant, record in timed.items():
                reference = timed["before: no report" if variant.startswith("before") else "no report"]
                bare, bare_cpu = reference["median"], reference["cpu"]
                loads = ", ".join(f"{x:.1f}" for x in record["load"])
                rows.append(f"| {label} | {variant} | {record['median']:.1f} | {record['median'] / bare:.2f} | "
                            f"{record['cpu']:.1f} | {record['cpu'] / bare_cpu:.2f} | "
                            f"{', '.join(f'{t:.1f}' for t in record['all'])} | {loads} |")
            analysis, written, steps = step_times(text, "demo.toml" if plan is None else plan, folder)
            load = _load()
            parts = "; ".join(f"{k} {v:.2f}" for k, v in sorted(steps.items(), key=lambda kv: -kv[1]))
            steps_rows.append(f"| {label} | {analysis:.2f} | {written:.2f} | {parts} | {load:.1f} |")
    print("| plan | command | median wall (s) | × without report | median CPU (s) | CPU × without report | "
          "runs, wall (s) | load average at each run |")
    print("|---|---|---:|---:|---:|---:|---|---|")
    print("\n".join(rows))
    print()
    print("| plan | analysis (s) | results.json + mesh (s) | report steps (s; figures drawn in parallel: "
          "'figures (wall time)' is the elapsed time of all of them) | load average |")
    print("|---|---:|---:|---|---:|")
    print("\n".join(steps_rows))
    return 0


if __name__ == "__main__":
    sys.exit(main())
