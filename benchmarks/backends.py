"""Sparse solver backends side by side on planshear's own stiffness matrices, in one run.

Usage (from the project root, in the project's virtual environment)::

    python -m benchmarks.backends                 # 50k, 250k, 1M DOFs; rewrites its part of RESULTS.md
    python -m benchmarks.backends --sizes 50000   # chosen sizes; RESULTS.md untouched
    python -m benchmarks.backends --python /path/to/other/venv/bin/python   # backends installed there

For each plan (benchmarks/plans.py: rectangle, irregular) and size, one process runs the
complete pipeline (benchmarks/run.py worker: mesh to written results, no report, with the
backend planshear picks) and saves the stiffness matrix and the loads (6–10 cases). Then
every backend factors and solves that matrix, each run in a process of its own (so that its
peak memory is its own), ``--repeats`` times; the table gives the median. The load average
of the machine (os.getloadavg) is recorded with every run, since the machine may be shared:
compare backends by their ratios within one run rather than by absolute times.

``superlu`` is SuperLU as planshear picks it (planshear's nested-dissection ordering from
fem/solver.SUPERLU_ND_FROM unknowns on); ``superlu-mmd`` and ``superlu-nd`` force SuperLU's
own minimum degree or our ordering at every size (the crossover), and every run with our
ordering also times the ordering alone (``ordering`` in the record). Factorization CPU seconds
are recorded beside the wall time, for a shared machine.

Besides planshear's backends (fem/solver.py) it runs CHOLMOD through scikit-sparse with
each ordering ("amd", "metis", "nesdis" and CHOLMOD's default), the best of which is the
baseline, and cholespy (a wheel with CHOLMOD and a reference BLAS), measured as a
candidate default only. For item 2 of issue 15 each run also times the same block solve
handed over in C order and column by column.
"""

from __future__ import annotations

import argparse
import json
import os
import platform
import resource
import statistics
import subprocess
import sys
import tempfile
import time
from datetime import date
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
SIZES = [50_000, 250_000, 1_000_000]
KINDS = ["rectangle", "irregular"]
#: Every runner: planshear's backends first, then the references and candidates.
RUNNERS = ["superlu", "superlu-mmd", "superlu-nd", "pardiso", "cvxopt", "cholmod", "cholmod-amd", "cholmod-metis",
           "cholmod-nesdis", "cholmod-default", "cholespy"]
#: Measured once per matrix (not planshear backends; slow where they lose).
CANDIDATES = {"cholespy"}
BEGIN, END = "<!-- backends: begin -->", "<!-- backends: end -->"


def _load(path: str):
    import scipy.sparse as sp

    z = np.load(path)
    n = int(z["n"])
    return sp.csr_matrix((z["data"], z["indices"], z["indptr"]), shape=(n, n)), z["loads"]


def _factorizer(name: str):
    """A function matrix → solve(block) for one runner, or None if not installed here."""
    import scipy.sparse as sp

    from planshear.fem.solver import available_backends, factorize

    if name in ("superlu", "pardiso", "cvxopt", "cholmod"):
        if name not in available_backends():
            return None
        return lambda K: factorize(K, name).solve
    if name in ("superlu-mmd", "superlu-nd"):
        # SuperLU with one ordering at every size: SuperLU's own minimum degree (the
        # default before issue 15) or planshear's nested dissection (fem/ordering.py).
        from planshear.fem.solver import _superlu

        return lambda K: _superlu(K, name.split("-")[1]).solve
    if name.startswith("cholmod-"):
        try:
            from sksparse.cholmod import cholesky
        except ImportError:
            return None
        ordering = name.split("-", 1)[1]

        def chol(K):
            kwargs = {} if ordering == "default" else {"ordering_method": ordering}
            factor = cholesky(sp.csc_matrix(K), **kwargs)
            return lambda b: factor(np.asfortranarray(b))

        return chol
    if name == "cholespy":
        try:
            from cholespy import CholeskySolverD, MatrixType
        except ImportError:
            return None

        def chole(K):
            K = sp.csr_matrix(K)
            solver = CholeskySolverD(K.shape[0], K.indptr.astype(np.int32), K.indices.astype(np.int32),
                                     np.ascontiguousarray(K.data), MatrixType.CSR)

            def solve(b):
                b = np.ascontiguousarray(b)
                x = np.empty_like(b)
                solver.solve(b, x)
                return x

            return solve

        return chole
    raise ValueError(name)


def run_one(name: str, path: str) -> dict | None:
    """Factor and solve one saved matrix with one runner, in this process."""
    make = _factorizer(name)
    if make is None:
        return None
    K, loads = _load(path)
    before = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0
    load_start = os.getloadavg()[0]
    start, cpu = time.perf_counter(), time.process_time()
    solve = make(K)
    factor_time, factor_cpu = time.perf_counter() - start, time.process_time() - cpu
    fortran = np.asfortranarray(loads)
    start = time.perf_counter()
    u = solve(fortran)
    solve_time = time.perf_counter() - start
    start = time.perf_counter()
    solve(np.ascontiguousarray(loads))
    solve_c = time.perf_counter() - start
    start = time.perf_counter()
    for j in range(loads.shape[1]):
        solve(loads[:, j].copy())
    solve_columns = time.perf_counter() - start
    u = np.asarray(u).reshape(loads.shape)
    peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0
    ordering = None
    if name in ("superlu", "superlu-nd"):  # its share of the factorization, timed apart
        from planshear.fem.ordering import nested_dissection

        start, cpu = time.perf_counter(), time.process_time()
        nested_dissection(K)
        ordering = {"seconds": time.perf_counter() - start, "cpu": time.process_time() - cpu}
    residual = np.linalg.norm(loads - K @ u, axis=0) / np.linalg.norm(loads, axis=0)
    return {"runner": name, "n": K.shape[0], "cases": loads.shape[1], "factorization": factor_time, "factorization_cpu": factor_cpu,
            "solve": solve_time, "solve_c_order": solve_c, "solve_by_column": solve_columns,
            "residual": float(residual.max()), "input_mb": before, "ordering": ordering,
            "peak_mb": peak, "load": [load_start, os.getloadavg()[0]]}


def run_cli(plan: str) -> dict:
    """``planshear run PLAN --no-report`` in this process: wall time from before planshear is
    imported to the written results, and the process's peak memory (the real mesh-to-results
    figure; the pipeline worker times stages but runs some of them twice)."""
    start = time.perf_counter()
    from planshear.cli import main as cli

    with tempfile.TemporaryDirectory() as folder:
        code = cli(["run", plan, "--no-report", "--quiet", "--out", str(Path(folder) / "out")])
    return {"seconds": time.perf_counter() - start, "exit": code,
            "peak_mb": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0, "load": os.getloadavg()[0]}


def _subprocess(python: str, args: list[str]) -> dict | None:
    proc = subprocess.run([python, "-m", "benchmarks.backends", *args], capture_output=True, text=True,
                          cwd=HERE.parent)
    if proc.returncode != 0:
        tail = proc.stderr.strip().splitlines()[-1:] or ["(no message)"]
        return {"error": tail[0]}
    out = proc.stdout.strip().splitlines()
    return json.loads(out[-1]) if out else None


def _median(runs: list[dict]) -> dict:
    keys = ["factorization", "factorization_cpu", "solve", "solve_c_order", "solve_by_column", "residual", "peak_mb", "input_mb"]
    out = dict(runs[0])
    out.update({k: statistics.median(r[k] for r in runs) for k in keys})
    out["load"] = [min(r["load"][0] for r in runs), max(r["load"][1] for r in runs)]
    out["repeats"] = len(runs)
    if runs[0].get("ordering"):
        out["ordering"] = {k: statistics.median(r["ordering"][k] for r in runs) for k in ("seconds", "cpu")}
    return out


def benchmark(sizes: list[int], kinds: list[str], repeats: int, python: str, record_to: str | None = None,
              runners: list[str] | None = None) -> list[dict]:
    """Every runner on every matrix; with ``record_to``, the records so far are saved there
    (JSON) after each matrix, so that a long run interrupted still leaves its numbers."""
    records = []
    with tempfile.TemporaryDirectory() as folder:
        for dofs in sizes:
            for kind in kinds:
                path = str(Path(folder) / f"{kind}_{dofs}.npz")
                pipeline = _subprocess(python, ["--pipeline", kind, str(dofs), path])
                record = {"kind": kind, "target": dofs, "pipeline": pipeline, "runners": {}}
                if not pipeline or "error" in pipeline:
                    print(f"{kind} {dofs}: pipeline failed: {pipeline}", file=sys.stderr, flush=True)
                    records.append(record)
                    continue
                record["cli"] = _subprocess(python, ["--cli", str(Path(path).with_suffix(".toml"))])
                print(f"{kind:10s} {pipeline['dofs']:>9d} DOFs  planshear run --no-report: {record['cli']}", flush=True)
                print(f"{kind:10s} {pipeline['dofs']:>9d} DOFs  pipeline {sum(pipeline['times'].values()):6.2f} s "
                      f"({pipeline['backend']}), peak {pipeline['peak_memory_mb']:.0f} MB", flush=True)
                for name in runners or RUNNERS:
                    runs = []
                    for _ in range(1 if name in CANDIDATES else repeats):
                        result = _subprocess(python, ["--run", name, path])
                        if result is None or "error" in result:
                            if result:
                                record["runners"][name] = result
                            break
                        runs.append(result)
                    if runs:
                        record["runners"][name] = _median(runs)
                        r = record["runners"][name]
                        print(f"    {name:16s} factor {r['factorization']:7.2f}  solve {r['solve']:6.2f} "
                              f"(C order {r['solve_c_order']:.2f}, by column {r['solve_by_column']:.2f})  "
                              f"cpu {r['factorization_cpu']:.2f}  "
                              + (f"ordering {r['ordering']['seconds']:.2f} (cpu {r['ordering']['cpu']:.2f})  "
                                 if r.get("ordering") else "")
                              + f"residual {r['residual']:.1e}  peak {r['peak_mb']:.0f} MB  "
                              f"load {r['load'][0]:.1f}-{r['load'][1]:.1f}", flush=True)
                records.append(record)
                os.unlink(path)
                if record_to:
                    Path(record_to).write_text(json.dumps(records), encoding="utf-8")
    return records


def _total(r: dict) -> float:
    return r["factorization"] + r["solve"]


def _best_cholmod(runners: dict) -> tuple[str, dict] | None:
    found = [(k, v) for k, v in runners.items() if k.startswith("cholmod-") and "factorization" in v]
    return min(found, key=lambda kv: _total(kv[1])) if found else None


def markdown(records: list[dict], python: str) -> str:
    info = _subprocess(python, ["--versions"]) or {}
    lines = [
        BEGIN,
        "## Solver backends side by side",
        "",
        f"Written by `python -m benchmarks.backends` on {date.today().isoformat()}; {platform.machine()}, "
        f"{len(os.sched_getaffinity(0))} cores; " + ", ".join(f"{k} {v}" for k, v in info.items()) + ".",
        "Each cell: factorization + solve of all cases in one block call (s), median of "
        f"{records[0]['runners'].get('superlu', {}).get('repeats', '?') if records else '?'} runs, one process "
        "per run; `×best` is (factorization + solve) over CHOLMOD with its best ordering (scikit-sparse), "
        "`×SuperLU` over SuperLU. Relative residuals ‖f − Ku‖/‖f‖ before planshear's refinement; peak is "
        "the run's process peak (matrix and loads included). `load` is the 1-min load average at the "
        "start and end of the runs: on a shared machine absolute times are inflated; the ratios are the result.",
        "",
        "| plan | DOFs | cases | runner | factorization (s) | solve (s) | solve C order / by column (s) | "
        "×best | ×SuperLU | residual | peak MB | load |",
        "|---|---:|---:|---|---:|---:|---|---:|---:|---:|---:|---|",
    ]
    for rec in records:
        pipe = rec["pipeline"] or {}
        if "times" not in pipe:
            lines.append(f"| {rec['kind']} | target {rec['target']} | | failed: {pipe.get('error', '?')} |")
            continue
        best = _best_cholmod(rec["runners"])
        superlu = rec["runners"].get("superlu")
        for name, r in rec["runners"].items():
            if "error" in r:
                lines.append(f"| {rec['kind']} | {pipe['dofs']} | {pipe['cases']} | {name} | failed: {r['error']} |")
                continue
            vs_best = f"{_total(r) / _total(best[1]):.2f}" if best else "–"
            vs_lu = f"{_total(r) / _total(superlu):.2f}" if superlu else "–"
            mark = " (best CHOLMOD)" if best and name == best[0] else ""
            lines.append(
                f"| {rec['kind']} | {pipe['dofs']} | {pipe['cases']} | {name}{mark} | {r['factorization']:.2f} | "
                f"{r['solve']:.2f} | {r['solve_c_order']:.2f} / {r['solve_by_column']:.2f} | {vs_best} | {vs_lu} | "
                f"{r['residual']:.0e} | {r['peak_mb']:.0f} | {r['load'][0]:.1f}–{r['load'][1]:.1f} |")
    lines += ["", "### Complete runs (mesh to written results, no report) with the backend planshear picks", "",
              "| plan | DOFs | backend | mesh | assembly | loads | factorization | solve | line cuts | write | "
              "stages total (s) | `planshear run --no-report` (s) | its peak MB | run / SuperLU factor+solve |",
              "|---|---:|---|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|---:|"]
    for rec in records:
        pipe = rec["pipeline"] or {}
        if "times" not in pipe:
            continue
        t = pipe["times"]
        total = sum(v for k, v in t.items() if k not in ("plan", "idealized"))
        superlu = rec["runners"].get("superlu")
        seconds, peak = _complete(rec)
        ratio = f"{seconds / _total(superlu):.2f}" if superlu and "factorization" in superlu else "–"
        cli = rec.get("cli") or {}
        lines.append(f"| {rec['kind']} | {pipe['dofs']} | {pipe['backend']} | {t['mesh']:.2f} | {t['assembly']:.2f} | "
                     f"{t['loads']:.2f} | {t['factorization']:.2f} | {t['solve']:.2f} | {t['line_cuts']:.2f} | "
                     f"{t['write']:.2f} | {total:.2f} | {cli.get('seconds', float('nan')):.2f} | "
                     f"{cli.get('peak_mb', float('nan')):.0f} | {ratio} |")
    lines += ["", "### Targets (issue 15, item 5)", ""] + targets(records) + ["", END]
    return "\n".join(lines) + "\n"


def _complete(rec: dict) -> tuple[float, float]:
    """Mesh-to-results time (s) and peak memory (MB): from `planshear run --no-report` when
    measured, else the sum of the pipeline's stages (without plan parsing and the idealized
    methods) and the pipeline's peak."""
    cli = rec.get("cli") or {}
    if "seconds" in cli and cli.get("exit") == 0:
        return cli["seconds"], cli["peak_mb"]
    t = rec["pipeline"]["times"]
    return sum(v for k, v in t.items() if k not in ("plan", "idealized")), rec["pipeline"]["peak_memory_mb"]


def targets(records: list[dict]) -> list[str]:
    out = []
    for rec in records:
        pipe = rec["pipeline"] or {}
        if "times" not in pipe:
            continue
        total, peak = _complete(rec)
        runners = rec["runners"]
        picked = runners.get(pipe["backend"])
        best = _best_cholmod(runners)
        # The reference is SciPy's SuperLU with SciPy's own ordering (MMD on A + Aᵀ, symmetric mode):
        # "superlu" is planshear's call, which from 50k unknowns on brings its own ordering.
        superlu = runners.get("superlu-mmd") or runners.get("superlu")
        where = f"{rec['kind']} {pipe['dofs']} DOFs ({pipe['backend']})"
        if rec["target"] >= 1_000_000:
            gb = peak / 1024
            out.append(f"- {where}: mesh to results {total:.1f} s, peak {gb:.2f} GB (targets ≤ 25 s: "
                       f"{'met' if total <= 25 else 'not met'}; ≤ 4 GB: {'met' if gb <= 4 else 'not met'})")
        if rec["target"] <= 60_000:
            out.append(f"- {where}: mesh to results {total:.2f} s (target ≤ 1 s: {'met' if total <= 1 else 'not met'})")
        if 200_000 <= rec["target"] <= 300_000 and superlu and "factorization" in superlu:
            ratio = total / _total(superlu)
            out.append(f"- {where}: complete run / SciPy SuperLU (its own MMD ordering) factor+solve of the same "
                       f"matrix = {ratio:.2f} "
                       f"(target ≤ 1.2: {'met' if ratio <= 1.2 else 'not met'})")
        if rec["target"] >= 200_000 and picked and "factorization" in picked:
            if best:
                ratio = _total(picked) / _total(best[1])
                out.append(f"- {where}: factorization + solve / CHOLMOD best ({best[0]}) = {ratio:.2f} "
                           f"(target ≤ 1.0: {'met' if ratio <= 1.0 else 'not met'})")
            else:
                out.append(f"- {where}: no CHOLMOD (scikit-sparse) in this run, no baseline")
    return out


def _versions() -> dict:
    import importlib.metadata as md

    out = {"Python": platform.python_version()}
    for dist in ("numpy", "scipy", "gmsh", "mkl", "cvxopt", "scikit-sparse", "cholespy"):
        try:
            out[dist] = md.version(dist)
        except md.PackageNotFoundError:
            pass
    return out


def write_results(text: str) -> None:
    path = HERE / "RESULTS.md"
    old = path.read_text(encoding="utf-8") if path.exists() else ""
    if BEGIN in old and END in old:
        new = old[: old.index(BEGIN)] + text.rstrip("\n") + old[old.index(END) + len(END):]
    else:
        new = old.rstrip("\n") + "\n\n" + text
    path.write_text(new, encoding="utf-8")


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(prog="python -m benchmarks.backends", description=__doc__.splitlines()[0])
    parser.add_argument("--sizes", type=int, nargs="*", help="target DOFs (default 50k 250k 1M; RESULTS.md "
                        "is rewritten only for the default)")
    parser.add_argument("--kinds", nargs="*", default=KINDS, choices=KINDS)
    parser.add_argument("--repeats", type=int, default=2, help="runs per backend and matrix (median)")
    parser.add_argument("--python", default=sys.executable,
                        help="interpreter for the runs (a venv with other backends installed)")
    parser.add_argument("--runners", nargs="*", choices=RUNNERS, help="only these runners (default: all)")
    parser.add_argument("--record", help="also save the records (JSON) here after every matrix")
    parser.add_argument("--render", help="write RESULTS.md from records saved with --record (comma-separated "
                        "files are joined), then stop")
    parser.add_argument("--pipeline", nargs=3, metavar=("KIND", "DOFS", "NPZ"), help=argparse.SUPPRESS)
    parser.add_argument("--run", nargs=2, metavar=("RUNNER", "NPZ"), help=argparse.SUPPRESS)
    parser.add_argument("--versions", action="store_true", help=argparse.SUPPRESS)
    parser.add_argument("--cli", metavar="PLAN", help="time `planshear run PLAN --no-report` in this process")
    args = parser.parse_args(argv)
    if args.pipeline:
        from .run import worker

        kind, dofs, path = args.pipeline
        print(json.dumps(worker(kind, int(dofs), False, save=path)))
        return 0
    if args.run:
        result = run_one(*args.run)
        if result is not None:
            print(json.dumps(result))
        return 0
    if args.cli:
        print(json.dumps(run_cli(args.cli)))
        return 0
    if args.versions:
        print(json.dumps(_versions()))
        return 0
    if args.render:
        records = [r for path in args.render.split(",") for r in json.loads(Path(path).read_text(encoding="utf-8"))]
        write_results(markdown(records, args.python))
        print(f"wrote {HERE / 'RESULTS.md'}")
        return 0
    records = benchmark(args.sizes or SIZES, args.kinds, args.repeats, args.python, args.record, args.runners)
    for line in targets(records):
        print(line)
    if not args.sizes:
        write_results(markdown(records, args.python))
        print(f"wrote {HERE / 'RESULTS.md'}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
