"""Design checks against capacities, the CSV tables, and splice forces, against hand
calculations of a simply supported diaphragm.

Hand values (VALIDATION 6.5 / 6.6; Taly, *Design of Reinforced Masonry Structures*, 2nd ed.,
McGraw-Hill 2010, §4.16, Eqs. 4.130–4.133): w = 1 k/ft over L = 100 ft, depth d = 50 ft →
end reaction R = wL/2 = 50 k, unit shear v = R/d = 1.0 k/ft, M = wL²/8 = 1250 k·ft,
chord force T = C = M/d = 25 k; shear V(x) = w(L/2 − x), M(x) = w·x(L − x)/2.
"""

import csv
import textwrap

import numpy as np
import pytest

from planshear.errors import PlanError
from planshear.postprocess.checks import splice_forces, zone_regions
from planshear.report import envelope_table, write_tables
from planshear.run import analyze

from conftest import FT, KIP, end_walls, rectangle_plan

KLF = KIP / FT

LOAD_Y = textwrap.dedent(
    """
    [[load]]
    name = "E"
    kind = "seismic"
    area_weight = "20 psf"
    total = "100 kip"
    directions = ["y"]
    eccentricity = 0.0
    """
)


def _plan(plan_from, extra: str = "", walls: str | None = None, load: str = LOAD_Y):
    return plan_from(rectangle_plan(walls=end_walls() if walls is None else walls, extra=extra, load=load))


def _check(checks, item: str, quantity: str):
    found = [c for c in checks.checks if c.item == item and c.quantity == quantity]
    assert len(found) == 1, [(c.item, c.quantity) for c in checks.checks]
    return found[0]


ZONES = textwrap.dedent(
    """
    [[diaphragm.zone]]
    name = "end strip"
    polygon = [[0, 0], [20, 0], [20, 50], [0, 50]]
    material = { kind = "wood-panel", Ga = "20 kip/in" }
    capacity = "1200 plf"

    [[diaphragm.zone]]
    name = "middle"
    polygon = [[40, 0], [60, 0], [60, 50], [40, 50]]
    material = { kind = "wood-panel", Ga = "20 kip/in" }
    capacity = "250 plf"
    """
)


def test_zone_unit_shear_from_the_span_diagram(plan_from):
    """Zone demand = largest V(x)/d over the stations whose section crosses the zone (Taly 2010
    Eqs. 4.130–4.133): the strip at the support sees v = wL/(2d) = 1.0 k/ft; the middle zone
    (40–60 ft) sees V(40)/d = 1 × (50 − 40)/50 = 0.2 k/ft; the rest of the diaphragm 1.0 k/ft.
    Flexible and rigid (no eccentricity, symmetric walls) give the same simple-span values."""
    text = rectangle_plan(walls=end_walls(), load=LOAD_Y, extra="[capacity]\nwall = \"60 kip\"\n")
    text = text.replace('chord_EA = "40000 kip"', 'chord_EA = "40000 kip"\ncapacity = "800 plf"\n' + ZONES)
    checks = analyze(plan_from(text), semirigid=False).checks
    end = _check(checks, "zone end strip", "unit shear")
    middle = _check(checks, "zone middle", "unit shear")
    main = _check(checks, "diaphragm outside the zones", "unit shear")
    # The diagram is read 2e-7 × the span inside each zone end: V there differs by w × that
    # (relative 2e-7 × L/(L/2 − x): 1e-5 bounds it for both zones).
    assert end.demand / KLF == pytest.approx(1.0, rel=1e-5)
    assert middle.demand / KLF == pytest.approx(0.2, rel=1e-5)
    assert main.demand / KLF == pytest.approx(1.0, rel=1e-5)
    assert end.ratio == pytest.approx(1.0 / 1.2, rel=1e-5) and end.status == "ok"
    assert middle.ratio == pytest.approx(0.2 / 0.25, rel=1e-5)
    assert main.ratio == pytest.approx(1.0 / 0.8, rel=1e-5) and main.status == "fails"
    assert checks.checks[0].status == "fails"  # failures first
    assert {c.governing.assumption for c in (end, middle, main)} <= {"flexible", "rigid"}


def test_member_chord_force_and_capacities(plan_from):
    """Member on line A (edge y = 0) is a chord under load along y: T = C = M/d = 25 k at
    midspan (Taly 2010 Eq. 4.132); the seismic case is taken in both senses. Capacities by
    grid line: tension 20 k → D/C 1.25 (fails), compression 30 k → 0.833."""
    extra = '[capacity]\ntension = "100 kip"\nmember = [{ line = "A", tension = "20 kip", compression = "30 kip" }]\n'
    result = analyze(_plan(plan_from, extra), semirigid=False)
    tension = _check(result.checks, "line A, 1–2", "tension")
    compression = _check(result.checks, "line A, 1–2", "compression")
    assert tension.demand / KIP == pytest.approx(25.0, rel=1e-9)
    assert compression.demand / KIP == pytest.approx(25.0, rel=1e-9)
    assert tension.ratio == pytest.approx(1.25, rel=1e-9) and tension.status == "fails"
    assert compression.ratio == pytest.approx(25 / 30, rel=1e-9) and compression.status == "ok"
    assert tension.note.startswith("chord role")
    # Line B takes the [capacity] default tension; no default compression: "no capacity".
    assert _check(result.checks, "line B, 1–2", "tension").ratio == pytest.approx(0.25, rel=1e-9)
    assert _check(result.checks, "line B, 1–2", "compression").status == "no capacity"


def test_wall_capacity_as_force_and_as_unit_shear(plan_from):
    """Wall W1 takes R = wL/2 = 50 k (Taly 2010 Eq. 4.131): capacity 40 kip → D/C 1.25. Wall
    W2 (50 ft long) as unit shear: 50 k / 50 ft = 1.0 k/ft against 1250 plf → 0.8."""
    walls = end_walls().replace('id = "W1"', 'id = "W1"\ncapacity = "40 kip"').replace(
        'id = "W2"', 'id = "W2"\nunit_shear_capacity = "1250 plf"')
    checks = analyze(_plan(plan_from, walls=walls), semirigid=False).checks
    w1, w2 = _check(checks, "wall W1", "force"), _check(checks, "wall W2", "unit shear")
    assert w1.demand / KIP == pytest.approx(50.0, rel=1e-9) and w1.ratio == pytest.approx(1.25, rel=1e-9)
    assert w2.demand / KLF == pytest.approx(1.0, rel=1e-9) and w2.ratio == pytest.approx(0.8, rel=1e-9)
    assert _check(checks, "wall WA", "force").status == "no capacity"


def test_demands_carry_the_combination_factor(plan_from):
    """On the LRFD basis the seismic load effect enters with factor 1.0 and on ASD with 0.7
    (ASCE 7-16 §2.3.6 / §2.4.5, combinations 6 and 8 (ASD: 0.7E); as implemented in
    planshear.code): the member demand on ASD is 0.7 × 25 k."""
    extra = '[design]\nbasis = "ASD"\n[capacity]\ntension = "20 kip"\n'
    checks = analyze(_plan(plan_from, extra), semirigid=False).checks
    item = _check(checks, "line A, 1–2", "tension")
    assert item.governing.factor == pytest.approx(0.7)
    assert item.demand / KIP == pytest.approx(0.7 * 25.0, rel=1e-9)
    assert checks.basis == "ASD"


def test_no_capacities_no_checks(plan_from):
    """Without a capacity in the plan there are no checks (and no checks.csv)."""
    assert analyze(_plan(plan_from), semirigid=False).checks is None


def test_splice_force_is_the_chord_force_there(plan_from):
    """Chord force at a splice on line A at x = 25 ft: M(25)/d = w·25·75/2/50 = 18.75 k
    (simple beam, Taly 2010 Eq. 4.132 at a general station), in both senses (seismic ±); the
    same with the semi-rigid model within 15 % (soft-chord continuity, walls along the chord:
    DEVELOPERS.md pitfalls), its bar force read only in the cases across line A."""
    plan = _plan(plan_from, extra="[mesh]\nsize = 10.0\norder = 2\n")
    point = np.array([25 * FT, 0.0])
    idealized = analyze(plan, semirigid=False)
    (splice,) = splice_forces(plan, {"flexible": idealized.methods["flexible"]}, idealized.cases,
                              idealized.envelope, [("S1", point)])
    assert splice.member == "line A, 1–2"
    assert splice.tension.value / KIP == pytest.approx(18.75, rel=1e-6)
    assert splice.compression.value / KIP == pytest.approx(-18.75, rel=1e-6)
    result = analyze(plan)
    (semi,) = splice_forces(plan, {"semirigid": result.methods["semirigid"]}, result.cases, result.envelope,
                            [("S1", point)])
    assert semi.tension.value / KIP == pytest.approx(18.75, rel=0.15)


def test_semirigid_zone_unit_shear_is_a_section_average(plan_from):
    """The finite-element unit shear of a zone is N_xy averaged along each section (element
    centroid values), largest next to the support: it lies between the simple-span values one
    nominal element in and at the support, V/d = (R − w·x)/d for x = h … 0 (Taly 2010 Eqs.
    4.130–4.133), 0.90–1.00 k/ft with h = 10 ft; a singular peak at a wall end would exceed it.
    Slack 1 %: the membrane is not a pure shear beam (chord flexibility) on a coarse mesh."""
    extra = '[mesh]\nsize = 10.0\norder = 2\n'
    text = rectangle_plan(walls=end_walls(), load=LOAD_Y, extra=extra).replace(
        'chord_EA = "40000 kip"', 'chord_EA = "40000 kip"\ncapacity = "1000 plf"\n' + ZONES)
    result = analyze(plan_from(text))
    regions = zone_regions(result.plan)
    from planshear.postprocess.checks import zone_unit_shear

    names = list(result.methods["semirigid"].cases)
    axes = [result.cases[[c.name for c in result.cases].index(n)].axis for n in names]
    values = zone_unit_shear(result.plan, result.semirigid.mesh, result.semirigid.membrane, axes,
                             regions["end strip"], 10 * FT)
    v = values[names.index("E+y")] / KLF
    print(f"section-averaged FE unit shear in the end strip: {v:.4f} k/ft")
    assert 0.90 * 0.99 <= v <= 1.00 * 1.01


def test_csv_tables_have_units_and_rounding(plan_from, tmp_path):
    """envelope.csv and checks.csv: a unit in every header that has one, values rounded
    (kip to 0.01, kip/ft to 0.001); the member row shows the chord role 25 k (Taly 2010
    Eq. 4.132) once, with both roles' columns."""
    extra = '[capacity]\ntension = "30 kip"\ncompression = "30 kip"\nwall = "45 kip"\n'
    doc = analyze(_plan(plan_from, extra), semirigid=False).to_json()
    written = write_tables(tmp_path, doc)
    assert "envelope.csv" in written and "checks.csv" in written
    with open(tmp_path / "checks.csv", encoding="utf-8") as handle:
        rows = list(csv.reader(handle))
    header = rows[0]
    assert "demand [kip]" in header and "capacity [kip/ft]" in header and "D/C [-]" in header
    assert rows[1][header.index("status")] == "fails"  # W1/W2 at 50 k against 45 k, first
    assert float(rows[1][header.index("D/C [-]")]) == pytest.approx(round(50 / 45, 3))
    with open(tmp_path / "envelope.csv", encoding="utf-8") as handle:
        rows = list(csv.DictReader(handle))
    member = [r for r in rows if r["name"] == "line A, 1–2" and r["value"] == "tension"]
    assert len(member) == 1 and float(member[0]["design [kip]"]) == 25.0
    assert member[0]["governing role"] == "chord"
    for row in rows:
        for key, value in row.items():
            if key.endswith("[kip]") and value:
                assert float(value) == round(float(value), 2)
    headers, _ = envelope_table(doc)
    assert all("[" in h for h in headers if "design" in h or "role " in h)


@pytest.mark.parametrize(
    ("extra", "message"),
    [
        ('[capacity]\nmember = [{ line = "Q", tension = "1 kip" }]\n', '"Q" is not a grid line'),
        ('[capacity]\nmember = [{ line = "A" }]\n', 'give "tension" and/or "compression"'),
        ('[capacity]\nwall = "1 kip"\nwall_unit_shear = "100 plf"\n', 'give either "wall"'),
        ('[capacity]\ntension = "12"\n', "capacity.tension"),
        ('[capacity]\ncompression = "-3 kip"\n', "must be positive"),
    ],
)
def test_bad_capacities_are_named(plan_from, extra, message):
    """Capacities that cannot be used are reported naming the key and the fix."""
    with pytest.raises(PlanError, match=message.replace("(", r"\(").replace("[", r"\[")):
        _plan(plan_from, extra)


def test_capacity_by_unknown_member_name(plan_from):
    """A [[capacity.member]] name that no member has is an error listing the names."""
    extra = '[capacity]\nmember = [{ name = "line Z, 1–2", tension = "1 kip" }]\n'
    with pytest.raises(PlanError, match="line A, 1–2"):
        analyze(_plan(plan_from, extra), semirigid=False)


def test_roles_do_not_mix_under_overstrength(plan_from):
    """A perimeter member is a collector under load along it and a chord across it: Ω0 (here
    2.5, SDC D; ASCE 7-16 §12.10.2.1) multiplies only the collector role. Wall W1 (x = 0) 20 ft
    of the 50-ft line 1: collector peak = v·(50 − 20) = 30 k (VALIDATION 6.6) under load along y;
    chord role of line 1 under load along x: M/d = 25 k (Taly 2010 Eq. 4.132, the plan turned)."""
    walls = end_walls(length=100.0, depth=50.0).replace("from = 0\nto = 50\n", "from = 0\nto = 20\n", 1)
    load = textwrap.dedent(
        """
        [[load]]
        name = "E"
        kind = "seismic"
        area_weight = "20 psf"
        total = "100 kip"
        directions = ["y"]
        eccentricity = 0.0
        collector_overstrength = 2.5
        sdc = "D"
        """
    )
    result = analyze(_plan(plan_from, walls=walls, load=load), semirigid=False)
    from planshear.postprocess.envelope import member_envelopes

    members = member_envelopes(result.envelope)
    line1 = members["line 1, A–B"]
    rule = result.envelope.collector_rules["1"]
    assert abs(line1.collector_compression.value) / KIP == pytest.approx(30.0, rel=1e-9)
    assert abs(line1.collector_compression_omega.value) / KIP == pytest.approx(30.0 * rule["factor"], rel=1e-9)
    assert rule["factor"] > 1.0
    # The chord role of line A (load along y, across it) carries no Ω0: M/d = 25 k exactly.
    line_a = members["line A, 1–2"]
    assert line_a.chord_tension.value / KIP == pytest.approx(25.0, rel=1e-9)
    assert line_a.collector_tension is None
    design, role = line1.design
    assert role == "collector" and abs(design.value) == pytest.approx(30.0 * rule["factor"] * KIP, rel=1e-9)


def test_splices_of_the_plan_reach_results_json(plan_from):
    """A ``[[splice]]`` feeds ``splice_forces`` in results.json: at x = 25 ft on line A,
    M/d = 18.75 k (Taly 2010 Eq. 4.132)."""
    plan = _plan(plan_from, extra='[[splice]]\nname = "S1"\nat = [25, 0]\nstiffness = "500 kip/in"\n')
    (entry,) = analyze(plan, semirigid=False).to_json()["splice_forces"]
    assert entry["name"] == "S1" and entry["member"] == "line A, 1–2"
    assert entry["at"] == pytest.approx([25.0, 0.0])
    assert entry["tension"]["value"] == pytest.approx(18.75, rel=1e-6)
    assert entry["compression"]["value"] == pytest.approx(-18.75, rel=1e-6)


def test_failures_counted_as_checks_and_as_items(plan_from):
    """A member whose tension and compression both exceed their capacities (T = C = M/d =
    25 k, Taly 2010 Eq. 4.132, against 20 k each) is two failing checks on one item;
    results.json says both counts, so a reader is not told of two failing members."""
    extra = '[capacity]\nmember = [{ line = "A", tension = "20 kip", compression = "20 kip" }]\n'
    doc = analyze(_plan(plan_from, extra), semirigid=False).to_json()
    failing = [c for c in doc["checks"]["items"] if c["status"] == "fails"]
    assert len(failing) == doc["checks"]["failures"] == 2
    assert doc["checks"]["failing_items"] == 1
