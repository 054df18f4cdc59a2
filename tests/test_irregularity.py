"""Horizontal structural irregularities, ASCE 7-16 Table 12.3-1: thresholds, measurements
from the rigid and semi-rigid models and from the geometry, SDC application, output."""

import json
import textwrap

import numpy as np
import pytest
from test_rigid import BOX_90x60

from planshear.code import asce7_16 as code
from planshear.errors import PlanError
from planshear.loads import expand_load_cases
from planshear.postprocess.irregularity import detect_irregularities, reentrant_corners
from planshear.run import analyze

from conftest import FT, INCH, end_walls, rectangle_plan


def _box(k_b: str = "5.5 kip/in", load_extra: str = "", extra: str = "", mesh: bool = False) -> str:
    """The Taly Ex. 7.12 box (tests/test_rigid.py) with wall B's stiffness changed."""
    text = BOX_90x60.replace('stiffness = "5.5 kip/in"', f'stiffness = "{k_b}"')
    text = text.replace("eccentricity = 0.05", "eccentricity = 0.05\n" + load_extra)
    if mesh:
        text = text.replace("[grid]", "[mesh]\nsize = 15\n[grid]")
    return text + "\n" + extra


def _torsional(items, method="rigid"):
    return next(i for i in items if i.name.endswith("torsional") and i.method == method)


@pytest.mark.parametrize(("end_ratio", "expected"), [(1.5, None), (1.51, "1a"), (2.33, "1a"), (2.34, "1b")])
def test_thresholds_from_end_drift_ratio(end_ratio, expected):
    """ASCE 7-16 Table 12.3-1 Types 1a/1b: δmax/δavg > 1.2 / > 1.4. With one end drifting r
    times the other, δmax/δavg = 2r/(1 + r): 1.2 ⇔ r = 1.5 and 1.4 ⇔ r = 2.33
    ("Extreme Torsional Irregularity", STRUCTURE, March 2015; VALIDATION.md 1.9 / 7.5). The
    limit is strict ("more than"): r = 1.5 gives exactly 1.2 and stays regular; r = 2.33 and
    2.34 bracket the 1b limit (7/3 itself rounds to 1.4000000000000001 in floating point)."""
    ratio = 2 * end_ratio / (1 + end_ratio)
    assert code.torsional_irregularity_12_3_1(ratio) == expected


def test_amplification_bounds():
    """ASCE 7-16 §12.8.4.3, Eq. 12.8-14 (restated in Taly 2010, Eq. 7.73; VALIDATION.md 1.8):
    Ax = (δmax/(1.2 δavg))², 1.0 ≤ Ax ≤ 3.0."""
    assert code.torsional_amplification_12_8_4_3(1.1, 1.0) == 1.0
    assert code.torsional_amplification_12_8_4_3(1.5, 1.0) == pytest.approx(1.5625, rel=1e-12)
    assert code.torsional_amplification_12_8_4_3(2.0, 1.0) == pytest.approx((2 / 1.2) ** 2, rel=1e-12)
    assert code.torsional_amplification_12_8_4_3(2.2, 1.0) == 3.0


def test_published_example_is_regular_in_both_models(plan_from):
    """Taly, Design of Reinforced Masonry Structures, 2nd ed. (2010), Ex. 7.12 (VALIDATION.md
    6.3): δmax/δavg = 11.69/10.18 = 1.148 < 1.2, no Type 1a. The book rounds its displacements;
    the exact end displacements give 1.1465 (hence abs 0.003). The semi-rigid model of a
    diaphragm 100 times stiffer than its walls must agree with the rigid one to 0.5 %."""
    plan = plan_from(_box(mesh=True))
    results = analyze(plan)
    for method in ("rigid", "semirigid"):
        item = _torsional(results.irregularities, method)
        assert item.present is False and item.applies is False
        assert item.values["ratio"] == pytest.approx(1.148, abs=0.003)
        assert item.values["case"] == "E+y-ecc"
    rigid, semi = (_torsional(results.irregularities, m).values for m in ("rigid", "semirigid"))
    assert semi["delta_max"] == pytest.approx(rigid["delta_max"], rel=5e-3)


def _hand_end_displacements(k_a: float, k_b: float, k_c: float, sign: int) -> np.ndarray:
    """Independent rigid-diaphragm statics for the 90 × 60 ft box, load 100 k along y at
    x = 45 + sign·4.5 ft: translation F/(kA + kB), rotation T/J about the center of rigidity
    (Taly 2010, Eqs. 7.74–7.75 form). Displacements (in) at x = 0 and x = 90 ft."""
    x_cr = k_b * 90 / (k_a + k_b)
    j = k_a * x_cr**2 + k_b * (90 - x_cr) ** 2 + 2 * k_c * 30**2
    theta = 100 * (45 + sign * 4.5 - x_cr) / j
    v = 100 / (k_a + k_b)
    return np.array([v + theta * (0 - x_cr), v + theta * (90 - x_cr)])


def test_extreme_torsion_detected_with_hand_statics(plan_from):
    """Wall B weakened to 1.0 kip/in: hand statics (helper above) give the end displacements
    and so δmax/δavg and Ax = (δmax/(1.2 δavg))² (§12.8.4.3); the tool must find Type 1b with
    the same numbers, list §12.8.4.3 among the SDC D consequences and say nothing was applied."""
    plan = plan_from(_box("1.0 kip/in", 'sdc = "D"'))
    cases = expand_load_cases(plan)
    from planshear.idealized import rigid_analysis

    items = detect_irregularities(plan, cases, {"rigid": rigid_analysis(plan, cases)})
    ratios = []
    for sign in (1, -1):
        ends = np.abs(_hand_end_displacements(4.5, 1.0, 4.0, sign))
        ratios.append((ends.max() / ends.mean(), ends.max(), ends.mean()))
    ratio, d_max, d_avg = max(ratios)
    assert ratio > 1.4  # the plan was chosen for Type 1b
    item = _torsional(items)
    assert item.type == "1b" and item.present and item.applies is True
    assert item.values["ratio"] == pytest.approx(ratio, abs=1e-4)
    assert item.values["delta_max"] / INCH == pytest.approx(d_max, rel=1e-9)
    assert item.values["Ax"] == pytest.approx((d_max / (1.2 * d_avg)) ** 2, abs=1e-4)
    assert "§12.8.4.3" in item.consequence and "§12.3.3.4" in item.consequence
    assert "irregularity_consequences_applied" in item.consequence


@pytest.mark.parametrize(("sdc", "applies", "must", "must_not"), [
    ("A", False, "no consequence in SDC A", "§12.7.3"),
    ("B", True, "§12.7.3", "§12.8.4.3"),  # Type 1b: 3-D model from SDC B, Ax only in C and D
    ("E", True, "not permitted in SDC E or F", "§12.8.4.3"),
    (None, None, "no Seismic Design Category given", "SDC D:"),
])
def test_consequences_follow_the_sdc(plan_from, sdc, applies, must, must_not):
    """Table 12.3-1 SDC application column for Type 1b (from memory, as labelled in
    planshear/code/asce7_16.py): 12.7.3 in B–D, 12.8.4.3 in C–D, 12.3.3.1 (not permitted) in E–F."""
    extra = f'sdc = "{sdc}"' if sdc else ""
    plan = plan_from(_box("1.0 kip/in", extra))
    results = analyze(plan, semirigid=False)
    item = _torsional(results.irregularities)
    assert item.type == "1b" and item.applies is applies
    assert must in item.consequence and must_not not in item.consequence


def test_flexible_diaphragm_has_no_torsional_consequence(plan_from):
    """Table 12.3-1: Types 1a and 1b apply only where diaphragms are rigid or semi-rigid
    (VALIDATION.md 1.9, last clause from memory)."""
    plan = plan_from(_box("1.0 kip/in", 'sdc = "D"', "[classification]\nidealized_flexible = true"))
    item = _torsional(analyze(plan, semirigid=False).irregularities)
    assert item.present is True and item.applies is False
    assert "rigid and semi-rigid diaphragms only" in item.consequence


def _plan(outline: str, depth: float = 80, diaphragm_extra: str = "", sdc: str = "D") -> str:
    """A 100 ft wide plan with walls on the grid lines x = 0, 100 and y = 0, depth (ft)."""
    return textwrap.dedent(f'''
        [plan]
        name = "test"
        length_unit = "ft"
        [diaphragm]
        outline = {outline}
        {diaphragm_extra}
        material = {{ kind = "wood-panel", Ga = "20 kip/in" }}
        [grid]
        x = {{ "1" = 0, "2" = 100 }}
        y = {{ "A" = 0, "B" = {depth:g} }}
        [[wall]]
        id = "W1"
        line = "1"
        from = 0
        to = 10
        stiffness = "50 kip/in"
        [[wall]]
        id = "W2"
        line = "2"
        from = 0
        to = 10
        stiffness = "50 kip/in"
        [[wall]]
        id = "WA"
        line = "A"
        from = 0
        to = 10
        stiffness = "50 kip/in"
        [[wall]]
        id = "WB"
        line = "B"
        from = 0
        to = 10
        stiffness = "50 kip/in"
        [[load]]
        name = "E"
        kind = "seismic"
        area_weight = "20 psf"
        total = "100 kip"
        directions = ["x", "y"]
        sdc = "{sdc}"
        ''')


def _l_plan(notch_x: float, notch_y: float) -> str:
    """100 × 80 ft L-shape with the top-right notch_x × notch_y cut away."""
    x0, y0 = 100 - notch_x, 80 - notch_y
    return _plan(f"[[0, 0], [100, 0], [100, {y0:g}], [{x0:g}, {y0:g}], [{x0:g}, 80], [0, 80]]")


@pytest.mark.parametrize(("notch_x", "notch_y", "present"), [
    (14.0, 11.0, False),  # both below 15 % (15 ft of 100, 12 ft of 80)
    (16.0, 13.0, True),  # both above
    (40.0, 11.0, False),  # only one projection beyond 15 %: Type 2 needs both
    (15.0, 12.0, False),  # exactly 15 %: "greater than" is strict
])
def test_reentrant_corner_l_shape(plan_from, notch_x, notch_y, present):
    """ASCE 7-16 Table 12.3-1 Type 2: both plan projections beyond a re-entrant corner greater
    than 15 % of the plan dimension in that direction. For the L the projections are the
    notch's width and depth (independent geometry: the plan is 100 × 80 ft)."""
    plan = plan_from(_l_plan(notch_x, notch_y))
    item = next(i for i in detect_irregularities(plan, [], {}) if i.type == "2")
    assert item.present is present and item.applies is present
    assert item.values["corners"] == 1
    assert item.values["projection_x"] / FT == pytest.approx(notch_x, rel=1e-9)
    assert item.values["projection_y"] / FT == pytest.approx(notch_y, rel=1e-9)
    assert item.values["share_x"] == pytest.approx(notch_x / 100, abs=1e-4)


def test_reentrant_corners_of_a_t_shape():
    """A T (bar 0–100 × 60–80, stem 40–60 × 0–60): two re-entrant corners, each with the
    bar's overhang (40) across and the stem's length (60) along y, by plain geometry."""
    t = np.array([[40, 0], [60, 0], [60, 60], [100, 60], [100, 80], [0, 80], [0, 60], [40, 60]], float)
    corners = reentrant_corners(t)
    assert len(corners) == 2
    for c in corners:
        assert c["projection_x"] == pytest.approx(40.0) and c["projection_y"] == pytest.approx(60.0)


@pytest.mark.parametrize(("depth", "present"), [(31.0, False), (32.0, True)])
def test_open_area(plan_from, depth, present):
    """ASCE 7-16 Table 12.3-1 Type 3: open area greater than 50 % of the gross enclosed
    diaphragm area. 100 × 50 ft plan (5000 ft²), one 80 ft × depth opening: 2480 ft² (49.6 %)
    and 2560 ft² (51.2 %)."""
    opening = f"openings = [[[10, 9], [90, 9], [90, {9 + depth:g}], [10, {9 + depth:g}]]]"
    plan = plan_from(_plan("[[0, 0], [100, 0], [100, 50], [0, 50]]", 50, opening))
    item = next(i for i in detect_irregularities(plan, [], {}) if i.name.endswith("open area"))
    assert item.present is present
    assert item.values["open_area"] / FT**2 == pytest.approx(80 * depth, rel=1e-9)
    assert item.values["gross_area"] / FT**2 == pytest.approx(5000, rel=1e-9)


@pytest.mark.parametrize(("ratio", "present"), [(None, None), (0.7, False), (0.6, True), (1.4, False), (1.6, True)])
def test_stiffness_change_only_when_stated(plan_from, ratio, present):
    """Table 12.3-1 Type 3, change in effective diaphragm stiffness of more than 50 % from one
    story to the next: needs the adjacent story, so "not checked" unless the engineer states
    the ratio. Change relative to the smaller stiffness (the stricter reading, stated in the
    README): 0.7 → 43 %, 0.6 → 67 %, 1.4 → 40 %, 1.6 → 60 %."""
    extra = "" if ratio is None else f"[classification]\nadjacent_stiffness_ratio = {ratio}"
    plan = plan_from(_box(extra=extra))
    item = next(i for i in detect_irregularities(plan, [], {}) if i.name.endswith("stiffness change"))
    assert item.present is present
    if ratio is None:
        assert item.consequence.startswith("not checked")


@pytest.mark.parametrize(("load_extra", "extra", "field"), [
    ('sdc = "G"', "", "sdc"),
    ("", "[classification]\nadjacent_stiffness_ratio = -1", "adjacent_stiffness_ratio"),
])
def test_bad_keys_are_refused(plan_from, load_extra, extra, field):
    with pytest.raises(PlanError, match=field):
        plan_from(_box(load_extra=load_extra, extra=extra))


def test_sdc_on_edge_load_is_refused(plan_from):
    text = _box().replace('kind = "seismic"\narea_weight = "20 psf"\ntotal = "100 kip"',
                          'kind = "edge"\nintensity = "0.2 kip/ft"\nsdc = "D"')
    with pytest.raises(PlanError, match="sdc"):
        plan_from(text)


def test_results_json_and_terminal(plan_from, tmp_path, capsys):
    """results.json carries every check as {type, clause, values, applies, consequence} in
    output units; the terminal and the report name them."""
    plan = plan_from(_box("1.0 kip/in", 'sdc = "D"'))
    results = analyze(plan, semirigid=False)
    doc = json.loads(json.dumps(results.to_json()))
    items = doc["irregularities"]
    assert {"type", "clause", "values", "applies", "consequence"} <= set(items[0])
    torsion = next(i for i in items if i["type"] == "1b")
    assert torsion["values"]["delta_max"] == pytest.approx(results.irregularities[0].values["delta_max"] / INCH,
                                                           rel=1e-6)
    from planshear.cli import _print_irregularities
    from planshear.report import report_tables

    _print_irregularities(doc)
    out = capsys.readouterr().out
    assert "Type 1b extreme torsional" in out and "applied" in out
    headers, rows = report_tables(doc)["irregularities"]
    assert len(rows) == len(items) and rows[0][0] == "1b"


def test_report_has_the_irregularity_table(plan_from, tmp_path):
    """The review package (HTML and PDF) lists every check; the HTML table rows follow
    results.json one for one."""
    plan = plan_from(_l_plan(30.0, 30.0))
    results = analyze(plan, semirigid=False)
    out = results.write(tmp_path / "out")
    doc = json.loads((out / "results.json").read_text())
    html_text = (out / "report.html").read_text()
    assert "Horizontal irregularities (ASCE 7-16 Table 12.3-1)" in html_text
    assert "run again with the eccentricity" in html_text
    table = html_text.split('class="irregularities"')[1].split("</table>")[0]
    assert table.count("<tr") == len(doc["irregularities"]) + 1
    assert (out / "report.pdf").stat().st_size > 0


def test_ends_moving_apart_are_extreme_torsion(plan_from):
    """δavg is the algebraic mean of the end displacements (Table 12.3-1: average of the
    drifts at the two ends): when rotation dominates and the ends move in opposite
    directions the ratio is large, not near 1. Box 90 × 60 ft with its two y-walls
    (k = 10 kip/in) at x = 40 and 50 ft and weak x-walls (0.1 kip/in) on the edges; hand
    statics: x_CR = 45, J = 10·5²·2 + 0.1·30²·2 = 680, θ = 100·4.5/680 per ±ecc case,
    v = 100/20 = 5 in, ends v ∓ 45θ = 5 ∓ 29.78 in: δmax/δavg = 34.78/5 = 6.96 → Type 1b,
    Ax = 3.0 (bound). A mean of magnitudes would have given 34.78/32.28 = 1.08, "regular"."""
    text = BOX_90x60.replace('x = { "A" = 0, "B" = 90 }', 'x = { "A" = 40, "B" = 50 }')
    text = text.replace('stiffness = "4.5 kip/in"', 'stiffness = "10 kip/in"')
    text = text.replace('stiffness = "5.5 kip/in"', 'stiffness = "10 kip/in"')
    text = text.replace('stiffness = "4 kip/in"', 'stiffness = "0.1 kip/in"')
    plan = plan_from(text)
    item = _torsional(analyze(plan, semirigid=False).irregularities)
    theta = 100 * 4.5 / 680
    ends = np.array([5 - 45 * theta, 5 + 45 * theta])
    assert item.type == "1b"
    assert item.values["ratio"] == pytest.approx(np.abs(ends).max() / ends.mean(), abs=1e-4)
    assert item.values["Ax"] == 3.0


def test_semirigid_reads_the_end_wall_drifts(plan_from):
    """Semi-rigid measure: with full-length walls on the two end edges, the diaphragm's
    displacement there is those walls' drift F/k (statics of the spring supports), taken here
    from the model's own wall forces. A stiff interior wall line makes the distribution
    indeterminate, so the soft diaphragm (Ga = 5 kip/in) gives a ratio other than the rigid
    one, as the semi-rigid model should. Tolerance 1e-3: the measure averages the edge's
    mesh nodes while the wall force integrates the spring along it (about 2e-4 here)."""
    walls = end_walls() + textwrap.dedent("""
        [[wall]]
        id = "WM"
        line = "M"
        from = 0
        to = 50
        stiffness = "200 kip/in"
        """)
    grid = 'x = { "1" = 0, "M" = 30, "2" = 100 }\ny = { "A" = 0, "B" = 50 }'
    text = rectangle_plan(walls=walls, grid=grid, extra="[mesh]\nsize = 10\n",
                          material='{ kind = "wood-panel", Ga = "5 kip/in" }')
    # SDC B: §12.8.4.3 does not apply, so the reported cases are those the check measured
    # (in SDC C–F the ±ecc cases are run again with the eccentricity × Ax).
    plan = plan_from(text.replace('directions = ["x", "y"]', 'directions = ["y"]\nsdc = "B"'))
    results = analyze(plan)
    semi = _torsional(results.irregularities, "semirigid")
    drifts = results.methods["semirigid"].cases[semi.values["case"]].wall_drifts
    assert semi.values["delta_end_low"] == pytest.approx(drifts["W1"], rel=1e-3)
    assert semi.values["delta_end_high"] == pytest.approx(drifts["W2"], rel=1e-3)
    rigid = _torsional(results.irregularities, "rigid")
    assert abs(semi.values["ratio"] - rigid.values["ratio"]) > 0.05
    assert semi.type == "1b" and semi.applies is True  # 1.55 here; classified semi-rigid, SDC B
