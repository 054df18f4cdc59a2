"""The review package: every writer of the report in order, into the results folder."""

from __future__ import annotations

import time
from collections.abc import Callable
from pathlib import Path

from ..errors import AnalysisError
from .content import FIGURE_CHOICES, PAGE_SIZES, build_report
from .html import write_html
from .render import FigureWorkers, render_figures
from .tables import write_tables

__all__ = ["write_review_package"]


def write_review_package(folder: Path, results, doc: dict, figures: str = "key", page_size: str = "letter",
                         workers: int | None = None, timings: dict | None = None,
                         meanwhile: Callable[[], None] | None = None,
                         started_workers: FigureWorkers | None = None) -> list[str]:
    """Write report.html, report.pdf, the CSV tables and figures/ into ``folder``.
    ``figures``: one of :data:`FIGURE_CHOICES`; ``page_size``: a key of
    :data:`PAGE_SIZES`; ``timings`` (optional dict) receives seconds per step;
    ``meanwhile`` (optional) is other writing done once, while the figure processes draw;
    ``started_workers`` (optional): figure processes started earlier (:class:`FigureWorkers`)."""
    from .pdf import write_pdf

    if figures not in FIGURE_CHOICES:
        raise AnalysisError(f"--figures {figures!r}: choose one of {', '.join(FIGURE_CHOICES)}")
    if page_size not in PAGE_SIZES:
        raise AnalysisError(f"--page-size {page_size!r}: choose one of {', '.join(PAGE_SIZES)}")
    clock = time.perf_counter()

    def lap(name: str) -> None:
        nonlocal clock
        if timings is not None:
            timings[name] = timings.get(name, 0.0) + time.perf_counter() - clock
        clock = time.perf_counter()

    written = write_tables(folder, doc)
    lap("csv tables")
    report = build_report(doc, results, figures)
    lap("content")
    figures_dir = folder / "figures"
    pending = [meanwhile] if meanwhile is not None else []

    def other_writing() -> None:
        while pending:
            pending.pop()()

    sizes = render_figures(report, doc, results, figures_dir, figures, workers, timings, other_writing,
                           started_workers)
    other_writing()  # when no figure was drawn
    clock = time.perf_counter()
    write_pdf(folder / "report.pdf", report, figures_dir, sizes, page_size)
    for raw in figures_dir.glob(".*.rgb.npy"):  # pixels the PDF did not use
        raw.unlink()
    written.append("report.pdf")
    lap("pdf")
    write_html(folder / "report.html", report, figures_dir, sizes, page_size)
    written.append("report.html")
    lap("html")
    return written
