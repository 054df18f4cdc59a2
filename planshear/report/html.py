"""report.html: the report's sections as one self-contained page (figures inline),
with ``@page`` CSS for printing.

The page is a Jinja2 template (``templates/report.html``, its blocks in
``templates/blocks.html``, the style sheet in ``templates/report.css``) with
autoescaping on: this module only prepares what the template cannot read itself (the
figure files) and the filters that format a cell."""

from __future__ import annotations

import base64
import functools
from pathlib import Path

import jinja2
from markupsafe import Markup

from .content import PAGE_SIZES, FigureSpec, Report, Table
from .tables import _plain

__all__ = ["write_html", "environment"]


def _cell(value) -> str:
    """A table cell's text: numbers to 6 significant digits, a missing value as "–"."""
    return _plain(value, missing="–")


def _is_number(value) -> bool:
    """A numeric cell (right-aligned); booleans are text ("yes"/"no")."""
    return isinstance(value, (int, float)) and not isinstance(value, bool)


def _css_string(text) -> Markup:
    """``text`` inside a single-quoted CSS string in a <style> element, where HTML
    escapes are not read: backslash and quote escaped, and "<" and line breaks as CSS
    escapes so that nothing can end the element."""
    text = str(text).replace("\\", "\\\\").replace("'", "\\'")
    return Markup(text.replace("<", "\\3c ").replace("\n", "\\a "))


@functools.cache
def environment() -> jinja2.Environment:
    """The template environment (made once per process): templates from the package,
    autoescape on, an undefined name an error rather than blank text."""
    env = jinja2.Environment(loader=jinja2.PackageLoader("planshear.report", "templates"), autoescape=True,
                             undefined=jinja2.StrictUndefined, trim_blocks=True, lstrip_blocks=True,
                             keep_trailing_newline=True)
    env.filters["cell"] = _cell
    env.filters["css_string"] = _css_string
    env.tests["table"] = lambda block: isinstance(block, Table)
    env.tests["figure"] = lambda block: isinstance(block, FigureSpec)
    env.tests["number_cell"] = _is_number
    return env


def _inline_figure(spec: FigureSpec, figures_dir: Path, sizes: dict) -> dict:
    """What the template shows for a drawn figure: the SVG text (``svg``) where a vector
    copy was drawn, else the PNG as base64 (``png``) and its width in inches."""
    svg_path = figures_dir / f"{spec.name}.svg"
    if spec.svg and svg_path.exists():
        svg = svg_path.read_text(encoding="utf-8")
        svg = svg[svg.index("<svg"):]  # drop the XML prolog and doctype for inlining
        start, end = svg.find("<metadata>"), svg.find("</metadata>")
        if start >= 0 and end > start:
            svg = svg[:start] + svg[end + len("</metadata>"):]
        return {"svg": Markup(svg), "png": None, "width": None}  # our own matplotlib output
    data = base64.b64encode((figures_dir / f"{spec.name}.png").read_bytes()).decode("ascii")
    # The base64 alphabet has nothing to escape; escaping megabytes of it anyway was two
    # thirds of the page's writing time with --figures all.
    return {"svg": None, "png": Markup(data), "width": sizes[spec.name][0]}


def write_html(path: Path, report: Report, figures_dir: Path, sizes: dict, page_size: str = "letter") -> None:
    """The HTML report: title block, caution, sections; figures inline (SVG where drawn,
    else PNG; ``sizes``: name → (width, height) in inches of the figures drawn);
    ``@page`` for printing on ``page_size`` paper with "page n of m"."""
    inline = {spec.name: _inline_figure(spec, figures_dir, sizes)
              for section in report.sections for spec in section.blocks
              if isinstance(spec, FigureSpec) and spec.name in sizes}
    tb = report.title_block
    footer = f"{tb.job or tb.plan_name} · {tb.plan_file} · rev {tb.revision or '-'} · {tb.date}"
    text = environment().get_template("report.html").render(report=report, inline=inline, footer=footer,
                                                             page=PAGE_SIZES[page_size])
    path.write_text(text, encoding="utf-8")
