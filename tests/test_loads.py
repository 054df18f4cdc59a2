"""Load cases: seismic weight, center of mass, Fpx bounds, case expansion, wind edges."""

import textwrap

import numpy as np
import pytest

from planshear.loads import expand_load_cases, fpx_force, seismic_weight, windward_segments

from conftest import FT, KIP, PSF, end_walls, rectangle_plan


def test_center_of_mass_with_opening(plan_from):
    """Hand calculation (composite areas): 100 × 50 ft at 20 psf with a 10 × 10 ft opening
    centred at (75, 25): A = 5000 − 100 = 4900 ft², x̄ = (5000·50 − 100·75)/4900 = 49.4898 ft."""
    text = rectangle_plan(walls=end_walls()).replace(
        'material = {', 'openings = [[[70, 20], [80, 20], [80, 30], [70, 30]]]\nmaterial = {', 1
    )
    plan = plan_from(text)
    weight = seismic_weight(plan, plan.loads[0])
    assert weight.total == pytest.approx(4900 * 20 * PSF * FT**2, rel=1e-12)
    assert weight.center / FT == pytest.approx([(5000 * 50 - 100 * 75) / 4900, 25.0], rel=1e-12)


def test_center_of_mass_with_line_point_and_zone_weights(plan_from):
    """Hand calculation: 100 × 50 ft; base 20 psf, zone x < 20 at 40 psf, a 0.5 kip/ft line
    weight on line 2 (x = 100, 50 ft long) and a 10 kip point weight at (30, 10)."""
    text = rectangle_plan(walls=end_walls(), load=textwrap.dedent('''
        [[load]]
        name = "E"
        kind = "seismic"
        area_weight = "20 psf"
        zone_area_weight = { "heavy" = "40 psf" }
        line_weight = [{ line = "2", weight = "0.5 kip/ft" }]
        point_weight = [{ at = [30, 10], weight = "10 kip" }]
        total = "50 kip"
        directions = ["y"]
        '''), extra=textwrap.dedent('''
        [[diaphragm.zone]]
        name = "heavy"
        polygon = [[0, 0], [20, 0], [20, 50], [0, 50]]
        material = { kind = "wood-panel", Ga = "30 kip/in" }
        '''))
    # The zone table must follow [diaphragm]; rebuild the text in that order.
    head, rest = text.split("[grid]", 1)
    zone = rest[rest.index("[[diaphragm.zone]]"):rest.index("[[load]]")]
    text = head + zone + "[grid]" + rest.replace(zone, "")
    plan = plan_from(text)
    weight = seismic_weight(plan, plan.loads[0])
    parts = [  # (kip, x ft, y ft)
        (20 * 50 * 40 / 1000, 10.0, 25.0),
        (80 * 50 * 20 / 1000, 60.0, 25.0),
        (0.5 * 50, 100.0, 25.0),
        (10.0, 30.0, 10.0),
    ]
    total = sum(p[0] for p in parts)
    assert weight.total / KIP == pytest.approx(total, rel=1e-9)
    assert weight.center / FT == pytest.approx(
        [sum(p[0] * p[1] for p in parts) / total, sum(p[0] * p[2] for p in parts) / total], rel=1e-9
    )


@pytest.mark.parametrize(
    ("wpx", "sum_f", "sum_w", "expected", "governs"),
    [
        # Taly, Design of Reinforced Masonry Structures, 2nd ed. (2010), Table E7.10:
        # SDS = 0.6, Ie = 1.0; level 4: wpx = 450 k, ΣFi = 80.1 + 72.1, Σwi = 400 + 450 → 80.6 k.
        (450.0, 80.1 + 72.1, 400.0 + 450.0, 80.6, "12.10-1"),
        # Level 1: wpx = 650 k, ΣFi = 286.3, Σwi = 2600 → raw 71.6 < 0.2·0.6·650 = 78.0 k.
        (650.0, 286.3, 2600.0, 78.0, "12.10-2"),
    ],
)
def test_fpx_against_published_example(wpx, sum_f, sum_w, expected, governs):
    force, which = fpx_force(wpx, 0.6, 1.0, sum_f / sum_w)
    assert force == pytest.approx(expected, abs=0.05)
    assert governs in which


def test_fpx_upper_bound():
    """ASCE 7-16 Eq. 12.10-3: Fpx need not exceed 0.4·SDS·Ie·wpx."""
    force, which = fpx_force(100.0, 1.0, 1.25, 0.9)
    assert force == pytest.approx(0.4 * 1.0 * 1.25 * 100.0)
    assert "12.10-3" in which


def test_case_expansion_and_accidental_eccentricity(plan_from):
    """ASCE 7-16 §12.8.4.2: ±5 % of the plan dimension perpendicular to the load."""
    plan = plan_from(rectangle_plan(length=120, depth=40, walls=end_walls(120, 40)))
    cases = {c.name: c for c in expand_load_cases(plan)}
    assert list(cases) == ["E+x", "E+x+ecc", "E+x-ecc", "E+y", "E+y+ecc", "E+y-ecc"]
    assert cases["E+x"].assumptions == ("flexible", "rigid", "semirigid")
    assert "flexible" not in cases["E+x+ecc"].assumptions
    assert cases["E+x+ecc"].eccentricity / FT == pytest.approx(0.05 * 40)
    assert cases["E+y+ecc"].eccentricity / FT == pytest.approx(0.05 * 120)
    # +ecc moves the center of mass to +x for a y load: torsion = F · e counter-clockwise.
    assert cases["E+y+ecc"].torsion == pytest.approx(100 * KIP * 6.0 * FT)
    # +ecc moves it to +y for an x load: the moment of +Fx at +e is clockwise.
    assert cases["E+x+ecc"].torsion == pytest.approx(-100 * KIP * 2.0 * FT)
    for case in cases.values():
        assert case.field.total() == pytest.approx(100 * KIP, rel=1e-12)


L_SHAPE = textwrap.dedent('''
    [plan]
    name = "L"
    length_unit = "ft"
    [diaphragm]
    outline = [[0, 0], [100, 0], [100, 50], [60, 50], [60, 80], [0, 80]]
    material = { kind = "wood-panel", Ga = "20 kip/in" }
    [grid]
    x = { "1" = 0, "2" = 100 }
    y = { "A" = 0, "B" = 80 }
    [[wall]]
    id = "W1"
    line = "1"
    from = 0
    to = 80
    stiffness = "50 kip/in"
    [[wall]]
    id = "W2"
    line = "2"
    from = 0
    to = 50
    stiffness = "50 kip/in"
    [[wall]]
    id = "WA"
    line = "A"
    from = 0
    to = 100
    stiffness = "50 kip/in"
    [[wall]]
    id = "WB"
    line = "B"
    from = 0
    to = 60
    stiffness = "50 kip/in"
    [[load]]
    name = "W"
    kind = "edge"
    intensity = "0.3 kip/ft"
    directions = ["x", "y"]
    ''')


def test_wind_on_the_edges_facing_it(plan_from):
    """An L-shaped plan: wind along +x loads the west edge, wind along +y the south edge;
    the total is intensity × projected width (statics). Wind along −x would also load
    the re-entrant edge; that is the −x case, the negative of no case here."""
    plan = plan_from(L_SHAPE)
    cases = {c.name: c for c in expand_load_cases(plan)}
    assert cases["W+x"].force / KIP == pytest.approx(0.3 * 80)
    assert cases["W+y"].force / KIP == pytest.approx(0.3 * 100)
    segments = windward_segments(plan, "y")
    ys = sorted({round(float(p[1]) / FT, 9) for a, b, _ in segments for p in (a, b)})
    assert ys == [0.0]  # wind along +y hits the south edge only
    assert not any(c.eccentricity for c in cases.values())
    # The resultant's line of action (y = 40 ft for wind along x) is statics; the load is
    # spread across the depth, so its point along x is the middle of the loaded area.
    assert cases["W+x"].center[1] / FT == pytest.approx(40.0)


def test_wind_from_the_other_side_loads_the_other_edges(plan_from):
    """Wind along −x on the L-shape: the east edge (x = 100, y 0–50) and the re-entrant
    edge (x = 60, y 50–80) face it; resultant at y = (0.3·50·25 + 0.3·30·65)/(0.3·80)."""
    plan = plan_from(L_SHAPE)
    cases = {c.name: c for c in expand_load_cases(plan)}
    case = cases["W-x"]
    assert case.force / KIP == pytest.approx(0.3 * 80)
    assert np.allclose(case.direction, [-1.0, 0.0])
    # Spread across the depth of the piece each face belongs to: y 0–50 over x 0–100 (east
    # edge), y 50–80 over x 0–60 (re-entrant edge); 0.3 kip/ft per unit of width either way.
    bands = sorted((round(g.bounds[1] / FT, 6), round(g.bounds[3] / FT, 6), round(g.bounds[2] / FT, 6),
                    round(p * (g.bounds[2] - g.bounds[0]) / (KIP / FT), 9)) for g, p in case.field.areas)
    assert bands == [(0.0, 50.0, 100.0, 0.3), (50.0, 80.0, 60.0, 0.3)]
    assert not case.field.lines
    assert case.center[1] / FT == pytest.approx((50 * 25 + 30 * 65) / 80)


@pytest.mark.parametrize(
    ("story_force_ratio", "equation", "fpx"),
    [
        # Taly (2010) Table E7.10, level 1: ΣFi/Σwi = 286.3/2600, raw 71.6 k < 0.2·0.6·650 = 78.0 k.
        (286.3 / 2600.0, "12.10-2", 78.0),
        # Same wpx with level 4's ratio (80.1 + 72.1)/(400 + 450): 116.4 k, between the bounds.
        ((80.1 + 72.1) / 850.0, "12.10-1", 650.0 * 152.2 / 850.0),
    ],
)
def test_fpx_equation_and_values_are_reported(plan_from, story_force_ratio, equation, fpx):
    """ASCE 7-16 §12.10.1.1: results.json (and `check`) name the governing equation and give
    all three values: 12.10-1 (ΣFi/Σwi)·wpx, 12.10-2 = 0.2·SDS·Ie·wpx, 12.10-3 =
    0.4·SDS·Ie·wpx. wpx = 650 kip (100 × 65 ft at 100 psf), SDS = 0.6, Ie = 1.0 (Taly 2010,
    Table E7.10 inputs)."""
    from planshear.run import analyze

    load = textwrap.dedent(f'''
        [[load]]
        name = "E"
        kind = "seismic"
        area_weight = "100 psf"
        fpx = {{ SDS = 0.6, Ie = 1.0, story_force_ratio = {story_force_ratio!r} }}
        directions = ["y"]
        ''')
    plan = plan_from(rectangle_plan(length=100, depth=65, walls=end_walls(100, 65), load=load))
    entry = analyze(plan, semirigid=False).to_json()["plan"]["loads"]["E"]
    assert entry["fpx_equation"] == equation
    values = entry["fpx_values"]
    assert values["12.10-2"] == pytest.approx(0.2 * 0.6 * 650.0, rel=1e-6)
    assert values["12.10-3"] == pytest.approx(0.4 * 0.6 * 650.0, rel=1e-6)
    assert values["12.10-1"] == pytest.approx(story_force_ratio * 650.0, rel=1e-6)
    assert entry["force"]["y"] == pytest.approx(fpx, abs=0.05)
