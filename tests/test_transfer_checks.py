"""Design checks of transfer regions (flexible and rigid methods): the zone unit-shear
demand includes the net shear of a transfer region, members on a grid line carry the
transfer struts on that line, and the semi-rigid caution about a missing strut counts
every bar the model will have there."""

from dataclasses import replace

import numpy as np
import pytest
from test_beam_analogy_sides import EXAMPLE_4_1

from planshear.postprocess.checks import _transfer_zone_shear, zone_regions
from planshear.postprocess.envelope import Governing, member_envelopes
from planshear.run import analyze

from conftest import FT, KIP

PLF = KIP / 1000 / FT

#: Invented plan (a T-shaped wood floor 120 × 50 ft with a 40 × 40 ft stem on lines 2–3 and
#: an opening across line B), from an engineer's review of transfer regions.
QUARRY = """
# Invented: Quarry Hill maker space, level 2 floor (wood), T-shaped with an opening on line B.
[plan]
name = "Quarry Hill makerspace - level 2"
length_unit = "ft"
code = "ASCE 7-16"
job = "Q-117 Quarry Hill"
engineer = "T. Vance"
checker = "reviewer"
date = 2026-12-02
revision = "A"

[diaphragm]
outline  = [[0,0], [120,0], [120,50], [80,50], [80,90], [40,90], [40,50], [0,50]]
openings = [[[56,44], [66,44], [66,56], [56,56]]]
material = { kind = "wood-panel", Ga = "15 kip/in" }
chord_EA = "30000 kip"
capacity = "300 plf"

[[diaphragm.zone]]
name     = "stem"
polygon  = [[40,50], [80,50], [80,90], [40,90]]
material = { kind = "wood-panel", Ga = "20 kip/in" }
capacity = "350 plf"

[grid]
x = { "1" = 0, "2" = 40, "3" = 80, "4" = 120 }
y = { "A" = 0, "B" = 50, "C" = 90 }

[wall_type.ply]
wood = { Ga = "18 kip/in", height = "10 ft", chord_EA = "2000 kip", holdown_k = "60 kip/in" }

[[wall]]
id = "W1"
line = "1"
from = 5
to = 45
type = "ply"
capacity = "10 kip"

[[wall]]
id = "W4"
line = "4"
from = 10
to = 40
type = "ply"
unit_shear_capacity = "400 plf"

[[wall]]
id = "W2"
line = "2"
from = 60
to = 85
type = "ply"
capacity = "8 kip"

[[wall]]
id = "W3"
line = "3"
from = 55
to = 80
type = "ply"

[[wall]]
id = "WA"
line = "A"
from = 10
to = 110
type = "ply"
capacity = "40 kip"

[[wall]]
id = "WC"
line = "C"
from = 45
to = 75
type = "ply"
capacity = "15 kip"

[[member]]
role = "collector"
line = "B"
EA = "9000 kip"
tension_capacity = "6 kip"
compression_capacity = "6 kip"

[[member]]
role = "collector"
line = "2"
from = 0
to = 90
EA = "9000 kip"

[[load]]
name = "E"
kind = "seismic"
area_weight = "25 psf"
zone_area_weight = { "stem" = "32 psf" }
line_weight = [{ line = "A", weight = "0.20 kip/ft" }]
point_weight = [{ at = [100, 25], weight = "8 kip", footprint = 6 }]
fpx = { SDS = 1.1, Ie = 1.0, story_force_ratio = 0.17 }
fx = "48 kip"
directions = ["x", "y"]
collector_overstrength = 2.5
sdc = "D"
rho = 1.3
drift = { Cd = 4.0, story_height = "10 ft", allowable = 0.025 }

[design]
basis = "ASD"

[capacity]
tension = "12 kip"
compression = "12 kip"

[mesh]
size = 10.0
"""


def _with(text: str, diaphragm: str = "", tail: str = "") -> str:
    return text.replace('chord_EA = "40000 kip"', 'chord_EA = "40000 kip"\n' + diaphragm) + tail


def _check(checks, item: str, quantity: str):
    found = [c for c in checks.checks if c.item == item and c.quantity == quantity]
    assert len(found) == 1, [(c.item, c.quantity) for c in checks.checks]
    return found[0]


def test_zone_demand_is_the_net_shear_of_the_transfer_region(plan_from):
    """Malone & Rice, *The Analysis of Irregular Shaped Structures* (McGraw-Hill 2012),
    Example 4.1: the span unit shear V/ℓ is at most 300 plf (line 1, 15,000 lb / 50 ft,
    and line 2 on the notch side), but the net shear (basic + transfer) in transfer region
    TD2 on line 3's right side from B to C is +696.7 plf (printed to 0.1 plf). The zone
    demand of the diaphragm is the larger: 696.7 plf, governed by the flexible method
    (rigid gives the same walls here, the tie goes to the simpler assumption), and the
    check names the transfer region. Edge load with no design basis: combination factor 1."""
    plan = plan_from(_with(EXAMPLE_4_1, 'capacity = "600 plf"'))
    check = _check(analyze(plan, semirigid=False).checks, "diaphragm outside the zones", "unit shear")
    assert check.demand / PLF == pytest.approx(696.7, abs=0.05)  # printed to 0.1 plf
    assert check.status == "fails" and check.ratio == pytest.approx(check.demand / (600 * PLF), rel=1e-12)
    assert check.governing.assumption == "flexible" and check.governing.case in ("W+y", "W-y")
    assert "TD 3-4" in check.note and "x = 35 ft" in check.note and "y = 40–50 ft" in check.note


def test_zone_without_a_transfer_region_keeps_the_span_shear(plan_from):
    """A zone over the full-depth part away from both transfer regions (x = 60–150 ft) sees
    only the span unit shear: with 15,000 lb at the support of line 5 (Malone & Rice 2012,
    Example 4.1 reactions) over the 50 ft depth, 300 plf at the wall line."""
    zone = ('\n[[diaphragm.zone]]\nname = "east"\npolygon = [[60, 0], [150, 0], [150, 50], [60, 50]]\n'
            'material = { kind = "wood-panel", Ga = "15 kip/in" }\ncapacity = "400 plf"\n')
    plan = plan_from(_with(EXAMPLE_4_1, tail=zone))
    check = _check(analyze(plan, semirigid=False).checks, "zone east", "unit shear")
    # Read 2e-7 × the span inside the zone end: relative error below 1e-5.
    assert check.demand / PLF == pytest.approx(300.0, rel=1e-5)
    assert "span V/ℓ" in check.note and "TD" not in check.note


WALL_ON_B = '\n[[wall]]\nid = "WB"\nline = "B"\nfrom = 0\nto = 10\nstiffness = "50 kip/in"\n'


def _strut_cautions(plan):
    from planshear.idealized import flexible_analysis
    from planshear.loads import expand_load_cases
    from planshear.postprocess.transfer import strut_cautions

    flexible = flexible_analysis(plan, expand_load_cases(plan))
    return strut_cautions(plan, {"flexible": flexible, "semirigid": None})


def test_strut_caution_counts_implied_collectors_and_chords(plan_from):
    """The struts extending the interrupted chord of line B (x = 0–15 and 35–50 ft,
    Malone & Rice 2012, Example 4.1) have no declared member. With a wall on line B the
    semi-rigid model puts a collector bar on the whole wall piece of line B (fem/collectors.py
    rule: EA = chord_EA where no collector_EA is given; the notch edge x = 15–35 ft is the
    outline chord), which covers both struts: no caution. Without the wall, or without any
    EA to imply a bar, the model has no bar there and the caution stays."""
    assert _strut_cautions(plan_from(_with(EXAMPLE_4_1, tail=WALL_ON_B))) == {}
    bare = _strut_cautions(plan_from(EXAMPLE_4_1))
    assert set(bare) == {"TD 2-1 collector on B", "TD 3-4 collector on B"}
    assert "no declared member, outline chord or implied collector" in bare["TD 2-1 collector on B"]
    no_ea = EXAMPLE_4_1.replace('chord_EA = "40000 kip"\n', "") + WALL_ON_B
    assert set(_strut_cautions(plan_from(no_ea))) == {"TD 2-1 collector on B", "TD 3-4 collector on B"}


def test_bar_extents_agree_with_the_collector_layout_of_the_mesh(plan_from):
    """The plan-level rule (bar_extents) states what collector_layout builds on the mesh:
    on the line with the wall, the implied and outline-chord segments of its wall piece
    cover the same extent (x = 0–150 ft on line B)."""
    from planshear.fem.collectors import bar_extents, collector_layout
    from planshear.mesh import build_mesh

    plan = plan_from(_with(EXAMPLE_4_1, tail=WALL_ON_B + '\n[mesh]\nsize = 10.0\n'))
    layout = collector_layout(plan, build_mesh(plan))
    pieces = layout.on_line("B")
    np.testing.assert_allclose([(p.t_from / FT, p.t_to / FT) for p in pieces], [(0.0, 150.0)], atol=1e-6)
    assert {s.kind for s in pieces[0].segments} == {"implied", "chord"}
    np.testing.assert_allclose([(a / FT, b / FT) for a, b in bar_extents(plan)["B"]], [(0.0, 150.0)], atol=1e-6)


def test_member_on_a_grid_line_carries_the_transfer_struts(plan_from):
    """Malone & Rice (2012), Example 4.1: the transverse collector on line 1 peaks at the
    transfer beam's moment / L = 1012.5 × 40 / 15 = 2700 lb at B, and the collector
    extending the interrupted chord along line B carries 10,062.5 lb at 3B (TD2). Line 1's
    own collector is nil (its wall runs the full depth), so before, the member "line 1, A–C"
    showed no such force; now its collector role and check carry 2700 lb (× Ω0 = 1, edge
    load), and the member on line B carries the 10,062.5 lb strut in its collector role.
    The transfer items stay listed on their own."""
    result = analyze(plan_from(_with(EXAMPLE_4_1, tail='\n[capacity]\ntension = "20 kip"\n')), semirigid=False)
    members = member_envelopes(result.envelope)
    LB = KIP / 1000
    assert members["line 1, A–C"].collector_tension.value / LB == pytest.approx(2700.0, rel=1e-6)
    assert members["line B, 1–5"].collector_tension.value / LB == pytest.approx(10062.5, rel=1e-6)
    assert "TD 3-4 collector on B" in members and "1 with TD 2-1" in members
    check = _check(result.checks, "line 1, A–C", "tension")
    assert check.demand / LB == pytest.approx(2700.0, rel=1e-6)
    assert "1 with TD 2-1" in check.note and "line 1, A–C" in result.checks.places
    parts = result.envelope.transfer_parts
    assert set(parts["B"]["collector"]) == {"TD 2-1 collector on B", "TD 3-4 collector on B"}
    assert set(parts["A"]["chord"]) == {"TD 2-1 chord on A", "TD 3-4 chord on A"}


def test_transfer_chord_is_enveloped_with_the_chord_role_not_added(plan_from):
    """transfer.py defines a support strut's force as the total chord force in the region
    (main M/d where that chord is the outline's extreme, plus the transfer reaction
    collected along it; Malone & Rice 2012, Example 4.1: 5062.5 lb at the notch on A for TD1).
    Adding it to the main chord would count M/d twice, so the member's chord role is the
    larger of the two envelopes (statics: one force per member per case)."""
    result = analyze(plan_from(EXAMPLE_4_1), semirigid=False)
    env = result.envelope
    member = member_envelopes(env)["line A, 1–5"]
    keys = ["TD 2-1 chord on A", "TD 3-4 chord on A"] + list(
        next(m for m in env.layout.members if m.name == "line A, 1–5").chords)
    expected = max(env.chords[k]["tension"].value for k in keys if env.chords[k].get("tension"))
    assert member.chord_tension.value == pytest.approx(expected, rel=1e-12)
    # A transfer chord larger than the main chord governs the member (and is not added to it).
    main = member.chord_tension.value
    larger = Governing(1.5 * main, "flexible", "W-y", 1.0)
    chords = {**env.chords, "TD 2-1 chord on A": {**env.chords["TD 2-1 chord on A"], "tension": larger}}
    assert member_envelopes(replace(env, chords=chords))["line A, 1–5"].chord_tension == larger
    assert env.chords["TD 2-1 chord on A"]["compression"].value / (KIP / 1000) == pytest.approx(-5062.5, rel=1e-6)


def test_strut_and_torsional_drag_on_one_line_add_station_by_station(plan_from):
    """Superposition (statics, same member, same case): under the rigid method with load
    along x the walls on line 2 take torsional forces, so line 2 carries a drag collector
    diagram, and the strut extending the stem's interrupted chord lies on the same line
    (y = 0–50 ft). The member's collector force is the sum at every station; at the notch
    (y = 50 ft) the strut carries the stem chord force F = M/40 ft in full."""
    from planshear.idealized import rigid_analysis
    from planshear.loads import expand_load_cases
    from planshear.postprocess.transfer import line_collectors_with_transfer

    plan = plan_from(QUARRY)
    case = rigid_analysis(plan, expand_load_cases(plan)).cases["E+x"]
    td = next(t for t in case.extra["transfer"] if t.name == "TD B-A")
    strut = next(s for s in td.struts if s.role == "offset chord" and s.line == "2")
    t, total, parts = line_collectors_with_transfer(case.extra, case.lines)["2"]
    own = case.lines["2"]
    assert np.abs(own.collector).max() > 0.05 * np.abs(strut.total).max()  # a real drag force to add
    y = np.array([10.0, 25.0, 45.0]) * FT
    expected = np.interp(y, own.stations, own.collector) + np.interp(y, strut.stations, strut.total)
    np.testing.assert_allclose(np.interp(y, t, total), expected, rtol=1e-9, atol=1e-6)
    assert parts == ("TD B-A collector on 2",)


def test_reviewer_plan_zone_demand_by_hand_statics(plan_from):
    """The invented T-shaped plan, flexible method, E+x: the stem chord force at line B is
    F = M_B / 40 ft (the stem's depth); the transfer region A–B (L = 50 ft) spans x = 0–120
    ft, loaded by the couple F × 40 ft, so its reactions are F·40/120 and the transfer shear
    over x = 40–80 ft is (F − F·40/120)/L (hand statics of a simple beam). With the main
    unit shear next to line A (the shear line A's walls take from the diaphragm / 120 ft),
    the net is 0.2273 + 0.1653 = 0.3926 kip/ft; × 0.7 (ASD, ASCE 7-16 §2.4.5) = 0.275 kip/ft
    against 300 plf, D/C 0.92, above the 0.199 kip/ft the semi-rigid model gives."""
    result = analyze(plan_from(QUARRY), semirigid=False)
    case = result.methods["flexible"].cases["E+x"]
    td = next(t for t in case.extra["transfer"] if t.name == "TD B-A")
    force = abs(td.chord_forces[0][2])
    main = case.lines["A"].unit_shear_right
    net = main + (force - force * 40 / 120) / (50 * FT)
    assert net / (KIP / FT) == pytest.approx(0.3926, abs=5e-5)  # the reviewer's value, 4 digits
    plan = result.plan
    value, where = _transfer_zone_shear(case, zone_regions(plan)["main"], plan)
    assert value == pytest.approx(net, rel=1e-5)  # read 2e-7 × the span inside y = 0
    assert "TD B-A, x = 40–80 ft, at y = 0 ft" in where
    # Without the semi-rigid run every assumption is allowed: the rigid ±ecc cases may govern.
    check = _check(result.checks, "diaphragm outside the zones", "unit shear")
    assert check.demand >= 0.7 * net * (1 - 1e-5) and "TD B-A" in check.note


def test_overlapping_transfer_regions_add_their_shears(plan_from):
    """Load along y on the invented T plan: the stem's chord (line B) is interrupted at both
    line 2 and line 3, so regions TD 2-3 and TD 3-2 cover the same bay (x = 40–80 ft).
    Superposition (linear statics): in the stem zone (y = 50–90 ft) the net unit shear is
    V(x)/ℓ(x) + τ(TD 2-3) + τ(TD 3-2), the two regions' shears of the band through y = 70 ft;
    the zone demand is its largest magnitude over the bay (here at least one of the regions
    alone would give a different value)."""
    from planshear.idealized import rigid_analysis
    from planshear.loads import expand_load_cases
    from planshear.results import unit_shear_along

    plan = plan_from(QUARRY)
    case = rigid_analysis(plan, expand_load_cases(plan)).cases["E+y"]
    tds = {td.name: td for td in case.extra["transfer"]}
    assert set(tds) == {"TD 2-3", "TD 3-2"}
    taus = [next(v for a, b, v in td.shears if a <= 70 * FT <= b) for td in tds.values()]
    axis, stations, shear, length = next(s for s in case.extra["span_shear"] if s[0] == "y")
    v = unit_shear_along(shear, length)
    inside = (stations > 40 * FT) & (stations < 80 * FT)
    ends = np.array([40, 80]) * FT + np.array([1, -1]) * 2e-7 * np.ptp(stations)
    main = np.concatenate([v[inside], np.interp(ends, stations, v)])
    expected = np.abs(main + sum(taus)).max()
    alone = [np.abs(main + t).max() for t in taus]
    assert all(abs(a - expected) > 1e-3 * expected for a in alone)  # the sum matters here
    value, where = _transfer_zone_shear(case, zone_regions(plan)["stem"], plan)
    assert value == pytest.approx(expected, rel=1e-9)
    assert "TD 2-3 + TD 3-2" in where


def test_splice_on_a_line_with_a_transfer_region_carries_its_force(plan_from):
    """A splice on line 1 at B (x = 0, y = 40 ft) of Malone & Rice (2012), Example 4.1: the
    transverse collector there carries the transfer beam's moment / L = 1012.5 × 40 / 15 =
    2700 lb (its wall runs the full line, so the line's own collector is nil); the splice
    force is that, in both senses (the edge load is taken as it is: W+y and W−y)."""
    splice = '\n[[splice]]\nname = "S1"\nat = [0, 40]\nstiffness = "500 kip/in"\n'
    (entry,) = analyze(plan_from(_with(EXAMPLE_4_1, tail=splice)), semirigid=False).to_json()["splice_forces"]
    assert entry["tension"]["value"] * 1000 == pytest.approx(2700.0, rel=1e-6)
    assert entry["compression"]["value"] * 1000 == pytest.approx(-2700.0, rel=1e-6)


def test_report_diagram_of_a_member_with_transfer_forces_reaches_its_design_value(plan_from):
    """Malone & Rice (2012), Example 4.1 again: the report draws line B's collector with the
    struts of its transfer regions (results.json collectors_with_transfer), so the governing
    diagram's extreme is the envelope's 10,062.5 lb and the marks sit on the curve; line 1's
    own collector is nil, yet its diagram (2700 lb, the TD 2-1 share) is drawn."""
    from planshear.report import build_report

    doc = analyze(plan_from(_with(EXAMPLE_4_1)), semirigid=False).to_json()
    specs = {s.title: s for s in build_report(doc, None, "key").figures("key") if s.draw == "member_diagram_figure"}
    envelope = doc["envelope"]["collectors"]
    for line, expected in (("B", 10062.5), ("1", 2700.0)):
        title = f"Collector force, {envelope[line]['member']}"
        assert title in specs, sorted(specs)
        governing = [s for s in specs[title].kwargs["series"] if s["governs"]]
        extreme = max(abs(v) for s in governing for _, v in s["points"] if v == v)  # NaN: breaks at gaps
        assert extreme * 1000 == pytest.approx(expected, rel=1e-5)  # kip → lb
        assert abs(envelope[line]["design"]["value"]) * 1000 == pytest.approx(expected, rel=1e-5)
