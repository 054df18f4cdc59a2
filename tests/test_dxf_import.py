"""``planshear import``: plan drawings (DXF) built with ezdxf inside each test.

The drawings are invented here. A round trip fills the placeholders programmatically and
reads the plan back: outline, openings and wall ends must be the drawing's coordinates ×
the unit factor (inch = 0.0254 m and foot = 0.3048 m exactly, NIST SP 811, 2008, B.9).
"""

import hashlib
import math
import re
import subprocess
import sys

import ezdxf
import pytest

from planshear import analyze, parse_plan
from planshear.cli import main
from planshear.dxf_import import import_drawing, parse_layer_options, read_drawing
from planshear.errors import PlanError

INCH, FOOT = 0.0254, 0.3048
#: The importer writes coordinates to 12 significant digits; 1/12 ft is not exact in
#: binary or decimal, so positions compare to 1e-10 relative (far below drafting accuracy).
REL = 1e-10

# An invented L-shaped plan in inches with a re-entrant corner and a skewed edge.
L_SHAPE_IN = [(0, 0), (720, 0), (720, 240), (480, 480), (240, 480), (240, 360), (0, 360)]
OPENING_IN = [(100, 100), (150, 100), (150, 140), (100, 140)]


def _new(units: int):
    doc = ezdxf.new()
    doc.units = units
    return doc, doc.modelspace()


def _fill(text: str, ft: bool = True) -> str:
    """Replace every FILL-IN placeholder line by a value (as an engineer would)."""
    values = {
        "material": '{ kind = "wood-panel", Ga = "14 kip/in" }' if ft else '{ kind = "concrete", E = "25 GPa", '
                                                                             'thickness = "150 mm" }',
        "chord_EA": '"40000 kip"' if ft else '"900 MN"',
        "stiffness": '"50 kip/in"' if ft else '"40 kN/mm"',
        "area_weight": '"20 psf"' if ft else '"1 kPa"',
        "total": '"60 kip"' if ft else '"300 kN"',
    }
    return re.sub(r'^(\w+) = "FILL-IN:.*"$', lambda m: f"{m.group(1)} = {values[m.group(1)]}", text, flags=re.M)


def _l_shape_inches(msp):
    msp.add_lwpolyline(L_SHAPE_IN, close=True, dxfattribs={"layer": "PS-OUTLINE"})
    msp.add_lwpolyline(OPENING_IN, close=True, dxfattribs={"layer": "PS-OPENING"})
    walls = {"SW1": ((0, 0), (0, 360)), "SW2": ((720, 0), (720, 240)), "SW3": ((120, 0), (600, 0)),
             "SW4": ((240, 480), (480, 480)), "SW5": ((600, 360), (480, 480))}  # SW5 on the skewed edge
    for name, (a, b) in walls.items():
        msp.add_line(a, b, dxfattribs={"layer": "PS-WALL"})
        mid = (0.5 * (a[0] + b[0]) + 6, 0.5 * (a[1] + b[1]) + 6)
        msp.add_text(name, dxfattribs={"layer": "PS-WALL", "insert": mid, "height": 6})
    return walls


def test_round_trip_inches_l_shape_with_opening_and_skewed_wall(tmp_path):
    """An L-shape in inches ($INSUNITS 1) with an opening and a wall on the skewed edge:
    the written plan is in ft; after filling the placeholders, `planshear check` passes and
    the plan's outline, opening and wall ends are the drawing's inches × 0.0254 m; the
    walls keep the ids written beside them; then the plan analyzes (coarse mesh)."""
    doc, msp = _new(1)
    walls = _l_shape_inches(msp)
    dxf = tmp_path / "level.dxf"
    doc.saveas(dxf)
    out = tmp_path / "level.toml"
    report = import_drawing(dxf, out)
    assert report.placeholders == 5
    text = out.read_text()
    assert 'length_unit = "ft"' in text
    filled = tmp_path / "filled.toml"
    filled.write_text(_fill(text) + "\n[mesh]\nsize = 8\n")
    assert main(["check", str(filled)]) == 0
    plan = parse_plan(filled.read_text(), "filled.toml")
    assert plan.outline.ravel() == pytest.approx([c * INCH for p in L_SHAPE_IN for c in p], rel=REL, abs=1e-12)
    assert plan.openings[0].ravel() == pytest.approx([c * INCH for p in OPENING_IN for c in p], rel=REL, abs=1e-12)
    by_id = {w.id: w for w in plan.walls}
    assert set(by_id) == set(walls)
    for name, (a, b) in walls.items():
        ends = sorted([tuple(by_id[name].start), tuple(by_id[name].end)])
        expected = sorted([(a[0] * INCH, a[1] * INCH), (b[0] * INCH, b[1] * INCH)])
        assert [c for p in ends for c in p] == pytest.approx([c for p in expected for c in p], rel=REL, abs=1e-12)
    skewed = plan.line(by_id["SW5"].line)
    assert skewed.family == "skew"
    assert by_id["SW5"].length == pytest.approx(math.hypot(120, 120) * INCH, rel=REL)
    results = analyze(plan)
    assert set(results.to_json()["assumptions"]["rigid"]["cases"]["E+x"]["walls"]) == set(walls)


def test_metres_with_grid_layer_labels_and_zone(tmp_path):
    """A plan in metres ($INSUNITS 6) with drawn, labelled grid lines (a skewed one among
    them), a zone and walls drawn as one open polyline (each straight segment a wall): the
    grid keeps the drawn names, the walls sit on them at the drawn positions."""
    doc, msp = _new(6)
    msp.add_lwpolyline([(0, 0), (24, 0), (24, 9), (15, 14), (0, 14)], close=True,
                       dxfattribs={"layer": "PS-OUTLINE"})
    msp.add_lwpolyline([(0, 0), (6, 0), (6, 14), (0, 14)], close=True, dxfattribs={"layer": "PS-ZONE"})
    grid = {"G1": ((0, -2), (0, 16)), "G3": ((24, -2), (24, 16)), "GA": ((-2, 0), (26, 0)),
            "GB": ((-2, 14), (26, 14)), "GK": ((24, 9), (15, 14))}
    for name, (a, b) in grid.items():
        msp.add_line(a, b, dxfattribs={"layer": "PS-GRID"})
        at = (b[0] + 0.3, b[1] + 0.3)
        if name == "GB":  # a multi-line text label, as some grid bubbles are
            msp.add_mtext(name, dxfattribs={"layer": "PS-GRID", "insert": at, "char_height": 0.5})
        else:
            msp.add_text(name, dxfattribs={"layer": "PS-GRID", "insert": at, "height": 0.5})
    # One open polyline: three walls (along line G1, along GB, and down G1 is not repeated).
    msp.add_lwpolyline([(0, 2), (0, 12), (5, 14)], dxfattribs={"layer": "PS-WALL"})
    msp.add_line((3, 0), (21, 0), dxfattribs={"layer": "PS-WALL"})
    msp.add_line((24, 1), (24, 8), dxfattribs={"layer": "PS-WALL"})
    msp.add_line((22.2, 10), (16.8, 13), dxfattribs={"layer": "PS-WALL"})  # on the skewed edge GK
    msp.add_line((1, 14), (8, 14), dxfattribs={"layer": "PS-WALL"})
    dxf = tmp_path / "kiosk.dxf"
    doc.saveas(dxf)
    drawing = read_drawing(dxf)
    assert drawing.length_unit == "m"
    assert {g.name for g in drawing.grid} >= set(grid)
    generated = [g for g in drawing.grid if g.generated]
    assert len(generated) == 1 and generated[0].family == "skew"  # the wall from (0, 12) to (5, 14)
    assert drawing.zones[0][1] == ((0, 0), (6, 0), (6, 14), (0, 14))
    out = tmp_path / "kiosk.toml"
    import_drawing(dxf, out)
    plan = parse_plan(_fill(out.read_text(), ft=False), "kiosk.toml")
    lines = {w.id: w.line for w in plan.walls}
    assert sorted(lines.values()) == sorted(["G1", generated[0].name, "GA", "G3", "GK", "GB"])
    on_skew = next(w for w in plan.walls if w.line == "GK")
    assert sorted([tuple(on_skew.start), tuple(on_skew.end)]) == [pytest.approx((16.8, 13)),
                                                                  pytest.approx((22.2, 10))]
    assert len(plan.zones) == 1


def test_feet_drawing_with_junk_reports_what_it_skipped(tmp_path, capsys):
    """A plan in feet ($INSUNITS 2) with an arc and a block reference on the wall layer, a
    bulged polyline, a spline, furniture and dimensions on other layers: nothing of it is
    read, all of it is listed (terminal and file header), the walls are read as drawn."""
    doc, msp = _new(2)
    msp.add_lwpolyline([(0, 0), (100, 0), (100, 50), (0, 50)], close=True, dxfattribs={"layer": "PS-OUTLINE"})
    for a, b in (((0, 0), (0, 50)), ((100, 0), (100, 50)), ((10, 0), (40, 0)), ((60, 50), (90, 50))):
        msp.add_line(a, b, dxfattribs={"layer": "PS-WALL"})
    msp.add_arc((50, 25), 5, 0, 90, dxfattribs={"layer": "PS-WALL"})
    block = doc.blocks.new("DESK")
    block.add_line((0, 0), (1, 1))
    msp.add_blockref("DESK", (20, 20), dxfattribs={"layer": "PS-WALL"})
    msp.add_lwpolyline([(30, 30, 0, 0, 0.5), (40, 30)], format="xyseb", dxfattribs={"layer": "PS-WALL"})
    msp.add_spline([(0, 0), (10, 10), (20, 0)], dxfattribs={"layer": "A-FURN"})
    for i in range(3):
        msp.add_circle((10 + i, 10), 1, dxfattribs={"layer": "A-FURN"})
    msp.add_text("Office", dxfattribs={"layer": "A-ANNO", "insert": (50, 25)})
    dxf = tmp_path / "warehouse.dxf"
    doc.saveas(dxf)
    before = hashlib.sha256(dxf.read_bytes()).hexdigest()
    out = tmp_path / "warehouse.toml"
    assert main(["import", str(dxf), "--out", str(out)]) == 0
    printed = capsys.readouterr().out
    text = out.read_text()
    header = text.split("[plan]")[0]
    for expected in ('layer "PS-WALL": 1 arc(s)', 'layer "PS-WALL": 1 block reference(s) (INSERT)',
                     'layer "PS-WALL": an arc segment of LWPOLYLINE', 'layer "A-FURN": 4 entities on a layer '
                     'with no role', 'layer "A-ANNO": 1 entity on a layer with no role'):
        assert expected in printed
        assert expected in header
    assert hashlib.sha256(dxf.read_bytes()).hexdigest() == before  # the drawing is never written
    plan = parse_plan(_fill(text), "warehouse.toml")
    assert sorted((w.line, round(w.t_from / FOOT, 9), round(w.t_to / FOOT, 9)) for w in plan.walls) == [
        ("1", 0.0, 50.0), ("2", 0.0, 50.0), ("A", 10.0, 40.0), ("B", 60.0, 90.0)]


def test_millimetres_with_layer_overrides_and_old_polyline(tmp_path):
    """Layers named by --layer (case-insensitive, as DXF layer names are), an old-style
    POLYLINE outline, a drawing in mm: plan in m at drawing × 0.001."""
    doc, msp = _new(4)
    msp.add_polyline2d([(0, 0), (12000, 0), (12000, 8000), (0, 8000)], close=True,
                       dxfattribs={"layer": "S-Slab-Edge"})
    msp.add_line((0, 0), (0, 8000), dxfattribs={"layer": "S-SHEAR"})
    msp.add_line((12000, 1000), (12000, 7000), dxfattribs={"layer": "S-SHEAR"})
    msp.add_line((2000, 0), (10000, 0), dxfattribs={"layer": "S-SHEAR"})
    dxf = tmp_path / "slab.dxf"
    doc.saveas(dxf)
    layers = parse_layer_options(["outline=s-slab-edge", "wall=S-SHEAR"])
    out = tmp_path / "slab.toml"
    import_drawing(dxf, out, layers)
    plan = parse_plan(_fill(out.read_text(), ft=False), "slab.toml")
    assert plan.outline.max(axis=0) == pytest.approx([12.0, 8.0], rel=1e-12)
    assert sorted(round(w.length, 9) for w in plan.walls) == [6.0, 8.0, 8.0]


@pytest.mark.parametrize("units, factor", [("in", INCH / FOOT), ("mm", 1e-3)])
def test_unitless_drawing_needs_units(tmp_path, units, factor):
    """$INSUNITS 0 (unitless): refused with a message asking for --units; with it, read."""
    doc, msp = _new(0)
    msp.add_lwpolyline([(0, 0), (600, 0), (600, 300), (0, 300)], close=True, dxfattribs={"layer": "PS-OUTLINE"})
    dxf = tmp_path / "plain.dxf"
    doc.saveas(dxf)
    with pytest.raises(PlanError, match=r"does not state its units .*\$INSUNITS = 0, unitless.*--units"):
        read_drawing(dxf)
    drawing = read_drawing(dxf, units=units)
    assert drawing.outline[2] == pytest.approx((600 * factor, 300 * factor), rel=REL)


def _outline_case(msp, case: str):
    square = [(0, 0), (100, 0), (100, 50), (0, 50)]
    if case == "two":
        msp.add_lwpolyline(square, close=True, dxfattribs={"layer": "PS-OUTLINE"})
        msp.add_lwpolyline([(200, 0), (300, 0), (300, 50)], close=True, dxfattribs={"layer": "PS-OUTLINE"})
    elif case == "open":
        msp.add_lwpolyline(square, close=False, dxfattribs={"layer": "PS-OUTLINE"})
    elif case == "none":
        msp.add_lwpolyline(square, close=True, dxfattribs={"layer": "OUTLINE-OLD"})


@pytest.mark.parametrize("case, message", [
    ("none", r'layer "PS-OUTLINE" \(outline\) has no closed polyline; the drawing.s layers with entities '
             r"\(count\) are OUTLINE-OLD \(1\).*"
             r"--layer outline=LAYER"),
    ("two", r'has 2 closed polylines .*keep one on that layer'),
    ("open", r"has only open polylines \(1\); close the outline polyline in CAD"),
])
def test_bad_outlines_are_refused(tmp_path, case, message):
    doc, msp = _new(2)
    _outline_case(msp, case)
    dxf = tmp_path / f"{case}.dxf"
    doc.saveas(dxf)
    out = tmp_path / "plan.toml"
    with pytest.raises(PlanError, match=message):
        import_drawing(dxf, out)
    assert not out.exists()  # nothing written
    assert main(["import", str(dxf), "--out", str(out)]) == 2


def test_existing_out_needs_force_and_bad_options(tmp_path, capsys):
    doc, msp = _new(2)
    msp.add_lwpolyline([(0, 0), (100, 0), (100, 50), (0, 50)], close=True, dxfattribs={"layer": "PS-OUTLINE"})
    dxf = tmp_path / "d.dxf"
    doc.saveas(dxf)
    out = tmp_path / "plan.toml"
    out.write_text("# mine\n")
    assert main(["import", str(dxf), "--out", str(out)]) == 2
    assert "exists; give --force" in capsys.readouterr().err
    assert out.read_text() == "# mine\n"
    assert main(["import", str(dxf), "--out", str(out), "--force"]) == 0
    assert "[plan]" in out.read_text()
    assert main(["import", str(dxf), "--out", str(tmp_path / "x.toml"), "--layer", "roof=X"]) == 2
    assert 'unknown role "roof"; the roles are outline, opening, zone, wall, grid' in capsys.readouterr().err
    assert main(["import", str(tmp_path / "missing.dxf"), "--out", str(tmp_path / "y.toml")]) == 2
    assert "file not found" in capsys.readouterr().err


def test_check_lists_every_placeholder_at_once(tmp_path):
    """Without walls or grid lines in the drawing, the file still holds every section, with
    placeholders; check refuses it with all of them in one error, each naming its field."""
    doc, msp = _new(2)
    msp.add_lwpolyline([(0, 0), (100, 0), (100, 50), (0, 50)], close=True, dxfattribs={"layer": "PS-OUTLINE"})
    dxf = tmp_path / "bare.dxf"
    doc.saveas(dxf)
    out = tmp_path / "bare.toml"
    report = import_drawing(dxf, out)
    with pytest.raises(PlanError) as caught:
        parse_plan(out.read_text(), "bare.toml")
    problems = caught.value.problems
    assert len(problems) == report.placeholders == 9
    for field in ("diaphragm.material", "diaphragm.chord_EA", "grid.x", 'wall "W1".line', 'wall "W1".from',
                  'wall "W1".to', 'wall "W1".stiffness', 'load "E".area_weight', 'load "E".total'):
        assert any(p.startswith(f"bare.toml: {field}: not filled in yet") for p in problems), field


def test_run_does_not_import_ezdxf():
    """Start-up of `planshear run` stays free of the import command's dependency."""
    code = "import sys, planshear.cli; sys.exit('ezdxf' in sys.modules)"
    assert subprocess.run([sys.executable, "-c", code], check=False).returncode == 0
