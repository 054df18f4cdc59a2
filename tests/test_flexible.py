"""Flexible method and beam-analogy forces against statics and hand integration."""

import textwrap

import numpy as np
import pytest
from scipy import integrate

from planshear.errors import AnalysisError
from planshear.idealized import flexible_analysis
from planshear.loads import expand_load_cases

from conftest import FT, KIP, end_walls, rectangle_plan


def _flexible(plan):
    return flexible_analysis(plan, expand_load_cases(plan))


def test_simple_span_reactions_and_chord(plan_from):
    """Simply supported diaphragm under uniform load (Taly 2010, Eqs. 4.130–4.133;
    VALIDATION 6.6): w = 1 k/ft, L = 100 ft, d = 50 ft → R = wL/2 = 50 k,
    v = R/d = 1.0 k/ft, M = wL²/8 = 1250 k·ft, chord T = M/d = 25 k at midspan."""
    plan = plan_from(rectangle_plan(walls=end_walls()))
    case = _flexible(plan).cases["E+y"]
    assert case.wall_forces["W1"] / KIP == pytest.approx(50.0, rel=1e-12)
    assert case.wall_forces["W2"] / KIP == pytest.approx(50.0, rel=1e-12)
    assert case.wall_forces["WA"] == 0.0 and case.wall_forces["WB"] == 0.0
    # Edge 3 (y = 50, the side the load pushes toward) is in tension, edge 1 in compression.
    top, bottom = case.chords["edge 3"], case.chords["edge 1"]
    assert top.peak / KIP == pytest.approx(25.0, rel=1e-9)
    assert bottom.peak / KIP == pytest.approx(-25.0, rel=1e-9)
    assert top.peak_position / FT == pytest.approx(50.0, abs=1e-3)
    assert "edge 2" not in case.chords  # the end edges are not chords for a y load
    assert case.max_unit_shear / (KIP / FT) == pytest.approx(1.0, rel=1e-6)
    line = case.lines["1"]
    # The diaphragm east of line 1 pushes the line along +y (the load direction) with
    # v = 1.0 k/ft; nothing lies west of it.
    assert line.unit_shear_right / (KIP / FT) == pytest.approx(1.0, rel=1e-12)
    assert line.unit_shear_left == 0.0
    assert case.equilibrium_residual < 1e-12


@pytest.mark.parametrize(
    ("wall_from", "wall_to", "peak", "peak_at"),
    [
        # Common practice / statics (VALIDATION 6.6): a 20-ft wall centred on a 50-ft line,
        # unit shear 1.0 k/ft → 15 k at each wall end.
        (15.0, 35.0, 15.0, (15.0, 35.0)),
        # The same wall at one end of the line → 1.0 × (50 − 20) = 30 k at the wall end.
        (0.0, 20.0, 30.0, (20.0,)),
    ],
)
def test_collector_force_at_wall_end(plan_from, wall_from, wall_to, peak, peak_at):
    walls = end_walls().replace("from = 0\nto = 50\n", f"from = {wall_from}\nto = {wall_to}\n", 1)
    plan = plan_from(rectangle_plan(walls=walls))
    case = _flexible(plan).cases["E+y"]
    line = case.lines["1"]
    assert abs(line.peak) / KIP == pytest.approx(peak, rel=1e-9)
    assert any(abs(line.peak_position / FT - p) < 1e-9 for p in peak_at)
    assert abs(line.residual) <= 1e-9 * abs(line.reaction)
    # Between the free end and the wall the collector carries the accumulated shear.
    inside = (line.stations / FT > wall_to + 1e-6)
    if np.any(inside):
        s = line.stations[inside] / FT
        assert np.allclose(np.abs(line.collector[inside]) / KIP, 1.0 * (50.0 - s), atol=1e-9)


def test_walls_on_one_line_share_by_stiffness(plan_from):
    """Two piers on line 1 (Taly 2010 §7.4: a line force is shared in proportion to rigidity)."""
    base = end_walls()
    rest = base[base.index('id = "W2"') - len("[[wall]]\n"):]
    plan = plan_from(rectangle_plan(walls=walls_text(rest)))
    case = _flexible(plan).cases["E+y"]
    k1 = next(w.k for w in plan.walls if w.id == "P1")
    k2 = next(w.k for w in plan.walls if w.id == "P2")
    total = case.wall_forces["P1"] + case.wall_forces["P2"]
    assert total / KIP == pytest.approx(50.0, rel=1e-12)
    assert case.wall_forces["P1"] / total == pytest.approx(k1 / (k1 + k2), rel=1e-12)
    # Taly (2010) §7.4.2 normalized form: k ∝ 1/(4(h/d)³ + 3(h/d)).
    assert k1 / k2 == pytest.approx((4 * 1.2**3 + 3 * 1.2) / (4 * 0.6**3 + 3 * 0.6), rel=1e-12)


def walls_text(rest: str) -> str:
    return textwrap.dedent('''
        [[wall]]
        id = "P1"
        line = "1"
        from = 0
        to = 20
        pier = { E = "1500 ksi", thickness = "8 in", height = "12 ft" }

        [[wall]]
        id = "P2"
        line = "1"
        from = 30
        to = 40
        pier = { E = "1500 ksi", thickness = "8 in", height = "12 ft" }
        ''') + "\n" + textwrap.dedent(rest)


L_PLAN = textwrap.dedent('''
    [plan]
    name = "L with opening"
    length_unit = "ft"

    [diaphragm]
    outline = [[0, 0], [150, 0], [150, 40], [90, 40], [90, 70], [0, 70]]
    openings = [[[30, 20], [45, 20], [45, 32], [30, 32]]]
    material = { kind = "wood-panel", Ga = "15 kip/in" }

    [grid]
    x = { "1" = 0, "2" = 60, "3" = 150 }
    y = { "A" = 0, "C" = 70 }

    [[wall]]
    id = "W1"
    line = "1"
    from = 10
    to = 60
    stiffness = "40 kip/in"

    [[wall]]
    id = "W2"
    line = "2"
    from = 50
    to = 62
    stiffness = "15 kip/in"

    [[wall]]
    id = "W3"
    line = "3"
    from = 0
    to = 40
    stiffness = "35 kip/in"

    [[wall]]
    id = "WA"
    line = "A"
    from = 0
    to = 150
    stiffness = "60 kip/in"

    [[wall]]
    id = "WC"
    line = "C"
    from = 0
    to = 90
    stiffness = "60 kip/in"

    [[load]]
    name = "E"
    kind = "seismic"
    area_weight = "15 psf"
    line_weight = [{ line = "1", weight = "0.3 kip/ft" }]
    point_weight = [{ at = [120, 30], weight = "8 kip" }]
    total = "60 kip"
    directions = ["y"]
    ''')


def test_irregular_plan_against_hand_integration(plan_from):
    """L-shape with an opening, an interior line with a short wall, line and point weights:
    line forces against an independent integration of the depth function with scipy.quad
    (simple spans 0–60 and 60–150; statics)."""
    plan = plan_from(L_PLAN)
    case = _flexible(plan).cases["E+y"]

    def depth(x):  # ft of diaphragm at station x, from the drawing
        d = 70.0 if x < 90 else 40.0
        if 30 < x < 45:
            d -= 12.0
        return d

    q = 15.0 / 1000  # kip/ft²
    area_w = lambda x: q * depth(x)  # noqa: E731
    total_weight = integrate.quad(area_w, 0, 150, points=[30, 45, 90], limit=200)[0] + 0.3 * 70 + 8.0
    scale = 60.0 / total_weight  # kip of force per kip of weight

    def reactions(a, b):
        load = integrate.quad(area_w, a, b, points=[30, 45, 90], limit=200)[0]
        moment_about_a = integrate.quad(lambda x: area_w(x) * (x - a), a, b, points=[30, 45, 90], limit=200)[0]
        right = moment_about_a / (b - a)
        return load - right, right

    left1, right1 = reactions(0, 60)
    left2, right2 = reactions(60, 150)
    expected = {
        "W1": (left1 + 0.3 * 70) * scale,  # line weight on line 1 goes straight to it
        "W2": (right1 + left2) * scale,
        "W3": (right2 + 8.0) * scale,  # the point load at x = 120 sits in span 2
    }
    # The point load at x = 120 splits between lines 2 and 3 by lever arms.
    expected["W2"] += 8.0 * (150 - 120) / 90 * scale
    expected["W3"] -= 8.0 * (150 - 120) / 90 * scale
    for wall, value in expected.items():
        assert case.wall_forces[wall] / KIP == pytest.approx(value, rel=1e-3)
    # Equilibrium and closure of every collector diagram.
    assert sum(case.wall_forces.values()) / KIP == pytest.approx(60.0, rel=1e-12)
    for line in case.lines.values():
        assert abs(line.residual) <= 1e-9 * max(abs(line.reaction), 1.0)


def test_line_crossing_an_opening_is_split_into_pieces(plan_from):
    """Line 2 moved to x = 40 crosses the opening (y 20–32); the wall W2 is on the upper
    piece only. Statics: each side delivers V/(length present on that side) = V/58 ft; the
    lower piece (0–20 ft) has no wall, so its 20 ft of delivered shear is left at its end
    (it would have to cross the opening) and the upper piece starts again from zero.
    Before this was fixed the force was carried across the opening."""
    text = L_PLAN.replace('"2" = 60', '"2" = 40').replace("from = 50\n    to = 62", "from = 40\n    to = 60")
    text = text.replace("from = 50\nto = 62", "from = 40\nto = 60")
    plan = plan_from(text)
    result = _flexible(plan)
    case = result.cases["E+y"]
    line = case.lines["2"]
    assert line.delivered / KIP == pytest.approx(case.wall_forces["W2"] / KIP, rel=1e-12)
    # Both sides have 58 ft of diaphragm beside the line; together they deliver the line force.
    total_unit = line.unit_shear_right + line.unit_shear_left
    assert total_unit * 58 * FT == pytest.approx(line.delivered, rel=1e-9)
    pieces = line.pieces
    np.testing.assert_allclose(pieces[:, :2] / FT, [[0, 20], [32, 70]], atol=1e-6)
    # Lower piece: no wall, the residual is the shear delivered over its 20 ft.
    assert abs(pieces[0, 4]) == pytest.approx(abs(total_unit) * 20 * FT, rel=1e-6)
    # Upper piece closes at its end, and the whole line is still in equilibrium.
    assert abs(pieces[1, 4]) == pytest.approx(abs(total_unit) * 20 * FT, rel=1e-6)
    assert abs(line.residual) <= 1e-9 * abs(line.reaction)
    assert any("line 2" in note and "cross a gap" in note for note in case.extra["notes"])
    # No diagram station lies inside the opening.
    s = line.stations / FT
    assert not np.any((s > 20 + 1e-6) & (s < 32 - 1e-6))


def test_one_line_of_resistance_is_not_a_flexible_structure(plan_from):
    walls = end_walls().replace('line = "2"\nfrom = 0\nto = 50', 'line = "1"\nfrom = 30\nto = 50')
    walls = walls.replace('line = "1"\nfrom = 0\nto = 50', 'line = "1"\nfrom = 0\nto = 20', 1)
    plan = plan_from(rectangle_plan(walls=walls).replace('"2" = 100.0', '"2" = 100.0'))
    with pytest.raises(AnalysisError, match="at least two lines of resistance"):
        _flexible(plan)
