"""Sweep benchmark: 32 variants of the demo plan (Ga × story force ratio), serial vs Dask.

Usage (from the project root, in the project's virtual environment)::

    python -m benchmarks.sweep            # 32 variants; rewrites the sweep section of RESULTS.md
    python -m benchmarks.sweep --quick    # 4 variants, a smoke run (RESULTS.md untouched)

Serial: every variant one after another in this process (``run_batch(serial=True)``).
Dask: the batch's LocalCluster (one single-thread worker process per core, numerical
libraries with this process's thread settings), the same jobs through ``run_batch(scheduler=...)``. Both write results.json and the mesh files (no report); one
extra run with the report gives the size of a full output folder. Peak memory is the peak
resident set of each worker process (getrusage in the worker), and of this process for the
serial runs. The machine's load average is recorded before and after each phase: on a
shared machine the speed-up is distorted, so read it with the load.
"""

from __future__ import annotations

import argparse
import os
import platform
import resource
import shutil
import statistics
import tempfile
import time
from datetime import UTC, datetime
from importlib import resources
from pathlib import Path

HERE = Path(__file__).resolve().parent
BEGIN, END = "<!-- sweep:begin -->", "<!-- sweep:end -->"
GA = ["8 kip/in", "10 kip/in", "12 kip/in", "14 kip/in", "16 kip/in", "18 kip/in", "20 kip/in", "24 kip/in"]
RATIO = ["0.15", "0.2", "0.25", "0.3"]


def _peak_rss_mb() -> float:
    """Peak resident set of the calling process in MB (Linux reports kB)."""
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0


def _folder_mb(folder: Path) -> float:
    return sum(p.stat().st_size for p in folder.rglob("*") if p.is_file()) / 1e6


def _load() -> str:
    return "/".join(f"{x:.1f}" for x in os.getloadavg())


def run(quick: bool) -> dict:
    from distributed import Client

    from planshear.batch import local_cluster, make_jobs, parse_vary, run_batch

    cores = os.cpu_count() or 1
    work = Path(tempfile.mkdtemp(prefix="planshear-sweep-"))
    try:
        plan = work / "demo.toml"
        plan.write_text(resources.files("planshear").joinpath("data/demo.toml").read_text(encoding="utf-8"))
        ga, ratio = (GA[:2], RATIO[:2]) if quick else (GA, RATIO)
        jobs = make_jobs([plan], [parse_vary("diaphragm.material.Ga=" + ",".join(ga)),
                                  parse_vary("load.E.fpx.story_force_ratio=" + ",".join(ratio))])
        record: dict = {"variants": len(jobs), "cores": cores}

        record["load_serial_before"] = _load()
        start = time.perf_counter()
        serial = run_batch(jobs, work / "serial", serial=True, report=False)
        record["serial_s"] = time.perf_counter() - start
        record["load_serial_after"] = _load()
        record["serial_peak_mb"] = _peak_rss_mb()
        seconds = [r.seconds for r in serial.runs]
        record["per_variant_s"] = (statistics.mean(seconds), min(seconds), max(seconds))
        sizes = [_folder_mb(work / "serial" / r.name) for r in serial.runs]
        record["folder_mb"] = statistics.mean(sizes)
        record["results_json_mb"] = statistics.mean(
            (work / "serial" / r.name / "results.json").stat().st_size / 1e6 for r in serial.runs)
        record["summary_kb"] = ((work / "serial" / "summary.csv").stat().st_size / 1e3,
                                (work / "serial" / "summary.parquet").stat().st_size / 1e3)
        record["failed"] = len(serial.failed)

        record["load_dask_before"] = _load()
        start = time.perf_counter()
        with local_cluster(cores) as cluster, Client(cluster) as client:
            record["cluster_start_s"] = time.perf_counter() - start
            start = time.perf_counter()
            dask = run_batch(jobs, work / "dask", scheduler=cluster.scheduler_address, report=False)
            record["dask_s"] = time.perf_counter() - start
            record["worker_peak_mb"] = sorted(client.run(_peak_rss_mb).values())
        record["load_dask_after"] = _load()
        record["failed"] += len(dask.failed)
        identical = all((work / "serial" / r.name / "results.json").read_bytes()
                        == (work / "dask" / r.name / "results.json").read_bytes() for r in serial.runs)
        record["identical"] = identical

        start = time.perf_counter()
        full = run_batch(jobs[:1], work / "full", serial=True, report=True)
        record["full_run_s"] = time.perf_counter() - start
        record["full_folder_mb"] = _folder_mb(work / "full" / full.runs[0].name)
        return record
    finally:
        shutil.rmtree(work, ignore_errors=True)


def markdown(r: dict) -> str:
    import numpy
    import scipy

    import planshear

    mean, low, high = r["per_variant_s"]
    speedup = r["serial_s"] / r["dask_s"]
    workers = r["worker_peak_mb"]
    lines = [
        BEGIN,
        "## Sweep: serial vs Dask (`python -m benchmarks.sweep`)",
        "",
        f"Written on {datetime.now(UTC):%Y-%m-%d %H:%M} UTC. Machine: {platform.machine()}, {r['cores']} "
        f"cores, Python {platform.python_version()}, planshear {planshear.__version__}, NumPy {numpy.__version__}, "
        f"SciPy {scipy.__version__}; "
        + ", ".join(f"{n}={os.environ.get(n, 'unset')}" for n in ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS"))
        + " (the workers keep these, so that results.json is byte for byte that of `planshear run`; "
        "unset means one BLAS thread per core in every worker, which oversubscribes the cores).",
        f"{r['variants']} variants of the demo plan: `diaphragm.material.Ga` × `load.E.fpx.story_force_ratio`; each "
        "writes results.json and the mesh files (no report). Load average (1/5/15 min) before → after each phase "
        "is given because this machine is shared: **other work running at the same time distorts these times, "
        "the speed-up most of all**; re-run on a quiet machine before quoting them.",
        "",
        "| phase | wall time (s) | load before → after | peak memory per process (MB) |",
        "|---|---:|---|---:|",
        f"| serial, this process | {r['serial_s']:.1f} | {r['load_serial_before']} → {r['load_serial_after']} | "
        f"{r['serial_peak_mb']:.0f} |",
        f"| Dask, {r['cores']} worker processes × 1 thread | {r['dask_s']:.1f} (+ {r['cluster_start_s']:.1f} to "
        f"start the cluster) | {r['load_dask_before']} → {r['load_dask_after']} | "
        + ", ".join(f"{m:.0f}" for m in workers) + " |",
        "",
        f"- Speed-up (serial / Dask, cluster start excluded): **{speedup:.2f}** on {r['cores']} cores "
        f"(ideal {r['cores']}).",
        f"- Per variant (serial): mean {mean:.2f} s, min {low:.2f} s, max {high:.2f} s.",
        f"- Output per variant: {r['folder_mb']:.2f} MB without the report (results.json {r['results_json_mb']:.2f} "
        f"MB), {r['full_folder_mb']:.2f} MB with the report, tables and figures (one such run took "
        f"{r['full_run_s']:.1f} s); summary.csv {r['summary_kb'][0]:.1f} kB, summary.parquet "
        f"{r['summary_kb'][1]:.1f} kB for {r['variants']} rows.",
        f"- results.json identical between the serial and the Dask runs: {'yes' if r['identical'] else 'NO'}; "
        f"failed runs: {r['failed']}.",
        "",
        "### On paper: 1,000 variants of a plan like the demo on a cluster",
        "",
        "Time ≈ per-variant time × 1000 / workers (runs are independent; assumes one core per worker and the "
        "per-variant time measured above, which includes this machine's load). Memory: one worker process at "
        f"the peak measured above ({max(workers):.0f} MB); a node needs that times its workers plus the scheduler. "
        "Every worker must see the --out folder (shared file system).",
        "",
        "| workers | time, no report | time, with report | memory of the workers |",
        "|---:|---:|---:|---:|",
    ]
    for n in (16, 64, 256):
        lines.append(f"| {n} | {mean * 1000 / n / 60:.1f} min | {r['full_run_s'] * 1000 / n / 60:.1f} min | "
                     f"{max(workers) * n / 1024:.1f} GB |")
    lines += [
        "",
        f"Data: {r['folder_mb'] * 1000 / 1024:.1f} GB without reports, {r['full_folder_mb'] * 1000 / 1024:.1f} GB "
        f"with them; the summary about {r['summary_kb'][0] * 1000 / r['variants'] / 1e3:.1f} MB (CSV). A finer mesh "
        "scales the time, the memory and the mesh files together (see the tables above).",
        END,
    ]
    return "\n".join(lines) + "\n"


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(prog="python -m benchmarks.sweep", description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="4 variants; RESULTS.md is not rewritten")
    args = parser.parse_args(argv)
    record = run(args.quick)
    text = markdown(record)
    print(text)
    if not args.quick:
        path = HERE / "RESULTS.md"
        old = path.read_text(encoding="utf-8") if path.exists() else ""
        if BEGIN in old and END in old:
            new = old[:old.index(BEGIN)] + text + old[old.index(END) + len(END):].lstrip("\n")
        else:
            new = old.rstrip("\n") + "\n\n" + text
        path.write_text(new, encoding="utf-8")
        print(f"wrote the sweep section of {path}")
    return 0 if record["failed"] == 0 and record["identical"] else 1


if __name__ == "__main__":
    raise SystemExit(main())
