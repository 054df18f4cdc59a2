"""report.pdf from the report's sections (matplotlib's PDF backend, no other program).

Two passes: the sections are laid out into pages first (text lines, tables, figure
slots, with inch positions), so that the number of pages is known, then every page is
drawn with the title block and "page n of m". One paper size throughout (Letter or A4);
a table too wide for the portrait page goes on pages of the same paper turned to
landscape, in a smaller type if needed. Tables are set in a monospaced type: cells wider
than their column wrap onto more lines (nothing is cut), and a table longer than a page
continues on the next one under its repeated header. Figures are the PNG files drawn
once by :func:`planshear.report.render_figures`, two or three to a page.

Type: the PDF standard fonts (Helvetica, Courier; not embedded, every PDF reader has
them). Laying out embedded TrueType text glyph by glyph took 15 ms a line, 30 times as
long, and was most of the writing time. Those fonts cover Windows-1252 only, so Greek
letters and mathematical signs are spelled out in the PDF (Ω0 → Omega0, δ → delta,
≤ → <=; see :data:`SPELLED_OUT`); the HTML report keeps them.
"""

from __future__ import annotations

import functools
import textwrap
import unicodedata
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

__all__ = ["write_pdf", "table_lines", "latin", "SPELLED_OUT"]

MARGIN_X = 0.55  # in
MARGIN_TOP = 0.5
MARGIN_BOTTOM = 0.4
TITLE_BLOCK = 0.58  # height of the title block
GAP = 0.14  # between the body and the title block
MONO_EM = 0.6  # advance of Courier per point of size
SANS_EM = 0.52  # average advance of Helvetica text per point of size (for wrapping, a little generous)
BODY_PT = 8.0
LEAD = 1.3  # line height / type size
ASCENT = 0.8  # top of the line to its baseline / type size (Helvetica and Courier caps: 0.72)
#: (landscape, type size in pt) tried in turn for a table until it fits the width.
TABLE_SETTINGS = ((False, 6.5), (True, 6.5), (True, 5.5), (True, 4.6))
INK = "#222222"
#: How characters outside Windows-1252 are written in the PDF.
SPELLED_OUT = {
    "Ω": "Omega", "δ": "delta", "Δ": "Delta", "ν": "nu", "ε": "eps", "σ": "sigma", "τ": "tau", "θ": "theta",
    "ρ": "rho", "Σ": "Sum", "ℓ": "l", "≤": "<=", "≥": ">=", "≈": "~", "−": "-", "′": "'", "→": "->", "∫": "int",
    "∩": "n", "⁻": "-", "⁺": "+", "⁴": "^4", "ᵀ": "^T", "│": "|", "─": "-", "┼": "+", "┄": "-",
    "\u0304": "bar",  # combining macron: x̄ → xbar
}
#: Matplotlib settings of the PDF pages (weight "medium" is the standard fonts' normal weight).
_RC = {"pdf.use14corefonts": True, "font.family": "sans-serif", "font.sans-serif": ["Helvetica"],
       "font.monospace": ["Courier"], "font.weight": "medium"}


def latin(text: str) -> str:
    """``text`` with every character the PDF standard fonts lack spelled out."""
    if text.isascii():
        return text
    out = []
    for ch in text:
        try:
            ch.encode("cp1252")
            out.append(ch)
        except UnicodeEncodeError:
            out.append(SPELLED_OUT.get(ch) or (unicodedata.normalize("NFKD", ch).encode("ascii", "ignore").decode()
                                               or "?"))
    return "".join(out)
ACCENT = "#1f6f8b"  # the semi-rigid blue-green of planshear.report.figures


@dataclass
class _Page:
    size: tuple[float, float]  # in, (width, height)
    ops: list = field(default_factory=list)

    @property
    def landscape(self) -> bool:
        return self.size[0] > self.size[1]


def _plain(value) -> str:
    from .tables import _plain as plain

    return plain(value)


def table_lines(headers: list, rows: list, max_chars: int, narrowest: int = 6) -> tuple[list[str], int] | None:
    """A table as monospaced lines no wider than ``max_chars``: (lines, number of header
    lines), or None when even the narrowest columns do not fit. Numbers keep their full
    width; text and headers wrap (long words are broken, never cut)."""
    n = len(headers)
    cells = [[latin(_plain(c)) for c in row] for row in rows]
    headers = [latin(str(h)) for h in headers]
    numeric = [all(isinstance(r[i], (int, float)) and not isinstance(r[i], bool) or r[i] is None for r in rows)
               for i in range(n)]
    natural = [max([len(str(headers[i]))] + [len(r[i]) for r in cells]) for i in range(n)]
    smallest = []
    for i in range(n):
        longest_word = max([len(w) for r in cells for w in r[i].split()] + [1])
        floor = max(len(r[i]) for r in cells) if numeric[i] and cells else min(longest_word, narrowest)
        smallest.append(min(natural[i], max(floor, min(narrowest, natural[i]))))
    sep = 3  # " | "
    if sum(smallest) + sep * (n - 1) > max_chars:
        return None
    # Water-filling: columns narrower than an equal share keep their width, the rest share
    # what is left equally (never below their floor), so short columns are never squeezed.
    available = max_chars - sep * (n - 1)
    widths = list(natural)
    open_ = set(range(n))
    while open_:
        share = (available - sum(widths[i] for i in range(n) if i not in open_)) / len(open_)
        fixed = {i for i in open_ if natural[i] <= share or smallest[i] >= share}
        if not fixed:
            for i in open_:
                widths[i] = max(smallest[i], int(share))
            break
        for i in fixed:
            widths[i] = natural[i] if natural[i] <= share else smallest[i]
        open_ -= fixed
    def wrap(text: str, width: int) -> list[str]:
        return textwrap.wrap(text, width, break_long_words=True, break_on_hyphens=False) or [""]

    def join(parts: list[list[str]], right: list[bool]) -> list[str]:
        height = max(len(p) for p in parts)
        return [" | ".join((p[k] if k < len(p) else "").rjust(w) if r else (p[k] if k < len(p) else "").ljust(w)
                           for p, w, r in zip(parts, widths, right, strict=True)).rstrip()
                for k in range(height)]

    rule = "-+-".join("-" * w for w in widths)
    head = join([wrap(str(h), w) for h, w in zip(headers, widths, strict=True)], [False] * n) + [rule]
    body: list[str] = []
    wrapped_rows = [join([wrap(c, w) for c, w in zip(r, widths, strict=True)], numeric) for r in cells]
    multi = any(len(r) > 1 for r in wrapped_rows)
    for k, lines in enumerate(wrapped_rows):
        if multi and k:
            body.append(" " * len(rule))
        body += lines
    if not rows:
        body = ["(none)"]
    return head + body, len(head)


class _Layout:
    """Places the report's blocks on pages (positions in inches from the top left)."""

    def __init__(self, paper: tuple[float, float]):
        self.paper = paper
        self.pages: list[_Page] = []
        self.page: _Page | None = None
        self.y = 0.0

    def width(self, landscape: bool | None = None) -> float:
        landscape = self.page.landscape if landscape is None else landscape
        return (max(self.paper) if landscape else min(self.paper)) - 2 * MARGIN_X

    def bottom(self) -> float:
        return self.page.size[1] - MARGIN_BOTTOM - TITLE_BLOCK - GAP

    def body_height(self, landscape: bool = False) -> float:
        height = min(self.paper) if landscape else max(self.paper)
        return height - MARGIN_TOP - MARGIN_BOTTOM - TITLE_BLOCK - GAP

    def new_page(self, landscape: bool = False) -> None:
        w, h = min(self.paper), max(self.paper)
        self.page = _Page((h, w) if landscape else (w, h))
        self.pages.append(self.page)
        self.y = MARGIN_TOP

    def ensure(self, height: float, want: str = "any") -> None:
        """Room for ``height`` inches on a page of the wanted orientation ("portrait",
        "landscape" or "any"), else a new page."""
        wrong = self.page is not None and want != "any" and self.page.landscape != (want == "landscape")
        if self.page is None or wrong or self.y + height > self.bottom() + 1e-9:
            self.new_page(landscape=want == "landscape")

    def text(self, lines: list[str], size: float, **style) -> None:
        step = size * LEAD / 72
        for line in lines:
            self.ensure(step)
            self.page.ops.append(("text", MARGIN_X, self.y, line, {"fontsize": size, **style}))
            self.y += step

    def paragraph(self, text: str, size: float = BODY_PT, **style) -> None:
        chars = int(self.width() * 72 / (size * SANS_EM))
        self.text(textwrap.wrap(latin(text), chars) or [""], size, **style)
        self.y += 0.06


def _table_setting(layout: _Layout, table) -> tuple[bool, float, list[str], int]:
    """Orientation, type size and lines of a table: the first setting that fits the width
    without wrapping into more than 1.3 times the lines of the next (wider) setting."""
    landscape, size = TABLE_SETTINGS[0]
    chars = int(layout.width(landscape) * 72 / (size * MONO_EM))
    natural = [max([len(latin(str(h)))] + [len(latin(_plain(r[i]))) for r in table.rows])
               for i, h in enumerate(table.headers)]
    if sum(natural) + 3 * (len(natural) - 1) <= chars:  # fits unwrapped: no other setting can do better
        lines, head = table_lines(table.headers, table.rows, chars)
        return landscape, size, lines, head
    made = []
    for landscape, size in TABLE_SETTINGS:
        chars = int(layout.width(landscape) * 72 / (size * MONO_EM))
        made.append((landscape, size, table_lines(table.headers, table.rows, chars)))
    for k, (landscape, size, lines) in enumerate(made):
        if lines is None:
            continue
        following = next((m for m in made[k + 1:] if m[2] is not None), None)
        # Turning the page costs less than a smaller type: wrap up to 1.3 × the lines
        # rather than turn, up to 2 × rather than shrink.
        allowed = 1.3 if following is not None and following[0] != landscape else 2.0
        if following is None or len(lines[0]) <= allowed * len(following[2][0]):
            return landscape, size, lines[0], lines[1]
    landscape, size = TABLE_SETTINGS[-1]
    chars = int(layout.width(landscape) * 72 / (size * MONO_EM))
    made = table_lines(table.headers, table.rows, chars, narrowest=2) or table_lines(table.headers, table.rows, 10**6)
    return landscape, size, made[0], made[1]  # the last: wider than the page, still complete


def _want(block, settings: dict) -> str:
    from .content import FigureSpec, Table

    if isinstance(block, Table):
        return "landscape" if settings[id(block)][0] else "any"
    if isinstance(block, FigureSpec):
        return "portrait"
    return "any"


def layout_report(report, sizes: dict, paper: tuple[float, float]) -> list[_Page]:
    """The pages of the report (before numbering)."""
    from .content import FigureSpec, Table

    layout = _Layout(paper)
    settings = {id(b): _table_setting(layout, b) for s in report.sections for b in s.blocks if isinstance(b, Table)}
    layout.new_page()
    layout.text([latin(report.title)], 14, weight="bold")
    layout.y += 0.08
    _caution(layout, report.caution)
    for section in report.sections:
        blocks = [b for b in section.blocks if not isinstance(b, FigureSpec) or b.name in sizes]
        if not blocks and any(isinstance(b, FigureSpec) for b in section.blocks):
            blocks = ["Figures not drawn (--figures none, or key figures only)."]
        if not blocks:
            continue
        # A section that opens with text and then a wide table starts on the landscape page.
        first = next((b for b in blocks if not isinstance(b, str)), blocks[0])
        want = _want(first, settings)
        if want == "portrait" or not isinstance(blocks[0], str):
            first = blocks[0]
            want = _want(first, settings)
        layout.ensure(_first_height(layout, first, settings, sizes) + 0.35, want)  # the heading keeps with it
        if layout.y > MARGIN_TOP + 1e-9:
            layout.y += 0.1
        layout.page.ops.append(("text", MARGIN_X, layout.y, latin(section.title), {"fontsize": 11, "weight": "bold",
                                                                             "color": INK}))
        layout.y += 11 * LEAD / 72
        layout.page.ops.append(("rule", MARGIN_X, MARGIN_X + layout.width(), layout.y - 0.03))
        layout.y += 0.06
        for block in blocks:
            if isinstance(block, Table):
                _place_table(layout, settings[id(block)])
            elif isinstance(block, FigureSpec):
                _place_figure(layout, block, sizes[block.name])
            else:
                layout.paragraph(str(block))
    _caution(layout, report.caution)  # first and last, as in the HTML
    return layout.pages


def _caution(layout: _Layout, caution: str) -> None:
    """The caution in a heavy box across the text width."""
    chars = int(layout.width() * 72 / (9 * SANS_EM)) - 4
    lines = textwrap.wrap(latin(caution), chars)
    height = len(lines) * 9 * LEAD / 72 + 0.16
    layout.ensure(height + 0.3)
    top = layout.y
    layout.y += 0.08
    layout.page.ops.append(("box", MARGIN_X - 0.02, top, layout.width() + 0.04, height, {"lw": 1.6}))
    layout.text([f"  {line}" for line in lines], 9, weight="bold")
    layout.y += 0.2


def _first_height(layout: _Layout, block, settings: dict, sizes: dict) -> float:
    """Height (in) of the start of a block that its section heading must stay with."""
    from .content import FigureSpec, Table

    if isinstance(block, Table):
        _, size, lines, n_head = settings[id(block)]
        return size * LEAD / 72 * min(len(lines), n_head + 3)
    if isinstance(block, FigureSpec):
        return _figure_box(layout, sizes[block.name])[1] + 0.22
    return 3 * BODY_PT * LEAD / 72


def _figure_box(layout: _Layout, size: tuple[float, float]) -> tuple[float, float]:
    """Width and height (in) of a figure on a portrait page: the text width, or less so
    that two (three for flat diagrams) fit on a page with their captions."""
    fw, fh = size
    width = min(layout.width(False), fw)
    height = width * fh / fw
    per_page = 3 if fh / fw < 0.5 else 2
    cap = layout.body_height(False) / per_page - 0.3
    if height > cap:
        width, height = cap * fw / fh, cap
    return width, height


def _place_table(layout: _Layout, setting) -> None:
    """A table's lines, row by row; a row that does not fit goes to the next page (under
    the repeated header) unless it is longer than a page."""
    landscape, size, lines, n_head = setting
    step = size * LEAD / 72
    want = "landscape" if landscape else "any"
    layout.ensure(step * min(len(lines), n_head + 3), want)
    head = lines[:n_head]
    mono = {"fontsize": size, "family": "monospace"}
    for k, line in enumerate(head):
        layout.page.ops.append(("text", MARGIN_X, layout.y, line, {**mono, "weight": "bold" if k < n_head - 1
                                                                   else "medium"}))
        layout.y += step
    for row in _rows(lines[n_head:]):
        height = step * len(row)
        if layout.y + height > layout.bottom() + 1e-9 and height < layout.body_height(landscape) / 2:
            layout.ensure(10.0 * layout.body_height(), want)  # forces a new page
            for k, line in enumerate(head):
                layout.page.ops.append(("text", MARGIN_X, layout.y, line, {**mono, "weight": "bold"
                                                                           if k < n_head - 1 else "medium"}))
                layout.y += step
        for line in row:
            if layout.y + step > layout.bottom() + 1e-9:  # a row longer than half a page: split it
                layout.ensure(10.0 * layout.body_height(), want)
            layout.page.ops.append(("text", MARGIN_X, layout.y, line, mono))
            layout.y += step
    layout.y += 0.12


def _rows(body: list[str]) -> list[list[str]]:
    """The body lines of a table grouped by row (rows of several lines are separated by a
    blank line, which stays with the row before it)."""
    if not any(not line.strip() for line in body):
        return [[line] for line in body]
    rows: list[list[str]] = [[]]
    for line in body:
        rows[-1].append(line)
        if not line.strip():
            rows.append([])
    return [r for r in rows if r]


def _place_figure(layout: _Layout, spec, size: tuple[float, float]) -> None:
    width, height = _figure_box(layout, size)
    caption = 0.22
    layout.ensure(height + caption, "portrait")
    x = MARGIN_X + (layout.width() - width) / 2
    layout.page.ops.append(("image", x, layout.y, width, height, spec.name))
    layout.y += height + 0.03
    layout.page.ops.append(("text", x, layout.y, latin(spec.title), {"fontsize": 7.5, "style": "italic"}))
    layout.y += caption


def _draw_title_block(fig, page: _Page, block, number: int, count: int) -> None:
    """Our title block: a framed strip along the bottom of the page with a heavy
    blue-green bar on the left, small upper-case labels above the values."""
    from matplotlib.patches import Rectangle

    w, h = page.size
    x0, y0 = MARGIN_X, MARGIN_BOTTOM  # from the bottom (figure coordinates in inches)
    width = w - 2 * MARGIN_X
    fields = [(label, latin(value)) for label, value in block.fields()] + [("page", f"{number} of {count}")]
    weights = np.array([2.3, 1.6, 1.2, 1.2, 0.9, 0.7, 1.2, 0.8])
    edges = x0 + 0.12 + np.concatenate([[0.0], np.cumsum(weights / weights.sum() * (width - 0.12))])
    fig.add_artist(Rectangle((x0 / w, y0 / h), width / w, TITLE_BLOCK / h, transform=fig.transFigure, fill=False,
                             ec=ACCENT, lw=1.4))
    fig.add_artist(Rectangle((x0 / w, y0 / h), 0.12 / w, TITLE_BLOCK / h, transform=fig.transFigure, color=ACCENT,
                             lw=0))
    for k, (label, value) in enumerate(fields):
        left = edges[k]
        if k:
            fig.add_artist(Rectangle((left / w, y0 / h), 0.0, TITLE_BLOCK / h, transform=fig.transFigure, fill=False,
                                     ec="#9fb9c3", lw=0.6))
        fig.text((left + 0.06) / w, (y0 + TITLE_BLOCK - 0.1) / h, label.upper(), fontsize=5, color="#5a6b70",
                 va="center")
        room = edges[k + 1] - left - 0.1
        size = 7.5
        lines = [value or "—"]
        while size > 5 and len(lines[0]) * size * SANS_EM / 72 > room:
            size -= 0.5
        if len(value) * size * SANS_EM / 72 > room:  # still too long: wrap rather than cut
            lines = textwrap.wrap(value, max(4, int(room * 72 / (size * SANS_EM)))) or [value]
        for i, line in enumerate(lines[:3]):
            fig.text((left + 0.06) / w, (y0 + TITLE_BLOCK - 0.27 - i * size * 1.15 / 72) / h, line, fontsize=size,
                     color=INK, va="center", weight="bold" if label == "page" else "medium")


def write_pdf(path: Path, report, figures_dir: Path, sizes: dict, page_size: str = "letter") -> int:
    """Write report.pdf; returns the number of pages."""
    import logging

    import matplotlib
    from matplotlib.backends.backend_pdf import PdfPages

    from .. import __version__
    from .content import PAGE_SIZES

    pages = layout_report(report, sizes, PAGE_SIZES[page_size])
    block = report.title_block
    metadata = {"Title": f"planshear report: {block.plan_name}", "Creator": f"planshear {__version__}",
                "Subject": f"job {block.job or block.plan_name}, revision {block.revision or '-'}, {block.date}"}
    # The standard fonts have one weight where matplotlib looks for several: its notes on
    # that are not for the user.
    font_log = logging.getLogger("matplotlib.font_manager")
    level = font_log.level
    font_log.setLevel(logging.ERROR)
    try:
        with matplotlib.rc_context(_RC), PdfPages(path, metadata=metadata) as pdf:
            for number, page in enumerate(pages, start=1):
                pdf.savefig(_draw_page(page, figures_dir, block, number, len(pages)))
    finally:
        font_log.setLevel(level)
    return len(pages)


def _pixels(figures_dir: Path, name: str) -> np.ndarray:
    """The RGB pixels of a figure: the raw copy its drawing left (``.name.rgb.npy``,
    removed here), else decoded from its PNG."""
    raw = figures_dir / f".{name}.rgb.npy"
    if raw.exists():
        pixels = np.load(raw)
        raw.unlink()
        return pixels
    from matplotlib.image import imread

    return imread(figures_dir / f"{name}.png")[..., :3]


@functools.cache
def _baseline_text():
    """An artist for one line of body text, left-aligned on its baseline, that the PDF
    renderer draws as it is. Matplotlib's Text measures every string first (its bounding
    box, from the font metrics, character by character) to align it; these lines need no
    aligning, and measuring them was a third of the PDF's writing time."""
    from matplotlib import rcParams
    from matplotlib.artist import Artist
    from matplotlib.font_manager import FontProperties

    class BaselineText(Artist):
        zorder = 3  # as matplotlib's Text: drawn over boxes and rules

        def __init__(self, x: float, y: float, text: str, style: dict):
            super().__init__()
            self._xy = (x, y)  # figure fraction
            self._text = text
            self._prop = FontProperties(size=style["fontsize"], weight=style.get("weight", "medium"),
                                        family=style.get("family", "sans-serif"), style=style.get("style", "normal"))
            self._color = style.get("color", rcParams["text.color"])

        def draw(self, renderer):
            if not self._text.strip():
                return
            x, y = self.get_figure().transFigure.transform(self._xy)
            gc = renderer.new_gc()
            gc.set_foreground(self._color)
            renderer.draw_text(gc, x, y, self._text, self._prop, 0.0, ismath=False)
            gc.restore()

    return BaselineText


@functools.cache
def _unsampled():
    """An image artist in a box of the page whose pixels go into the PDF as they are
    (matplotlib's BboxImage would resample them to 72 dots per inch)."""
    from matplotlib.image import BboxImage

    class UnsampledImage(BboxImage):
        def _check_unsampled_image(self):
            return True

    return UnsampledImage


def _draw_page(page: _Page, figures_dir: Path, block, number: int, count: int):
    """One laid-out page as a matplotlib figure."""
    from matplotlib.figure import Figure
    from matplotlib.lines import Line2D
    from matplotlib.patches import Rectangle
    from matplotlib.transforms import Bbox, TransformedBbox

    w, h = page.size
    fig = Figure(figsize=(w, h), facecolor="white")
    for op in page.ops:
        kind = op[0]
        if kind == "text":  # on its baseline: a "top" alignment follows each line's own tallest glyph
            _, x, y, text, style = op
            baseline = y + ASCENT * style["fontsize"] / 72
            fig.add_artist(_baseline_text()(x / w, 1 - baseline / h, text, style))
        elif kind == "image":  # an image artist in a box of the page: no axes to set up
            _, x, y, iw, ih, name = op
            box = Bbox.from_bounds(x / w, 1 - (y + ih) / h, iw / w, ih / h)
            image = _unsampled()(TransformedBbox(box, fig.transFigure), interpolation="none")
            image.set_data(_pixels(figures_dir, name))
            fig.add_artist(image)
        elif kind == "rule":
            _, x0, x1, y = op
            fig.add_artist(Line2D([x0 / w, x1 / w], [1 - y / h] * 2, transform=fig.transFigure, color=INK, lw=0.6))
        elif kind == "box":
            _, x, y, bw, bh, style = op
            fig.add_artist(Rectangle((x / w, 1 - (y + bh) / h), bw / w, bh / h, transform=fig.transFigure,
                                     fill=False, ec=INK, lw=style["lw"]))
    _draw_title_block(fig, page, block, number, count)
    return fig
