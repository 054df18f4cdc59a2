"""Rigid method against published torsion examples and statics."""

import textwrap

import numpy as np
import pytest

from planshear.idealized import center_of_rigidity, rigid_analysis
from planshear.loads import expand_load_cases

from conftest import FT, KIP, end_walls, rectangle_plan

BOX_90x60 = textwrap.dedent('''
    [plan]
    name = "box"
    length_unit = "ft"
    [diaphragm]
    outline = [[0, 0], [90, 0], [90, 60], [0, 60]]
    material = { kind = "custom", Et_x = "1000 kip/in", Et_y = "1000 kip/in", Gt = "500 kip/in" }
    [grid]
    x = { "A" = 0, "B" = 90 }
    y = { "C" = 0, "D" = 60 }
    [[wall]]
    id = "A"
    line = "A"
    from = 0
    to = 60
    stiffness = "4.5 kip/in"
    [[wall]]
    id = "B"
    line = "B"
    from = 0
    to = 60
    stiffness = "5.5 kip/in"
    [[wall]]
    id = "C"
    line = "C"
    from = 0
    to = 90
    stiffness = "4 kip/in"
    [[wall]]
    id = "D"
    line = "D"
    from = 0
    to = 90
    stiffness = "4 kip/in"
    [[load]]
    name = "E"
    kind = "seismic"
    area_weight = "20 psf"
    total = "100 kip"
    directions = ["y"]
    eccentricity = 0.05
    ''')


def test_published_torsion_example(plan_from):
    """Taly, Design of Reinforced Masonry Structures, 2nd ed. (2010), Example 7.12
    (pp. 7.70–7.73, Eq. 7.75): x_CR = 49.5 ft, direct shear 45/55 k; with e + e_acc = 9 ft
    the torsional shear on A is 7.36 k → 52.36 k, B → 47.64 k; C and D 3.96 k (VALIDATION 6.3).
    Under ASCE 7-16 §12.8.4.2 the −ecc case moves the mass to x = 45 − 4.5 = 40.5 ft."""
    plan = plan_from(BOX_90x60)
    assert center_of_rigidity(plan)[0] / FT == pytest.approx(49.5, rel=1e-12)
    result = rigid_analysis(plan, expand_load_cases(plan))
    worst = result.cases["E+y-ecc"].wall_forces
    assert worst["A"] / KIP == pytest.approx(52.36, abs=0.005)
    assert worst["B"] / KIP == pytest.approx(47.64, abs=0.005)
    assert abs(worst["C"]) / KIP == pytest.approx(3.96, abs=0.005)
    assert worst["C"] == pytest.approx(-worst["D"], rel=1e-12)
    # Inherent torsion only (e = 4.5 ft): V_t,A = T·r·R/J with the unrounded
    # J = 4.5·49.5² + 5.5·40.5² + 2·4·30² = 27,247.5 (the example prints 27,248).
    inherent = result.cases["E+y"].wall_forces
    assert inherent["A"] / KIP == pytest.approx(45.0 + 100 * 4.5 * 49.5 * 4.5 / 27247.5, rel=1e-9)
    # Torsional irregularity measure: Taly's check gives δmax/δavg = 11.69/10.18 = 1.148 < 1.2
    # (VALIDATION.md 6.3); the exact end displacements give 11.635/10.149 = 1.1465.
    assert result.cases["E+y-ecc"].extra["torsional_ratio"] == pytest.approx(1.148, abs=0.003)
    # +ecc puts the mass on the center of rigidity: no torsion at all.
    centred = result.cases["E+y+ecc"].wall_forces
    assert centred["A"] / KIP == pytest.approx(45.0, rel=1e-9)
    assert abs(centred["C"]) < 1e-9 * KIP


def test_second_published_setup_polar_moment(plan_from):
    """Taly (2010) Example 7.13 (VALIDATION 6.4): 60 × 40 ft, R_A = 6, R_B = 4, R_C = R_D = 4
    → x_CR = 24 ft, J = 11,840, direct shear 60/40 k; torsional shear = T·r·R/J."""
    text = (BOX_90x60.replace("[90, 0], [90, 60], [0, 60]", "[60, 0], [60, 40], [0, 40]")
            .replace('"B" = 90', '"B" = 60').replace('"D" = 60', '"D" = 40')
            .replace("to = 60\n", "to = 40\n").replace("to = 90\n", "to = 60\n")
            .replace('"4.5 kip/in"', '"6 kip/in"').replace('"5.5 kip/in"', '"4 kip/in"'))
    plan = plan_from(text)
    assert center_of_rigidity(plan)[0] / FT == pytest.approx(24.0, rel=1e-12)
    forces = rigid_analysis(plan, expand_load_cases(plan)).cases["E+y"].wall_forces
    torsion = 100 * (30 - 24)  # k·ft, inherent eccentricity only
    assert forces["A"] / KIP == pytest.approx(60 - torsion * 24 * 6 / 11840, rel=1e-9)
    assert forces["B"] / KIP == pytest.approx(40 + torsion * 36 * 4 / 11840, rel=1e-9)


def test_symmetric_plan_has_no_torsion(plan_from):
    plan = plan_from(rectangle_plan(walls=end_walls()))
    case = rigid_analysis(plan, expand_load_cases(plan)).cases["E+y"]
    assert case.wall_forces["W1"] == pytest.approx(case.wall_forces["W2"], rel=1e-12)
    assert abs(case.wall_forces["WA"]) < 1e-9 * KIP
    assert case.extra["torsional_ratio"] == pytest.approx(1.0)


def test_equilibrium_and_collector_closure_on_irregular_plan(plan_from):
    """Rigid forces balance force and moment; every collector returns to zero; the
    chord moment closes at the far end (statics)."""
    from test_flexible import L_PLAN

    plan = plan_from(L_PLAN.replace('directions = ["y"]', 'directions = ["x", "y"]'))
    result = rigid_analysis(plan, expand_load_cases(plan))
    for case in result.cases.values():
        assert case.equilibrium_residual < 1e-10
        for line in case.lines.values():
            assert abs(line.residual) <= 1e-9 * max(abs(line.reaction), case.applied_force * 1e-6)


def test_skewed_wall_participates(plan_from):
    """A wall on a 45° line resists both directions; rigid equilibrium still holds."""
    text = rectangle_plan(walls=end_walls()).replace(
        '[grid]\n', '[grid]\nline = [{ name = "K", start = [60, 0], end = [100, 40] }]\n'
    ) + textwrap.dedent('''
        [[wall]]
        id = "WK"
        line = "K"
        from = 5
        to = 30
        stiffness = "30 kip/in"
        ''')
    # Move the load tables after the new wall: TOML arrays of tables may interleave.
    plan = plan_from(text)
    result = rigid_analysis(plan, expand_load_cases(plan))
    case = result.cases["E+x"]
    assert abs(case.wall_forces["WK"]) > 0
    total_x = sum(f * w.direction[0] for w in plan.walls for f in [case.wall_forces[w.id]])
    assert total_x / KIP == pytest.approx(100.0, rel=1e-12)
    assert case.equilibrium_residual < 1e-10
    np.testing.assert_allclose(plan.line("K").direction, [2**-0.5, 2**-0.5])


def test_accidental_torsion_never_reduces_a_wall(plan_from):
    """Taly (2010) Example 7.12 design values (VALIDATION.md 6.3 and pitfall 4): wall A is
    designed for 52.36 k, wall B stays at its 55.0 k direct shear — the envelope over the
    base and ±ecc cases never lets accidental torsion lower a wall force."""
    from planshear.loads import expand_load_cases as cases_of
    from planshear.postprocess.envelope import build_envelope

    plan = plan_from(BOX_90x60)
    cases = cases_of(plan)
    envelope = build_envelope({"rigid": rigid_analysis(plan, cases)}, cases, None)
    assert envelope.walls["A"]["rigid"].value / KIP == pytest.approx(52.36, abs=0.005)
    assert envelope.walls["B"]["rigid"].value / KIP == pytest.approx(55.0, abs=0.005)
    assert envelope.walls["B"]["rigid"].case == "E+y+ecc"


def test_accidental_torsion_closes_the_moment_diagram(plan_from):
    """Statics: the ±ecc cases add the moment F·e to the walls, so it must also act on the
    diaphragm in the beam analogy; then shear and moment vanish at both ends of the plan and
    the chords carry nothing at the plan's corners. Without it the chord kept F·e/d at its
    free end (the error this test guards against)."""
    plan = plan_from(rectangle_plan(walls=end_walls()))
    result = rigid_analysis(plan, expand_load_cases(plan))
    for name, case in result.cases.items():
        if "ecc" not in name:
            continue
        peak = max(abs(chord.peak) for chord in case.chords.values())
        assert peak > 0
        for chord in case.chords.values():
            ends = chord.force[[0, -1]]
            assert np.all(np.abs(ends) <= 1e-9 * peak), (name, chord.name, ends)
        assert case.equilibrium_residual < 1e-9
