"""Collectors and chords of the semi-rigid model: the bar force read out as EA·ε, and a
collector on every piece of a line of resistance that carries a wall."""

import numpy as np
import pytest

from planshear.fem.elements import bar_axial_force, bar_stiffness, edge_load
from planshear.loads import expand_load_cases
from planshear.run import analyze
from planshear.semirigid import semirigid_analysis

from conftest import FT, KIP
from test_semirigid import box, centred_wall_plan, wall


def test_quadratic_bar_picking_up_a_uniform_shear_flow_is_exact():
    """A bar fixed at x = 0 that picks up a uniform shear flow q along its length L has
    N(x) = q·(L − x) (statics: the force collected beyond x) and u(x) = q(Lx − x²/2)/EA,
    a quadratic that 3-node bars reproduce exactly; so EA·ε at every element end equals
    N(x) to round-off. The element's start nodal force is −(N + ΔN/6) instead (ΔN = −q·h
    over an element of length h): the old read-out, which this test keeps out."""
    L, n, EA, q = 12.0, 4, 2.0e8, 3.0e4  # m, elements, N, N/m
    x = np.linspace(0.0, L, 2 * n + 1)
    nodes = np.column_stack([x, np.zeros_like(x)])
    edges = np.column_stack([np.arange(0, 2 * n, 2), np.arange(2, 2 * n + 1, 2), np.arange(1, 2 * n, 2)])
    K_e = bar_stiffness(nodes[edges], np.full(n, EA))
    f_e = edge_load(nodes[edges], np.full(n, q), np.array([1.0, 0.0]))
    dofs = np.stack([2 * edges, 2 * edges + 1], axis=-1).reshape(n, -1)
    K = np.zeros((2 * len(x), 2 * len(x)))
    f = np.zeros(2 * len(x))
    np.add.at(K, (dofs[:, :, None], dofs[:, None, :]), K_e)
    np.add.at(f, dofs, f_e)
    free = np.arange(2, 2 * len(x), 2)  # x DOFs except the fixed node 0 (y DOFs carry nothing)
    u = np.zeros(2 * len(x))
    u[free] = np.linalg.solve(K[np.ix_(free, free)], f[free])
    assert u[0::2] == pytest.approx(q * (L * x - x**2 / 2) / EA, rel=1e-12, abs=1e-15)
    N = bar_axial_force(nodes[edges], np.full(n, EA), u[dofs][:, :, None], np.array([-1.0, 0.0, 1.0]))[..., 0]
    x_at = np.column_stack([x[edges[:, 0]], x[edges[:, 2]], x[edges[:, 1]]])
    assert N == pytest.approx(q * (L - x_at), rel=1e-10, abs=1e-12 * q * L)
    nodal = np.einsum("mij,mj->mi", K_e, u[dofs])[:, 0]  # start node, along x
    h = L / n
    assert -nodal == pytest.approx(q * (L - x_at[:, 0]) - q * h / 6, rel=1e-10)


def test_collector_diagram_is_continuous_and_free_ends_carry_nothing(plan_from):
    """A 20-ft wall centred on a 50-ft line with a collector, 100 kip on a 100 × 50 ft
    plan: beam-analogy peak 1.0 k/ft × 15 ft = 15 k at the wall ends (VALIDATION.md 6.6,
    statics), zero at the free ends of the line. Read out as EA·ε the diagram agrees
    within 1 % (the membrane's own axial stiffness keeps a little of the drag), its free
    ends carry less than 1e-4 of the peak (the natural end condition is met only weakly)
    and the two values at every shared node differ by less than 0.2 % of the peak (strains
    of C0 elements jump at nodes by the discretization error). The element nodal forces
    read before gave 0.39 k at the free ends, jumps of 1 k and a peak 0.9 % low."""
    plan = plan_from(centred_wall_plan("1e4 kip/in", "1e5 kip"))
    case = semirigid_analysis(plan, expand_load_cases(plan)).result.cases["E+y"]
    line = case.lines["1"]
    N = line.collector / KIP
    assert np.all(np.diff(line.stations) >= 0)
    assert abs(line.peak) / KIP == pytest.approx(15.0, rel=0.01)
    assert abs(N[0]) < 1e-4 * 15 and abs(N[-1]) < 1e-4 * 15
    assert np.allclose(line.stations[1:-1:2], line.stations[2::2])
    assert np.max(np.abs(N[2::2] - N[1:-1:2])) < 2e-3 * 15
    for chord in case.chords.values():
        # Chords: the same order of pairs, the same continuity (M/d = 25 k here, VALIDATION.md 6.6).
        assert np.all(np.diff(chord.stations) >= 0)
        assert np.max(np.abs(np.diff(chord.force)[1::2])) < 2e-3 * 25 * KIP
    assert case.chords["edge 3"].peak / KIP == pytest.approx(25.0, rel=0.01)


def three_line_plan(extra_diaphragm: str = "", members: str = "", chord_EA: str | None = "1e6 kip",
                    opening: bool = False) -> str:
    """100 × 50 ft, 20 kip along y: stiff full-depth walls on lines 1 and 2, a 20-ft wall
    WM on the interior line M (x = 50 ft) from y = 15 to 35 ft, short walls mid-chord."""
    walls = (wall("W1", "1", 0, 50, "1e4 kip/in") + wall("W2", "2", 0, 50, "1e4 kip/in")
             + wall("WM", "M", 15, 35, "1e4 kip/in") + wall("WA", "A", 45, 55, "50 kip/in")
             + wall("WB", "B", 45, 55, "50 kip/in"))
    if opening:  # the opening splits line M into 0–38 and 44–50 ft; WM lies on the first piece
        walls = walls.replace('line = "M"\nfrom = 15\nto = 35', 'line = "M"\nfrom = 15\nto = 30')
    text = box(walls=walls + members, lines_x={"1": 0, "M": 50, "2": 100}, mesh_size=2.5,
               chord_EA=chord_EA or "1 kip", extra="")
    if opening:
        text = text.replace("material =", "openings = [[[46, 38], [54, 38], [54, 44], [46, 44]]]\nmaterial =", 1)
    dia = f'chord_EA = "{chord_EA}"\n' if chord_EA else ""
    return text.replace(f'chord_EA = "{chord_EA or "1 kip"}"\n', dia + extra_diaphragm)


def test_implied_collector_equals_a_declared_one_and_matches_statics(plan_from):
    """A wall line without a member gets an implied collector of EA = collector_EA over the
    whole piece: the model is then the same as with a declared collector of that EA on the
    line (same wall forces and collector diagram to round-off). Statics (VALIDATION.md 6.6,
    beam analogy): with the line's reaction R delivered uniformly over the 50-ft line, the
    collector carries R·15/50 at the wall ends; the finite-element value agrees within 2 %
    (the delivered shear is not exactly uniform along the line in the elastic model)."""
    implied = plan_from(three_line_plan('collector_EA = "1e5 kip"\n'))
    declared = plan_from(three_line_plan(members='\n[[member]]\nrole = "collector"\nline = "M"\nEA = "1e5 kip"\n'))
    a = semirigid_analysis(implied, expand_load_cases(implied)).result
    b = semirigid_analysis(declared, expand_load_cases(declared)).result
    for name in a.cases:
        for wall_id, force in a.cases[name].wall_forces.items():
            assert force == pytest.approx(b.cases[name].wall_forces[wall_id], rel=1e-9, abs=1e-9 * KIP)
        assert a.cases[name].lines["M"].collector == pytest.approx(b.cases[name].lines["M"].collector, rel=1e-9, abs=1e-6)
    line = a.cases["E+y"].lines["M"]
    assert abs(line.peak) == pytest.approx(abs(line.reaction) * 15 / 50, rel=0.02)
    assert min(abs(line.peak_position / FT - 15), abs(line.peak_position / FT - 35)) < 1e-6
    assert [s[0] for s in line.collector_segments] == ["implied"]
    assert [s[0] for s in b.cases["E+y"].lines["M"].collector_segments] == ["declared"]
    assert line.collector_segments[0][3] / KIP == pytest.approx(1e5)
    assert any("implied collectors" in note and "collector_EA" in note for note in a.notes)
    assert a.extra["implied_collector_EA"]["source"] == "collector_EA"
    # Lines along the outline read the chord bar as their collector; no second bar is added.
    assert {p["line"]: p["collector"] for p in a.extra["wall_pieces"]} == {
        "1": "chord", "2": "chord", "A": "chord", "B": "chord", "M": "implied"}


def test_default_collector_EA_is_chord_EA_and_partial_members_are_completed(plan_from):
    """Without collector_EA the implied collector takes chord_EA. A declared member over
    part of a wall piece keeps its EA there; implied bars fill the rest of the piece. A
    piece of the same line cut off by an opening and carrying no wall gets no bar."""
    member = '\n[[member]]\nrole = "collector"\nline = "M"\nEA = "5000 kip"\nfrom = 0\nto = 10\n'
    plan = plan_from(three_line_plan(members=member, opening=True))
    run = semirigid_analysis(plan, expand_load_cases(plan))
    (piece,) = [p for p in run.solution.assembly.collectors.pieces if p.line == "M"]
    assert piece.t_from == pytest.approx(0.0) and piece.t_to / FT == pytest.approx(38.0)
    kinds = [(s.kind, round(s.t_from / FT, 6), round(s.t_to / FT, 6), round(s.EA / KIP, 6)) for s in piece.segments]
    assert kinds == [("declared", 0.0, 10.0, 5000.0), ("implied", 10.0, 38.0, 1e6)]
    implied_bars = [b for b in run.solution.assembly.bars if b.implied]
    assert len(implied_bars) == 1
    t_bars = run.mesh.nodes[implied_bars[0].edges][..., 1] / FT
    assert t_bars.min() == pytest.approx(10.0) and t_bars.max() == pytest.approx(38.0)
    assert run.result.extra["implied_collector_EA"]["source"] == "chord_EA"
    assert run.result.extra["wall_pieces_without_member"] == []


def test_caution_per_wall_piece_without_any_collector(plan_from):
    """Without chord_EA and collector_EA no EA can be assumed: a wall piece with no member
    is flagged, by its walls, even when a member covers another part of the same line (the
    line used to pass unflagged as soon as any bar lay on it)."""
    member = '\n[[member]]\nrole = "chord"\nline = "M"\nEA = "5000 kip"\nfrom = 44\nto = 50\n'
    plan = plan_from(three_line_plan(members=member, chord_EA=None, opening=True))
    result = analyze(plan)
    caution = result.envelope.cautions["M"]
    assert "WM" in caution
    assert {"1", "2", "A", "B", "M"} <= set(result.envelope.cautions)
    doc = result.to_json()
    (bare,) = [p for p in doc["assumptions"]["semirigid"]["wall_pieces_without_member"] if p["line"] == "M"]
    assert bare == {"line": "M", "from": 0.0, "to": 38.0, "walls": ["WM"]}
    assert doc["envelope"]["collectors"]["M"]["collector_in_model"] == "none"
    assert any("wall pieces without a collector" in note for note in doc["assumptions"]["semirigid"]["notes"])
    members = doc["assumptions"]["semirigid"]["cases"]["E+y"]["lines"]["M"]["collector_members"]
    assert members == [{"kind": "none", "from": 0.0, "to": 38.0, "EA": 0.0}]
