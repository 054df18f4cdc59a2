"""Transfer diaphragms at notches and offsets (flexible and rigid methods) against the
published transfer-diaphragm method and statics."""

import numpy as np
import pytest
from test_beam_analogy_sides import EXAMPLE_4_1, FT, LB, PLF, _case

from planshear.errors import PlanError


def _transfers(case):
    return {td.name: td for td in case.extra.get("transfer", [])}


def _net(td, line, side):
    """(from, to, net) in ft and plf for one side of one line, by position."""
    rows = [(n.t_start / FT, n.t_end / FT, n.net / PLF) for n in td.net if n.line == line and n.side == side]
    return sorted(rows)


@pytest.mark.parametrize("method", ["flexible", "rigid"])
def test_published_transfer_diaphragms_of_the_notch_example(plan_from, method):
    """Malone & Rice, *The Analysis of Irregular Shaped Structures* (McGraw-Hill 2012),
    Example 4.1 (transfer diaphragms 15 ft long spanning A–C = 50 ft): TD1 from the
    disrupted chord force 5062.5 lb at 2B has reactions 1012.5 lb at A and 4050 lb at C,
    transfer shears 67.5 and 270 plf; net shear on line 1 +367.5 plf from A to B and +30
    plf from B to C; on line 2 (left side) +307.5 and −30 plf. TD2 from 10,062.5 lb at 3B:
    reactions 2012.5 and 8050 lb; net shears on line 3 (right side) +25.8 and +696.7 plf,
    on line 4 (left side) −34.2 and +636.7 plf (values as printed, 0.1 plf)."""
    plan = plan_from(EXAMPLE_4_1)
    tds = _transfers(_case(plan, method))
    assert set(tds) == {"TD 2-1", "TD 3-4"}
    td1, td2 = tds["TD 2-1"], tds["TD 3-4"]
    assert [(line, t / FT) for line, t, _ in td1.chord_forces] == [("B", 40.0)]
    assert td1.chord_forces[0][2] / LB == pytest.approx(5062.5, rel=1e-9)
    assert td2.chord_forces[0][2] / LB == pytest.approx(10062.5, rel=1e-9)
    np.testing.assert_allclose(np.abs(td1.reactions) / LB, [1012.5, 4050.0], rtol=1e-9)
    np.testing.assert_allclose(np.abs(td2.reactions) / LB, [2012.5, 8050.0], rtol=1e-9)
    np.testing.assert_allclose([abs(v) / PLF for _, _, v in td1.shears], [67.5, 270.0], rtol=1e-9)
    np.testing.assert_allclose(_net(td1, "1", "right"), [(0, 40, 367.5), (40, 50, 30.0)], rtol=1e-9, atol=1e-9)
    np.testing.assert_allclose(_net(td1, "2", "left"), [(0, 40, 307.5), (40, 50, -30.0)], rtol=1e-9, atol=1e-9)
    np.testing.assert_allclose(_net(td1, "2", "right"), [(0, 40, 300.0)], rtol=1e-9, atol=1e-9)
    # Printed to 0.1 plf in the source.
    np.testing.assert_allclose(_net(td2, "3", "right"), [(0, 40, 25.8), (40, 50, 696.7)], atol=0.05)
    np.testing.assert_allclose(_net(td2, "4", "left"), [(0, 40, -34.2), (40, 50, 636.7)], atol=0.05)


def test_transfer_closes_the_chords_and_the_collectors(plan_from):
    """Statics of the region: the collector extending the offset chord carries 5062.5 lb
    at the notch and nothing at line 1; the interrupted chord (C) ends at the notch corner
    with zero force and the continuous one (A) meets the reduced section's chord force
    M/40; the transverse collector on line 1 peaks at the transfer beam's moment / L =
    1012.5 × 40 / 15 = 2700 lb at B, and every collector closes at its end."""
    plan = plan_from(EXAMPLE_4_1)
    td = _transfers(_case(plan, "flexible"))["TD 2-1"]
    struts = {(s.role, s.line): s for s in td.struts}
    offset = struts[("offset chord", "B")]
    at_notch = np.argmax(offset.stations)
    assert offset.total[at_notch] / LB == pytest.approx(5062.5, rel=1e-9)
    assert offset.total[np.argmin(offset.stations)] == pytest.approx(0.0, abs=1e-9)
    chord_c, chord_a = struts[("support", "C")], struts[("support", "A")]
    assert chord_c.total[np.argmax(chord_c.stations)] / LB == pytest.approx(0.0, abs=1e-6)
    assert chord_a.total[np.argmax(chord_a.stations)] / LB == pytest.approx(-5062.5, rel=1e-6)
    line1 = td.collectors["1"]
    assert abs(line1.peak) / LB == pytest.approx(2700.0, rel=1e-9)
    assert line1.peak_position / FT == pytest.approx(40.0, abs=1e-9)
    for d in td.collectors.values():
        assert abs(d.residual) <= 1e-9 * abs(d.peak)


def test_notch_on_the_other_face_mirrors(plan_from):
    """The same notch on the y = 0 face (B at y = 10): by symmetry (statics) the net
    shears on line 1 are +30 plf next to the notch face and +367.5 plf over the rest."""
    text = EXAMPLE_4_1.replace(
        "[[0, 0], [150, 0], [150, 50], [35, 50], [35, 40], [15, 40], [15, 50], [0, 50]]",
        "[[0, 0], [15, 0], [15, 10], [35, 10], [35, 0], [150, 0], [150, 50], [0, 50]]",
    ).replace('"B" = 40', '"B" = 10').replace('line = "A"', 'line = "C"')  # the wall off the notch
    plan = plan_from(text)
    td = _transfers(_case(plan, "flexible"))["TD 2-1"]
    np.testing.assert_allclose(_net(td, "1", "right"), [(0, 10, 30.0), (10, 50, 367.5)], rtol=1e-9, atol=1e-9)
    assert td.chord_forces[0][2] / LB == pytest.approx(-5062.5, rel=1e-9)  # compression chord


def test_load_along_x_on_the_transposed_plan(plan_from):
    """The example with x and y exchanged and the load along x gives the same magnitudes
    (statics; Malone & Rice 2012, Ex. 4.1 values)."""
    text = EXAMPLE_4_1.replace(
        "[[0, 0], [150, 0], [150, 50], [35, 50], [35, 40], [15, 40], [15, 50], [0, 50]]",
        "[[0, 0], [0, 150], [50, 150], [50, 35], [40, 35], [40, 15], [50, 15], [50, 0]]",
    ).replace('x = { "1" = 0, "2" = 15, "3" = 35, "4" = 50, "5" = 150 }\ny = { "A" = 0, "B" = 40, "C" = 50 }',
              'y = { "1" = 0, "2" = 15, "3" = 35, "4" = 50, "5" = 150 }\nx = { "A" = 0, "B" = 40, "C" = 50 }')
    text = text.replace('directions = ["y"]', 'directions = ["x"]')
    plan = plan_from(text)
    case = _case(plan, "flexible", "W+x")
    td = _transfers(case)["TD 2-1"]
    np.testing.assert_allclose(np.abs(td.reactions) / LB, [1012.5, 4050.0], rtol=1e-9)
    np.testing.assert_allclose(np.abs(_net(td, "1", "right")), [(0, 40, 367.5), (40, 50, 30.0)], rtol=1e-9)


def test_transfer_entry_names_a_longer_region(plan_from):
    """[[transfer]] at = "3", to = "5": the region runs 115 ft to line 5; the transfer beam
    across the depth is the same (reactions 2012.5 and 8050 lb, Malone & Rice 2012 Ex. 4.1),
    its shears are divided by 115 ft instead of 15 ft (statics)."""
    text = EXAMPLE_4_1 + '\n[[transfer]]\nname = "east"\nat = "3"\nto = "5"\n'
    plan = plan_from(text)
    tds = _transfers(_case(plan, "flexible"))
    assert set(tds) == {"TD 2-1", "east"}
    east = tds["east"]
    np.testing.assert_allclose(np.abs(east.reactions) / LB, [2012.5, 8050.0], rtol=1e-9)
    np.testing.assert_allclose([abs(v) / PLF for _, _, v in east.shears], [2012.5 / 115, 8050.0 / 115], rtol=1e-9)
    # Line 4 now lies inside the region: both its sides carry the transfer shear.
    assert {n.side for n in east.net if n.line == "4"} == {"left", "right"}


def test_no_grid_line_along_the_offset_chord_is_said(plan_from):
    """Without a grid line along the offset chord nothing is invented: a note says so."""
    text = EXAMPLE_4_1.replace('y = { "A" = 0, "B" = 40, "C" = 50 }', 'y = { "A" = 0, "C" = 50 }')
    case = _case(plan_from(text), "flexible")
    assert "transfer" not in case.extra
    assert any("no grid line runs along the offset chord" in n for n in case.extra["notes"])


@pytest.mark.parametrize(
    ("entry", "message"),
    [
        ('at = "9"\nto = "1"', '"9" is not a grid line'),
        ('at = "2"\nto = "A"', "must both be lines of grid.x or both of grid.y"),
        ('at = "2"\nto = "2"', "same position"),
    ],
)
def test_bad_transfer_entries_are_refused(plan_from, entry, message):
    with pytest.raises(PlanError, match=message):
        plan_from(EXAMPLE_4_1 + f"\n[[transfer]]\n{entry}\n")


def test_transfer_in_results_json_and_tables(plan_from):
    """results.json carries the transfer block per case in output units (kip, ft, kip/ft)
    and the report tables are built from it: the published TD1 values come through
    (Malone & Rice 2012, Ex. 4.1: 5062.5 lb, 1012.5 / 4050 lb, +367.5 plf)."""
    from planshear.idealized import flexible_analysis
    from planshear.loads import expand_load_cases
    from planshear.report import transfer_tables
    from planshear.results import method_to_json
    from planshear.units import OutputUnits

    plan = plan_from(EXAMPLE_4_1)
    units = OutputUnits.for_plan("ft")
    method = method_to_json(flexible_analysis(plan, expand_load_cases(plan)), units)
    doc = {"units": {"force": units.force, "position": units.length, "displacement": units.displacement,
                     "unit_shear": units.line_force}, "assumptions": {"flexible": method}}
    td = method["cases"]["W+y"]["transfer"][0]
    assert td["name"] == "TD 2-1" and td["far_line"] == "1"
    assert td["chord_forces"][0]["force"] == pytest.approx(5.0625, rel=1e-6)
    assert [abs(r) for r in td["reactions"]] == pytest.approx([1.0125, 4.05], rel=1e-6)
    assert {"line": "1", "side": "right", "from": 0.0, "to": 40.0}.items() <= td["net_shears"][0].items()
    assert td["net_shears"][0]["net"] == pytest.approx(0.3675, rel=1e-6)
    assert {"added", "diagram", "peak", "role", "line", "at"} <= set(td["struts"][0])
    assert set(td["collectors"]) == {"1", "2"}
    line2 = method["cases"]["W+y"]["lines"]["2"]
    assert line2["unit_shear_left"] == pytest.approx(-0.24) and line2["unit_shear_right"] == pytest.approx(0.3)
    assert len(line2["pieces"]) == 1 and line2["pieces"][0]["to"] == pytest.approx(50.0)
    tables = transfer_tables(doc)
    headers, rows = tables["transfer"]
    assert len(rows) == 4 and rows[0][2] == "TD 2-1"  # W+y and W−y, two regions each
    headers, rows = tables["net_shears"]
    assert rows[0][3:] == ["1", "right", 0.0, 40.0, 0.3, 0.0675, pytest.approx(0.3675)]


def test_transfer_forces_join_the_envelope(plan_from):
    """The collectors and chords of the transfer regions are design forces of the
    transfer-diaphragm method: the envelope carries them (line 1's transverse collector
    peaks at 2700 lb, statics of Malone & Rice 2012 Ex. 4.1's TD1; the offset chord
    collector at 5062.5 lb, the published disrupted chord force)."""
    from planshear.idealized import flexible_analysis
    from planshear.loads import expand_load_cases
    from planshear.postprocess.envelope import build_envelope

    plan = plan_from(EXAMPLE_4_1)
    cases = expand_load_cases(plan)
    envelope = build_envelope({"flexible": flexible_analysis(plan, cases)}, cases, None)
    assert abs(envelope.collectors["1 with TD 2-1"]["design"].value) / LB == pytest.approx(2700.0, rel=1e-9)
    assert abs(envelope.collectors["TD 2-1 collector on B"]["design"].value) / LB == pytest.approx(5062.5, rel=1e-9)
    assert "TD 3-4 chord on C" in envelope.chords
    assert envelope.line_reactions["1 with TD 2-1"]["design"] is None


def test_narrowing_on_both_faces_loads_one_region_twice(plan_from):
    """5-ft notches in both long faces between lines 2 and 3 (reduced depth 40 ft, the
    same M/40 = 5062.5 lb at line 2 as in Malone & Rice 2012 Ex. 4.1): one transfer region
    takes both offset chords, tension at y = 45 and compression at y = 5. Statics of the
    simple beam across 50 ft: transfer shears −270, +67.5, −270 plf, so the net shear on
    line 1 is 30, 367.5 and 30 plf, which still sums to the 15,000 lb reaction."""
    text = EXAMPLE_4_1.replace(
        "[[0, 0], [150, 0], [150, 50], [35, 50], [35, 40], [15, 40], [15, 50], [0, 50]]",
        "[[0, 0], [15, 0], [15, 5], [35, 5], [35, 0], [150, 0], [150, 50], [35, 50], [35, 45], [15, 45], [15, 50], [0, 50]]",
    ).replace('y = { "A" = 0, "B" = 40, "C" = 50 }', 'y = { "A" = 0, "A1" = 5, "B" = 45, "C" = 50 }')
    text = text.replace('line = "A"\nfrom = 0\nto = 150', 'line = "A1"\nfrom = 0\nto = 150')
    plan = plan_from(text)
    td = _transfers(_case(plan, "flexible"))["TD 2-1"]
    assert [line for line, _, _ in td.chord_forces] == ["A1", "B"]
    assert [f / LB for _, _, f in td.chord_forces] == pytest.approx([-5062.5, 5062.5], rel=1e-9)
    net = _net(td, "1", "right")
    np.testing.assert_allclose(net, [(0, 5, 30.0), (5, 45, 367.5), (45, 50, 30.0)], rtol=1e-9, atol=1e-9)
    assert sum((b - a) * v for a, b, v in net) == pytest.approx(15000.0, rel=1e-12)


def test_sloped_edge_is_not_an_interruption(plan_from):
    """A steep sloped outline edge crossing grid line 3 changes the depth gradually (the
    extent differs by slope × offset on the two sides of the line): there is no chord
    interruption there, so no transfer region (common practice: the chord follows the
    sloped edge)."""
    text = EXAMPLE_4_1.replace(
        "[[0, 0], [150, 0], [150, 50], [35, 50], [35, 40], [15, 40], [15, 50], [0, 50]]",
        "[[0, 0], [150, 0], [150, 40], [35.5, 40], [34.5, 50], [0, 50]]",
    ).replace('line = "5"\nfrom = 0\nto = 50', 'line = "5"\nfrom = 0\nto = 40')
    case = _case(plan_from(text), "flexible")
    assert "transfer" not in case.extra
    assert not any("chord" in note for note in case.extra.get("notes", []))


def test_unused_transfer_entry_is_said(plan_from):
    """A [[transfer]] entry at a line without a notch or offset is not silently ignored."""
    case = _case(plan_from(EXAMPLE_4_1 + '\n[[transfer]]\nat = "4"\nto = "5"\n'), "flexible")
    assert any("[[transfer]] TD 4-5" in note and "no chord force" in note for note in case.extra["notes"])
    assert set(_transfers(case)) == {"TD 2-1", "TD 3-4"}


def test_a_transfer_strut_missing_from_the_finite_element_model_is_flagged(plan_from):
    """The idealized methods carry the interrupted chord force through a collector along
    line B into each transfer region; the semi-rigid model has that load path only if the
    member exists. Without it the envelope gives the strut a caution; with a member declared
    over the region (line B, 0–15 ft, and 35–50 ft) the caution goes."""
    from planshear.run import analyze

    coarse = EXAMPLE_4_1 + "\n[mesh]\nsize = 5.0\n"
    bare = analyze(plan_from(coarse)).envelope.cautions
    assert set(bare) >= {"TD 2-1 collector on B", "TD 3-4 collector on B"}
    assert "line B from 0 to 15 ft" in bare["TD 2-1 collector on B"]
    members = "".join(f'\n[[member]]\nrole = "collector"\nline = "B"\nEA = "4000 kip"\nfrom = {a}\nto = {b}\n'
                      for a, b in ((0, 15), (35, 50)))
    framed = analyze(plan_from(coarse.replace("[[load]]", members + "\n[[load]]", 1))).envelope.cautions
    assert not any(name.startswith("TD ") for name in framed)
