"""Figure worker processes: the worker runs planshear/report/figures.py alone (runpy), so a
broken path or a package-relative import at module level would only show as the main
process quietly drawing the batch itself. These tests start a worker directly."""

import pickle
import runpy
from pathlib import Path

from planshear.report import FigureSpec
from planshear.report.render import _start_workers


def _spec(name: str) -> FigureSpec:
    return FigureSpec(name, name, "member_diagram_figure",
                      {"title": name, "xlabel": "s (ft)", "ylabel": "N (kip)", "marks": [],
                       "series": [{"assumption": "rigid", "label": "rigid E+x", "points": [[0, 0], [10, 5], [20, 0]],
                                   "governs": True}]})


def test_a_worker_draws_its_batch(tmp_path):
    """A worker process exits 0 and reports every figure of its batch with the size it drew."""
    started = _start_workers([[_spec("one"), _spec("two")]], tmp_path)
    assert len(started) == 1
    process, path, _ = started[0]
    assert process.wait(timeout=120) == 0
    sizes = pickle.loads(path.with_suffix(".out").read_bytes())
    assert set(sizes) == {"one", "two"}
    for name, (width, height) in sizes.items():
        assert (tmp_path / f"{name}.png").stat().st_size > 0
        assert width == 7.5 and height > 2.4  # member_diagram_figure: 7.5 in wide, 2.4 in of plot + its key


def test_figures_module_needs_no_package():
    """The file the workers run defines its figures when loaded as a plain script."""
    import planshear.report.figures as figures

    loaded = runpy.run_path(str(Path(figures.__file__)), run_name="not_main")
    assert callable(loaded["render"]) and callable(loaded["member_diagram_figure"])
