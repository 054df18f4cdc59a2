"""Report layout: title block, pages, tables that never truncate, governing-case diagrams,
unit shear along the span, the sensitivity section and the --figures / --page-size options.

The PDF is read back without a PDF library: matplotlib writes each page's content as a
zlib stream with the standard fonts' text as (string) Tj operators.
"""

import datetime
import json
import re
import zlib

import numpy as np
import pytest

from planshear.caution import CAUTION
from planshear.cli import main
from planshear.errors import PlanError
from planshear.report import build_report, fe_unit_shear_along_span
from planshear.report.pdf import latin, table_lines
from planshear.report.tables import chord_label
from planshear.run import analyze, plan_summary

from conftest import FT, KIP, end_walls, rectangle_plan

TITLE = '''length_unit = "ft"
job = "Job 2417 — Ferry Lane depot"
engineer = "R. Okafor"
checker = "J. Lindqvist"
date = 2026-11-30
revision = "B"
'''


def _pdf(path):
    """(pages: list of (width, height) in points, texts: list of the strings of each page)."""
    data = path.read_bytes()
    streams = {int(m.group(1)): m.group(2) for m in
               re.finditer(rb"(\d+) 0 obj\s*<<[^<>]*>>\s*stream\r?\n(.*?)\r?\nendstream", data, re.S)}
    boxes, texts = [], []
    for page in re.finditer(rb"<<[^<>]*/Type /Page\b[^<>]*>>", data):
        box = re.search(rb"/MediaBox \[\s*0 0 ([\d.]+) ([\d.]+)\s*\]", page.group(0))
        boxes.append((float(box.group(1)), float(box.group(2))))
        content = zlib.decompress(streams[int(re.search(rb"/Contents (\d+) 0 R", page.group(0)).group(1))])
        strings = re.findall(rb"\(((?:[^()\\]|\\.)*)\)\s*Tj", content)
        texts.append([re.sub(rb"\\(.)", rb"\1", s).decode("cp1252") for s in strings])
    return boxes, texts


@pytest.fixture(scope="module")
def small_package(tmp_path_factory):
    """A 100 × 50 ft rectangle with four walls, a title block, stiffness-sensitivity runs
    and a coarse mesh, written with --page-size a4 --figures all."""
    folder = tmp_path_factory.mktemp("small")
    text = rectangle_plan(walls=end_walls(), extra="[classification]\nsensitivity = [0.5, 2.0]\n[mesh]\nsize = 10\n")
    plan_file = folder / "depot.toml"
    plan_file.write_text(text.replace('length_unit = "ft"\n', TITLE, 1), encoding="utf-8")
    out = folder / "out"
    assert main(["run", str(plan_file), "--out", str(out), "--quiet", "--page-size", "a4", "--figures", "all"]) == 0
    return out, json.loads((out / "results.json").read_text(encoding="utf-8"))


def test_title_block_on_every_pdf_page_with_page_n_of_m(small_package):
    """Every page: A4 (595 × 842 pt, ISO 216: 210 × 297 mm), the job, the checker, the
    revision and "n of m" with m the real page count; the caution on the first page."""
    out, doc = small_package
    boxes, texts = _pdf(out / "report.pdf")
    assert len(boxes) == len(texts) >= 2
    for width, height in boxes:
        assert sorted((width, height)) == pytest.approx([210 / 25.4 * 72, 297 / 25.4 * 72], abs=1.0)
    for n, strings in enumerate(texts, start=1):
        joined = " ".join(strings)
        assert f"{n} of {len(texts)}" in strings
        for value in ("Job 2417 — Ferry Lane depot", "R. Okafor", "J. Lindqvist", "2026-11-30", "depot.toml"):
            assert value in joined
    first = " ".join(" ".join(texts[0]).split())
    assert " ".join(latin(CAUTION).split()) in first
    assert doc["plan"]["title_block"] == {"job": "Job 2417 — Ferry Lane depot", "engineer": "R. Okafor",
                                          "checker": "J. Lindqvist", "date": "2026-11-30", "revision": "B",
                                          "date_given": True}


def test_html_has_the_title_block_and_page_rules(small_package):
    out, _ = small_package
    html = (out / "report.html").read_text(encoding="utf-8")
    block = html[html.index('<table class="titleblock">'):]
    block = block[:block.index("</table>")]
    for value in ("Job 2417 — Ferry Lane depot", "R. Okafor", "J. Lindqvist", "2026-11-30", "depot.toml"):
        assert value in block
    assert "size:8.27in 11.69in" in html and "counter(pages)" in html
    assert "licensed engineer" in html[:html.index("<section>")]


def test_date_defaults_to_today_and_bad_title_values_are_named(plan_from):
    plan = plan_from(rectangle_plan(walls=end_walls()))
    block = plan_summary(plan, [])["title_block"]
    assert block["date"] == datetime.datetime.now(datetime.UTC).date().isoformat() and not block["date_given"]
    with pytest.raises(PlanError) as err:
        plan_from(rectangle_plan(walls=end_walls()).replace('length_unit = "ft"', 'length_unit = "ft"\njob = 42'))
    assert any("plan.job" in p and "text" in p for p in err.value.problems)


@pytest.mark.parametrize("width", [40, 70, 130])
def test_tables_wrap_and_never_truncate(width):
    """Every word of every cell is still there after wrapping, no line is wider than the
    page allows, and numbers are never split."""
    headers = ["name", "force (kip)", "a long explanation of what governs"]
    rows = [["W1", 12.3456, "Exception 1: capped at the forces of Eq. 12.10-3 without Ω0 " * 3],
            ["a-very-long-identifier-without-spaces-at-all", -0.000123, ""],
            ["W3", 1234567.0, None]]
    lines, head = table_lines(headers, rows, width)
    assert head >= 2 and all(len(line) <= width for line in lines)
    columns = ["", "", ""]  # each column's text read down the table
    for line in lines[head:]:
        for i, piece in enumerate(line.split(" | ")):
            columns[i] += piece.replace(" ", "")
    for row in rows:
        for i, cell in enumerate(row):
            if isinstance(cell, float):
                assert any(f"{cell:.6g}" in line for line in lines)  # whole on one line
            elif cell:
                assert latin(cell).replace(" ", "") in columns[i]
    assert table_lines(headers, rows, 10) is None  # too narrow for the number columns: say so


def test_member_diagrams_mark_the_envelope_design_values(small_package):
    """Each collector/chord with a diagram has a figure whose marked points are the
    envelope's tension and compression design values with their case; the diagram's own
    extreme equals the envelope value (no factor applies in this plan): two independent
    paths through results.json agree."""
    out, doc = small_package
    report = build_report(doc, None, "key")
    specs = {s.name: s for s in report.figures("key") if s.draw == "member_diagram_figure"}
    assert specs
    checked = 0
    for spec in specs.values():
        role, name = spec.title.split(", ", 1)
        # Collectors are titled by their member ("line A, 1–2"), the envelope keys them by grid line;
        # chords by their part ("line A, 1–2", with "(of <member>)" where the member is longer).
        group = "collectors" if role.startswith("Collector") else "chords"
        by_member = ({s.get("member"): key for key, s in doc["envelope"]["collectors"].items() if s.get("member")}
                     if group == "collectors" else
                     {chord_label(key, s): key for key, s in doc["envelope"]["chords"].items()})
        slots = doc["envelope"][group][by_member.get(name, name)]
        assert any(series["governs"] for series in spec.kwargs["series"])
        for mark in spec.kwargs["marks"]:
            kind = "tension" if "design T" in mark["text"] else "compression"
            assert mark["value"] == pytest.approx(slots[kind]["value"], rel=1e-6, abs=1e-9)
            assert slots[kind]["case"] in mark["text"] and "(diagram" not in mark["text"]
            checked += 1
        assert (out / "figures" / f"{spec.name}.png").exists()
    assert checked >= 2


def test_span_unit_shear_against_statics(plan_from):
    """Simple span, uniform load (Taly 2010, Eqs. 4.130–4.133; VALIDATION 6.6):
    v(s) = w (L/2 − s) / d with w = F/L. Flexible and rigid V/ℓ from results.json; the
    finite-element Nxy averaged across the depth matches it away from the supports
    (tolerance 3 %: element-constant stresses of a 10 ft mesh sampled on a few sections)."""
    plan = plan_from(rectangle_plan(walls=end_walls(), extra="[mesh]\nsize = 10\n"))
    results = analyze(plan)
    doc = results.to_json()
    force, length, depth = 100.0, 100.0, 50.0
    for assumption in ("flexible", "rigid"):
        data = doc["assumptions"][assumption]["cases"]["E+y"]["span_shear"]
        s, v = np.array(data["stations"]), np.abs(np.array(data["unit_shear"]))
        inside = (s > 1) & (s < length - 1)
        expected = force / length * np.abs(length / 2 - s[inside]) / depth
        assert v[inside] == pytest.approx(expected, rel=1e-6, abs=1e-9)
    names = [c.name for c in results.semirigid.solution.cases]
    stations = np.array([20.0, 30.0, 70.0]) * FT
    mean, peak = fe_unit_shear_along_span(results, names.index("E+y"), "y", stations, 10 * FT)
    expected = force * KIP / (length * FT) * np.abs(length / 2 * FT - stations) / (depth * FT)
    assert mean == pytest.approx(expected, rel=0.03)
    assert np.all(peak >= mean * (1 - 1e-9))


def test_sensitivity_section_compares_with_the_plan_stiffness(small_package):
    out, doc = small_package
    report = build_report(doc, None, "none")
    section = next(s for s in report.sections if s.title.startswith("Sensitivity"))
    walls = next(b for b in section.blocks if getattr(b, "key", "") == "sensitivity_walls")
    semi = doc["assumptions"]["semirigid"]["cases"]
    factors = {row[0] for row in walls.rows}
    assert factors == {"× 0.5", "× 2"}
    for factor, wall, reference, value, change, _ in walls.rows:
        assert reference == max((c["walls"][wall] for c in semi.values()), key=abs)
        runs = doc["sensitivity"][factor[2:]]["cases"]
        assert value == max((c["walls"][wall] for c in runs.values()), key=abs)
        if reference:
            assert change == pytest.approx(100 * (abs(value) / abs(reference) - 1), abs=0.05)
    assert "Sensitivity to the diaphragm stiffness" in (out / "report.html").read_text(encoding="utf-8")


def test_figures_none_key_all(small_package, tmp_path):
    """--figures none writes the report without figures; all draws more than key."""
    out, _ = small_package
    all_figures = {p.name for p in (out / "figures").glob("*.png")}
    plan_file = next(out.parent.glob("*.toml"))
    assert main(["run", str(plan_file), "--out", str(tmp_path / "n"), "--quiet", "--figures", "none"]) == 0
    assert not list((tmp_path / "n" / "figures").glob("*.png")) if (tmp_path / "n" / "figures").exists() else True
    boxes, texts = _pdf(tmp_path / "n" / "report.pdf")
    assert sorted(boxes[0]) == [612.0, 792.0]  # Letter by default
    assert main(["run", str(plan_file), "--out", str(tmp_path / "k"), "--quiet"]) == 0
    key = {p.name for p in (tmp_path / "k" / "figures").glob("*.png")}
    assert "plan.png" in key and key < all_figures
    assert (out / "figures" / "plan.svg").exists() and not (tmp_path / "k" / "figures" / "plan.svg").exists()
    assert "<svg" in (out / "report.html").read_text(encoding="utf-8")  # --figures all: the plan inline as SVG
    assert not list((tmp_path / "k" / "figures").glob(".*"))  # no working files left behind


def test_every_figure_has_its_own_file(small_package):
    """Case names differ only in + and − (E+x+ecc, E+x-ecc): each figure of each case gets its
    own file (a shared file stem once made one case's figure overwrite the other's)."""
    out, doc = small_package
    semirigid = doc["assumptions"]["semirigid"]["cases"]
    stems = {p.stem for p in (out / "figures").glob("*.png")}
    for kind in ("unit_shear", "deflected"):
        found = {s for s in stems if s.startswith(kind + "_")}
        assert len(found) == len(semirigid), (kind, sorted(found))
    assert "unit_shear_E_plus_x_plus_ecc" in stems and "unit_shear_E_plus_x_minus_ecc" in stems


def test_figures_from_pre_started_workers_equal_those_drawn_here(small_package, tmp_path):
    """Figure processes started before the analysis (FigureWorkers) draw the same pixels as
    this process; a worker given no batch exits on its own; no working file is left."""
    from planshear.report import FigureWorkers, render_figures

    out, doc = small_package
    plan_file = next(out.parent.glob("*.toml"))
    from planshear.plan import load_plan

    results = analyze(load_plan(plan_file))
    report = build_report(doc, results, "all")
    with FigureWorkers(2) as workers:
        assert workers.count == 2
        here = render_figures(report, doc, results, tmp_path / "here", "all", workers=1)
        there = render_figures(report, doc, results, tmp_path / "there", "all", started_workers=workers)
        assert workers.count == 0  # both were handed a batch
    assert here == there
    for name in here:
        a = (tmp_path / "here" / f"{name}.png").read_bytes()
        b = (tmp_path / "there" / f"{name}.png").read_bytes()
        assert a == b, name
    assert not [p for p in (tmp_path / "there").iterdir() if p.name.startswith(".batch")]
    with FigureWorkers(1) as idle:  # never handed a batch: let go on leaving
        process = idle.processes[0]
    assert process.returncode == 0
