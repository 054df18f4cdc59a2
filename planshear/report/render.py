"""Figures drawn once each, in worker processes when there are enough of them."""

from __future__ import annotations

import os
import pickle
import time
from collections.abc import Callable
from pathlib import Path

from ..errors import AnalysisError
from .content import FigureSpec, Report

__all__ = ["render_figures", "PARALLEL_FROM"]


def render_figures(report: Report, doc: dict, results, folder: Path, choice: str = "key",
                   workers: int | None = None, timings: dict | None = None,
                   meanwhile: Callable[[], None] | None = None) -> dict[str, tuple[float, float]]:
    """Draw the figures ``choice`` keeps into ``folder`` (PNG; SVG where asked): name →
    (width, height) in inches.

    With enough figures to pay for starting them, ``workers`` − 1 separate Python
    processes draw a share each while this one draws its own (None: one per idle core,
    see :func:`_helpers`). A worker runs planshear/report/figures.py alone (numpy and
    matplotlib, not the whole package, and nothing of the calling program) on a pickle of
    plain data; a batch whose worker fails is drawn here instead."""
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
    helpers = _helpers(workers) if len(shared) >= PARALLEL_FROM else 0
    # Every (helpers + 1)-th figure to each process (the costly maps come in pairs, so they
    # are spread); this process also draws the plan, so it takes a smaller share.
    batches = [shared[k::helpers + 1] for k in range(helpers + 1)]
    started = []
    try:
        started = _start_workers(batches[1:], folder)
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
    import sys

    script = str(Path(__file__).with_name("figures.py"))
    launcher = "import runpy, sys; runpy.run_path(sys.argv[1], run_name='__main__')"
    started = []
    for k, batch in enumerate(batches):
        if not batch:
            continue
        path = folder / f".batch-{k}.pickle"
        path.write_bytes(pickle.dumps([(s.draw, s.kwargs, str(folder), s.name, s.svg) for s in batch]))
        process = subprocess.Popen([sys.executable, "-c", launcher, script, str(path)],
                                   stdin=subprocess.DEVNULL, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        started.append((process, path, batch))
    return started


#: Fewest figures drawn in worker processes (below this, starting the processes costs more).
PARALLEL_FROM = 8
