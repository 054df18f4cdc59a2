"""Figures drawn once each, in worker processes when there are enough of them."""

from __future__ import annotations

import os
import pickle
import time
from collections.abc import Callable
from pathlib import Path

from ..errors import AnalysisError
from .content import FigureSpec, Report

__all__ = ["render_figures", "FigureWorkers", "PARALLEL_FROM"]


def render_figures(report: Report, doc: dict, results, folder: Path, choice: str = "key",
                   workers: int | None = None, timings: dict | None = None,
                   meanwhile: Callable[[], None] | None = None,
                   started_workers: FigureWorkers | None = None) -> dict[str, tuple[float, float]]:
    """Draw the figures ``choice`` keeps into ``folder`` (PNG; SVG where asked): name →
    (width, height) in inches.

    With enough figures to pay for starting them, ``workers`` − 1 separate Python
    processes draw a share each while this one draws its own (None: one per idle core,
    see :func:`_helpers`). A worker runs planshear/report/figures.py alone (numpy and
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
        path = _write_batch(batch, folder, k)
        process = subprocess.Popen(_worker_command(str(path)), stdin=subprocess.DEVNULL, stdout=subprocess.DEVNULL,
                                   stderr=subprocess.DEVNULL)
        started.append((process, path, batch))
    return started


def _write_batch(batch: list[FigureSpec], folder: Path, k: int) -> Path:
    """The pickled jobs of one worker's batch (plain data: figures.render's arguments)."""
    path = folder / f".batch-{k}.pickle"
    path.write_bytes(pickle.dumps([(s.draw, s.kwargs, str(folder), s.name, s.svg) for s in batch]))
    return path


#: Fewest figures drawn in worker processes (below this, starting the processes costs more).
PARALLEL_FROM = 8


def _worker_command(*args: str) -> list[str]:
    """The command line of a figure process: planshear/report/figures.py run alone."""
    import sys

    script = str(Path(__file__).with_name("figures.py"))
    launcher = "import runpy, sys; runpy.run_path(sys.argv[1], run_name='__main__')"
    return [sys.executable, "-c", launcher, script, *args]


class FigureWorkers:
    """Figure processes started before the analysis, so that their start-up (Python, numpy
    and matplotlib imports, about 0.6 s each) runs on idle cores while this process
    analyzes; :func:`render_figures` then hands each one its batch. Use as a context
    manager: on leaving, a worker that got no batch is let go (its input closed) and one
    still running is waited for (stopped if it does not end within 5 s).

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
            path = _write_batch(batch, folder, k)
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
        """Let waiting workers go; wait for the others (stopped after 5 s)."""
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
