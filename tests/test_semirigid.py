"""Semi-rigid model: mesh, limits against the idealized methods, SDPWS deflection,
equilibrium and line cuts."""

import textwrap
from dataclasses import replace

import numpy as np
import pytest
import scipy.sparse as sp

from planshear.fem import FEError, assemble, check_restraint
from planshear.idealized import flexible_analysis, rigid_analysis
from planshear.loads import expand_load_cases
from planshear.mesh import build_mesh
from planshear.semirigid import semirigid_analysis

from conftest import FT, INCH, KIP


def box(length=100, depth=50, material='{ kind = "wood-panel", Ga = "20 kip/in" }', chord_EA="28050 kip",
        lines_x=None, walls="", load=None, mesh_size=4.0, extra=""):
    lines_x = lines_x or {"1": 0, "2": length}
    grid_x = ", ".join(f'"{k}" = {v}' for k, v in lines_x.items())
    load = load or textwrap.dedent('''
        [[load]]
        name = "E"
        kind = "seismic"
        area_weight = "10 psf"
        total = "20 kip"
        directions = ["y"]
        eccentricity = 0
        ''')
    return textwrap.dedent(f'''
        [plan]
        name = "box"
        length_unit = "ft"
        [diaphragm]
        outline = [[0, 0], [{length}, 0], [{length}, {depth}], [0, {depth}]]
        material = {material}
        chord_EA = "{chord_EA}"
        [grid]
        x = {{ {grid_x} }}
        y = {{ "A" = 0, "B" = {depth} }}
        ''') + extra + walls + load + f"\n[mesh]\nsize = {mesh_size}\n"


def wall(wall_id, line, start, end, k):
    return f'\n[[wall]]\nid = "{wall_id}"\nline = "{line}"\nfrom = {start}\nto = {end}\nstiffness = "{k}"\n'


def test_simply_supported_diaphragm_matches_sdpws(plan_from):
    """ANSI/AWC SDPWS-2015 Eq. 4.2-1, first two terms (bending + shear), VALIDATION.md 2.6:
    L = 100 ft, W = 50 ft, v = 200 plf, Ga = 20 kip/in, chords E = 1.7e6 psi, A = 16.5 in²:
    5vL³/(8EAW) + 0.25vL/(1000Ga) = 0.0891 + 0.2500 = 0.3391 in. The wood-panel preset on
    stiff end walls (short walls mid-chord for stability) must give the midspan deflection
    relative to the supports within 3 %."""
    walls = (wall("W1", "1", 0, 50, "1e5 kip/in") + wall("W2", "2", 0, 50, "1e5 kip/in")
             + wall("WA", "A", 45, 55, "10 kip/in") + wall("WB", "B", 45, 55, "10 kip/in"))
    plan = plan_from(box(walls=walls, mesh_size=5.0))
    run = semirigid_analysis(plan, expand_load_cases(plan))
    u = run.solution.node_displacements(0)[:, 1]
    nodes = run.mesh.nodes / FT
    midline = np.isclose(nodes[:, 0], 50.0)
    supports = np.isclose(nodes[:, 0], 0.0) | np.isclose(nodes[:, 0], 100.0)
    deflection = (u[midline].mean() - u[supports].mean()) / INCH
    v, L, W, E, A, Ga = 200.0, 100.0, 50.0, 1.7e6, 16.5, 20.0
    expected = 5 * v * L**3 / (8 * E * A * W) + 0.25 * v * L / (1000 * Ga)
    assert expected == pytest.approx(0.3391, abs=1e-4)
    assert deflection == pytest.approx(expected, rel=0.03)


L_PLAN_WALLS = (wall("W1", "1", 10, 60, "40 kip/in") + wall("W2", "2", 50, 62, "15 kip/in")
                + wall("W3", "3", 0, 40, "35 kip/in") + wall("WA", "A", 0, 150, "60 kip/in")
                + wall("WC", "C", 0, 90, "60 kip/in"))


def l_plan(material, chord_EA="30000 kip", walls=L_PLAN_WALLS):
    return textwrap.dedent(f'''
        [plan]
        name = "L"
        length_unit = "ft"
        [diaphragm]
        outline = [[0, 0], [150, 0], [150, 40], [90, 40], [90, 70], [0, 70]]
        openings = [[[30, 20], [45, 20], [45, 32], [30, 32]]]
        material = {material}
        chord_EA = "{chord_EA}"
        [grid]
        x = {{ "1" = 0, "2" = 60, "3" = 150 }}
        y = {{ "A" = 0, "C" = 70 }}
        ''') + walls + textwrap.dedent('''
        [[load]]
        name = "E"
        kind = "seismic"
        area_weight = "15 psf"
        line_weight = [{ line = "1", weight = "0.3 kip/ft" }]
        point_weight = [{ at = [120, 30], weight = "8 kip" }]
        total = "60 kip"
        directions = ["x", "y"]
        [mesh]
        size = 5.0
        ''')


def test_stiff_diaphragm_approaches_rigid_method(plan_from):
    """Limit check: a diaphragm 1e4 times stiffer than the wood panel (Gt = 1.5e5 kip/in)
    gives wall forces within 0.5 % of the rigid method in every case, eccentric ones included."""
    plan = plan_from(l_plan('{ kind = "custom", Et_x = "1.5e5 kip/in", Et_y = "1.5e5 kip/in", Gt = "1.5e5 kip/in" }'))
    cases = expand_load_cases(plan)
    rigid = rigid_analysis(plan, cases)
    semi = semirigid_analysis(plan, cases).result
    for name, case in rigid.cases.items():
        scale = max(abs(f) for f in case.wall_forces.values())
        for wall_id, force in case.wall_forces.items():
            assert semi.cases[name].wall_forces[wall_id] == pytest.approx(force, abs=0.005 * scale), (name, wall_id)


def test_stiff_walls_and_chords_approach_flexible_method(plan_from):
    """Limit check: full-depth walls 1e4 times stiffer and very stiff chords make the
    diaphragm a shear beam on rigid supports, whose reactions are the simple-span ones:
    line forces within 2 % of the flexible method."""
    walls = (wall("W1", "1", 0, 60, "1e6 kip/in") + wall("W2", "2", 0, 60, "1e6 kip/in")
             + wall("W3", "3", 0, 60, "1e6 kip/in") + wall("WA", "A", 0, 150, "50 kip/in")
             + wall("WB", "B", 0, 150, "50 kip/in"))
    plan = plan_from(box(length=150, depth=60, lines_x={"1": 0, "2": 60, "3": 150}, walls=walls,
                         chord_EA="1e7 kip", mesh_size=5.0))
    cases = expand_load_cases(plan)
    flexible = flexible_analysis(plan, cases).cases["E+y"]
    semi = semirigid_analysis(plan, cases).result.cases["E+y"]
    for wall_id in ("W1", "W2", "W3"):
        assert semi.wall_forces[wall_id] == pytest.approx(flexible.wall_forces[wall_id], rel=0.02)


def test_equilibrium_and_line_cut_residuals(plan_from):
    """Total wall force equals the applied force to 1e-9 in every case; every line cut
    closes (residual below 1e-8 of the applied force)."""
    plan = plan_from(l_plan('{ kind = "wood-panel", Ga = "15 kip/in" }'))
    result = semirigid_analysis(plan, expand_load_cases(plan)).result
    for case in result.cases.values():
        assert case.equilibrium_residual < 1e-9
        for line in case.lines.values():
            assert abs(line.residual) < 1e-8 * case.applied_force


def centred_wall_plan(wall_k: str, collector_EA: str) -> str:
    """100 × 50 ft, 100 kip in y: a 20-ft wall centred on line 1 with a collector along the
    line, a full-depth wall on line 2, short walls mid-chord, stiff chords."""
    walls = wall("W1", "1", 15, 35, wall_k) + wall("W2", "2", 0, 50, wall_k) \
        + wall("WA", "A", 40, 60, "50 kip/in") + wall("WB", "B", 40, 60, "50 kip/in")
    member = f'\n[[member]]\nrole = "collector"\nline = "1"\nEA = "{collector_EA}"\n'
    load = textwrap.dedent('''
        [[load]]
        name = "E"
        kind = "seismic"
        area_weight = "20 psf"
        total = "100 kip"
        directions = ["y"]
        eccentricity = 0
        ''')
    return box(walls=walls + member, load=load, mesh_size=2.5, chord_EA="1e6 kip")


def test_collector_peak_at_wall_end(plan_from):
    """A 20-ft wall in the middle of a 50-ft line with a collector member along the line:
    the collector force is largest at a wall end (common practice; VALIDATION.md 6.6), and
    with stiff walls it is the beam-analogy value 1.0 k/ft × 15 ft = 15 k within 2 %."""
    plan = plan_from(centred_wall_plan("1e4 kip/in", "1e5 kip"))
    case = semirigid_analysis(plan, expand_load_cases(plan)).result.cases["E+y"]
    line = case.lines["1"]
    peak_at = line.peak_position / FT
    assert min(abs(peak_at - 15.0), abs(peak_at - 35.0)) < 1e-6
    assert abs(line.peak) / KIP == pytest.approx(15.0, rel=0.02)
    assert abs(line.residual) < 1e-8 * case.applied_force


def test_mesh_is_deterministic_and_captures_lines(plan_from):
    plan = plan_from(l_plan('{ kind = "wood-panel", Ga = "15 kip/in" }'))
    first, second = build_mesh(plan), build_mesh(plan)
    assert np.array_equal(first.nodes, second.nodes) and np.array_equal(first.elements, second.elements)
    for w in plan.walls:
        assert first.walls[w.id].length == pytest.approx(w.length, rel=1e-9)
    # Line 2 (x = 60 ft) runs over the full 70-ft depth; line 3 only over the 40-ft wing.
    assert first.lines["2"].length / FT == pytest.approx(70.0)
    assert first.lines["3"].length / FT == pytest.approx(40.0)
    quad = build_mesh(plan, element="quad")
    assert quad.element_type == "quad9" and quad.elements.shape[1] == 9


def test_zone_material_is_used(plan_from):
    zone = textwrap.dedent('''
        [[diaphragm.zone]]
        name = "stiff"
        polygon = [[0, 0], [30, 0], [30, 50], [0, 50]]
        material = { kind = "wood-panel", Ga = "40 kip/in" }
        ''')
    walls = wall("W1", "1", 0, 50, "50 kip/in") + wall("W2", "2", 0, 50, "50 kip/in") \
        + wall("WA", "A", 0, 100, "50 kip/in")
    plan = plan_from(box(walls=walls, extra=zone))
    mesh = build_mesh(plan)
    assembly = assemble(plan, mesh)
    corners = mesh.nodes[mesh.elements[:, :3]].mean(axis=1) / FT
    in_zone = corners[:, 0] < 30
    assert np.all(mesh.element_zone[in_zone] == 0) and np.all(mesh.element_zone[~in_zone] == -1)
    assert np.allclose(assembly.rigidity[in_zone, 2, 2], 40 * KIP / INCH)
    assert np.allclose(assembly.rigidity[~in_zone, 2, 2], 20 * KIP / INCH)


def test_unrestrained_model_is_explained(plan_from):
    walls = wall("W1", "1", 0, 50, "50 kip/in") + wall("W2", "2", 0, 50, "50 kip/in") \
        + wall("WA", "A", 0, 100, "50 kip/in")
    plan = plan_from(box(walls=walls))
    assembly = assemble(plan, build_mesh(plan))
    no_springs = replace(assembly, spring_matrix=sp.csr_matrix(assembly.spring_matrix.shape))
    with pytest.raises(FEError, match="not held by walls along x, along y"):
        check_restraint(no_springs, plan)


def test_interior_chord_member_is_reported(plan_from):
    """A chord member inside the plan gets its own chord diagram (bar force) that closes."""
    walls = wall("W1", "1", 0, 50, "50 kip/in") + wall("W2", "2", 0, 50, "50 kip/in") \
        + wall("WA", "A", 0, 100, "50 kip/in") + wall("WB", "B", 0, 100, "50 kip/in")
    member = '\n[[member]]\nrole = "chord"\nline = "M"\nEA = "20000 kip"\n'
    text = box(walls=walls + member).replace('y = { "A" = 0, "B" = 50 }', 'y = { "A" = 0, "M" = 25, "B" = 50 }')
    plan = plan_from(text)
    case = semirigid_analysis(plan, expand_load_cases(plan)).result.cases["E+y"]
    chord = case.chords["chord on M"]
    assert chord.stations[0] == pytest.approx(0.0) and chord.stations[-1] / FT == pytest.approx(100.0)
    assert abs(case.lines["M"].residual) < 1e-8 * case.applied_force


def test_unit_shear_and_chord_force_of_a_simple_span(plan_from):
    """Simply supported diaphragm, w = 0.2 k/ft over L = 100 ft, d = 50 ft (Taly 2010,
    Eqs. 4.130–4.133; statics): unit shear at the supports v = wL/(2d) = 0.2 k/ft, chord
    force at midspan T = wL²/(8d) = 5 k. The line cut at the support gives the delivered
    shear along its middle within 5 % (it rises towards the corners, where the chords bring
    their share), and the chord bars carry T within 3 %."""
    walls = (wall("W1", "1", 0, 50, "1e5 kip/in") + wall("W2", "2", 0, 50, "1e5 kip/in")
             + wall("WA", "A", 45, 55, "10 kip/in") + wall("WB", "B", 45, 55, "10 kip/in"))
    plan = plan_from(box(walls=walls, mesh_size=2.5))
    case = semirigid_analysis(plan, expand_load_cases(plan)).result.cases["E+y"]
    line = case.lines["1"]
    t, from_left, from_right = line.side_shear.T
    middle = (t / FT > 10) & (t / FT < 40)
    assert np.allclose(from_right[middle] / (KIP / FT), 0.2, rtol=0.05)
    assert np.all(np.abs(from_left) < 1e-9 * KIP)  # nothing lies west of line 1
    assert line.reaction / KIP == pytest.approx(10.0, rel=1e-6)  # wL/2
    # The diaphragm delivers all but the load that sits on the line's own nodes.
    assert line.delivered / KIP == pytest.approx(10.0, rel=0.01)
    # The unit-shear field (element averages) peaks next to a support at v = wL/(2d).
    assert case.max_unit_shear / (KIP / FT) == pytest.approx(0.2, rel=0.03)
    assert min(case.max_unit_shear_at[0], 100 * FT - case.max_unit_shear_at[0]) / FT < 5.0
    top = case.chords["edge 3"]
    assert top.peak / KIP == pytest.approx(5.0, rel=0.03)
    assert top.peak_position / FT == pytest.approx(50.0, abs=5.0)
    assert case.chords["edge 1"].peak / KIP == pytest.approx(-5.0, rel=0.03)


def test_effective_width_strip_force_matches_beam_theory(plan_from):
    """A 200 × 50 ft cracked concrete slab without chord bars, simply supported on stiff
    end walls, 100 kip in y: M = wL²/8 = 2500 k·ft and the edge fibre carries
    N_x = 6M/d² = 6 k/ft (Euler–Bernoulli, plane sections; statics). A member on the edge
    line with effective_width = 4 ft counts the 2 ft of slab on the diaphragm side:
    ∫₀² N_x dn = 6 · 2 · (1 − 2/50) = 11.52 k at midspan (compression), within 2 %."""
    walls = wall("W1", "1", 0, 50, "1e5 kip/in") + wall("W2", "2", 0, 50, "1e5 kip/in") \
        + wall("WB", "B", 95, 105, "50 kip/in")
    member = '\n[[member]]\nrole = "chord"\nline = "A"\nEA = "1 kip"\neffective_width = 4\n'
    load = textwrap.dedent('''
        [[load]]
        name = "E"
        kind = "seismic"
        area_weight = "50 psf"
        total = "100 kip"
        directions = ["y"]
        eccentricity = 0
        ''')
    concrete = '{ kind = "concrete", E = "3600 ksi", thickness = "5 in", cracked = 0.25 }'
    text = box(length=200, walls=walls + member, load=load, material=concrete, mesh_size=2.5)
    plan = plan_from(text.replace('chord_EA = "28050 kip"\n', ""))
    line = semirigid_analysis(plan, expand_load_cases(plan)).result.cases["E+y"].lines["A"]
    at_midspan = np.interp(100 * FT, line.stations, line.collector) / KIP
    assert at_midspan == pytest.approx(-6 * 2 * (1 - 2 / 50), rel=0.02)
