"""The clauses of ASCE 7-16 that planshear applies (planshear/code/asce7_16.py)."""

import textwrap

import pytest

from planshear.code.asce7_16 import collector_rule_12_10_2_1, fpx_12_10_1_1

from conftest import end_walls, rectangle_plan


def _rule(omega0, ratio, SDS, Ie=1.0, wpx=1000.0, light_frame=False):
    fpx = fpx_12_10_1_1(wpx, SDS, Ie, ratio)
    return fpx, collector_rule_12_10_2_1(omega0, fpx.value, fpx, light_frame)


def test_collector_cap_of_exception_1_governs_with_a_large_omega():
    """§12.10.2.1 with Exception 1: Ω0 = 2.5 on Fpx = 0.2·wpx (Eq. 12.10-1, SDS = 0.9) gives
    0.5·wpx, more than the Eq. 12.10-3 force 0.4·0.9·wpx = 0.36·wpx, which caps it: the design
    factor on the case force is 0.36/0.2 = 1.8, not 2.5 (the overstatement 2.5/1.8 = 1.39
    named in the issue). Statics of the clause's equations."""
    fpx, rule = _rule(2.5, 0.2, 0.9)
    assert fpx.governing == "12.10-1"
    assert rule.factor == pytest.approx(1.8)
    assert rule.uncapped == pytest.approx(2.5)
    assert rule.cap == pytest.approx(1.8)
    assert "Exception 1" in rule.governs


def test_collector_item_2_governs_below_the_cap():
    """Ω0 = 1.5: 1.5·0.2·wpx = 0.3·wpx < 0.36·wpx and > 0.18·wpx (Eq. 12.10-2): item 2 governs."""
    _, rule = _rule(1.5, 0.2, 0.9)
    assert rule.factor == pytest.approx(1.5)
    assert rule.governs.startswith("item 2")


def test_collector_item_3_governs_when_the_lower_bound_sets_fpx():
    """ΣFi/Σwi = 0.1 with SDS = 1.0: Eq. 12.10-1 gives 0.1·wpx < 0.2·wpx (Eq. 12.10-2), so
    Fpx = 0.2·wpx; item 2 = 1.5·0.1·wpx = 0.15·wpx < item 3 = 0.2·wpx: factor 1.0 on Fpx."""
    fpx, rule = _rule(1.5, 0.1, 1.0)
    assert fpx.governing == "12.10-2"
    assert rule.factor == pytest.approx(1.0)
    assert rule.governs.startswith("item 3")


def test_light_frame_exception_and_no_overstrength():
    """Exception 2 (braced entirely by light-frame shear walls): the §12.10.1.1 forces, no
    Ω0; Ω0 = 1 (e.g. SDC B, where the clause does not apply): factor 1."""
    assert _rule(2.5, 0.2, 0.9, light_frame=True)[1].factor == 1.0
    assert _rule(1.0, 0.2, 0.9)[1].factor == 1.0


def test_collector_rule_reaches_the_envelope(plan_from):
    """The envelope's collector value with overstrength is the semi-rigid collector force
    times the §12.10.2.1 factor of its case (1.8 here), with the uncapped value (× 2.5) and
    the cap reported beside it in results.json."""
    from planshear.run import analyze

    load = textwrap.dedent('''
        [[load]]
        name = "E"
        kind = "seismic"
        area_weight = "20 psf"
        fpx = { SDS = 0.9, Ie = 1.0, story_force_ratio = 0.2 }
        directions = ["x", "y"]
        collector_overstrength = 2.5
        ''')
    plan = plan_from(rectangle_plan(walls=end_walls(), load=load))
    result = analyze(plan, semirigid=False)
    collectors = result.to_json()["envelope"]["collectors"]
    checked = 0
    for name, slots in result.envelope.collectors.items():
        governing = slots["with_overstrength"]
        if governing is None or governing.value == 0:
            continue
        case = result.methods[governing.assumption].cases[governing.case]
        assert governing.value == pytest.approx(1.8 * case.lines[name].peak)
        entry = collectors[name]["overstrength"]
        assert entry["without_cap"] == pytest.approx(entry["value"] * 2.5 / 1.8, rel=1e-6)
        assert entry["cap"] == pytest.approx(entry["value"], rel=1e-6)
        checked += 1
    assert checked


def test_amplified_drift_of_the_walls(plan_from):
    """ASCE 7-16 Eq. 12.8-15: δx = Cd·δxe/Ie. Two end walls of 50 kip/in share 100 kip
    (statics, flexible method): δxe = 50/50 = 1.0 in; Cd = 4, Ie = 1.25 → δx = 3.2 in; on a
    12-ft story δx/h = 3.2/144 = 0.0222 ≤ 0.025 (Table 12.12-1 value given by the engineer)."""
    from planshear.run import analyze

    load = textwrap.dedent('''
        [[load]]
        name = "E"
        kind = "seismic"
        area_weight = "20 psf"
        total = "100 kip"
        directions = ["y"]
        eccentricity = 0
        drift = { Cd = 4.0, Ie = 1.25, story_height = "12 ft", allowable = 0.025 }
        ''')
    plan = plan_from(rectangle_plan(walls=end_walls(), load=load) + '[classification]\nidealized_flexible = true\n')
    doc = analyze(plan, semirigid=False).to_json()
    checks = {name: c for name, c in doc["drift"]["walls"].items() if name in ("W1", "W2")}
    assert checks
    for c in checks.values():
        if c["assumption"] == "flexible":
            assert c["elastic"] == pytest.approx(1.0, rel=1e-9)
        assert c["amplified"] == pytest.approx(c["elastic"] * 4.0 / 1.25, rel=1e-9)
        assert c["ratio"] == pytest.approx(abs(c["amplified"]) / 144.0, abs=1e-6)  # rounded in the JSON
        assert c["ok"] == (c["ratio"] <= 0.025)


def test_drift_uses_the_assumptions_the_envelope_allows(plan_from):
    """The drift check follows the design envelope: a wall's governing drift comes from an
    assumption the code allows for the load direction (ASCE 7-16 §12.3.1: the diaphragm is
    idealized only where permitted), never from one the classification excludes; with every
    assumption run (semi-rigid included) the allowed set is smaller than all three."""
    from planshear.run import analyze

    load = textwrap.dedent('''
        [[load]]
        name = "E"
        kind = "seismic"
        area_weight = "20 psf"
        total = "100 kip"
        directions = ["y"]
        eccentricity = 0
        drift = { Cd = 4.0, Ie = 1.0, story_height = "12 ft", allowable = 0.025 }
        ''')
    plan = plan_from(rectangle_plan(walls=end_walls(), load=load) + "[mesh]\nsize = 10.0\n")
    doc = analyze(plan).to_json()
    allowed = doc["envelope"]["allowed_assumptions"]["y"]
    assert set(allowed) < {"flexible", "rigid", "semirigid"}
    walls = doc["drift"]["walls"]
    assert walls and all(c["assumption"] in allowed for c in walls.values())


def test_story_force_drives_walls_and_diaphragm_force_the_rest(plan_from):
    """A seismic load with both the diaphragm force (total = 100 kip, Fpx) and the story force
    fx = 60 kip: the analysis runs at Fpx (diaphragm shears, chords, collectors); walls,
    line reactions and wall drifts of the envelope are at Fx = 0.6 × those (linear elastic);
    results.json says which force drove which result. §12.10.2.1 item 1 (Ω0 × Fx) joins the
    collector rule: with Ω0 = 2.5 and no Fpx inputs, max(2.5·100, 2.5·60) = 2.5 × the case."""
    from planshear.run import analyze

    load = textwrap.dedent('''
        [[load]]
        name = "E"
        kind = "seismic"
        area_weight = "20 psf"
        total = "100 kip"
        fx = "60 kip"
        directions = ["y"]
        eccentricity = 0
        collector_overstrength = 2.5
        ''')
    plan = plan_from(rectangle_plan(walls=end_walls(), load=load) + '[classification]\nidealized_flexible = true\n')
    result = analyze(plan, semirigid=False)
    flexible = result.methods["flexible"].cases["E+y"]
    for wall_id in ("W1", "W2"):
        design = result.envelope.walls[wall_id]["design"]
        analyzed = result.methods[design.assumption].cases[design.case].wall_forces[wall_id]
        assert design.value == pytest.approx(0.6 * analyzed, rel=1e-12)
    assert abs(flexible.wall_forces["W1"]) == pytest.approx(50.0 * 4448.2216152605, rel=1e-9)  # at Fpx
    basis = result.to_json()["plan"]["loads"]["E"]["force_basis"]
    assert basis["walls, line reactions, wall drifts"].startswith("Fx")
    case = next(c for c in result.cases if c.name == "E+y")
    assert case.collector_rule.factor == pytest.approx(2.5)


def test_collector_item_1_governs_when_fx_is_large():
    """§12.10.2.1 item 1: Ω0 × Fx can exceed Ω0 × Eq. 12.10-1 when Fx > (ΣFi/Σwi)·wpx; the
    cap of Exception 1 still applies. wpx = 1000, ratio 0.1, SDS 1.0 (Fpx = 0.2·wpx from
    Eq. 12.10-2), Ω0 = 2, Fx = 0.15·wpx: item 1 = 0.30, item 2 = 0.20, item 3 = 0.20,
    cap 0.40 → 0.30·wpx governs, factor 1.5 on Fpx."""
    fpx = fpx_12_10_1_1(1000.0, 1.0, 1.0, 0.1)
    rule = collector_rule_12_10_2_1(2.0, fpx.value, fpx, False, fx=150.0)
    assert rule.factor == pytest.approx(1.5)
    assert rule.governs.startswith("item 1")


@pytest.mark.parametrize(("basis", "rho", "walls", "diaphragm"), [
    (None, 1.0, 1.0, 1.0),
    ("LRFD", 1.3, 1.3, 1.0),   # §2.3.6 with E = ρQE (§12.4.2.1); ρ not on Fpx forces
    ("ASD", 1.3, 0.91, 0.7),   # §2.4.5 with 0.7E
])
def test_design_basis_factors_reach_the_envelope(plan_from, basis, rho, walls, diaphragm):
    """ASCE 7-16 Ch. 2 lateral terms (gravity out of scope): the envelope's wall values carry
    ρ (LRFD) or 0.7ρ (ASD), diaphragm values 1.0 or 0.7, and the factor is reported."""
    from planshear.run import analyze

    design = f'[design]\nbasis = "{basis}"\n' if basis else ""
    load = textwrap.dedent(f'''
        [[load]]
        name = "E"
        kind = "seismic"
        area_weight = "20 psf"
        total = "100 kip"
        directions = ["y"]
        eccentricity = 0
        rho = {rho}
        ''')
    plan = plan_from(rectangle_plan(walls=end_walls(), load=load) + '[classification]\nidealized_flexible = true\n'
                     + design)
    result = analyze(plan, semirigid=False)
    flexible = result.methods["flexible"].cases["E+y"]
    w1 = result.envelope.walls["W1"]["flexible"]
    assert w1.value == pytest.approx(walls * flexible.wall_forces["W1"], rel=1e-12)
    assert w1.factor == pytest.approx(walls)
    chord = result.envelope.chords["edge 1"]["design"]
    assert abs(chord.value) == pytest.approx(diaphragm * abs(flexible.chords["edge 1"].peak), rel=1e-9)


def test_wind_asd_factor():
    """§2.4.1: 0.6W in the ASD combinations; 1.0W in LRFD (§2.3.1)."""
    from planshear.code.asce7_16 import combination_factors_2_3_2_4

    assert combination_factors_2_3_2_4("ASD", "edge").vertical == 0.6
    assert combination_factors_2_3_2_4("LRFD", "edge").diaphragm == 1.0


L_PLAN = textwrap.dedent('''
    [plan]
    name = "L"
    length_unit = "ft"
    [diaphragm]
    outline = [[0, 0], [120, 0], [120, 50], [60, 50], [60, 100], [0, 100]]
    material = { kind = "wood-panel", Ga = "12 kip/in" }
    chord_EA = "30000 kip"
    [grid]
    x = { "1" = 0, "2" = 60, "3" = 120 }
    y = { "A" = 0, "B" = 50, "C" = 100 }
    [[wall]]
    id = "W1"
    line = "1"
    from = 10
    to = 90
    stiffness = "60 kip/in"
    [[wall]]
    id = "W3"
    line = "3"
    from = 5
    to = 45
    stiffness = "50 kip/in"
    [[wall]]
    id = "WA"
    line = "A"
    from = 10
    to = 110
    stiffness = "70 kip/in"
    [[wall]]
    id = "WC"
    line = "C"
    from = 5
    to = 55
    stiffness = "40 kip/in"
    [[load]]
    name = "E"
    kind = "seismic"
    area_weight = "15 psf"
    fpx = { SDS = 0.9, Ie = 1.0, story_force_ratio = 0.2 }
    directions = ["x", "y"]
    collector_overstrength = 2.5
    sdc = "SDC"
    [classification]
    idealized_flexible = true
    ''')


def test_irregularity_increase_of_12_3_3_4_on_collectors(plan_from):
    """ASCE 7-16 §12.3.3.4 (from memory): SDC D–F with a Type 2 re-entrant corner (both
    projections 50 % > 15 %) → collector forces × 1.25, also the §12.10.2.1 value here since
    the Exception 1 cap (basic combinations, no Ω0) governs; SDC C: no increase."""
    from planshear.run import analyze

    results = {sdc: analyze(plan_from(L_PLAN.replace('"SDC"', f'"{sdc}"')), semirigid=False) for sdc in ("C", "D")}
    low, high = results["C"].envelope.collectors, results["D"].envelope.collectors
    assert results["D"].applied_consequences and not results["C"].applied_consequences
    compared = 0
    for name, slots in low.items():
        if slots["design"] is None or slots["design"].value == 0:
            continue
        assert high[name]["design"].value == pytest.approx(1.25 * slots["design"].value, rel=1e-12)
        assert high[name]["with_overstrength"].value == pytest.approx(1.25 * slots["with_overstrength"].value, rel=1e-12)
        compared += 1
    assert compared


def test_no_collector_overstrength_in_sdc_b():
    """§12.10.2.1 applies to SDC C–F: with SDC B stated, Ω0 is not applied to collectors."""
    fpx = fpx_12_10_1_1(1000.0, 0.3, 1.0, 0.1)
    assert collector_rule_12_10_2_1(2.5, fpx.value, fpx, sdc="B").factor == 1.0
    assert collector_rule_12_10_2_1(2.5, fpx.value, fpx, sdc="C").factor > 1.0


def test_torsional_amplification_is_applied_to_the_eccentric_cases(plan_from):
    """ASCE 7-16 §12.8.4.3 (Eq. 12.8-14, VALIDATION.md 1.8): with a Type 1a/1b torsional
    irregularity in SDC C–F, the ±ecc cases are run again with the accidental eccentricity
    × Ax = (δmax/(1.2·δavg))², 1 ≤ Ax ≤ 3, Ax taken from the analysis with Ax = 1; in SDC B
    nothing changes. Unequal end walls (200 and 20 kip/in) make the plan twist."""
    from planshear.run import analyze

    def plan(sdc):
        load = textwrap.dedent(f'''
            [[load]]
            name = "E"
            kind = "seismic"
            area_weight = "20 psf"
            total = "100 kip"
            directions = ["y"]
            sdc = "{sdc}"
            ''')
        walls = end_walls().replace('"50 kip/in"', '"200 kip/in"', 1)
        walls = walls.replace('id = "W2"\nline = "2"\nfrom = 0\nto = 50\nstiffness = "50 kip/in"',
                              'id = "W2"\nline = "2"\nfrom = 0\nto = 50\nstiffness = "20 kip/in"')
        return plan_from(rectangle_plan(walls=walls, load=load))

    base = analyze(plan("B"), semirigid=False)
    amplified = analyze(plan("D"), semirigid=False)
    torsional = [i for i in amplified.irregularities if i.type in ("1a", "1b") and i.method == "rigid"]
    assert torsional and torsional[0].values["Ax"] > 1.0
    ax = torsional[0].values["Ax"]
    ecc = {c.name: c.eccentricity for c in base.cases}
    for case in amplified.cases:
        if case.eccentricity_sign:
            assert case.eccentricity == pytest.approx(ax * ecc[case.name], rel=1e-3)  # Ax rounded to 4 digits
    assert any("12.8.4.3" in text for text in amplified.applied_consequences)
    assert not any("12.8.4.3" in text for text in base.applied_consequences)


@pytest.mark.parametrize(("period", "k"), [(0.3, 1.0), (0.5, 1.0), (1.5, 1.5), (2.5, 2.0), (3.2, 2.0)])
def test_elf_exponent_of_12_8_3(period, k):
    """§12.8.3: k = 1 for T ≤ 0.5 s, k = 2 for T ≥ 2.5 s, linear interpolation between."""
    from planshear.code.asce7_16 import elf_exponent_12_8_3

    assert elf_exponent_12_8_3(period) == pytest.approx(k)


def test_elf_distribution_of_12_8_3_by_hand():
    """§12.8.3, Eqs. 12.8-11 and 12.8-12, independent hand arithmetic: V = 100, levels at
    10, 20, 30 with w = 300, 300, 200 and T = 0.9 s → k = 1.2; w·h^k = 4754.7, 10923.1,
    11846.1 (Σ 27523.9); Cvx = 0.17275, 0.39687, 0.43039; at level 2 Fx = 39.687 and
    ΣFi/Σwi over levels 2-3 = (39.687 + 43.039)/500 = 0.16545 (the Eq. 12.10-1 ratio)."""
    from planshear.code.asce7_16 import elf_distribution_12_8_3

    elf = elf_distribution_12_8_3(100.0, [10.0, 20.0, 30.0], [300.0, 300.0, 200.0], level=1, period=0.9)
    assert elf.k == pytest.approx(1.2)
    assert elf.cvx == pytest.approx((0.17275, 0.39687, 0.43039), abs=2e-5)
    assert sum(elf.forces) == pytest.approx(100.0)
    assert elf.fx == pytest.approx(39.687, abs=1e-3)
    assert elf.story_force_ratio == pytest.approx(0.16545, abs=1e-5)


def test_elf_inputs_give_fx_and_the_fpx_ratio(plan_from):
    """A load with fx = { base_shear, heights, weights, level, period } and fpx without
    story_force_ratio: Fx is the level's §12.8.3 force and Eq. 12.10-1 uses ΣFi/Σwi of the
    levels at and above it; results.json says so."""
    from planshear.run import analyze

    load = textwrap.dedent('''
        [[load]]
        name = "E"
        kind = "seismic"
        area_weight = "20 psf"
        fpx = { SDS = 1.0, Ie = 1.0 }
        fx = { base_shear = "100 kip", heights = ["10 ft", "20 ft", "30 ft"], weights = ["300 kip", "300 kip", "200 kip"], level = 2, period = 0.9 }
        directions = ["y"]
        eccentricity = 0
        ''')
    plan = plan_from(rectangle_plan(walls=end_walls(), load=load) + '[classification]\nidealized_flexible = true\n')
    (loaded,) = plan.loads
    assert loaded.fpx[2] == pytest.approx(0.16545, abs=1e-5)
    entry = analyze(plan, semirigid=False).to_json()["plan"]["loads"]["E"]
    assert entry["fx"] == pytest.approx(39.687, abs=1e-3)
    assert entry["fx_distribution"]["level"] == 2
    assert "§12.8.3" in entry["story_force_ratio_source"]
    # wpx = 20 psf × 100 × 50 ft = 100 kip: Eq. 12.10-1 0.16545·100 lies between 20 and 40 kip bounds → 20 kip.
    assert entry["fpx_values"]["12.10-1"] == pytest.approx(16.545, abs=1e-3)
    assert entry["fpx_equation"] == "12.10-2"


@pytest.mark.parametrize(("fx", "fragment"), [
    ('{ base_shear = "100 kip", heights = ["10 ft"], weights = ["300 kip"], level = 1 }', "either period"),
    ('{ base_shear = "100 kip", heights = ["10 ft", "20 ft"], weights = ["300 kip"], level = 1, k = 1 }',
     "must list the same levels"),
    ('{ base_shear = "100 kip", heights = ["20 ft", "10 ft"], weights = ["1 kip", "1 kip"], level = 1, k = 1 }',
     "must be above the base and increase"),
    ('{ base_shear = "100 kip", heights = ["10 ft"], weights = ["300 kip"], level = 3, k = 1 }', "1 (lowest) to 1"),
    ('{ base_shear = "100 kip", heights = ["10 ft"], weights = ["300 kip"], level = 1, k = 2.5 }', "k from 1 to 2"),
])
def test_bad_elf_inputs_are_refused(plan_from, fx, fragment):
    from planshear.errors import PlanError

    load = textwrap.dedent(f'''
        [[load]]
        name = "E"
        kind = "seismic"
        area_weight = "20 psf"
        total = "30 kip"
        fx = {fx}
        directions = ["y"]
        ''')
    with pytest.raises(PlanError) as error:
        plan_from(rectangle_plan(walls=end_walls(), load=load))
    assert 'load "E".fx' in str(error.value) and fragment in str(error.value)
