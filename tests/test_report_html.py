"""report.html from its Jinja2 template, read back with the standard library's HTML parser:
a hand-made report (no analysis) with hostile text in every place a value goes."""

import base64
import html
from html.parser import HTMLParser

import pytest

from planshear.report import FigureSpec, Report, Table, TitleBlock, write_html

HOSTILE = "Tom's <script>alert(1)</script> & \"sons\" \\ </style>"


class _Page(HTMLParser):
    """Elements in document order as (tag, attrs, text), text of the element itself."""

    def __init__(self):
        super().__init__(convert_charrefs=True)
        self.elements: list[list] = []
        self._open: list[list] = []

    def handle_starttag(self, tag, attrs):
        element = [tag, dict(attrs), ""]
        self.elements.append(element)
        if tag not in ("meta", "img", "br", "path", "use"):
            self._open.append(element)

    def handle_endtag(self, tag):
        while self._open:
            if self._open.pop()[0] == tag:
                break

    def handle_data(self, data):
        for element in self._open:  # an element's text includes its children's
            element[2] += data

    def find(self, tag, **attrs):
        return [e for e in self.elements if e[0] == tag and all(e[1].get(k) == v for k, v in attrs.items())]


@pytest.fixture(scope="module")
def page(tmp_path_factory):
    folder = tmp_path_factory.mktemp("html")
    figures = folder / "figures"
    figures.mkdir()
    png = b"\x89PNG\r\n\x1a\n not a real image, only its bytes"
    (figures / "drawn.png").write_bytes(png)
    (figures / "vector.png").write_bytes(png)
    (figures / "vector.svg").write_text('<?xml version="1.0"?>\n<!DOCTYPE svg>\n<svg xmlns="http://www.w3.org/2000/svg">'
                                        "<metadata>dropped</metadata><rect id=\"r1\"/></svg>\n", encoding="utf-8")
    report = Report("Diaphragm analysis: " + HOSTILE,
                    TitleBlock(HOSTILE, "", "J. Lindqvist", "2026-11-30", "", "plan", "plan.toml", "9.9"),
                    "Caution text " + HOSTILE)
    report.add("Numbers", "A paragraph " + HOSTILE,
               Table(["name", "force (kip)"], [[HOSTILE, 1234567.891], ["missing", None], ["flag", True],
                                               ["integer", 3]], "forces"))
    report.add("Figures", FigureSpec("drawn", "PNG figure " + HOSTILE, "plan_figure", {}),
               FigureSpec("vector", "SVG figure", "plan_figure", {}, svg=True),
               FigureSpec("skipped", "Not drawn", "plan_figure", {}))
    path = folder / "report.html"
    write_html(path, report, figures, {"drawn": (6.5, 4.0), "vector": (7.0, 5.0)}, page_size="a4")
    parser = _Page()
    text = path.read_text(encoding="utf-8")
    parser.feed(text)
    parser.close()
    return text, parser, png


def test_every_value_is_escaped(page):
    """Autoescape: text with markup comes back as the same text and adds no element."""
    text, parser, _ = page
    assert "<script" not in text
    assert [e[0] for e in parser.elements].count("style") == 1
    assert parser.find("h1")[0][2] == "Diaphragm analysis: " + HOSTILE
    assert parser.find("p")[1][2] == "A paragraph " + HOSTILE
    assert parser.find("figcaption")[0][2] == "PNG figure " + HOSTILE
    assert parser.find("img")[0][1]["alt"] == "PNG figure " + HOSTILE


def test_caution_first_and_last(page):
    _, parser, _ = page
    tags = [(e[0], e[1].get("class")) for e in parser.elements]
    cautions = [i for i, t in enumerate(tags) if t == ("p", "caution")]
    sections = [i for i, t in enumerate(tags) if t[0] == "section"]
    assert len(cautions) == 2 and cautions[0] < sections[0] and cautions[1] > sections[-1]
    assert all(parser.elements[i][2] == "Caution text " + HOSTILE for i in cautions)


def test_title_block_cells(page):
    """Label then value in each cell; an empty value is a no-break space so the cell keeps
    its height; the job falls back to the plan name only when it is empty."""
    _, parser, _ = page
    cells = parser.find("td")[:8]  # the title block is the first table
    labels = [e for e in parser.elements if e[0] == "small"][:8]
    assert [s[2] for s in labels] == ["job", "plan file", "engineer", "checker", "date", "revision", "program", "page"]
    texts = [c[2][len(s[2]):] for c, s in zip(cells, labels, strict=True)]
    assert texts == [HOSTILE, "plan.toml", "\xa0", "J. Lindqvist", "2026-11-30", "\xa0", "planshear 9.9",
                     "1 of 1 (screen)"]


def test_page_rule_and_footer_string(page):
    """@page: A4 (ISO 216, 210 × 297 mm = 8.27 × 11.69 in), "page n of m" from the CSS
    counters (CSS Paged Media Level 3 §4.2, counter(pages)); the footer is a CSS string in
    which a quote and a backslash are escaped and "<" is the escape \\3c (CSS Syntax Level 3
    §4.3.7), so that nothing in it ends the <style> element (HTML Living Standard, raw text
    elements) and it still reads as the title-block text."""
    text, parser, _ = page
    style = parser.find("style")[0][2]
    assert "size:8.27in 11.69in" in style
    assert "content:'page ' counter(page) ' of ' counter(pages)" in style
    footer = style[style.index("@bottom-left{content:'") + len("@bottom-left{content:'"):]
    footer = footer[:footer.index("';font-size")]
    expected = HOSTILE.replace("\\", "\\\\").replace("'", "\\'").replace("<", "\\3c ")
    assert footer == f"{expected} · plan.toml · rev - · 2026-11-30"
    assert text.count("</style>") == 1


def test_table_cells(page):
    """Numbers to 6 significant digits, right-aligned (no class); text, yes/no and a
    missing value ("–") as text cells; headers escaped like the cells."""
    _, parser, _ = page
    table = parser.find("table", **{"class": "forces"})
    assert table
    ths = [e[2] for e in parser.find("th")]
    assert ths == ["name", "force (kip)"]
    cells = [(e[2], e[1].get("class")) for e in parser.find("td")
             if e in parser.elements[parser.elements.index(table[0]):]]
    assert cells == [(HOSTILE, "text"), ("1.23457e+06", None), ("missing", "text"), ("–", "text"),
                     ("flag", "text"), ("yes", "text"), ("integer", "text"), ("3", None)]


def test_figures_inline(page):
    """The PNG as a data URI of the file's own bytes at its drawn width; the SVG inline
    without its prolog and metadata; a figure that was not drawn is left out."""
    text, parser, png = page
    img = parser.find("img")
    assert len(img) == 1
    src = img[0][1]["src"]
    assert src.startswith("data:image/png;base64,")
    assert base64.b64decode(src.split(",", 1)[1]) == png
    assert img[0][1]["style"] == "max-width:6.50in"
    assert parser.find("rect", id="r1") and not parser.find("metadata") and "<?xml" not in text
    assert [e[2] for e in parser.find("figcaption")] == ["PNG figure " + HOSTILE, "SVG figure"]
    assert "Not drawn" not in html.unescape(text)
