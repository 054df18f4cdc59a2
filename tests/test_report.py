"""The review package: report, tables, figures and mesh files."""

import csv
import json
import re
import shutil
import subprocess
from html.parser import HTMLParser

import meshio
import numpy as np
import pytest

from planshear.cli import main


@pytest.fixture(scope="module")
def package(tmp_path_factory):
    out = tmp_path_factory.mktemp("demo") / "out"
    assert main(["demo", "--out", str(out), "--quiet"]) == 0
    return out, json.loads((out / "results.json").read_text())


class _Tables(HTMLParser):
    """Collects every table of an HTML page as rows of cell texts, keyed by class."""

    def __init__(self):
        super().__init__()
        self.tables: dict[str, list[list[str]]] = {}
        self._current = None
        self._row = None
        self._cell = None

    def handle_starttag(self, tag, attrs):
        if tag == "table":
            self._current = self.tables.setdefault(dict(attrs).get("class", ""), [])
        elif tag == "tr" and self._current is not None:
            self._row = []
        elif tag in ("td", "th") and self._row is not None:
            self._cell = ""

    def handle_endtag(self, tag):
        if tag in ("td", "th") and self._cell is not None:
            self._row.append(self._cell)
            self._cell = None
        elif tag == "tr" and self._row is not None:
            self._current.append(self._row)
            self._row = None
        elif tag == "table":
            self._current = None

    def handle_data(self, data):
        if self._cell is not None:
            self._cell += data


def test_package_is_complete(package):
    out, _ = package
    for name in ("results.json", "report.html", "report.pdf", "walls.csv", "lines.csv", "chords.csv",
                 "classification.csv", "mesh.vtu", "mesh.xdmf", "mesh.msh", "figures/plan.png"):
        assert (out / name).stat().st_size > 0, name
    assert (out / "report.pdf").read_bytes().startswith(b"%PDF")
    html_text = (out / "report.html").read_text()
    assert "licensed engineer" in html_text
    # Nothing to fetch: figures are inline (the plan as SVG, the others as PNG data URIs);
    # no src or href points outside the page.
    for marker in ('src="http', "src='http", 'href="http', "href='http", "<link", "<script"):
        assert marker not in html_text, marker
    images = re.findall(r"<img [^>]*>", html_text)
    assert images and all('src="data:image/png;base64,' in tag for tag in images)


def test_report_tables_equal_results_json(package):
    out, doc = package
    parser = _Tables()
    parser.feed((out / "report.html").read_text())
    walls = parser.tables["walls"]
    header = walls[0]
    design_col = next(i for i, h in enumerate(header) if h.startswith("design"))
    for row in walls[1:]:
        expected = doc["envelope"]["walls"][row[0]]["design"]
        assert row[design_col] == f"{expected['value']:.6g}"
        for i, h in enumerate(header):
            assumption = h.split(" (")[0]
            if assumption in doc["assumptions"] and doc["envelope"]["walls"][row[0]].get(assumption):
                assert row[i] == f"{doc['envelope']['walls'][row[0]][assumption]['value']:.6g}"
    spans = [s for c in doc["classification"]["directions"].values() for s in c["spans"]]
    rows = parser.tables["classification"][1:]
    assert len(rows) == len(spans)
    for row, span in zip(rows, spans, strict=True):
        assert row[3] == f"{span['MDD']:.6g}" and row[5] == f"{span['ratio']:.6g}"
    # The demo's main sheathing has Ga = 12 kip/in, the west strip 24 kip/in (G·t = Ga).
    assert [m["Gt"] for m in doc["plan"]["materials"]] == pytest.approx([12.0, 24.0])
    assert doc["plan"]["wall_stiffness"]["W1"]["k"] == pytest.approx(60.0)
    materials = parser.tables["materials"]
    for row, material in zip(materials[1:], doc["plan"]["materials"], strict=True):
        assert row[0] == material["zone"] and row[5] == f"{material['Gt']:.6g}"
    assert [r[0] for r in parser.tables["cases"][1:]] == doc["plan"]["cases"]
    for row in parser.tables["collectors"][1:]:
        design = doc["envelope"]["collectors"][row[0]]["design"]
        # Transfer-region collectors come from the idealized methods only: no design value
        # where those are not allowed.
        assert row[1] == ("–" if design is None else f"{design['value']:.6g}")


def test_csv_tables_have_units_and_match(package):
    out, doc = package
    with open(out / "walls.csv", newline="") as handle:
        rows = list(csv.reader(handle))
    assert rows[0] == ["wall", "assumption", "case", "force [kip]", "drift [in]"]
    for wall, assumption, case, force, drift in rows[1:]:
        assert float(force) == doc["assumptions"][assumption]["cases"][case]["walls"][wall]
        assert float(drift) == doc["assumptions"][assumption]["cases"][case]["wall_drifts"][wall]
    with open(out / "lines.csv", newline="") as handle:
        header = next(csv.reader(handle))
    assert "collector_peak [kip]" in header and "collector_peak_at [ft]" in header


def test_mesh_files_read_back(package):
    out, doc = package
    cases = list(doc["assumptions"]["semirigid"]["cases"])
    vtu = meshio.read(out / "mesh.vtu")
    xdmf = meshio.read(out / "mesh.xdmf")
    n_elements = doc["assumptions"]["semirigid"]["mesh"]["elements"]
    for mesh in (vtu, xdmf):
        assert len(mesh.points) == doc["assumptions"]["semirigid"]["mesh"]["nodes"]
        for case in cases:
            assert mesh.point_data[f"u[{case}] (m)"].shape == (len(mesh.points), 3)
            assert mesh.cell_data[f"N[{case}] (N/m)"][0].shape == (n_elements, 3)
            assert mesh.cell_data[f"N_principal[{case}] (N/m)"][0].shape == (n_elements, 2)
            assert mesh.cell_data[f"unit_shear[{case}] (N/m)"][0].shape == (n_elements,)
        assert mesh.cell_data["zone"][0].shape == (n_elements,)
    assert len(vtu.cells) == 2  # membrane elements and line elements (bars, walls, grid lines)
    assert f"bar_force[{cases[0]}] (N)" in vtu.cell_data
    assert len(meshio.read(out / "mesh.msh").points) == len(vtu.points)


def test_wall_drift_equals_mesh_displacement(package):
    """The wall spring's force is k × (average displacement along the wall), so the drift
    in results.json must equal the Simpson-weighted mean of the exported displacements."""
    out, doc = package
    vtu = meshio.read(out / "mesh.vtu")
    edges = vtu.cells[1].data
    wall_index = vtu.cell_data["wall_id"][1]
    walls = list(doc["plan"]["wall_stiffness"])
    case = "E+y"
    u = vtu.point_data[f"u[{case}] (m)"][:, :2] / 0.0254  # m → in
    for index, wall in enumerate(walls):
        mine = edges[wall_index == index]
        xy = vtu.points[mine[:, :2], :2]
        length = np.linalg.norm(xy[:, 1] - xy[:, 0], axis=1)
        direction = (xy[0, 1] - xy[0, 0]) / length[0]
        along = u @ direction
        mean = np.sum(length * (along[mine[:, 0]] + along[mine[:, 1]] + 4 * along[mine[:, 2]]) / 6) / length.sum()
        drift = doc["assumptions"]["semirigid"]["cases"][case]["wall_drifts"][wall]
        assert abs(mean) == pytest.approx(abs(drift), rel=1e-6, abs=1e-9)


def test_report_renders_in_headless_chromium(package, tmp_path):
    browser = shutil.which("chromium") or shutil.which("chromium-browser")
    if browser is None:
        pytest.skip("chromium is not installed here (.ci/run installs Debian's chromium package)")
    out, _ = package
    shot = tmp_path / "report.png"
    subprocess.run(
        [browser, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
         "--disable-background-networking", "--disable-component-update", "--disable-sync",
         f"--user-data-dir={tmp_path / 'profile'}", "--window-size=1200,3000",
         f"--screenshot={shot}", (out / "report.html").as_uri()],
        check=True, capture_output=True, timeout=120,
    )
    assert shot.stat().st_size > 50_000


def test_html_prints_on_the_page_size_of_its_page_rule(package, tmp_path):
    """Printed by the headless browser, report.html comes out on Letter pages (8.5 × 11 in
    = 612 × 792 pt) from its @page rule, with the title block on the first page."""
    browser = shutil.which("chromium") or shutil.which("chromium-browser")
    if browser is None:
        pytest.skip("chromium is not installed here (.ci/run installs Debian's chromium package)")
    out, _ = package
    pdf = tmp_path / "printed.pdf"
    subprocess.run(
        [browser, "--headless", "--no-sandbox", "--disable-gpu", "--no-first-run", "--disable-sync",
         "--disable-background-networking", "--disable-component-update", f"--user-data-dir={tmp_path / 'profile'}",
         "--no-pdf-header-footer", f"--print-to-pdf={pdf}", (out / "report.html").as_uri()],
        check=True, capture_output=True, timeout=180,
    )
    data = pdf.read_bytes()
    boxes = re.findall(rb"/MediaBox\s*\[\s*0 0 ([\d.]+) ([\d.]+)\s*\]", data)
    assert len(boxes) > 3
    assert {(round(float(w)), round(float(h))) for w, h in boxes} == {(612, 792)}
