"""Design checks of transfer regions (flexible and rigid methods): the zone unit-shear
demand includes the net shear of a transfer region, members on a grid line carry the
transfer struts on that line, and the semi-rigid caution about a missing strut counts
every bar the model will have there."""

import numpy as np
import pytest
from test_beam_analogy_sides import EXAMPLE_4_1

from planshear.run import analyze

from conftest import FT, KIP

PLF = KIP / 1000 / FT


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
