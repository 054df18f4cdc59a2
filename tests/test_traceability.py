"""Traceability: the seismic weight item by item, Fpx, wall stiffness terms and the worked
spans, each checked against numbers worked out by hand here (not by planshear)."""

from __future__ import annotations

from importlib import resources

import pytest

from planshear import analyze, parse_plan

from conftest import end_walls, rectangle_plan


@pytest.fixture(scope="module")
def demo_doc():
    text = resources.files("planshear").joinpath("data/demo.toml").read_text(encoding="utf-8")
    return analyze(parse_plan(text, "demo.toml"), semirigid=False).to_json()


def test_demo_weight_breakdown_sums_to_the_weight_used(demo_doc):
    """Demo plan: area (160 × 50 + 100 × 40 − 12 × 12) ft² = 11 856 ft² at 18 psf, line 1
    90 ft × 0.2 kip/ft, one 6 kip point: 213.408 + 18 + 6 = 237.408 kip (independent
    calculation by hand from the plan's numbers)."""
    weight = demo_doc["traceability"]["seismic_weight"]["E"]
    area, line, point = weight["items"]
    assert area["gross_area"] == pytest.approx(12000.0, rel=1e-12)
    assert area["deductions"] == [{"opening": "opening 1", "area": pytest.approx(144.0, rel=1e-12)}]
    assert area["net_area"] == pytest.approx(11856.0, rel=1e-12)
    assert area["weight"] == pytest.approx(11856.0 * 0.018, rel=1e-9)
    assert line["weight"] == pytest.approx(90 * 0.2, rel=1e-12) and point["weight"] == pytest.approx(6.0)
    assert weight["total"] == pytest.approx(237.408, rel=1e-9)
    assert weight["used_in_analysis"] == pytest.approx(237.408, rel=1e-9)
    assert demo_doc["plan"]["loads"]["E"]["seismic_weight"] == pytest.approx(weight["total"], rel=1e-9)


def test_demo_fpx_equations(demo_doc):
    """ASCE 7-16 §12.10.1.1, Eqs. 12.10-1 (0.2 × 237.408 = 47.4816 kip), 12.10-2
    (0.2 × 0.9 × 1.0 × 237.408 = 42.73344 kip) and 12.10-3 (0.4 × 0.9 × 1.0 × 237.408 =
    85.46688 kip); 12.10-1 lies between the bounds and governs."""
    fpx = demo_doc["traceability"]["seismic_weight"]["E"]["fpx"]
    assert fpx["equations"]["12.10-1"]["value"] == pytest.approx(47.4816, rel=1e-9)
    assert fpx["equations"]["12.10-2"]["value"] == pytest.approx(42.73344, rel=1e-9)
    assert fpx["equations"]["12.10-3"]["value"] == pytest.approx(85.46688, rel=1e-9)
    assert fpx["governing"] == "12.10-1" and fpx["Fpx"] == pytest.approx(47.4816, rel=1e-9)
    assert demo_doc["plan"]["loads"]["E"]["fpx_values"]["12.10-1"] == pytest.approx(fpx["Fpx"], rel=1e-9)


def test_demo_wall_stiffness_terms(demo_doc):
    """Terms in in/kip worked by hand. W3 (wood, ANSI/AWC SDPWS-2015 Eq. 4.3-1 with a linear
    hold-down, h = 144 in, b = 240 in, EA = 1500 kip, Ga = 20 kip/in, k_hd = 50 kip/in):
    2h³/(3EAb²) = 0.02304, h/(Ga b) = 0.03, h²/(k_hd b²) = 0.0072. W2 (cantilever pier,
    Taly, Design of Reinforced Masonry Structures, 2nd ed., 2010, §7.4.2; E = 1000 ksi,
    G = 0.4E, t = 6 in, d = 72 in, h = 144 in): h³/(3EI) = 144³/(3 × 1000 × 6 × 72³/12) =
    0.0053333, 1.2h/(AG) = 1.2 × 144/(432 × 400) = 0.001."""
    walls = demo_doc["traceability"]["wall_stiffness"]
    w3 = walls["W3"]["terms"]
    assert w3["bending"]["value"] == pytest.approx(0.02304, rel=1e-9)
    assert w3["shear"]["value"] == pytest.approx(0.03, rel=1e-9)
    assert w3["holdown"]["value"] == pytest.approx(0.0072, rel=1e-9)
    assert walls["W3"]["k"] == pytest.approx(1 / 0.06024, rel=1e-9)
    w2 = walls["W2"]["terms"]
    assert w2["flexure"]["value"] == pytest.approx(144**3 / (3 * 1000 * 6 * 72**3 / 12), rel=1e-9)
    assert w2["shear"]["value"] == pytest.approx(1.2 * 144 / (6 * 72 * 400), rel=1e-9)
    for wall_id, wall in walls.items():  # the traced k is the k the analysis used
        # plan.wall_stiffness is rounded to 6 decimals (kip/in) in results.json.
        assert wall["k"] == pytest.approx(demo_doc["plan"]["wall_stiffness"][wall_id]["k"], abs=1e-6)
        # JSON values carry 9 significant digits.
        assert wall["flexibility_total"] == pytest.approx(sum(t["value"] for t in wall["terms"].values()), rel=1e-8)


def test_demo_worked_spans_match_the_flexible_results(demo_doc):
    """One worked span per load direction; its hand numbers equal the flexible method's
    (unit shears and line forces to round-off; the chord force to 1e-6, the error of the
    trapezoid rule for M on the 4001-station grid)."""
    spans = demo_doc["traceability"]["worked_spans"]
    assert sorted(s["load_axis"] for s in spans) == ["x", "y"]
    for span in spans:
        for check in span["check_against_flexible"]:
            limit = 1e-6 if check["quantity"].startswith("chord") else 1e-9
            assert abs(check["relative_difference"]) <= limit, check
        steps = {s["quantity"]: s["value"] for s in span["steps"]}
        assert steps["T = C"] > 0 and steps["v_left"] > 0


def test_worked_span_uniform_load_and_a_concentrated_load():
    """Simple beam, L = 100 ft, uniform w plus a concentrated P at a = 30 ft (AISC Steel
    Construction Manual, 15th ed., Table 3-23, cases 1 and 8 superposed — from memory):
    weights 20 psf × 100 × 50 ft = 100 kip and a 0.5 kip/ft line weight on x = 30 ft
    (along the load: 25 kip at one station), scaled to the given total 62.5 kip (× 0.5):
    w = 0.5 kip/ft, P = 12.5 kip. R_left = wL/2 + P(L − a)/L = 33.75 kip, R_right =
    28.75 kip; V = 0 at 30 + (33.75 − 15 − 12.5)/0.5 = 42.5 ft, M = 33.75 × 42.5 −
    0.5 × 42.5²/2 − 12.5 × 12.5 = 826.5625 kip·ft; v = 33.75/50 kip/ft; T = M/50."""
    load = """
[[load]]
name = "E"
kind = "seismic"
area_weight = "20 psf"
line_weight = [{ line = "M", weight = "0.5 kip/ft" }]
total = "62.5 kip"
directions = ["y"]
"""
    grid = 'x = { "1" = 0, "M" = 30, "2" = 100 }\ny = { "A" = 0, "B" = 50 }'
    plan = parse_plan(rectangle_plan(walls=end_walls(), load=load, grid=grid), "span.toml")
    doc = analyze(plan, semirigid=False).to_json()
    (span,) = doc["traceability"]["worked_spans"]
    steps = {s["quantity"]: s["value"] for s in span["steps"]}
    assert span["span"] == "1-2" and span["L"] == pytest.approx(100.0)
    assert steps["W"] == pytest.approx(62.5, rel=1e-9)
    assert steps["R_left"] == pytest.approx(33.75, rel=1e-9)
    assert steps["R_right"] == pytest.approx(28.75, rel=1e-9)
    assert steps["V_max"] == pytest.approx(33.75, rel=1e-9)
    # Trapezoid rule on a 4001-point grid: M to about 1e-7.
    assert steps["M_max"] == pytest.approx(826.5625, rel=1e-6)
    assert steps["v_left"] == pytest.approx(33.75 / 50, rel=1e-9)
    assert steps["T = C"] == pytest.approx(826.5625 / 50, rel=1e-6)
    assert span["load"]["points_in_span"] == [{"at": pytest.approx(30.0), "P": pytest.approx(12.5, rel=1e-9)}]


def test_worked_span_uniform_formulas():
    """Uniform load on a simple span, R = wL/2 and M = wL²/8 (AISC Steel Construction
    Manual, 15th ed., Table 3-23 case 1 — from memory): 100 kip on 100 ft → w = 1 kip/ft,
    R = 50 kip, M = 1250 kip·ft, v = 50/50 = 1 kip/ft, T = C = 1250/50 = 25 kip."""
    plan = parse_plan(rectangle_plan(walls=end_walls()), "uniform.toml")
    doc = analyze(plan, semirigid=False).to_json()
    span = next(s for s in doc["traceability"]["worked_spans"] if s["load_axis"] == "y")
    steps = {s["quantity"]: s for s in span["steps"]}
    assert steps["w"]["value"] == pytest.approx(1.0, rel=1e-12)
    assert steps["R"]["formula"] == "w·L/2" and steps["R"]["value"] == pytest.approx(50.0, rel=1e-12)
    assert steps["M_max"]["formula"] == "w·L²/8" and steps["M_max"]["value"] == pytest.approx(1250.0, rel=1e-6)
    assert steps["v_left"]["value"] == pytest.approx(1.0, rel=1e-12)
    assert steps["T = C"]["value"] == pytest.approx(25.0, rel=1e-6)
    assert all(abs(c["relative_difference"]) <= 1e-6 for c in span["check_against_flexible"])


def _text_boxes(fig):
    """(text, window extent) of every text drawn in the plan axes, in the figure's own fixed
    layout (the one planshear.report.figures.render saves)."""
    renderer = fig.canvas.get_renderer()
    fig.draw(renderer)
    ax = fig.axes[0]
    return [(t.get_text(), t.get_window_extent(renderer)) for t in ax.texts if t.get_text()]


def _overlaps(boxes):
    return [(a, b) for i, (a, box_a) in enumerate(boxes) for b, box_b in boxes[:i]
            if box_a.overlaps(box_b)]


def test_demo_plan_figure_shows_loads_dimensions_and_no_label_collides():
    """The demo plan drawing carries the loads with their values, CM and CR, dimension
    strings (grid spacing 50, 50, 60 ft; overall 160 × 90 ft from the demo outline) and a
    scale bar; no two labels overlap (renderer extents)."""
    from planshear.report.figures import plan_figure

    text = resources.files("planshear").joinpath("data/demo.toml").read_text(encoding="utf-8")
    plan = parse_plan(text, "demo.toml")
    doc = analyze(plan, semirigid=False).to_json()
    boxes = _text_boxes(plan_figure(doc, plan))
    texts = [t for t, _ in boxes]
    for expected in ("CM (E)", "CR", "E: 18 psf", "E: 0.2 kip/ft", "E: 6 kip", "W+x: 0.28 kip/ft",
                     "W+y: 0.28 kip/ft", "160 ft", "90 ft", "60 ft", "40 ft", "scale (ft)", "W1", "W9"):
        assert expected in texts, expected
    assert texts.count("50 ft") == 3  # 1–2, 2–3 and A–B
    assert _overlaps(boxes) == []


def test_plan_figure_separates_coinciding_labels():
    """A symmetric rectangle: the center of mass and of rigidity coincide (both at the
    middle by symmetry), yet their labels do not overlap."""
    from planshear.report.figures import plan_figure

    plan = parse_plan(rectangle_plan(walls=end_walls()), "symmetric.toml")
    doc = analyze(plan, semirigid=False).to_json()
    assert doc["plan"]["loads"]["E"]["center_of_mass"] == pytest.approx([50.0, 25.0])
    assert doc["assumptions"]["rigid"]["center_of_rigidity"] == pytest.approx([50.0, 25.0])
    boxes = _text_boxes(plan_figure(doc, plan))
    assert {"CM (E)", "CR"} <= {t for t, _ in boxes}
    assert _overlaps(boxes) == []


def test_traced_report_section(demo_doc):
    """The report's "Loads and stiffness, traced" section carries every traced number:
    one row per weight item (+ total and used), the three Fpx equations, every wall term,
    and per worked span the load, the steps and the check, in HTML and in the PDF text."""
    from planshear.postprocess.traceability import traced_section
    from planshear.report import Table, build_report

    data = traced_section(demo_doc)
    trace = demo_doc["traceability"]
    by_heading = {b["heading"]: b for b in data["blocks"]}
    assert len(by_heading["Seismic weight, load E"]["rows"]) == len(trace["seismic_weight"]["E"]["items"]) + 2
    assert len(by_heading["Diaphragm force Fpx, load E (ASCE 7-16 §12.10.1.1)"]["rows"]) == 3
    terms = sum(len(w["terms"]) + 1 for w in trace["wall_stiffness"].values())
    assert len(by_heading["Wall stiffness, term by term"]["rows"]) == terms
    for span in trace["worked_spans"]:
        steps = next(b for h, b in by_heading.items() if span["span"] in h and h.endswith("hand calculation"))
        assert [r[0] for r in steps["rows"]] == [s["quantity"] for s in span["steps"]]
    (section,) = [s for s in build_report(demo_doc, None, "none").sections if s.title == "Loads and stiffness, traced"]
    cells = [str(c) for b in section.blocks if isinstance(b, Table) for row in b.rows for c in row]
    assert any("(12000 − 144) ft² × 0.018 kip/ft²" in c for c in cells)


@pytest.mark.parametrize("example", ["alder_library_roof.toml", "harbour_kiosk_metric.toml"])
def test_every_span_of_every_flexible_case_checks(example):
    """Not only the governing span: every span of every flexible case (both signs of the
    wind, an L-shaped plan in ft, a plan in m with a sloped edge and a skewed line) gives
    hand statics equal to the flexible results. Unit shear to 1e-6 (on a sloped edge the
    depth beside a line is read 1e-7 of the plan size away from it), chord force to 1e-6
    (trapezoid rule), line forces to round-off."""
    from pathlib import Path

    from planshear import load_plan
    from planshear.idealized import lines_of_resistance
    from planshear.postprocess.beam_analogy import load_along_span
    from planshear.postprocess.traceability import _worked_span

    plan = load_plan(Path(__file__).parents[1] / "examples" / example)
    results = analyze(plan, semirigid=False)
    flexible = results.methods["flexible"]
    count = 0
    for case in results.cases:
        if case.name not in flexible.cases:
            continue
        supports = lines_of_resistance(plan, case.axis)
        applied = load_along_span(plan, case.field, case.axis)
        for i in range(len(supports) - 1):
            span = _worked_span(plan, case, flexible, supports, i, applied, None)
            assert span.unit_shear_left == pytest.approx(span.program["unit_shear_left"], rel=1e-6)
            assert span.unit_shear_right == pytest.approx(span.program["unit_shear_right"], rel=1e-6)
            assert span.program["hand_chord_at"] == pytest.approx(span.program["chord"], rel=1e-6)
            assert span.reaction_left + span.reaction_right == pytest.approx(span.total, rel=1e-12)
            for hand, program in span.line_check.values():
                assert hand == pytest.approx(program, rel=1e-12, abs=1e-9 * case.force)
            count += 1
    assert count >= 6  # both directions, wind both ways


def test_weight_breakdown_with_a_zone_weight_and_openings():
    """A 100 × 50 ft plan, a 20 × 50 ft zone at 40 psf (its own area weight), 20 psf
    elsewhere, a 10 × 10 ft opening in each part. By hand: zone (1000 − 100) ft² × 40 psf
    = 36 kip; rest (4000 − 100) ft² × 20 psf = 78 kip; total 114 kip."""
    extra = """
[[diaphragm.zone]]
name = "heavy"
polygon = [[0, 0], [20, 0], [20, 50], [0, 50]]
material = { kind = "wood-panel", Ga = "20 kip/in" }
"""
    load = """
[[load]]
name = "E"
kind = "seismic"
area_weight = "20 psf"
zone_area_weight = { heavy = "40 psf" }
total = "50 kip"
directions = ["x", "y"]
"""
    text = rectangle_plan(walls=end_walls(), extra=extra, load=load).replace(
        'chord_EA = "40000 kip"',
        'chord_EA = "40000 kip"\nopenings = [[[5, 20], [15, 20], [15, 30], [5, 30]], [[60, 20], [70, 20], [70, 30], [60, 30]]]')
    doc = analyze(parse_plan(text, "zones.toml"), semirigid=False).to_json()
    weight = doc["traceability"]["seismic_weight"]["E"]
    by_label = {item["label"]: item for item in weight["items"]}
    zone = by_label["zone heavy"]
    rest = by_label["diaphragm outside the zones with their own weight"]
    assert (zone["gross_area"], zone["net_area"]) == (pytest.approx(1000.0), pytest.approx(900.0))
    assert [d["area"] for d in zone["deductions"]] == [pytest.approx(100.0)]
    assert (rest["gross_area"], rest["net_area"]) == (pytest.approx(4000.0), pytest.approx(3900.0))
    assert zone["weight"] == pytest.approx(36.0, rel=1e-9) and rest["weight"] == pytest.approx(78.0, rel=1e-9)
    assert weight["total"] == pytest.approx(114.0, rel=1e-9) == weight["used_in_analysis"]
    assert "fpx" not in weight
