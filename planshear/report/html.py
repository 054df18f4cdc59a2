"""report.html: the report's sections as one self-contained page (figures inline),
with ``@page`` CSS for printing."""

from __future__ import annotations

import base64
import html
from pathlib import Path

from .content import PAGE_SIZES, FigureSpec, Report, Table
from .tables import _plain

__all__ = ["write_html"]


def _esc(value) -> str:
    return html.escape(str(value))



def _num(value) -> str:
    """A table cell for HTML."""
    return _esc(_plain(value, missing="–"))


def _table(headers: list[str], rows: list[list], cls: str = "") -> str:
    head = "".join(f"<th>{_esc(h)}</th>" for h in headers)
    def cell(value) -> str:
        numeric = isinstance(value, (int, float)) and not isinstance(value, bool)
        return f"<td>{_num(value)}</td>" if numeric else f'<td class="text">{_num(value)}</td>'

    body = "".join("<tr>" + "".join(cell(c) for c in row) + "</tr>" for row in rows)
    return f'<table class="{cls}"><thead><tr>{head}</tr></thead><tbody>{body}</tbody></table>'


def write_html(path: Path, report: Report, figures_dir: Path, sizes: dict, page_size: str = "letter") -> None:
    """The HTML report: title block, caution, sections; figures inline (SVG where drawn,
    else PNG); ``@page`` for printing with "page n of m"."""
    def figure(spec: FigureSpec) -> str:
        if spec.name not in sizes:
            return ""
        svg_path = figures_dir / f"{spec.name}.svg"
        if spec.svg and svg_path.exists():
            svg = svg_path.read_text(encoding="utf-8")
            svg = svg[svg.index("<svg"):]  # drop the XML prolog and doctype for inlining
            start, end = svg.find("<metadata>"), svg.find("</metadata>")
            if start >= 0 and end > start:
                svg = svg[:start] + svg[end + len("</metadata>"):]
            body = svg
        else:
            data = base64.b64encode((figures_dir / f"{spec.name}.png").read_bytes()).decode("ascii")
            width = sizes[spec.name][0]
            body = (f'<img alt="{_esc(spec.title)}" style="max-width:{width:.2f}in" '
                    f'src="data:image/png;base64,{data}">')
        return f"<figure>{body}<figcaption>{_esc(spec.title)}</figcaption></figure>"

    def block(item) -> str:
        if isinstance(item, Table):
            return f'<div class="scroll">{_table(item.headers, item.rows, item.key)}</div>'
        if isinstance(item, FigureSpec):
            return figure(item)
        return f"<p>{_esc(item)}</p>"

    tb = report.title_block
    cells = "".join(f"<td><small>{_esc(label)}</small>{_esc(value) or '&nbsp;'}</td>" for label, value in tb.fields())
    width, height = PAGE_SIZES[page_size]
    css = _CSS + (f"@page{{size:{width}in {height}in;margin:.6in .55in .75in;"
                  f"@bottom-left{{content:'{_css_text(tb.job or tb.plan_name)} · {_css_text(tb.plan_file)} · "
                  f"rev {_css_text(tb.revision or '-')} · {_css_text(tb.date)}';font-size:8pt}}"
                  "@bottom-right{content:'page ' counter(page) ' of ' counter(pages);font-size:8pt}}")
    parts = [
        "<!DOCTYPE html><html lang=\"en\"><head><meta charset=\"utf-8\">",
        f"<title>planshear report: {_esc(tb.plan_name)}</title><style>{css}</style></head><body>",
        f'<table class="titleblock"><tr>{cells}<td class="pages"><small>page</small>1 of 1 (screen)</td></tr></table>',
        f"<h1>{_esc(report.title)}</h1>",
        f'<p class="caution">{_esc(report.caution)}</p>',
    ]
    for section in report.sections:
        parts.append(f"<section><h2>{_esc(section.title)}</h2>" + "".join(block(b) for b in section.blocks)
                     + "</section>")
    parts += [f'<p class="caution">{_esc(report.caution)}</p>', "</body></html>"]
    path.write_text("\n".join(parts), encoding="utf-8")


def _css_text(text: str) -> str:
    return text.replace("\\", "\\\\").replace("'", "\\'")


_CSS = """
body{font-family:Georgia,'DejaVu Serif',serif;color:#222;background:#fbfaf6;max-width:62rem;margin:1rem auto;padding:0 1rem;line-height:1.4}
h1{font-size:1.6rem;border-bottom:3px double #222;padding-bottom:.3rem}
h2{font-size:1.15rem;margin-top:2rem;border-bottom:1px solid #999}
.scroll{overflow-x:auto}
table{border-collapse:collapse;font-size:.8rem;margin:.5rem 0 1rem;font-family:'DejaVu Sans Mono',monospace}
th,td{border:1px solid #aaa;padding:.15rem .4rem;text-align:right;vertical-align:top}
th{background:#ece8dc}
td.text,th{white-space:normal;overflow-wrap:break-word;max-width:24rem}
td:first-child,th:first-child,td.text{text-align:left}
table.titleblock{width:100%;font-family:'DejaVu Sans',sans-serif;border:2px solid #1f6f8b;border-left:8px solid #1f6f8b}
table.titleblock td{text-align:left;border:1px solid #9fb9c3;background:#fff;padding:.2rem .5rem}
table.titleblock small{display:block;font-size:.62rem;text-transform:uppercase;letter-spacing:.06em;color:#5a6b70}
.caution{border:2px solid #222;padding:.6rem 1rem;background:#fff;font-weight:bold}
figure{margin:1rem 0;page-break-inside:avoid}
figure svg,figure img{width:100%;height:auto}
figcaption{font-size:.8rem;font-style:italic}
@media print{body{background:#fff;max-width:none;margin:0}h2{page-break-after:avoid}.scroll{overflow:visible}
table{font-size:6.5pt}td.pages{display:none}}
"""
