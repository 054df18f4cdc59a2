"""Chord splices (`[[splice]]`): slip in the flexible span deflection (SDPWS-2015 Eq. 4.2-1,
term Σ(xΔc)/(2W)) and as added chord compliance in the semi-rigid model."""

import pytest

from planshear.errors import PlanError
from planshear.idealized import flexible_analysis
from planshear.loads import expand_load_cases

from conftest import FT, INCH, KIP
from test_load_introduction import AREA_LOAD, END_WALLS, mdd_of, sdpws_deflection
from test_semirigid import box

WOOD = '{ kind = "wood-panel", Ga = "15 kip/in" }'
# 30 kip on a 100 ft span, 50 ft deep: w = 0.3 kip/ft; at x = 25 ft the moment is
# w·x·(L − x)/2 = 281.25 kip·ft and each chord carries M/W = 5.625 kip.
CHORD_FORCE_AT_25 = 0.3 * 25 * 75 / 2 / 50  # kip


def splices(slip_in: float, force_kip: float, points=((25, 0), (25, 50), (75, 0), (75, 50))) -> str:
    return "".join(f'\n[[splice]]\nat = [{x}, {y}]\nslip = "{slip_in} in"\nat_force = "{force_kip} kip"\n'
                   for x, y in points)


def test_flexible_deflection_includes_the_splice_slip_term(plan_from):
    """ANSI/AWC SDPWS-2015 Eq. 4.2-1, fourth term Σ(xΔc)/(2W): four splices (both chords at
    x = 25 ft and 75 ft from the supports) each slipping Δc = 0.05 in at the chord force they
    carry give 4 · 25 ft · 0.05 in / (2 · 50 ft) = 0.05 in at midspan, added to the bending
    and shear terms (0.6875 in). Rel. 1e-3: trapezoid rule and the 41 trial positions."""
    plan = plan_from(box(walls=END_WALLS, material=WOOD, chord_EA="20000 kip", load=AREA_LOAD, mesh_size=5.0,
                         extra=splices(0.05, CHORD_FORCE_AT_25)))
    (span,) = flexible_analysis(plan, expand_load_cases(plan)).cases["E+y"].extra["span_deflections"]
    assert span.splice_slip / INCH == pytest.approx(4 * 25 * 0.05 / (2 * 50), rel=1e-3)
    assert span.at / FT == pytest.approx(50.0, abs=1e-9)
    # Et = 0.1·Gt adds 0.75 % of the bending term (see test_load_introduction).
    expected = sdpws_deflection(300.0, 100.0, 50.0, 20000e3, 15.0) + 0.05
    assert span.mdd / INCH == pytest.approx(expected, rel=0.005)


def test_splice_slip_scales_with_the_chord_force(plan_from):
    """The splice is a linear spring k = at_force/slip: stated at twice the force it carries,
    it slips half as much (independent statics check, k·Δ = F)."""
    plan = plan_from(box(walls=END_WALLS, material=WOOD, chord_EA="20000 kip", load=AREA_LOAD, mesh_size=5.0,
                         extra=splices(0.05, 2 * CHORD_FORCE_AT_25)))
    (span,) = flexible_analysis(plan, expand_load_cases(plan)).cases["E+y"].extra["span_deflections"]
    assert span.splice_slip / INCH == pytest.approx(0.025, rel=1e-3)


def test_semirigid_model_carries_the_splice_compliance(plan_from):
    """The same four splices as series springs in the finite-element chord bars raise the
    semi-rigid MDD by the slip term of SDPWS-2015 Eq. 4.2-1 (0.05 in; observed 0.048 in), within 10 % (the
    membrane's own Et = 0.1·Gt shares a little of the chord force, and the mesh at 5 ft)."""
    base = mdd_of(plan_from, box(walls=END_WALLS, material=WOOD, chord_EA="20000 kip", load=AREA_LOAD,
                                 mesh_size=5.0))[0].mdd
    spliced = mdd_of(plan_from, box(walls=END_WALLS, material=WOOD, chord_EA="20000 kip", load=AREA_LOAD,
                                    mesh_size=5.0, extra=splices(0.05, CHORD_FORCE_AT_25)))[0].mdd
    assert (spliced - base) / INCH == pytest.approx(0.05, rel=0.10)


def test_splice_given_as_a_stiffness_equals_slip_at_force(plan_from):
    """stiffness = at_force / slip: 5.625 kip / 0.05 in = 112.5 kip/in gives the same slip term."""
    points = ((25, 0), (25, 50), (75, 0), (75, 50))
    extra = "".join(f'\n[[splice]]\nat = [{x}, {y}]\nstiffness = "112.5 kip/in"\n' for x, y in points)
    plan = plan_from(box(walls=END_WALLS, material=WOOD, chord_EA="20000 kip", load=AREA_LOAD, mesh_size=5.0,
                         extra=extra))
    assert plan.splices[0].stiffness == pytest.approx(112.5 * KIP / INCH)
    (span,) = flexible_analysis(plan, expand_load_cases(plan)).cases["E+y"].extra["span_deflections"]
    assert span.splice_slip / INCH == pytest.approx(0.05, rel=1e-3)


@pytest.mark.parametrize("entry, fragment", [
    ('at = [40, 20]\nstiffness = "100 kip/in"', "neither on the outline chord nor on a [[member]]"),
    ('at = [40, 0]\nslip = "0.05 in"\nstiffness = "100 kip/in"', "give either slip and at_force"),
    ('at = [40, 0]\nslip = "0.05 in"', "give either slip and at_force"),
    ('at = [40, 0]\nstiffness = "100 kip"', "splice #1.stiffness"),
])
def test_bad_splices_are_refused_with_the_fix(plan_from, entry, fragment):
    with pytest.raises(PlanError) as error:
        plan_from(box(walls=END_WALLS, material=WOOD, chord_EA="20000 kip", load=AREA_LOAD, mesh_size=5.0,
                      extra=f"\n[[splice]]\n{entry}\n"))
    assert fragment in str(error.value)


def test_outline_splice_needs_a_chord(plan_from):
    text = box(walls=END_WALLS, material=WOOD, chord_EA="20000 kip", load=AREA_LOAD, mesh_size=5.0,
               extra='\n[[splice]]\nat = [40, 0]\nstiffness = "100 kip/in"\n')
    text = text.replace('chord_EA = "20000 kip"\n', "")
    with pytest.raises(PlanError, match="has no chord bar; give diaphragm.chord_EA"):
        plan_from(text)


def test_splice_on_a_member_inside_the_plan(plan_from):
    """A splice on a declared collector is accepted and stiffens nothing else: the member's
    bar through the point gets EA·ℓ/(ℓ + EA/k) (series springs), the others keep EA."""
    from planshear.fem.model import assemble
    from planshear.mesh.build import build_mesh

    member = '\n[[member]]\nrole = "collector"\nline = "C"\nEA = "5000 kip"\n'
    extra = member + '\n[[splice]]\nname = "SC"\nat = [60, 25]\nstiffness = "50 kip/in"\n'
    text = box(walls=END_WALLS, material=WOOD, chord_EA="20000 kip", load=AREA_LOAD, mesh_size=5.0, extra=extra)
    text = text.replace('y = { "A" = 0, "B" = 50 }', 'y = { "A" = 0, "C" = 25, "B" = 50 }')
    plan = plan_from(text)
    assert plan.splices[0].on == 'collector on line "C"'
    assembly = assemble(plan, build_mesh(plan))
    (collector,) = [b for b in assembly.bars if b.name == "collector on C"]
    changed = collector.axial_rigidity != collector.EA
    assert changed.sum() == 1
    chords = [b for b in assembly.bars if b.name == "chords"][0]
    assert (chords.axial_rigidity == chords.EA).all()
