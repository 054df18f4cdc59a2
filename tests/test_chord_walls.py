"""Walls along chord lines: the chord force they take in the semi-rigid model, reported
per case (postprocess/chord_restraint.py)."""

import textwrap

import pytest

from planshear.loads import expand_load_cases
from planshear.semirigid import semirigid_analysis

from conftest import FT, KIP
from test_semirigid import box, wall

LOAD = textwrap.dedent('''
    [[load]]
    name = "E"
    kind = "seismic"
    area_weight = "20 psf"
    total = "30 kip"
    directions = ["y"]
    eccentricity = 0
    ''')
W_L2_8D = 0.3 * 100**2 / (8 * 50)  # kip: w = 0.3 k/ft, L = 100 ft, d = 50 ft


def simple_span(chord_walls: str):
    walls = wall("W1", "1", 0, 50, "1e5 kip/in") + wall("W2", "2", 0, 50, "1e5 kip/in") + chord_walls
    return box(walls=walls, load=LOAD, mesh_size=2.5)


def run_case(plan_from, chord_walls: str):
    plan = plan_from(simple_span(chord_walls))
    return semirigid_analysis(plan, expand_load_cases(plan)).result.cases["E+y"]


def test_short_walls_leave_the_chord_at_m_over_d(plan_from):
    """Simple span, 30 kip uniform over 100 ft, depth 50 ft, stiff end walls, 10-ft walls
    mid-chord: chord force T = wL²/(8d) = 7.50 kip (Taly 2010, Eqs. 4.130–4.133; statics).
    M/d from the case's own wall forces is that value at midspan (symmetric reactions wL/2,
    to round-off of the mesh's load integration); the finite-element chord is within 2 %
    of it (the wood-panel membrane's own axial rigidity, Et = 0.1·Gt, carries the rest),
    and the short walls take less than 1 % of it."""
    case = run_case(plan_from, wall("WA", "A", 45, 55, "10 kip/in") + wall("WB", "B", 45, 55, "10 kip/in"))
    chords = case.extra["walls_along_chords"]["chords"]
    assert W_L2_8D == pytest.approx(7.5)
    for name, sign in (("edge 1", -1.0), ("edge 3", 1.0)):
        c = chords[name]
        assert c["at"] / FT == pytest.approx(50.0, abs=1e-6)
        assert c["M_over_d"] / KIP == pytest.approx(sign * W_L2_8D, rel=1e-6)
        assert c["chord_force"] / KIP == pytest.approx(sign * W_L2_8D, rel=0.02)
        assert 0.0 <= c["share_lost"] < 0.02
        assert 0.0 <= c["walls_share"] < 0.01


def test_full_length_walls_take_the_chord_force_they_remove(plan_from):
    """The same span with 100-ft walls (100 kip/in) under both chords: the chord force
    drops well below M/d = 7.50 kip and the report says by how much. Statics at midspan:
    the section's couple is carried by chord, walls and membrane, so chord force + the
    walls' self-equilibrating force there = M/d within 2 % (membrane Et = 0.1·Gt); the net
    force on each wall line is zero (nothing is needed for equilibrium across the load),
    so the whole wall force is self-equilibrating and largest at midspan."""
    case = run_case(plan_from, wall("WA", "A", 0, 100, "100 kip/in") + wall("WB", "B", 0, 100, "100 kip/in"))
    info = case.extra["walls_along_chords"]
    for name, line in (("edge 1", "A"), ("edge 3", "B")):
        c = info["chords"][name]
        assert c["share_lost"] > 0.25
        assert c["chord_force"] + c["walls_force"] == pytest.approx(c["M_over_d"], rel=0.02)
        assert c["share_lost"] == pytest.approx(c["walls_share"], abs=0.02)
        across = info["lines"][line]
        assert abs(across["net_force"]) < 1e-9 * case.applied_force
        assert across["restraint_force"] == pytest.approx(c["walls_force"], rel=0.01)
        assert across["at"] / FT == pytest.approx(50.0, abs=2.5)  # within one element of midspan
    # The finite-element chord diagram itself shows the drop.
    assert case.chords["edge 3"].peak / KIP < 0.75 * W_L2_8D


def test_panels_on_a_chord_line_carry_the_self_equilibrating_force(plan_from):
    """Two 49-ft panels under each chord with a 2-ft gap at midspan: all their force comes
    from chord elongation (equal and opposite, the line's net force is zero), and the
    force the walls have taken over in the gap equals one panel's force (statics of the
    part of the line left of the gap). M/d stays wL²/(8d) = 7.50 kip (Taly 2010,
    Eqs. 4.130–4.133): the panels' self-equilibrating forces are not counted as reactions;
    chord + walls = M/d within 2 % (membrane Et = 0.1·Gt carries the rest)."""
    panels = (wall("WA1", "A", 0, 49, "50 kip/in") + wall("WA2", "A", 51, 100, "50 kip/in")
              + wall("WB1", "B", 0, 49, "50 kip/in") + wall("WB2", "B", 51, 100, "50 kip/in"))
    case = run_case(plan_from, panels)
    line = case.extra["walls_along_chords"]["lines"]["B"]
    first, second = line["self_equilibrating"]["WB1"], line["self_equilibrating"]["WB2"]
    assert first == pytest.approx(case.wall_forces["WB1"], rel=1e-6)
    assert second == pytest.approx(-first, rel=1e-6)
    assert abs(first) > 0.05 * 30 * KIP
    assert line["restraint_force"] == pytest.approx(-first, rel=1e-9)
    assert 49 * FT - 1e-6 <= line["at"] <= 51 * FT + 1e-6
    c = case.extra["walls_along_chords"]["chords"]["edge 3"]
    assert c["M_over_d"] / KIP == pytest.approx(W_L2_8D, rel=1e-6)
    assert c["chord_force"] + c["walls_force"] == pytest.approx(c["M_over_d"], rel=0.02)
    assert c["walls_force"] == pytest.approx(-first, rel=1e-6)
