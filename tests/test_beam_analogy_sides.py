"""Shear delivered to a grid line from each side, over the length present on that side,
and lines split at gaps (beam analogy, flexible and rigid methods)."""

import textwrap

import numpy as np
import pytest

from planshear.idealized import flexible_analysis, rigid_analysis
from planshear.loads import expand_load_cases

from conftest import FT, KIP

LB = KIP / 1000.0
PLF = LB / FT

#: Malone & Rice, *The Analysis of Irregular Shaped Structures: Diaphragms and Shear
#: Walls* (McGraw-Hill, 2012), Example 4.1 geometry: 150 × 50 ft, a 20 ft wide × 10 ft
#: deep notch in the long side at y = 50 between lines 2 (x = 15) and 3 (x = 35), shear
#: walls on lines 1 and 5 only for the transverse (y) load of 200 plf. The wall on line A
#: is ours: it only gives the plan the x-direction and torsional restraint that the
#: plan check asks for, and takes nothing under a y load here.
EXAMPLE_4_1 = textwrap.dedent('''
    [plan]
    name = "intermediate notch"
    length_unit = "ft"

    [diaphragm]
    outline = [[0, 0], [150, 0], [150, 50], [35, 50], [35, 40], [15, 40], [15, 50], [0, 50]]
    material = { kind = "wood-panel", Ga = "15 kip/in" }
    chord_EA = "40000 kip"

    [grid]
    x = { "1" = 0, "2" = 15, "3" = 35, "4" = 50, "5" = 150 }
    y = { "A" = 0, "B" = 40, "C" = 50 }

    [[wall]]
    id = "W1"
    line = "1"
    from = 0
    to = 50
    stiffness = "50 kip/in"

    [[wall]]
    id = "W5"
    line = "5"
    from = 0
    to = 50
    stiffness = "50 kip/in"

    [[wall]]
    id = "WA"
    line = "A"
    from = 0
    to = 150
    stiffness = "50 kip/in"

    [[load]]
    name = "W"
    kind = "edge"
    intensity = "0.2 kip/ft"
    directions = ["y"]
    ''')


def _case(plan, method, name="W+y"):
    cases = expand_load_cases(plan)
    return (flexible_analysis if method == "flexible" else rigid_analysis)(plan, cases).cases[name]


@pytest.mark.parametrize("method", ["flexible", "rigid"])
def test_published_notch_example_unit_shears_per_side(plan_from, method):
    """Malone & Rice (2012), Example 4.1: reactions 15,000 lb; line 2: 240 plf on the full
    side, 300 plf on the notch side; line 3: 200 plf on the notch side, 160 plf on the full
    side; line 4: 100 plf. The rigid method gives the same wall forces here (equal walls
    placed symmetrically about the load's centroid, no accidental eccentricity for an
    edge load), so it is checked against the same published values."""
    plan = plan_from(EXAMPLE_4_1)
    case = _case(plan, method)
    assert case.wall_forces["W1"] / LB == pytest.approx(15000.0, rel=1e-9)
    assert case.wall_forces["W5"] / LB == pytest.approx(15000.0, rel=1e-9)
    lines = case.lines
    # The line of smaller x is the "left" side; the load is +y, so the left side delivers
    # −V and the right side +V along +y (V > 0 between lines 1 and 5).
    assert lines["2"].unit_shear_left / PLF == pytest.approx(-240.0, rel=1e-9)
    assert lines["2"].unit_shear_right / PLF == pytest.approx(300.0, rel=1e-9)
    assert lines["3"].unit_shear_left / PLF == pytest.approx(-200.0, rel=1e-9)
    assert lines["3"].unit_shear_right / PLF == pytest.approx(160.0, rel=1e-9)
    assert lines["4"].unit_shear_left / PLF == pytest.approx(-100.0, rel=1e-9)
    assert lines["4"].unit_shear_right / PLF == pytest.approx(100.0, rel=1e-9)
    assert lines["1"].unit_shear_left == 0.0  # nothing west of line 1
    assert lines["1"].unit_shear_right / PLF == pytest.approx(300.0, rel=1e-9)


def test_published_notch_example_chord_at_the_notch(plan_from):
    """Malone & Rice (2012), Example 4.1: chord forces at the notch M/40 = 202,500/40 =
    5062.5 lb at line 2 and 402,500/40 = 10,062.5 lb at line 3, tension on the offset
    chord (line B, the notch's inner face)."""
    plan = plan_from(EXAMPLE_4_1)
    case = _case(plan, "flexible")
    outline = plan.outline / FT
    k = next(i for i in range(len(outline)) if np.allclose(outline[[i, (i + 1) % len(outline)], 1], 40.0))
    chord = case.chords[f"edge {k + 1}"]
    x = outline[k, 0] + np.sign(outline[(k + 1) % len(outline), 0] - outline[k, 0]) * chord.stations / FT
    order = np.argsort(x)
    # 1e-4 ft inside the notch: the stations sit 1e-7 × plan size either side of it; the
    # moment changes there by V·1e-4 ft, far below the tolerance.
    force = np.interp([15.0 + 1e-4, 35.0 - 1e-4], x[order], chord.force[order]) / LB
    np.testing.assert_allclose(force, [5062.5, 10062.5], rtol=1e-5)


def test_collector_on_a_notch_line_is_not_zero(plan_from):
    """Line 2 carries no wall; the full side delivers 240 plf over 50 ft and the notch side
    300 plf over 40 ft (Malone & Rice 2012, Ex. 4.1 unit shears). Statics of the line:
    N(y) = (300 − 240)·y up to the notch face, 2400 lb at y = 40, back to zero at y = 50.
    Spreading both sides over the whole line (the old behaviour) gave zero."""
    plan = plan_from(EXAMPLE_4_1)
    line = _case(plan, "flexible").lines["2"]
    assert abs(line.peak) / LB == pytest.approx(2400.0, rel=1e-9)
    assert line.peak_position / FT == pytest.approx(40.0, abs=1e-6)
    mid = np.interp(20.0, line.stations / FT, line.collector) / LB
    assert abs(mid) == pytest.approx(1200.0, rel=1e-9)
    assert abs(line.residual) < 1e-9 * abs(line.peak)
    assert line.pieces.shape == (1, 5)


COURTYARD = textwrap.dedent('''
    [plan]
    name = "courtyard"
    length_unit = "ft"

    [diaphragm]
    outline = [[0, 0], [120, 0], [120, 80], [0, 80]]
    openings = [[[50, 30], [70, 30], [70, 50], [50, 50]]]
    material = { kind = "wood-panel", Ga = "15 kip/in" }

    [grid]
    x = { "1" = 0, "2" = 60, "3" = 120 }
    y = { "A" = 0, "C" = 80 }

    [[wall]]
    id = "W1"
    line = "1"
    from = 0
    to = 80
    stiffness = "50 kip/in"

    [[wall]]
    id = "W2a"
    line = "2"
    from = 0
    to = 30
    stiffness = "20 kip/in"

    [[wall]]
    id = "W2b"
    line = "2"
    from = 50
    to = 80
    stiffness = "20 kip/in"

    [[wall]]
    id = "W3"
    line = "3"
    from = 0
    to = 80
    stiffness = "50 kip/in"

    [[wall]]
    id = "WA"
    line = "A"
    from = 0
    to = 120
    stiffness = "50 kip/in"

    [[load]]
    name = "E"
    kind = "seismic"
    area_weight = "20 psf"
    total = "100 kip"
    directions = ["y"]
    ''')


def test_line_through_a_courtyard_has_two_pieces(plan_from):
    """A line through a courtyard with a wall on each piece: by symmetry (statics) each
    piece takes half of the line force, its collector starts from zero at the courtyard
    edge and closes at its own end; nothing crosses the courtyard."""
    plan = plan_from(COURTYARD)
    case = _case(plan, "flexible", "E+y")
    line = case.lines["2"]
    np.testing.assert_allclose(line.pieces[:, :2] / FT, [[0, 30], [50, 80]], atol=1e-6)
    np.testing.assert_allclose(line.pieces[:, 4], 0.0, atol=1e-9 * abs(line.reaction))
    assert case.wall_forces["W2a"] == pytest.approx(case.wall_forces["W2b"], rel=1e-12)
    # Each piece: both sides deliver over 60 ft in all (30 + 30); the walls fill their piece.
    s = line.stations / FT
    assert not np.any((s > 30 + 1e-6) & (s < 50 - 1e-6))
    assert "notes" not in case.extra


def test_member_across_the_courtyard_is_refused(plan_from):
    """A collector declared across the courtyard would carry force over empty space in the
    beam analogy while the finite-element model has no mesh edge there: refused."""
    from planshear.errors import PlanError

    text = COURTYARD.replace("[[load]]", '[[member]]\nrole = "collector"\nline = "2"\nfrom = 0\nto = 80\nEA = "2000 kip"\n\n[[load]]')
    with pytest.raises(PlanError, match="may not span an opening"):
        plan_from(text)
