"""Flexibility classification, comparison and envelope."""

import textwrap

import numpy as np
import pytest

from planshear.idealized import flexible_analysis
from planshear.loads import expand_load_cases
from planshear.postprocess.classify import classify
from planshear.run import analyze
from planshear.semirigid import semirigid_analysis

from conftest import FT, INCH, KIP
from test_semirigid import box, centred_wall_plan, wall


def test_mdd_matches_sdpws_deflection(plan_from):
    """MDD of a simply supported wood diaphragm on stiff walls against ANSI/AWC SDPWS-2015
    Eq. 4.2-1 (bending + shear terms; VALIDATION.md 2.6: 0.3391 in), within 3 %."""
    walls = (wall("W1", "1", 0, 50, "1e5 kip/in") + wall("W2", "2", 0, 50, "1e5 kip/in")
             + wall("WA", "A", 45, 55, "10 kip/in") + wall("WB", "B", 45, 55, "10 kip/in"))
    plan = plan_from(box(walls=walls, mesh_size=5.0))
    run = semirigid_analysis(plan, expand_load_cases(plan))
    check = classify(plan, run.solution).directions["y"]
    (span,) = check.spans
    assert span.mdd / INCH == pytest.approx(0.3391, rel=0.03)
    assert span.mdd_at[0] / FT == pytest.approx(50.0, abs=5.0)


def test_long_wood_diaphragm_on_stiff_walls_is_flexible(plan_from):
    """ASCE 7-16 §12.3.1.3: MDD/ADVE > 2 → may be idealized as flexible."""
    walls = (wall("W1", "1", 0, 50, "500 kip/in") + wall("W2", "2", 0, 50, "500 kip/in")
             + wall("WA", "A", 90, 110, "50 kip/in") + wall("WB", "B", 90, 110, "50 kip/in"))
    plan = plan_from(box(length=200, walls=walls, material='{ kind = "wood-panel", Ga = "10 kip/in" }', mesh_size=8.0))
    result = analyze(plan)
    check = result.classification.directions["y"]
    assert check.governing.ratio > 2.0 and check.calculated_flexible
    assert result.classification.flexible_allowed("y")
    assert "flexible" in result.envelope.allowed["y"]
    overall = result.to_json()["classification"]["overall"]
    assert overall["verdict"].startswith("may be idealized as flexible")


def test_stiff_concrete_on_flexible_walls_is_rigid_like(plan_from):
    """A 5-in cracked concrete slab on soft walls: MDD/ADVE ≪ 2; not flexible, so the
    envelope uses the semi-rigid model (rigid only when the engineer states §12.3.1.2)."""
    walls = (wall("W1", "1", 0, 50, "20 kip/in") + wall("W2", "2", 0, 50, "20 kip/in")
             + wall("WA", "A", 40, 60, "20 kip/in") + wall("WB", "B", 40, 60, "20 kip/in"))
    concrete = '{ kind = "concrete", E = "3600 ksi", thickness = "5 in", cracked = 0.25 }'
    plan = plan_from(box(walls=walls, material=concrete, chord_EA="50000 kip", mesh_size=5.0))
    result = analyze(plan)
    span = result.classification.directions["y"].governing
    assert span.ratio < 0.1 and span.behaviour == "rigid-like"
    assert result.envelope.allowed["y"] == ("semirigid",)
    stated = plan_from(box(walls=walls, material=concrete, chord_EA="50000 kip", mesh_size=5.0,
                           extra="[classification]\nidealized_rigid = true\n"))
    assert "rigid" in analyze(stated).envelope.allowed["y"]


def test_collector_diagram_approaches_beam_analogy(plan_from):
    """Full-depth stiff walls on line 2, a 20-ft stiff wall mid-line 1 with a stiff
    collector, stiff chords: the semi-rigid collector diagram along line 1 matches the
    flexible beam-analogy diagram within 3 % of its peak at every station of the collector
    (statics; VALIDATION.md 6.6 gives the 15-k peak). Along the wall itself the two differ by
    design: the beam analogy spreads the wall reaction uniformly, while a stiff wall under a
    stiff collector takes more near its ends."""
    plan = plan_from(centred_wall_plan("1e6 kip/in", "1e7 kip"))
    cases = expand_load_cases(plan)
    fe = semirigid_analysis(plan, cases).result.cases["E+y"].lines["1"]
    beam = flexible_analysis(plan, cases).cases["E+y"].lines["1"]
    peak = abs(beam.peak)
    assert peak / KIP == pytest.approx(15.0)
    probe = np.array([1, 3, 5, 8, 10, 12, 14, 14.9, 35.1, 36, 38, 40, 42, 45, 47, 49]) * FT
    diff = np.interp(probe, fe.stations, fe.collector) - np.interp(probe, beam.stations, beam.collector)
    assert np.max(np.abs(diff)) <= 0.03 * peak
    assert abs(fe.peak) == pytest.approx(peak, rel=0.03)


def test_envelope_rules(plan_from):
    """Envelope: design values come only from allowed assumptions, equal the largest
    magnitude among them, accidental torsion never lowers a wall below its base case,
    and collector peaks of seismic cases are multiplied by Ω0."""
    walls = (wall("W1", "1", 0, 50, "60 kip/in") + wall("W2", "2", 10, 40, "30 kip/in")
             + wall("WA", "A", 0, 100, "40 kip/in") + wall("WB", "B", 30, 70, "40 kip/in"))
    load = textwrap.dedent('''
        [[load]]
        name = "E"
        kind = "seismic"
        area_weight = "20 psf"
        total = "100 kip"
        directions = ["x", "y"]
        collector_overstrength = 2.5
        ''')
    plan = plan_from(box(walls=walls, load=load, mesh_size=5.0))
    result = analyze(plan)
    env = result.envelope
    for wall_id, slots in env.walls.items():
        design = slots["design"]
        allowed_values = [
            (abs(case.wall_forces[wall_id]), name, case_name)
            for name, method in result.methods.items()
            for case_name, case in method.cases.items()
            if name in env.allowed[case.axis]
        ]
        assert abs(design.value) == pytest.approx(max(allowed_values)[0])
        assert design.assumption in env.allowed["x"] + env.allowed["y"]
        semi = result.methods["semirigid"].cases
        for base in ("E+x", "E+y"):
            assert abs(design.value) >= abs(semi[base].wall_forces[wall_id]) - 1e-9
    for slots in env.collectors.values():
        if slots["design"] is not None and slots["design"].case.startswith("E"):
            assert abs(slots["with_overstrength"].value) >= 2.5 * abs(slots["design"].value) - 1e-9
    doc = result.to_json()
    assert set(doc["envelope"]) >= {"walls", "collectors", "chords", "line_reactions", "allowed_assumptions"}
    assert doc["comparison"]["W1"]["E+y"]["semirigid/flexible"] is not None


def test_sensitivity_bounds_reuse_the_mesh(plan_from):
    walls = (wall("W1", "1", 0, 50, "60 kip/in") + wall("W2", "2", 0, 50, "30 kip/in")
             + wall("WA", "A", 0, 100, "40 kip/in"))
    plan = plan_from(box(walls=walls, mesh_size=6.0, extra="[classification]\nsensitivity = [0.5, 2.0]\n"))
    result = analyze(plan)
    assert set(result.sensitivity) == {0.5, 2.0}
    soft = result.sensitivity[0.5].cases["E+y"]
    stiff = result.sensitivity[2.0].cases["E+y"]
    assert soft.max_displacement > result.methods["semirigid"].cases["E+y"].max_displacement > stiff.max_displacement
    assert "semirigid@0.5" in result.envelope.allowed["y"]


def test_line_with_walls_but_no_collector_is_flagged(plan_from):
    """Without a collector member, collector_EA or chord_EA no collector can be implied, so
    the semi-rigid collector force is the (absent) bar force; the result must say so rather
    than let a zero pass silently into the envelope."""
    walls = (wall("W1", "1", 0, 50, "60 kip/in") + wall("W2", "2", 0, 50, "60 kip/in")
             + wall("WM", "M", 15, 35, "60 kip/in") + wall("WA", "A", 0, 100, "40 kip/in"))
    text = box(walls=walls, lines_x={"1": 0, "M": 50, "2": 100}, mesh_size=6.0)
    plan = plan_from(text.replace('chord_EA = "28050 kip"\n', ""))
    result = analyze(plan)
    assert "M" in result.envelope.cautions
    assert any("without a collector" in note for note in result.methods["semirigid"].notes)
    assert "caution" in result.to_json()["envelope"]["collectors"]["M"]


def test_chords_and_collectors_get_tension_and_compression(plan_from):
    """Statics of a simple span (Taly 2010, Eqs. 4.130–4.133): W = 20 kip uniform over
    L = 100 ft, d = 50 ft: M = WL/8 = 250 kip·ft, chord force M/d = 5.0 kip. A seismic load
    reverses, so each chord edge is designed for +5 kip tension and −5 kip compression
    (flexible method, stated idealized flexible)."""
    walls = (wall("W1", "1", 0, 50, "50 kip/in") + wall("W2", "2", 0, 50, "50 kip/in")
             + wall("WA", "A", 40, 60, "50 kip/in") + wall("WB", "B", 40, 60, "50 kip/in"))
    plan = plan_from(box(walls=walls, extra="[classification]\nidealized_flexible = true\n"))
    env = analyze(plan, semirigid=False).envelope
    for name in ("edge 1", "edge 3"):
        slots = env.chords[name]
        assert slots["tension"].value / KIP == pytest.approx(5.0, rel=1e-9)
        assert slots["compression"].value / KIP == pytest.approx(-5.0, rel=1e-9)
        assert slots["tension"].case == "E+y" and slots["tension"].assumption == "flexible"


def test_ties_go_to_the_simpler_assumption(plan_from):
    """A symmetric box with both idealizations stated: flexible and rigid give the same end
    wall forces (W/2 = 10 kip each, statics) up to round-off; the design value then names
    the simpler assumption (flexible), not whichever round-off made larger."""
    walls = (wall("W1", "1", 0, 50, "50 kip/in") + wall("W2", "2", 0, 50, "50 kip/in")
             + wall("WA", "A", 40, 60, "50 kip/in") + wall("WB", "B", 40, 60, "50 kip/in"))
    stated = "[classification]\nidealized_flexible = true\nidealized_rigid = true\n"
    env = analyze(plan_from(box(walls=walls, extra=stated)), semirigid=False).envelope
    for wall_id in ("W1", "W2"):
        design = env.walls[wall_id]["design"]
        assert abs(design.value) / KIP == pytest.approx(10.0, rel=1e-9)
        assert design.assumption == "flexible"


def test_engineer_chosen_envelope_is_reported_beside_the_code_one(plan_from):
    """[design] envelope = ["flexible", "rigid"] (common practice where the code allows
    either): a second envelope over exactly those assumptions, labelled as the engineer's,
    while the code envelope keeps the allowed assumptions."""
    walls = (wall("W1", "1", 0, 50, "60 kip/in") + wall("W2", "2", 0, 50, "30 kip/in")
             + wall("WA", "A", 40, 60, "50 kip/in") + wall("WB", "B", 40, 60, "50 kip/in"))
    plan = plan_from(box(walls=walls, extra='[design]\nenvelope = ["flexible", "rigid"]\n', mesh_size=8.0))
    result = analyze(plan)
    doc = result.to_json()
    chosen = doc["engineer_envelope"]
    assert chosen["assumptions"] == ["flexible", "rigid"] and "not the code" in chosen["label"]
    for wall_id, slots in result.engineer_envelope.walls.items():
        values = [abs(result.methods[m].cases[c].wall_forces[wall_id]) for m in ("flexible", "rigid")
                  for c in result.methods[m].cases]
        assert abs(slots["design"].value) == pytest.approx(max(values))
        assert slots["design"].assumption in ("flexible", "rigid")
    assert "semirigid" in doc["envelope"]["allowed_assumptions"]["y"]


def test_engineer_envelope_names_are_checked(plan_from):
    from planshear.errors import PlanError

    with pytest.raises(PlanError, match="design.envelope"):
        plan_from(box(walls=wall("W1", "1", 0, 50, "60 kip/in"), extra='[design]\nenvelope = ["flexibel"]\n'))
