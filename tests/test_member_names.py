"""Chords and collectors named by grid line and bay, one member per physical line, with the
chord and collector roles of the semi-rigid bar forces kept apart by load direction.

The naming rule is our own (README, "Members"); the force checks use hand statics named in
each test."""

import textwrap

import numpy as np
import pytest

from planshear.plan import load_plan
from planshear.postprocess.envelope import member_envelopes, member_layout
from planshear.run import analyze

from conftest import KIP, end_walls, rectangle_plan

DEMO = __import__("pathlib").Path(__file__).parents[1] / "planshear" / "data" / "demo.toml"


def _names(plan):
    return {m.name: m for m in member_layout(plan).members}


def test_demo_members_by_grid_line_and_bay():
    """Demo L-shape (outline 0–160 × 0–50 plus 0–100 × 50–90): every outline edge lies on a
    grid line and joins that line's member; the edge on line B (x 100–160) is the chord part
    "3–4" of member "line B, 1–4"; line 3's edge (y 50–90) is its chord part "B–C". Line 2
    crosses the skylight (y 62–74) and no member spans it: its member is named in two pieces."""
    names = _names(load_plan(DEMO))
    assert set(names) == {"line 1, A–C", "line 2, A–y = 62 ft and y = 74 ft–C", "line 3, A–C", "line 4, A–B",
                          "line A, 1–4", "line B, 1–4", "line C, 1–3"}
    assert names["line B, 1–4"].chords == ("edge 3",) and names["line B, 1–4"].chord_bays == "3–4"
    assert names["line 3, A–C"].chords == ("edge 4",) and names["line 3, A–C"].chord_bays == "B–C"
    assert names["line A, 1–4"].collector == "A" and names["line 2, A–y = 62 ft and y = 74 ft–C"].chords == ()
    assert not any("edge" in n for n in names)  # never an outline index in a name


def test_edge_off_the_grid_and_end_off_a_grid_line(plan_from):
    """A notched rectangle whose notch edges are on no grid line: "edge at y = 30 ft, 2–3";
    the notch's vertical edge at x = 70 ft between grid lines is "edge at x = 70 ft, A–y = 30 ft"
    (an end that no grid line crosses is written as its coordinate)."""
    text = rectangle_plan(walls=end_walls()).replace(
        "outline = [[0, 0], [100, 0], [100, 50], [0, 50]]",
        "outline = [[0, 0], [70, 0], [70, 30], [100, 30], [100, 50], [0, 50]]",
    ).replace('x = { "1" = 0, "2" = 100 }', 'x = { "1" = 0, "2" = 100, "3" = 40 }')
    text = text.replace('id = "WA"\nline = "A"\nfrom = 0\nto = 100', 'id = "WA"\nline = "A"\nfrom = 0\nto = 70')
    text = text.replace('id = "W2"\nline = "2"\nfrom = 0\nto = 50', 'id = "W2"\nline = "2"\nfrom = 30\nto = 50')
    names = _names(plan_from(text))
    assert "edge at y = 30 ft, x = 70 ft–2" in names
    assert "edge at x = 70 ft, A–y = 30 ft" in names
    assert "line A, 1–x = 70 ft" in names and "line 2, y = 30 ft–B" in names


U_PLAN = """
[plan]
name = "U-shaped court"
length_unit = "ft"
[diaphragm]
outline = [[0, 0], [120, 0], [120, 60], [80, 60], [80, 30], [40, 30], [40, 60], [0, 60]]
material = { kind = "wood-panel", Ga = "15 kip/in" }
[grid]
x = { "1" = 0, "2" = 40, "3" = 80, "4" = 120 }
y = { "A" = 0, "B" = 30, "C" = 60 }
[[wall]]
id = "W1"
line = "1"
from = 5
to = 55
stiffness = "50 kip/in"
[[wall]]
id = "W2"
line = "4"
from = 5
to = 55
stiffness = "50 kip/in"
[[wall]]
id = "W3"
line = "A"
from = 10
to = 110
stiffness = "50 kip/in"
[[load]]
name = "E"
kind = "seismic"
area_weight = "20 psf"
total = "30 kip"
directions = ["x", "y"]
"""


def test_member_in_pieces_and_chord_parts_named_by_their_own_bays(plan_from):
    """U-shaped plan (our own): line C (y = 60 ft) has diaphragm only at x 0–40 and 80–120, so its
    member is "line C, 1–2 and 3–4" (never "1–4": there is nothing on line C between 2 and 3);
    each chord part is named by its own bays: the two top edges "line C, 1–2" / "line C, 3–4",
    the notch sides "line 2, B–C" / "line 3, B–C" and the notch bottom "line B, 2–3" (chord part of
    member "line B, 1–4", which runs on through the diaphragm as a collector line)."""
    layout = member_layout(plan_from(U_PLAN))
    names = {m.name for m in layout.members}
    assert names == {"line 1, A–C", "line 2, A–C", "line 3, A–C", "line 4, A–C", "line A, 1–4", "line B, 1–4",
                     "line C, 1–2 and 3–4"}
    parts = sorted(layout.chord_part.values())
    assert parts == sorted(["line A, 1–4", "line 4, A–C", "line C, 3–4", "line 3, B–C", "line B, 2–3",
                            "line 2, B–C", "line C, 1–2", "line 1, A–C"])
    line_c = next(m for m in layout.members if m.line == "C")
    assert len(line_c.chords) == 2 and line_c.chord_bays == "1–4"


def test_semirigid_roles_split_by_load_direction(plan_from):
    """Coarse semi-rigid rectangle, load along x and y: the bar on line A (y = 0) enters the
    collector envelope of line A only in the cases along x, and the chord envelope of its outline
    edge only in the cases along y; so Ω0 (2.5, SDC D, ASCE 7-16 §12.10.2.1) never multiplies
    chord action. Under load along y the chord force at midspan approaches M/d = 25 k (Taly 2010
    Eq. 4.132; VALIDATION 6.6) and the collector force 20 k (below); 15 % slack: soft chords make the membrane continuous and the walls
    along the chord take part of it (DEVELOPERS.md, pitfalls)."""
    load = textwrap.dedent(
        """
        [[load]]
        name = "E"
        kind = "seismic"
        area_weight = "20 psf"
        total = "100 kip"
        directions = ["x", "y"]
        eccentricity = 0.0
        collector_overstrength = 2.5
        sdc = "D"
        """
    )
    walls = end_walls().replace('id = "WA"\nline = "A"\nfrom = 0\nto = 100', 'id = "WA"\nline = "A"\nfrom = 40\nto = 60')
    text = rectangle_plan(walls=walls, load=load, extra="[mesh]\nsize = 10.0\norder = 2\n")
    result = analyze(plan_from(text))
    envelope = result.envelope
    cases = {c.name: c for c in result.cases}
    collector = envelope.collectors["A"]
    for key in ("design", "tension", "compression", "with_overstrength"):
        if collector.get(key) is not None and collector[key].assumption == "semirigid":
            assert cases[collector[key].case].axis == "x"
    chord = envelope.chords["edge 1"]
    for key in ("design", "tension", "compression"):
        if chord.get(key) is not None and chord[key].assumption == "semirigid":
            assert cases[chord[key].case].axis == "y"
    member = member_envelopes(envelope)["line A, 1–2"]
    assert member.chord_tension.value / KIP == pytest.approx(25.0, rel=0.15)
    # The collector role under load along x: Ω0 applies (factor of the governing case's rule).
    factor = cases[member.collector_tension_omega.case].collector_rule.factor
    assert factor > 1.0
    # One seismic load: every case has the same factor, so the governing cases coincide.
    assert member.collector_tension_omega.value == pytest.approx(factor * member.collector_tension.value, rel=1e-9)
    # Collector role under load along x: lines A and B each take 50 k over 100 ft, v = 0.5 k/ft;
    # the 20-ft wall centred on line A collects 0.5 × 40 = 20 k at each end (statics,
    # VALIDATION 6.6); 10 % slack: the semi-rigid sheathing drags part of it to the wall.
    assert member.collector_tension.value / KIP == pytest.approx(20.0, rel=0.10)
    doc = result.to_json()
    assert doc["envelope"]["chords"]["edge 1"]["member"] == "line A, 1–2"
    assert doc["envelope"]["members"]["line A, 1–2"]["design"]["role"] in ("chord", "collector")


def test_torsional_collector_estimate_is_the_beam_analogy_collector(plan_from):
    """The drag part of a line's bar force under a load across it (torsion) is estimated by
    the flexible method's own collector rule (uniform delivered shear over the line, running
    sum less the wall forces; common practice). Check: on a line along the load, where the
    beam analogy delivers a uniform shear from one side, both give the same diagram exactly
    (here 20 + 10 ft walls on line A of a 100 ft side: −20, −5, −15, +5 kip at the wall ends)."""
    from planshear.idealized import flexible_analysis
    from planshear.loads import expand_load_cases
    from planshear.postprocess.envelope import torsional_collector

    def wall(wall_id, line, a, b, k):
        return f'\n[[wall]]\nid = "{wall_id}"\nline = "{line}"\nfrom = {a}\nto = {b}\nstiffness = "{k} kip/in"\n'

    walls = (wall("W1", "1", 0, 50, 50) + wall("W2", "2", 0, 50, 20) + wall("WA", "A", 40, 60, 30)
             + wall("WA2", "A", 80, 90, 30) + wall("WB", "B", 40, 60, 30))
    load = textwrap.dedent('''
        [[load]]
        name = "E"
        kind = "seismic"
        area_weight = "20 psf"
        total = "100 kip"
        directions = ["x"]
        ''')
    plan = plan_from(rectangle_plan(walls=walls, load=load))
    result = flexible_analysis(plan, expand_load_cases(plan)).cases["E+x"]
    line = result.lines["A"]
    estimate = torsional_collector(member_layout(plan), "A", result.wall_forces, np.asarray(line.stations))
    assert np.allclose(estimate, line.collector, rtol=1e-9, atol=1e-6 * abs(line.collector).max())
    assert abs(line.collector).max() > 0


def test_torsional_drag_takes_overstrength_in_the_semirigid_envelope(plan_from):
    """Under a load across line A with accidental torsion, the walls on A take force out of
    the chord-and-collector bar. That drag part gets Ω0 (ASCE 7-16 §12.10.2.1): the member's
    collector role with Ω0 exceeds its chord role by (Ω0 − 1) × the drag at the governing
    station, while a line without walls (B has its walls removed here) stays chord only."""
    def wall(wall_id, line, a, b, k):
        return f'\n[[wall]]\nid = "{wall_id}"\nline = "{line}"\nfrom = {a}\nto = {b}\nstiffness = "{k} kip/in"\n'

    walls = (wall("W1", "1", 0, 50, 50) + wall("W2", "2", 0, 50, 20) + wall("WA", "A", 40, 60, 30)
             + wall("WC", "C", 40, 60, 30))
    load = textwrap.dedent('''
        [[load]]
        name = "E"
        kind = "seismic"
        area_weight = "20 psf"
        total = "100 kip"
        directions = ["y"]
        collector_overstrength = 2.5
        ''')
    grid = 'x = { "1" = 0, "2" = 100 }\ny = { "A" = 0, "C" = 25, "B" = 50 }'
    plan = plan_from(rectangle_plan(walls=walls, load=load, grid=grid))
    collectors = analyze(plan).envelope.collectors
    a = collectors["A"]
    chord = max(abs(a["across_tension"].value), abs(a["across_compression"].value))
    with_omega = max(abs(a["with_overstrength_tension"].value), abs(a["with_overstrength_compression"].value))
    assert with_omega > chord * 1.01
    assert "with_overstrength_tension" not in collectors.get("B", {})
