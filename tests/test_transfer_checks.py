"""Design checks of transfer regions (flexible and rigid methods): the zone unit-shear
demand includes the net shear of a transfer region, members on a grid line carry the
transfer struts on that line, and the semi-rigid caution about a missing strut counts
every bar the model will have there."""

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
