"""The review package: report.html, report.pdf, CSV tables and figures.

How the report is assembled (one content, two writers):

- :func:`~planshear.report.content.build_report` turns results.json (``doc``) and the
  in-memory results into a :class:`Report`: a title block and a list of :class:`Section`.
  A section is plain data: a title and blocks in reading order, each block a paragraph
  (``str``), a :class:`Table` (headers, rows, an HTML class) or a :class:`FigureSpec`
  (which function of :mod:`planshear.report.figures` draws it, with plain-data
  arguments, and whether it is a ``key`` figure or drawn only with ``--figures all``).
- To add a section, append one: ``report.add("Title", "a paragraph", Table(...), ...)``
  (in :func:`build_report`, where the order of sections is decided).
- :func:`~planshear.report.render.render_figures` draws every figure the ``--figures``
  choice keeps, once each, as PNG (the plan also as SVG), in parallel worker processes
  when there are enough.
- :func:`~planshear.report.html.write_html` and :mod:`planshear.report.pdf` render the
  same sections: the HTML report (self-contained, figures inline) and the PDF (title
  block and "page n of m" on every page, several figures per page, tables wrapped and
  split, never truncated).

Every number in the report's tables is taken from the results.json document itself
(:mod:`planshear.report.tables`, which also writes the CSV files), so the two always agree.

Files: ``content`` (the data classes and the sections), ``tables`` (tables from the
results document; CSV), ``figures`` and ``figures_checks`` (drawing), ``render``
(figure processes), ``html``, ``pdf``, ``package`` (:func:`write_review_package`: every
writer in order).
"""

from .content import (
    FIGURE_CHOICES,
    LIMITATIONS_TEXT,
    METHODS_TEXT,
    PAGE_SIZES,
    FigureSpec,
    Report,
    Section,
    Table,
    TitleBlock,
    build_report,
    fe_unit_shear_along_span,
    sensitivity_tables,
)
from .html import write_html
from .package import write_review_package
from .render import FigureWorkers, render_figures
from .tables import checks_table, envelope_table, report_tables, transfer_tables, write_tables

__all__ = ["write_review_package", "write_tables", "build_report", "render_figures", "FigureWorkers",
           "write_html", "Report",
           "Section", "Table", "FigureSpec", "TitleBlock", "METHODS_TEXT", "LIMITATIONS_TEXT", "FIGURE_CHOICES",
           "PAGE_SIZES", "report_tables", "transfer_tables", "envelope_table", "checks_table",
           "fe_unit_shear_along_span", "sensitivity_tables"]
